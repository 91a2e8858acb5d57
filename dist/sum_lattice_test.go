package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
)

func TestSumLatticeFallback(t *testing.T) {
	// A Weibull law with shape 1 and scale λ is the exponential law with rate
	// 1/λ (closed form of the Weibull CDF 1 - exp(-(x/λ)^k), common
	// practice); through FromDistuv it has no known transform, so Sum takes
	// the lattice fallback.
	w1 := mustLaw(dist.FromDistuv(distuv.Weibull{K: 1, Lambda: 1}))
	w2 := mustLaw(dist.FromDistuv(distuv.Weibull{K: 1, Lambda: 0.5}))
	cases := []struct {
		name  string
		terms []dist.Law
		cdf   func(x float64) float64
		surv  func(x float64) float64
	}{
		{
			// Exp(1) + Gamma(2, 1) = Gamma(3, 1): gonum distuv.Gamma for the
			// CDF, mathext.GammaIncRegComp for the upper tail
			"Exp(1) as Weibull + Gamma(2, 1)", []dist.Law{w1, dist.MustGamma(2, 1)},
			distuv.Gamma{Alpha: 3, Beta: 1}.CDF,
			func(x float64) float64 { return mathext.GammaIncRegComp(3, x) },
		},
		{
			// Exp(1) + Exp(2), both as Weibull: the hypoexponential law,
			// F(x) = 1 - 2·exp(-x) + exp(-2x) (standard closed form, from
			// memory; it is the convolution integral of the two densities)
			"Exp(1) + Exp(2) as Weibulls", []dist.Law{w1, w2},
			func(x float64) float64 { return 1 - 2*math.Exp(-x) + math.Exp(-2*x) },
			func(x float64) float64 { return 2*math.Exp(-x) - math.Exp(-2*x) },
		},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			l, err := dist.Sum(c.terms...)
			require.NoError(t, err)
			est, ok := l.(dist.Estimated)
			require.True(t, ok)
			acc := est.Accuracy()
			var worst float64
			for x := 0.01; x < 30; x += 0.0137 {
				worst = math.Max(worst, math.Abs(l.CDF(x)-c.cdf(x)))
				worst = math.Max(worst, math.Abs(l.Survival(x)-c.surv(x)))
			}
			t.Logf("%s: worst CDF/survival abs error %.2e; %+v", c.name, worst, acc)
			for x := 0.01; x < 40; x += 0.0571 {
				if want := c.surv(x); want >= acc.TailFloor {
					assert.InDelta(t, 0, l.Survival(x)/want-1, acc.SurvivalRel, "survival at %v", x)
				}
			}
			assert.LessOrEqual(t, worst, acc.CDFAbs)
			assert.Less(t, acc.CDFAbs, 2e-5, "the step is fine enough for these laws")
			// mean and variance are the terms' sums, exactly
			var m, v float64
			for _, x := range c.terms {
				m += x.Mean()
				v += x.Variance()
			}
			assert.InDelta(t, m, l.Mean(), 1e-12*m)
			assert.InDelta(t, v, l.Variance(), 1e-12*v)
			require.NoError(t, disttest.Check(l, disttest.WithQuantileTolerance(1e-3)))
		})
	}
}
