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
	crit := testref.KSCritical(n, c.cfg.level) + c.cfg.cdfAbs
	slices.Sort(xs)
	if ks := c.ksDistance(xs, crit); !(ks <= crit) {
		c.fail(CheckRand, fmt.Sprintf("%d samples, Kolmogorov–Smirnov distance", n),
			fmt.Sprintf("<= %.4g (DKW bound at level %s)", crit, g(c.cfg.level)), fmt.Sprintf("%.4g", ks))
	}
}

// binLevels are the probabilities whose quantiles, from both ends, cut the
// bins: every 0.05, and 1e-3, 0.01 and 0.025 in the tails.
var binLevels = [...]float64{1e-3, 0.01, 0.025, 0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.35, 0.4, 0.45, 0.5}

// binEdges returns the sorted, distinct bin edges: the quantiles at
// binLevels from both ends, and for each atom heavier than 1 %, the float
// below it and itself, so that the atom is the bin (v⁻, v].
func (c *checker) binEdges() []float64 {
	var edges []float64
	for _, p := range binLevels {
		edges = append(edges, c.quantile(p), c.upperQuantile(p))
	}
	for _, a := range c.atoms {
		if a.Mass >= 0.01 {
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
		p = min(max(p, 0), 1)
		s := 2 * c.probSlack(max(p, 0))
		pLo, pHi := max(p-s, 0), min(p+s, 1)
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

// checkConcurrency evaluates CDF, Survival, Quantile and Rand from three
// goroutines at once and requires the serial results: the law
// holds no mutable state that calls could disturb (run tests with -race to
// also catch unsynchronised access).
func (c *checker) checkConcurrency() {
	l := c.law
	xs := c.grid
	if len(xs) > 16 {
		step := len(xs) / 16
		var sub []float64
		for i := 0; i < len(xs); i += step {
			sub = append(sub, xs[i])
		}
		xs = sub
	}
	eval := func() ([]float64, string) {
		out := make([]float64, 0, 2*len(xs)+24)
		for _, x := range xs {
			out = append(out, l.CDF(x), l.Survival(x))
		}
		out = append(out, l.Quantile(0.5)) // one: it may be slow
		r := c.newSource()
		for i := 0; i < 16; i++ {
			out = append(out, l.Rand(r))
		}
		return out, ""
	}
	want, _ := eval()
	const workers = 3
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

// ksDistance returns the Kolmogorov–Smirnov distance sup |F_n - F| of the
// sorted samples xs, or, when that is at most crit, possibly a bound on it
// that is itself at most crit: it evaluates the CDF at every 64th order
// statistic first, bounds the distance between them (F and F_n are both
// non-decreasing), and evaluates every sample only in the stretches whose
// bound exceeds crit. Any value above crit it returns is exact. Left
// limits F(v⁻) are taken just below v where v is an atom or a repeated
// sample; elsewhere the law is continuous at v. (testref.KSStatistic is the
// plain exact computation.)
func (c *checker) ksDistance(xs []float64, crit float64) float64 {
	n := len(xs)
	fn := float64(n)
	cdf := c.law.CDF
	const stride = 64
	var idx []int
	for i := 0; i < n; i += stride {
		idx = append(idx, i)
	}
	if idx[len(idx)-1] != n-1 {
		idx = append(idx, n-1)
	}
	F := make([]float64, len(idx))
	for j, i := range idx {
		F[j] = cdf(xs[i])
	}
	// exact returns the distance at the distinct values among xs[a:b],
	// each value's samples counted in full.
	exact := func(a, b int) float64 {
		d := 0.0
		for i := a; i < b; {
			j := i
			for j < n && xs[j] == xs[i] {
				j++
			}
			for i > 0 && xs[i-1] == xs[i] {
				i--
			}
			v := xs[i]
			at := cdf(v)
			below := at
			if _, _, isAtom := c.neighbourAtoms(v); isAtom || j-i > 1 {
				below = cdf(down(v))
			}
			d = max(d, max(math.Abs(float64(i)/fn-below), math.Abs(float64(j)/fn-at)))
			i = j
		}
		return d
	}
	d := max(F[0], 1-F[len(F)-1]) // below the first and from the last sample on
	if d > crit {
		d = max(exact(0, 1), exact(n-1, n))
	}
	for j := 0; j+1 < len(idx); j++ {
		a, b := idx[j], idx[j+1]
		// On [x_a, x_b): F in [F(x_a), F(x_b)], F_n in [a/n, b/n].
		bound := max(float64(b)/fn-F[j], F[j+1]-float64(a)/fn)
		if bound > crit {
			bound = exact(a, b+1)
		}
		d = max(d, bound)
	}
	return d
}
