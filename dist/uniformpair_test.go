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

// boxConvolution returns P(U + V <= x) and P(U + V > x) for U ~ Uniform(a1, b1),
// V ~ Uniform(a2, b2) from the defining integral (1/w2)·∫ F_U(x - v) dv over
// [a2, b2], by gonum's Gauss–Legendre rule on the pieces between the kinks of
// the integrand (where it is linear or constant, so the rule is exact to
// rounding).
func boxConvolution(a1, b1, a2, b2, x float64) (cdf, surv float64) {
	u := dist.MustUniform(a1, b1)
	cuts := []float64{a2}
	for _, c := range []float64{x - b1, x - a1} {
		if c > a2 && c < b2 {
			cuts = append(cuts, c)
		}
	}
	cuts = append(cuts, b2)
	if len(cuts) == 4 && cuts[1] > cuts[2] {
		cuts[1], cuts[2] = cuts[2], cuts[1]
	}
	for i := 0; i+1 < len(cuts); i++ {
		cdf += quad.Fixed(func(v float64) float64 { return u.CDF(x - v) }, cuts[i], cuts[i+1], 4, nil, 0)
		surv += quad.Fixed(func(v float64) float64 { return u.Survival(x - v) }, cuts[i], cuts[i+1], 4, nil, 0)
	}
	return cdf / (b2 - a2), surv / (b2 - a2)
}

func TestSumTwoUniformsTrapezoid(t *testing.T) {
	tests := []struct {
		name           string
		a1, b1, a2, b2 float64
		k2             bool // as SumIID(U(a1, b1), 2)
	}{
		{"Irwin–Hall n = 2", 0, 1, 0, 1, true},
		{"widths 0.5 and 3", 2, 2.5, -1, 2, false},
		{"widths 3 and 0.5 (order swapped)", -1, 2, 2, 2.5, false},
		{"jitter of 1 ms on a 30 s wait", 30, 30.001, 0.2, 0.5, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			u, v := dist.MustUniform(tc.a1, tc.b1), dist.MustUniform(tc.a2, tc.b2)
			var l dist.Law
			var err error
			if tc.k2 {
				l, err = dist.SumIID(u, 2)
			} else {
				l, err = dist.Sum(u, v)
			}
			require.NoError(t, err)
			lo, hi := l.Support()
			assert.Equal(t, tc.a1+tc.a2, lo)
			assert.InDelta(t, tc.b1+tc.b2, hi, 1e-15*math.Abs(hi))
			for i := 1; i < 400; i++ {
				x := lo + (hi-lo)*float64(i)/400
				c, s := boxConvolution(tc.a1, tc.b1, tc.a2, tc.b2, x)
				assert.InDelta(t, c, l.CDF(x), 1e-13, "CDF(%g)", x)
				assert.LessOrEqual(t, testref.RelErr(l.Survival(x), s), 1e-9, "Survival(%g)", x)
			}
			// the far tails keep their relative precision: (hi-x)²/(2·w1·w2)
			w1, w2 := math.Min(tc.b1-tc.a1, tc.b2-tc.a2), math.Max(tc.b1-tc.a1, tc.b2-tc.a2)
			for _, q := range []float64{1e-14, 1e-10, 1e-6} {
				d := math.Sqrt(2 * w1 * w2 * q)
				assert.InEpsilon(t, hi-d, l.UpperQuantile(q), 1e-12)
				assert.InEpsilon(t, q, l.Survival(hi-d), 1e-6)
				assert.InEpsilon(t, lo+d, l.Quantile(q), 1e-12)
			}
			if irwin := tc.k2; irwin {
				for _, x := range []float64{0.01, 0.3, 0.5, 1, 1.2, 1.9, 1.999} {
					assert.InDelta(t, irwinHallCDF(2, x), l.CDF(x), 1e-15)
				}
			}
			assert.InEpsilon(t, u.Mean()+v.Mean(), l.Mean(), 1e-14)
			assert.InEpsilon(t, u.Variance()+v.Variance(), l.Variance(), 1e-14)
			cf, ok := l.(dist.CharFunc)
			require.True(t, ok)
			assert.InDelta(t, 0, cmplxAbs(cf.CF(2.5)-u.CF(2.5)*v.CF(2.5)), 1e-15)
			require.NoError(t, disttest.Check(l))
		})
	}
}

func TestSumTrapezoidInLargerSums(t *testing.T) {
	// a point mass and two uniforms: the exact shift of the trapezoid; with a
	// normal added: inverted. Both against sampling from the structure, KS at
	// level 1e-6 (DKW/Massart), fixed seed.
	u, v := dist.MustUniform(0, 2), dist.MustUniform(1, 1.5)
	d := dist.MustDiscrete([]float64{0, 10}, []float64{0.7, 0.3})
	for _, extra := range []dist.Law{nil, dist.MustNormal(0, 0.3)} {
		terms := []dist.Law{d, u, v}
		if extra != nil {
			terms = append(terms, extra)
		}
		l, err := dist.Sum(terms...)
		require.NoError(t, err)
		const n = 50000
		xs := structuralSamples(terms, n, 3, 4)
		slack := 0.0
		if e, ok := l.(dist.Estimated); ok {
			slack = e.Accuracy().CDFAbs
		}
		assert.Less(t, testref.KSStatistic(xs, l.CDF), testref.KSCritical(n, 1e-6)+slack, "%v", l)
	}
}

func cmplxAbs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }
