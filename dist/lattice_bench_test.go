package dist_test

import (
	"testing"

	"github.com/joulelaw/joulelaw/dist"
)

// Benchmarks of the fallbacks for laws without a known transform: building
// the law and one CDF value.

// benchBuild runs build and one CDF value at x per iteration.
func benchBuild(b *testing.B, x float64, build func() (dist.Law, error)) {
	for b.Loop() {
		l, err := build()
		if err != nil {
			b.Fatal(err)
		}
		_ = l.CDF(x)
	}
}

// BenchmarkSumLatticeFallback: a discrete term shifting the lattice sum of
// two transform-less exponentials.
func BenchmarkSumLatticeFallback(b *testing.B) {
	terms := []dist.Law{dist.MustDiscrete([]float64{0, 1, 2.5}, []float64{0.5, 0.3, 0.2}), weibullExp(1), weibullExp(2)}
	benchBuild(b, 2, func() (dist.Law, error) { return dist.Sum(terms...) })
}

// BenchmarkSumIIDLatticePower: the 5-fold sum by the lattice power.
func BenchmarkSumIIDLatticePower(b *testing.B) {
	w := weibullExp(1)
	benchBuild(b, 5, func() (dist.Law, error) { return dist.SumIID(w, 5) })
}

// BenchmarkSumIIDQuadrature: the 10^6-fold sum from the quadrature
// transform.
func BenchmarkSumIIDQuadrature(b *testing.B) {
	w := weibullExp(1)
	benchBuild(b, 1e6, func() (dist.Law, error) { return dist.SumIID(w, 1000000) })
}
