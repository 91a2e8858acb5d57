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
	t.Parallel() // slow: runs beside the others (go test ≤ 90 s on two cores)
	if testing.Short() {
		t.Skip("slow oracle sweep: skipped under -short (go test -race -short ./...); CI runs it")
	}
	// Sums of exponentials and terms bounded above: far upper tails against
	// oracles computed independently of the code's closed form.
	// trapezoid density of Uniform(0, 1) + Uniform(0, w): the length of
	// [0, 1] ∩ [r - w, r] over w (convolution of two boxes, by hand)
	trap := func(w float64) func(float64) float64 {
		return func(r float64) float64 {
			return math.Max(0, math.Min(1, r)-math.Max(0, r-w)) / w
		}
	}
	tests := []struct {
		name  string
		terms []dist.Law
		surv  func(x float64) float64
		xs    []float64
	}{
		{
			// E + U + V: beyond 1.5, ∫_0^1.5 e^{-(x-r)}·f_{U+V}(r) dr by gonum's
			// Gauss–Legendre rule on the pieces between the trapezoid's kinks
			name:  "Exp(1) + Uniform(0, 1) + Uniform(0, 0.5)",
			terms: []dist.Law{dist.MustExponential(1), dist.MustUniform(0, 1), dist.MustUniform(0, 0.5)},
			surv: func(x float64) float64 {
				f := func(r float64) float64 { return math.Exp(-(x - r)) * trap(0.5)(r) }
				return quad.Fixed(f, 0, 0.5, 20, nil, 0) + quad.Fixed(f, 0.5, 1, 20, nil, 0) + quad.Fixed(f, 1, 1.5, 20, nil, 0)
			},
			xs: []float64{1.5, 2, 4, 10, 30, 100, 300, 650},
		},
		{
			// Exp(1) + Exp(3) + U + V + 0.5: the hypoexponential survival
			// (Ross §5.2.4, from memory) integrated against the trapezoid
			name:  "Exp(1) + Exp(3) + Uniform(0, 1) + Uniform(0, 0.25) + 0.5",
			terms: []dist.Law{dist.MustExponential(1), dist.MustExponential(3), dist.MustUniform(0, 1), dist.MustUniform(0, 0.25), dist.MustPointMass(0.5)},
			surv: func(x float64) float64 {
				f := func(r float64) float64 { return hypoExpSurvival(1, 3, x-0.5-r) * trap(0.25)(r) }
				return quad.Fixed(f, 0, 0.25, 20, nil, 0) + quad.Fixed(f, 0.25, 1, 20, nil, 0) + quad.Fixed(f, 1, 1.25, 20, nil, 0)
			},
			xs: []float64{1.75, 2, 3, 5, 10, 20, 35},
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
