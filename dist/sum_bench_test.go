package dist_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
)

// BenchmarkSixTermSum builds the six-term sum and evaluates its CDF at 1000
// points across its bulk.
func BenchmarkSixTermSum(b *testing.B) {
	terms := sixTerms(b)
	for b.Loop() {
		l, err := dist.Sum(terms...)
		if err != nil {
			b.Fatal(err)
		}
		for i := 0; i < 1000; i++ {
			l.CDF(20 + 0.04*float64(i))
		}
	}
}

// BenchmarkSixTermMonteCarlo is the baseline a user would otherwise write:
// 10^6 samples of the same sum, sorted into an empirical CDF (error about
// 1e-3), then 1000 CDF look-ups.
func BenchmarkSixTermMonteCarlo(b *testing.B) {
	terms := sixTerms(b)
	r := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, 1000000)
	for b.Loop() {
		for i := range xs {
			x := 0.0
			for _, t := range terms {
				x += t.Rand(r)
			}
			xs[i] = x
		}
		sort.Float64s(xs)
		for i := 0; i < 1000; i++ {
			_ = sort.SearchFloat64s(xs, 20+0.04*float64(i))
		}
	}
}

// BenchmarkSumIIDMillion builds the 10^6-fold sum of a uniform and
// evaluates its CDF at 1000 points.
func BenchmarkSumIIDMillion(b *testing.B) {
	u := dist.MustUniform(1, 3)
	for b.Loop() {
		l, err := dist.SumIID(u, 1000000)
		if err != nil {
			b.Fatal(err)
		}
		for i := 0; i < 1000; i++ {
			l.CDF(2e6 - 3000 + 6*float64(i))
		}
	}
}

// BenchmarkSixTermSumManyValues builds the six-term sum and evaluates its
// CDF at 10^5 points (beyond 2048 bulk values the law answers from a grid).
func BenchmarkSixTermSumManyValues(b *testing.B) {
	terms := sixTerms(b)
	for b.Loop() {
		l, err := dist.Sum(terms...)
		if err != nil {
			b.Fatal(err)
		}
		for i := 0; i < 100000; i++ {
			l.CDF(20 + 0.0004*float64(i))
		}
	}
}

// BenchmarkSumIIDLatticeMillion builds the 10^6-fold sum of a 6-atom law
// on a lattice (commensurate energies, in mJ) by the lattice FFT and
// evaluates its CDF at 1000 points.
func BenchmarkSumIIDLatticeMillion(b *testing.B) {
	d := dist.MustDiscrete([]float64{1.2, 1.5, 2.1, 2.4, 3.6, 6.0}, []float64{0.4, 0.2, 0.15, 0.1, 0.1, 0.05})
	mean, sd := 1e6*d.Mean(), 1e3*math.Sqrt(d.Variance())
	for b.Loop() {
		l, err := dist.SumIID(d, 1000000)
		if err != nil {
			b.Fatal(err)
		}
		for i := 0; i < 1000; i++ {
			l.CDF(mean - 5*sd + 0.01*sd*float64(i))
		}
	}
}

// BenchmarkCycleClosedForm builds the law of a cycle energy with a discrete
// radio part, an exponential warm-up and a uniform wait (the closed form by
// conditioning) and evaluates its CDF at 1000 points and its survival at
// 1000 points of the upper tail.
func BenchmarkCycleClosedForm(b *testing.B) {
	radio := dist.MustDiscrete([]float64{12e-3, 30e-3}, []float64{0.8, 0.2})
	terms := []dist.Law{radio, dist.MustExponential(1 / 4e-3), dist.MustUniform(0, 3e-3)}
	for b.Loop() {
		l, err := dist.Sum(terms...)
		if err != nil {
			b.Fatal(err)
		}
		for i := 0; i < 1000; i++ {
			l.CDF(10e-3 + 40e-6*float64(i))
			l.Survival(40e-3 + 200e-6*float64(i))
		}
	}
}
