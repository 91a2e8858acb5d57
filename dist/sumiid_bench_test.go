package dist_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mathext"
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

// gammaCycleSums is the k-fold sums of a cycle with a fixed floor of 0.06 J
// and a Gamma(2, 1) J burst (a shifted gamma), the capacity C of a cell for
// about 10^6 such cycles, and 1000 cycle counts k over ±5 standard
// deviations of the lifetime in cycles (about 480 cycles).
func gammaCycleSums(b *testing.B) (dist.IIDSums, float64, []int) {
	cyc, err := dist.Affine(dist.MustGamma(2, 1), 1, 0.06)
	if err != nil {
		b.Fatal(err)
	}
	s, err := dist.NewIIDSums(cyc)
	if err != nil {
		b.Fatal(err)
	}
	ks := make([]int, 1000)
	for i := range ks {
		ks[i] = int(1e6 - 2400 + 4.8*float64(i))
	}
	return s, 1e6 * cyc.Mean(), ks
}

// BenchmarkIIDSumsGammaCycle: 1000 values of P(S_k <= C) and P(S_k > C) of
// the shifted-gamma cycle near 10^6 cycles (the lifetime question), each
// tail computed directly by Temme's expansion (stated relative error about
// 1e-15 in the bulk, measured below 3e-13 down to 1e-300).
func BenchmarkIIDSumsGammaCycle(b *testing.B) {
	s, c, ks := gammaCycleSums(b)
	for b.Loop() {
		for _, k := range ks {
			_, _ = s.Tails(k, c)
		}
	}
}

// BenchmarkGammaIncRegCycle is what a user would otherwise write for
// BenchmarkIIDSumsGammaCycle: gonum's mathext.GammaIncReg of shape 2k at
// the capacity less the k floors, the same 1000 values (the lower tail
// only; gonum's is off by up to 1e-7 relative beyond 4.5 standard
// deviations at these shapes, see internal/testref.ErlangTails).
func BenchmarkGammaIncRegCycle(b *testing.B) {
	_, c, ks := gammaCycleSums(b)
	for b.Loop() {
		for _, k := range ks {
			_ = mathext.GammaIncReg(2*float64(k), c-float64(k)*0.06)
		}
	}
}

// BenchmarkIIDSumsThreeValues: both tails of the 35,000-fold sum (about a
// year of 15-minute cycles) of an invented three-energy cycle (0.05 J with
// probability 0.6, 0.12 J with 0.39, 0.9 J with 0.01) at 13 points over ±6
// standard deviations, each pair from one exact evaluation (the
// conditioning on the rarest energy's count).
func BenchmarkIIDSumsThreeValues(b *testing.B) {
	d, err := dist.NewDiscrete([]float64{0.05, 0.12, 0.9}, []float64{0.6, 0.39, 0.01})
	if err != nil {
		b.Fatal(err)
	}
	s, err := dist.NewIIDSums(d)
	if err != nil {
		b.Fatal(err)
	}
	const k = 35_000
	m, sd := k*d.Mean(), math.Sqrt(k*d.Variance())
	for b.Loop() {
		for i := -6; i <= 6; i++ {
			_, _ = s.Tails(k, m+float64(i)*sd)
		}
	}
}
