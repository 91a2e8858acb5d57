package disttest

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sync"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// newSource returns the seeded random source of the sampling checks.
func (c *checker) newSource() *rand.Rand {
	return rand.New(rand.NewPCG(c.cfg.seed, c.cfg.seed^0x9e3779b97f4a7c15))
}

// checkRand: samples are finite and in the support; two sources with the
// same seed give the same samples; counts in bins (quantile bins, with each
// heavy atom a bin of its own) lie within exact binomial bounds at the
// family-wise level (Bonferroni over the bins); and the Kolmogorov–Smirnov
// distance is within the DKW bound at the level. See package testref for
// both bounds.
func (c *checker) checkRand() {
	l := c.law
	n := c.cfg.samples
	r := c.newSource()
	xs := make([]float64, n)
	bad := 0
	for i := range xs {
		x := l.Rand(r)
		xs[i] = x
		if !finite(x) || x < c.lo || x > c.hi {
			bad++
			c.fail(CheckRand, fmt.Sprintf("sample %d", i), fmt.Sprintf("a finite value in the support [%s, %s]", g(c.lo), g(c.hi)), g(x))
		}
	}
	r2 := c.newSource()
	for i := 0; i < 64 && i < n; i++ {
		if x := l.Rand(r2); x != xs[i] && !(math.IsNaN(x) && math.IsNaN(xs[i])) {
			c.fail(CheckRand, fmt.Sprintf("sample %d with the seed again", i), fmt.Sprintf("the same sample %s", g(xs[i])), g(x))
			break
		}
	}
	if bad > 0 {
		return
	}
	c.checkBins(xs)
	ks := testref.KSStatistic(xs, l.CDF)
	crit := testref.KSCritical(n, c.cfg.level) + c.cfg.cdfAbs
	if !(ks <= crit) {
		c.fail(CheckRand, fmt.Sprintf("%d samples, Kolmogorov–Smirnov distance", n),
			fmt.Sprintf("<= %.4g (DKW bound at level %s)", crit, g(c.cfg.level)), fmt.Sprintf("%.4g", ks))
	}
}

// binEdges returns the sorted, distinct bin edges: quantiles at k/K with
// about 400 expected samples a bin, the 1e-3 quantiles from both ends, and
// for each atom heavier than a quarter bin, the float below it and itself,
// so that the atom is the bin (v⁻, v].
func (c *checker) binEdges() []float64 {
	l := c.law
	K := min(max(c.cfg.samples/400, 10), 100)
	edges := []float64{l.Quantile(1e-3), l.UpperQuantile(1e-3)}
	for k := 1; k < K; k++ {
		p := float64(k) / float64(K)
		if p <= 0.5 {
			edges = append(edges, l.Quantile(p))
		} else {
			edges = append(edges, l.UpperQuantile(1-p))
		}
	}
	for _, a := range c.atoms {
		if a.Mass >= 0.25/float64(K) {
			edges = append(edges, down(a.Value), a.Value)
		}
	}
	return sortedFinite(edges)
}

// checkBins counts the samples in the bins (-Inf, e0], (e0, e1], …,
// (e_last, +Inf) and compares each count with its exact binomial
// distribution, the bin's probability taken from CDF differences (widened
// by the CDF tolerance).
func (c *checker) checkBins(xs []float64) {
	edges := c.binEdges()
	n := len(xs)
	counts := make([]int, len(edges)+1)
	for _, x := range xs {
		i, _ := slices.BinarySearch(edges, x) // first edge >= x
		counts[i]++
	}
	bins := len(counts)
	alpha := c.cfg.level / float64(bins)
	for i, k := range counts {
		a, b := math.Inf(-1), math.Inf(1)
		if i > 0 {
			a = edges[i-1]
		}
		if i < len(edges) {
			b = edges[i]
		}
		p, _ := c.massBetween(a, b)
		p = math.Min(math.Max(p, 0), 1)
		s := 2 * c.probSlack(math.Max(p, 0))
		pLo, pHi := math.Max(p-s, 0), math.Min(p+s, 1)
		atMost, _ := testref.BinomialTails(n, k, pLo)
		_, atLeast := testref.BinomialTails(n, k, pHi)
		if atMost < alpha/2 || atLeast < alpha/2 {
			lo, hi := testref.BinomialInterval(n, p, alpha)
			c.fail(CheckRand, fmt.Sprintf("bin (%s, %s] of %d", g(a), g(b), bins),
				fmt.Sprintf("a count in [%d, %d] (expected %.1f of %d; binomial, level %s over the bins)", lo, hi, float64(n)*p, n, g(c.cfg.level)),
				fmt.Sprint(k))
		}
	}
}

// checkConcurrency evaluates CDF, Survival, Quantile, UpperQuantile and Rand
// from four goroutines at once and requires the serial results: the law
// holds no mutable state that calls could disturb (run tests with -race to
// also catch unsynchronised access).
func (c *checker) checkConcurrency() {
	l := c.law
	xs := c.grid
	if len(xs) > 24 {
		step := len(xs) / 24
		var sub []float64
		for i := 0; i < len(xs); i += step {
			sub = append(sub, xs[i])
		}
		xs = sub
	}
	eval := func() ([]float64, string) {
		out := make([]float64, 0, 4*len(xs)+32)
		for _, x := range xs {
			out = append(out, l.CDF(x), l.Survival(x))
		}
		for _, p := range tailLevels {
			out = append(out, l.Quantile(p), l.UpperQuantile(p))
		}
		r := c.newSource()
		for i := 0; i < 16; i++ {
			out = append(out, l.Rand(r))
		}
		return out, ""
	}
	want, _ := eval()
	const workers = 4
	results := make([][]float64, workers)
	panics := make([]string, workers)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() {
				if r := recover(); r != nil {
					panics[w] = fmt.Sprint(r)
				}
			}()
			results[w], _ = eval()
		}()
	}
	wg.Wait()
	for w := 0; w < workers; w++ {
		if panics[w] != "" {
			c.fail(CheckConcurrency, fmt.Sprintf("goroutine %d", w), "no panic", "panic: "+panics[w])
			continue
		}
		for i := range want {
			if results[w][i] != want[i] && !(math.IsNaN(results[w][i]) && math.IsNaN(want[i])) {
				c.fail(CheckConcurrency, fmt.Sprintf("goroutine %d, value %d", w, i), g(want[i]), g(results[w][i]))
				break
			}
		}
	}
}
