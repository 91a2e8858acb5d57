package dist_test

import (
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// BenchmarkSumIIDWeibullQuantile: the 50-fold sum of a Weibull law taken
// from gonum (transform by quadrature), its 1e-12 quantile and ten CDF
// values, from a fresh law each time (the bulk grid, built on first use,
// included).
func BenchmarkSumIIDWeibullQuantile(b *testing.B) {
	w, err := dist.FromDistuv(distuv.Weibull{K: 1.5, Lambda: 1})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		l, err := dist.SumIID(w, 50)
		if err != nil {
			b.Fatal(err)
		}
		_ = l.Quantile(1e-12)
		for i := range 10 {
			_ = l.CDF(40 + float64(i))
		}
	}
}
