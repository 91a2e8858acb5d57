package dist

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mathext"
)

// TestSumIIDExponentialIsGamma forces the inversion path (SumIID itself
// returns the closed form) and checks it against Gamma(k, λ): the k-fold sum
// of Exp(λ) is exactly Gamma(k, λ) (a standard result). Oracle: gonum
// mathext.GammaIncReg and GammaIncRegComp (the upper tail computed
// directly), for k from 2 to 10^7, at points from the 1e-14 lower quantile
// to the 1e-14 upper quantile.
func TestSumIIDExponentialIsGamma(t *testing.T) {
	const rate = 2.0
	e := MustExponential(rate)
	for _, k := range []int{2, 10, 1000, 1000000, 10000000} {
		l, err := iidNumeric(e, k)
		require.NoError(t, err)
		n := l.(*numLaw)
		acc := n.Accuracy()
		g := MustGamma(float64(k), rate)
		var worstAbs, worstRel, worstLow float64
		for _, q := range []float64{1e-14, 1e-12, 1e-9, 1e-6, 1e-4, 0.01, 0.1, 0.3, 0.5} {
			for _, x := range []float64{g.Quantile(q), g.UpperQuantile(q)} {
				wantS := mathext.GammaIncRegComp(float64(k), rate*x)
				lowF := gammaLowerSeries(float64(k), rate*x)
				wantF := 1 - wantS // absolutely accurate above the mean; the series below it
				if x < g.Quantile(1e-4) {
					wantF = lowF
				}
				gotF, gotS := l.CDF(x), l.Survival(x)
				worstAbs = math.Max(worstAbs, math.Abs(gotF-wantF))
				assert.LessOrEqual(t, math.Abs(gotF-wantF), acc.CDFAbs, "k=%d CDF(%g)", k, x)
				r := math.Abs(gotS-wantS) / wantS
				worstRel = math.Max(worstRel, r)
				assert.LessOrEqual(t, r, acc.SurvivalRel, "k=%d Survival(%g) = %g, want %g", k, x, gotS, wantS)
				assert.LessOrEqual(t, r, 1e-6, "k=%d Survival(%g)", k, x)
				if x < g.Quantile(1e-4) {
					rl := math.Abs(gotF-lowF) / lowF
					worstLow = math.Max(worstLow, rl)
					assert.LessOrEqual(t, rl, 1e-6, "k=%d lower tail CDF(%g) = %g, want %g", k, x, gotF, lowF)
				}
			}
		}
		t.Logf("k=%d: worst CDF abs %.2e (bound %.2e), survival rel %.2e, lower-tail CDF rel %.2e (bound %.2e); %d bulk terms",
			k, worstAbs, acc.CDFAbs, worstRel, worstLow, acc.SurvivalRel, len(n.pr))
		assert.InEpsilon(t, float64(k)/rate, l.Mean(), 1e-12)
		assert.InEpsilon(t, float64(k)/(rate*rate), l.Variance(), 1e-12)
	}
}

// TestIIDSumsMatchesGamma checks the prepared many-k evaluator against the
// same oracle (mathext.GammaIncReg / GammaIncRegComp).
func TestIIDSumsMatchesGamma(t *testing.T) {
	const rate = 0.5
	// force the inversion: a mixture of one exponential is that exponential,
	// so wrap it as an affine map with a unit scale and a zero-mean shift
	p, err := NewIIDSums(affine{base: MustExponential(rate), scale: 1, shift: 0})
	require.NoError(t, err)
	for _, k := range []int{3, 50, 20000, 5000000} {
		g := MustGamma(float64(k), rate)
		for _, q := range []float64{1e-13, 1e-8, 1e-3, 0.2, 0.5} {
			lo, hi := g.Quantile(q), g.UpperQuantile(q)
			assert.InEpsilon(t, gammaLowerSeries(float64(k), rate*lo), p.CDF(k, lo), 1e-6, "k=%d lower %g", k, q)
			assert.InEpsilon(t, mathext.GammaIncRegComp(float64(k), rate*hi), p.Survival(k, hi), 1e-6, "k=%d upper %g", k, q)
		}
	}
	assert.True(t, math.IsNaN(p.CDF(0, 1)))
	assert.True(t, math.IsNaN(p.CDF(3, math.NaN())))
}

// gammaLowerSeries is the regularised lower incomplete gamma function by its
// power series P(a, x) = x^a·e^(-x)/Γ(a+1)·Σ_n x^n/((a+1)…(a+n))
// (Abramowitz & Stegun 6.5.29 — from memory), summed in float64 with
// math.Lgamma; for x <= a the terms decrease and the relative error is about
// 1e-16·(|log Γ(a+1)| + √a), i.e. 2e-8 at a = 10^7. For x > a it returns
// 1 - GammaIncRegComp (gonum), which is then the larger of the two tails.
func gammaLowerSeries(a, x float64) float64 {
	if x > a {
		return 1 - mathext.GammaIncRegComp(a, x)
	}
	lg, _ := math.Lgamma(a + 1)
	sum, term := 1.0, 1.0
	for n := 1; n < 100000000; n++ {
		term *= x / (a + float64(n))
		sum += term
		if term < 1e-17*sum {
			break
		}
	}
	return math.Exp(a*math.Log(x)-x-lg) * sum
}

// TestSumIIDNormalisesMassDefect: a six-atom law whose normalised masses
// sum to 1 + 2.2e-16 in floating point, smoothed by a uniform, summed
// 1.5·10^5 times. Without the normalisation the bulk series carried a mass
// of (1 + 2.2e-16)^k and erred by 1.05e-11 at ±3 standard deviations
// against a stated 3.95e-12. Reference: IIDSums's tilted inversion of the
// same sum, a separate evaluation path that normalises M(0) itself
// (massDefect) and is checked against Erlang and exact Irwin–Hall laws in
// iidsums_point_test.go.
func TestSumIIDNormalisesMassDefect(t *testing.T) {
	v := []float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3, 0.31 * math.E / 2, 0.4 * math.Sqrt(7), 0.77 * math.Sqrt(3)}
	p := []float64{0.18989900884799774, 0.2650345914547713, 0.0203019848818998, 0.26181079141444397, 0.014028602302536795, 0.2489250210983502}
	term := MustSum(MustDiscrete(v, p), MustUniform(0, 0.002))
	tr, ok := transformOf(term)
	require.True(t, ok)
	require.NotZero(t, real(tr.logm(0)), "the case must carry a mass defect to test anything")
	const k = 150000
	s, err := SumIID(term, k)
	require.NoError(t, err)
	ref, err := NewIIDSums(term)
	require.NoError(t, err)
	acc := s.(Estimated).Accuracy()
	m, sd := s.Mean(), math.Sqrt(s.Variance())
	for _, z := range []float64{-3, -1, -0.3, 0, 0.3, 1, 3} {
		x := m + z*sd
		b, a := ref.Tails(k, x)
		assert.LessOrEqual(t, math.Abs(s.CDF(x)-b), acc.CDFAbs, "CDF at z = %g", z)
		assert.LessOrEqual(t, math.Abs(s.Survival(x)-a), acc.CDFAbs, "survival at z = %g", z)
	}
}
