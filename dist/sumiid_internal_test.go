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
