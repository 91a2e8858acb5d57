package dist_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// TestSumAtomsRenormalised: issue 13. A sum of a finite discrete law and
// continuous terms, Σ p_i·F_C(x - v_i), was summed naively over the
// atoms: ten atoms of 0.1 (or thirteen of 1/13), whose rounded
// probabilities add to 1 - 2 ulp, gave CDF(+Inf) = Survival(-Inf) =
// 0.9999999999999999 (and 1 - 2 ulp at ±1e300, also through the
// exponential-smoothing closed form and the expanded mixtures). The sums
// are now compensated and divided by the probabilities' own sum. Oracles:
// a law's CDF is 1 at +Inf and its survival 1 at -Inf (definition); inside,
// D + N(0, 1) is Σ p_i·Φ(x - v_i) (closed form, Φ from gonum's
// distuv.UnitNormal).
func TestSumAtomsRenormalised(t *testing.T) {
	w, err := dist.FromDistuv(distuv.Weibull{K: 1.5, Lambda: 1})
	require.NoError(t, err)
	mx, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(0.5), dist.MustExponential(2)})
	require.NoError(t, err)
	for _, n := range []int{10, 13} {
		vals, probs := make([]float64, n), make([]float64, n)
		for i := range vals {
			vals[i], probs[i] = float64(i)*0.75, 1/float64(n)
		}
		d := dist.MustDiscrete(vals, probs)
		naive := 0.0
		for _, a := range d.Atoms() {
			naive += a.Mass
		}
		require.NotEqual(t, 1.0, naive, "n = %d: the atoms must add to 1 - ulp naively, or the test shows nothing", n)
		for name, terms := range map[string][]dist.Law{
			"normal":        {d, dist.MustNormal(0, 1)},
			"lognormal":     {d, dist.MustLogNormal(0, 1)},
			"uniform pair":  {d, dist.MustUniform(0, 1), dist.MustUniform(0, 2)},
			"exp + uniform": {d, dist.MustExponential(1), dist.MustUniform(0, 1)},
			"weibull":       {d, w},
			"mixture":       {d, mx},
		} {
			t.Run(fmt.Sprintf("%d %s", n, name), func(t *testing.T) {
				s, err := dist.Sum(terms...)
				require.NoError(t, err)
				for _, x := range []float64{math.Inf(1), 1e300} {
					assert.Equal(t, 1.0, s.CDF(x), "CDF(%g)", x)
					assert.Equal(t, 0.0, s.Survival(x), "Survival(%g)", x)
					assert.Equal(t, 1.0, s.Survival(-x), "Survival(%g)", -x)
					assert.Equal(t, 0.0, s.CDF(-x), "CDF(%g)", -x)
				}
			})
		}
		s := dist.MustSum(d, dist.MustNormal(0, 1))
		for _, x := range []float64{-3, 0, 1.7, 4, 9} {
			f, sv := 0.0, 0.0
			for _, a := range d.Atoms() {
				f += a.Mass * distuv.UnitNormal.CDF(x-a.Value)
				sv += a.Mass * distuv.UnitNormal.Survival(x-a.Value)
			}
			assert.InDelta(t, f, s.CDF(x), 4e-16, "CDF(%g)", x)
			assert.InEpsilon(t, sv, s.Survival(x), 1e-14, "Survival(%g)", x)
		}
	}
}

