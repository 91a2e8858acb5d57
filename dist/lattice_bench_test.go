package dist_test

import (
	"testing"

	"github.com/joulelaw/joulelaw/dist"
)

// Benchmarks of the fallbacks for laws without a known transform: building
// the law and one CDF value (compare with BenchmarkBaselineSort of the same
// run).

// BenchmarkSumLatticeFallback: a discrete term shifting the lattice sum of
// two transform-less exponentials.
func BenchmarkSumLatticeFallback(b *testing.B) {
	terms := []dist.Law{dist.MustDiscrete([]float64{0, 1, 2.5}, []float64{0.5, 0.3, 0.2}), weibullExp(1), weibullExp(2)}
	for b.Loop() {
		l, err := dist.Sum(terms...)
		if err != nil {
			b.Fatal(err)
		}
		_ = l.CDF(2)
	}
}

// BenchmarkSumIIDLatticePower: the 5-fold sum by the lattice power.
func BenchmarkSumIIDLatticePower(b *testing.B) {
	w := weibullExp(1)
	for b.Loop() {
		l, err := dist.SumIID(w, 5)
		if err != nil {
			b.Fatal(err)
		}
		_ = l.CDF(5)
	}
}

// BenchmarkSumIIDQuadrature: the 10^6-fold sum from the quadrature
// transform.
func BenchmarkSumIIDQuadrature(b *testing.B) {
	w := weibullExp(1)
	for b.Loop() {
		l, err := dist.SumIID(w, 1000000)
		if err != nil {
			b.Fatal(err)
		}
		_ = l.CDF(1e6)
	}
}
