package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

func TestSumExponentialOverBoundedRestTail(t *testing.T) {
	// Sums of exponentials and terms bounded above: far upper tails against
	// oracles computed independently of the code's closed form.
	tn := dist.MustTruncated(dist.MustNormal(1, 0.3), 0, 2)
	tests := []struct {
		name  string
		terms []dist.Law
		surv  func(x float64) float64
		xs    []float64
	}{
		{
			// E + U: the convolution integral in closed form (expUniformSurvival)
			name:  "Exp(1) + Uniform(0, 1)",
			terms: []dist.Law{dist.MustExponential(1), dist.MustUniform(0, 1)},
			surv:  expUniformSurvival,
			xs:    []float64{0.5, 1, 1.5, 3, 10, 30, 100, 300, 650},
		},
		{
			// Exp(1) + Exp(3) + Uniform(0, 2) + 0.5: ∫_0^2 S_H(x - 0.5 - u) du/2
			// with S_H the hypoexponential survival (Ross §5.2.4, from
			// memory), by gonum's Gauss–Legendre rule (smooth integrand on
			// [0, 2] once x >= 2.5)
			name:  "Exp(1) + Exp(3) + Uniform(0, 2) + 0.5",
			terms: []dist.Law{dist.MustExponential(1), dist.MustExponential(3), dist.MustUniform(0, 2), dist.MustPointMass(0.5)},
			surv: func(x float64) float64 {
				return quad.Fixed(func(u float64) float64 { return hypoExpSurvival(1, 3, x-0.5-u) }, 0, 2, 40, nil, 0) / 2
			},
			xs: []float64{2.5, 3, 5, 10, 20, 35},
		},
		{
			// Exp(2) + a normal truncated to [0, 2]: ∫ e^{-2(x-r)}·f_R(r) dr over
			// [0, 2] by gonum's Gauss–Legendre rule, f_R the normal density
			// renormalised by its mass on [0, 2] (gonum distuv.Normal)
			name:  "Exp(2) + TruncNormal(1, 0.3; [0, 2])",
			terms: []dist.Law{dist.MustExponential(2), tn},
			surv: func(x float64) float64 {
				z := tn.(dist.Densitied)
				return quad.Fixed(func(r float64) float64 { return math.Exp(-2*(x-r)) * z.Density(r) }, 0, 2, 60, nil, 0)
			},
			xs: []float64{2, 2.5, 4, 8, 15},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			l, err := dist.Sum(tc.terms...)
			require.NoError(t, err)
			acc := l.(dist.Estimated).Accuracy()
			worst := 0.0
			for _, x := range tc.xs {
				want := tc.surv(x)
				require.Greater(t, want, 0.0)
				r := testref.RelErr(l.Survival(x), want)
				worst = math.Max(worst, r)
				assert.LessOrEqual(t, r, acc.SurvivalRel, "Survival(%g) = %g, want %g", x, l.Survival(x), want)
				if want >= 1e-300 && want < 0.5 {
					assert.InEpsilon(t, x, l.UpperQuantile(want), 1e-9)
				}
			}
			t.Logf("%s: worst survival rel %.2e; %+v", tc.name, worst, acc)
			assert.LessOrEqual(t, worst, testref.TolTailRel)
			assert.LessOrEqual(t, acc.SurvivalRel, testref.TolTailRel)
			require.NoError(t, disttest.Check(l))
		})
	}
}