// TestAffineEdgesExact: issue 13. An affine map of an atom-plus-uniform
// mixture answered Survival 2.8e-17 (and CDF 1 - 3e-14 for small scales) at
// the top of its support: the map's rounding sent the top back to just
// below the base's top. The mapped law is now exactly 0 / 1 at and beyond
// its support's ends. Oracle: P(X > sup X) = 0 and P(X < inf X) = 0
// (definition); inside, P(aX + b <= x) = P(X <= (x - b)/a) for a > 0 and
// P(X >= (x - b)/a) for a < 0 (closed form, the base's own CDF).
func TestAffineEdgesExact(t *testing.T) {
	r := rand.New(rand.NewPCG(13, 1))
	for trial := 0; trial < 4000; trial++ {
		w := r.Float64()
		u := dist.MustUniform(r.Float64(), 1+r.Float64())
		base, err := dist.Mixture([]float64{w, 1 - w}, []dist.Law{dist.MustPointMass(u.Mean()), u})
		require.NoError(t, err)
		scale := (r.Float64() - 0.5) * math.Pow(10, 4*r.Float64()-2)
		shift := (r.Float64() - 0.5) * 10
		a, err := dist.Affine(base, scale, shift)
		require.NoError(t, err)
		lo, hi := a.Support()
		below := math.Nextafter(lo, math.Inf(-1))
		for _, x := range []float64{hi, math.Nextafter(hi, math.Inf(1)), math.Inf(1)} {
			require.Equal(t, 0.0, a.Survival(x), "trial %d: %v scale %g shift %g: Survival(%v)", trial, base, scale, shift, x)
			require.Equal(t, 1.0, a.CDF(x), "trial %d: CDF(%v)", trial, x)
		}
		for _, x := range []float64{below, math.Inf(-1)} {
			require.Equal(t, 0.0, a.CDF(x), "trial %d: CDF(%v)", trial, x)
			require.Equal(t, 1.0, a.Survival(x), "trial %d: Survival(%v)", trial, x)
		}
		x := lo + (hi-lo)/3 // off the atom, which maps to the middle
		y := (x - shift) / scale
		want := base.CDF(y)
		if scale < 0 {
			want = base.Survival(y)
		}
		require.InDelta(t, want, a.CDF(x), 1e-15, "trial %d: CDF at a third of the support", trial)
	}
}

// TestMixtureRefusesOutsideNaN: issue 13. A mixture with a FromDistuv
// component that answers NaN (or +Inf) somewhere was accepted and every
// value of the mixture there was NaN. Mixture now checks such a component
// (also under Affine and NewTruncated) at the ends of its support and at
// OutsideProbes of its quantiles, and returns an error wrapping ErrParam
// that names the component. Oracle for the accepted case: 0.4·Φ(x) +
// 0.6·Φ(x - 1) (closed form, Φ from gonum's distuv.UnitNormal).
func TestMixtureRefusesOutsideNaN(t *testing.T) {
	h, err := dist.FromDistuv(holeyNormal{distuv.Normal{Mu: 0, Sigma: 1}})
	require.NoError(t, err)
	ah, err := dist.Affine(h, 2, 1)
	require.NoError(t, err)
	th, err := dist.NewTruncated(h, -3, 3)
	require.NoError(t, err)
	for name, c := range map[string]dist.Law{"FromDistuv": h, "Affine": ah, "NewTruncated": th} {
		t.Run(name, func(t *testing.T) {
			_, err := dist.Mixture([]float64{0.4, 0.6}, []dist.Law{dist.MustNormal(0, 1), c})
			var pe *dist.ParamError
			require.True(t, errors.As(err, &pe), "%v", err)
			assert.True(t, errors.Is(err, dist.ErrParam))
			assert.Equal(t, "laws[1]", pe.Param)
			assert.Contains(t, err.Error(), "not a probability")
		})
	}
	g, err := dist.FromDistuv(distuv.Normal{Mu: 1, Sigma: 1})
	require.NoError(t, err)
	m, err := dist.Mixture([]float64{0.4, 0.6}, []dist.Law{dist.MustNormal(0, 1), g})
	require.NoError(t, err)
	for _, x := range []float64{-2, 0, 0.6, 1, 3} {
		want := 0.4*distuv.UnitNormal.CDF(x) + 0.6*distuv.UnitNormal.CDF(x-1)
		assert.InDelta(t, want, m.CDF(x), 1e-15, "CDF(%g)", x)
	}
}

// TestSumFarTailsNoNaN: issue 13 (found while auditing it). An inverted
// sum answered NaN far out: N(0, 1) + U(0, 1) at ±1e300 (the saddle point's
// K(θ) overflowed: Inf - Inf), LogNormal(0, 0.5) + N(0, 1) at -1e10 and
// below (the lognormal's transform failed at θ ≈ 1e10), also beside atoms.
// A Chernoff bound below the smallest float now answers 0 at once.
// Oracles: each tail is at most a tail of one term, P(N + U > x) <=
// P(N > x - 1) and P(LN + N <= x) <= P(N <= x) since LN >= 0, both 0 in
// float64 at these points (gonum's distuv.UnitNormal).
func TestSumFarTailsNoNaN(t *testing.T) {
	d := dist.MustDiscrete([]float64{0, 1, 2}, []float64{0.2, 0.3, 0.5})
	for name, c := range map[string]struct {
		terms    []dist.Law
		upper    []float64 // x where the survival is 0 in float64
		lower    []float64 // x where the CDF is 0 in float64
		upperBnd func(x float64) float64
		lowerBnd func(x float64) float64
	}{
		"N+U": {
			terms: []dist.Law{dist.MustNormal(0, 1), dist.MustUniform(0, 1)},
			upper: []float64{1e300, 1e200, 1e10, 1e3}, lower: []float64{-1e300, -1e200, -1e10, -1e3},
			upperBnd: func(x float64) float64 { return distuv.UnitNormal.Survival(x - 1) },
			lowerBnd: func(x float64) float64 { return distuv.UnitNormal.CDF(x) },
		},
		"N+U+atoms": {
			terms: []dist.Law{d, dist.MustNormal(0, 1), dist.MustUniform(0, 1)},
			upper: []float64{1e300, 1e10}, lower: []float64{-1e300, -1e10},
			upperBnd: func(x float64) float64 { return distuv.UnitNormal.Survival(x - 3) },
			lowerBnd: func(x float64) float64 { return distuv.UnitNormal.CDF(x) },
		},
		"LN+N": {
			terms: []dist.Law{dist.MustLogNormal(0, 0.5), dist.MustNormal(0, 1)},
			upper: nil, lower: []float64{-1e300, -1e100, -1e10, -1e3},
			lowerBnd: func(x float64) float64 { return distuv.UnitNormal.CDF(x) },
		},
	} {
		t.Run(name, func(t *testing.T) {
			s, err := dist.Sum(c.terms...)
			require.NoError(t, err)
			for _, x := range c.upper {
				require.Equal(t, 0.0, c.upperBnd(x), "oracle at %g", x)
				assert.Equal(t, 0.0, s.Survival(x), "Survival(%g)", x)
				assert.Equal(t, 1.0, s.CDF(x), "CDF(%g)", x)
			}
			for _, x := range c.lower {
				require.Equal(t, 0.0, c.lowerBnd(x), "oracle at %g", x)
				assert.Equal(t, 0.0, s.CDF(x), "CDF(%g)", x)
				assert.Equal(t, 1.0, s.Survival(x), "Survival(%g)", x)
			}
		})
	}
}

// TestFarCDFExact: issue 13 (found by FuzzSum's far-point check, its
// inputs kept in testdata/fuzz/FuzzSum). Two closed forms left their CDF
// short of 1 far out: the hypoexponential Exp(0.8) + Exp(0.6) at 1e300
// (1 - 4 ulp: the coefficients 4 and -3, each rounded, do not add to 1)
// and N(1/6, 2.1) truncated to [0, ∞) (1 - 2 ulp: the mass and the
// probability below x rounded apart), and with it its sum with an
// exponential. Each now takes 1 - S in its upper half. Oracles: P(X > x)
// <= σ²/(x - μ)² (Chebyshev), 0 in float64 at 1e300, so CDF = 1 exactly;
// inside, the hypoexponential's CDF 1 - 4·exp(-0.6x) + 3·exp(-0.8x)
// (closed form) and the truncated normal's (Φ((x-μ)/σ) - Φ(-μ/σ)) /
// Φ(μ/σ) from gonum's distuv.UnitNormal.
func TestFarCDFExact(t *testing.T) {
	h := dist.MustSum(dist.MustExponential(0.8), dist.MustExponential(0.6))
	mu, sd := 1.0/6, 2.1
	tn := dist.MustTruncated(dist.MustNormal(mu, sd), 0, math.Inf(1))
	s := dist.MustSum(tn, dist.MustExponential(0.5))
	for _, l := range []dist.Law{h, tn, s} {
		for _, x := range []float64{1e300, 1e100, 1e4, math.Inf(1)} {
			assert.Equal(t, 1.0, l.CDF(x), "%v: CDF(%g)", l, x)
			assert.Equal(t, 0.0, l.Survival(x), "%v: Survival(%g)", l, x)
		}
	}
	for _, x := range []float64{0.1, 1, 3, 10, 40} {
		want := 1 - 4*math.Exp(-0.6*x) + 3*math.Exp(-0.8*x)
		assert.InDelta(t, want, h.CDF(x), 4e-16, "hypoexponential CDF(%g)", x)
		z := distuv.UnitNormal
		wantT := (z.CDF((x-mu)/sd) - z.CDF(-mu/sd)) / z.Survival(-mu/sd)
		assert.InDelta(t, wantT, tn.CDF(x), 4e-16, "truncated CDF(%g)", x)
	}
}
