package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// panelQuad integrates f over [a, b] by gonum's 20-point Gauss–Legendre
// rule on n equal panels.
func panelQuad(f func(float64) float64, a, b float64, n int) float64 {
	s, w := 0.0, (b-a)/float64(n)
	for i := 0; i < n; i++ {
		s += quad.Fixed(f, a+float64(i)*w, a+float64(i+1)*w, 20, nil, 0)
	}
	return s
}

// expOverSurvival is P(E + R > x) for E ~ Exp(λ) and R with density fR and
// survival sR, from the conditioning integral
// ∫_{lo}^{x} e^{-λ(x-r)}·f_R(r) dr + S_R(x), by panelQuad (an oracle
// independent of the closed forms in the code: only the densities enter).
func expOverSurvival(lambda float64, fR, sR func(float64) float64, lo, x float64) float64 {
	if x <= lo {
		return 1
	}
	return panelQuad(func(r float64) float64 { return math.Exp(-lambda*(x-r)) * fR(r) }, lo, x, 200) + sR(x)
}

func TestSumExponentialsOverOneLawClosedForm(t *testing.T) {
	nrm := distuv.Normal{Mu: 2, Sigma: 0.5}
	// the normal's survival from math.Erfc (gonum's saturates beyond 8σ)
	nSurv := func(x float64) float64 { return 0.5 * math.Erfc((x-2)/(0.5*math.Sqrt2)) }
	g := distuv.Gamma{Alpha: 2.5, Beta: 3}
	tests := []struct {
		name  string
		terms []dist.Law
		surv  func(x float64) float64
		xs    []float64
	}{
		{
			// the exponentially modified normal; oracle: the conditioning
			// integral over gonum's normal density
			name:  "Exp(1.5) + Normal(2, 0.5)",
			terms: []dist.Law{dist.MustExponential(1.5), dist.MustNormal(2, 0.5)},
			surv: func(x float64) float64 {
				return expOverSurvival(1.5, nrm.Prob, nSurv, -8, x)
			},
			xs: []float64{-1, 0.5, 2, 3, 5, 10, 20, 60, 200},
		},
		{
			// hypoexponential over a normal: Σ_j c_j·(law of E_j + N) with
			// the hypoexponential weights (Ross §5.2.4, from memory)
			name:  "Exp(1) + Exp(2.5) + Normal(2, 0.5)",
			terms: []dist.Law{dist.MustExponential(1), dist.MustExponential(2.5), dist.MustNormal(2, 0.5)},
			surv: func(x float64) float64 {
				c1, c2 := 2.5/(2.5-1), 1/(1-2.5)
				return c1*expOverSurvival(1, nrm.Prob, nSurv, -8, x) + c2*expOverSurvival(2.5, nrm.Prob, nSurv, -8, x)
			},
			xs: []float64{0.5, 2, 4, 8, 15, 40, 150},
		},
		{
			// Exp(1) + Gamma(2.5, 3): the integral in u = √r (smooth
			// integrand), gonum's gamma density and mathext-based survival
			name:  "Exp(1) + Gamma(2.5, 3)",
			terms: []dist.Law{dist.MustExponential(1), dist.MustGamma(2.5, 3)},
			surv: func(x float64) float64 {
				if x <= 0 {
					return 1
				}
				in := panelQuad(func(u float64) float64 { return math.Exp(-(x - u*u)) * g.Prob(u*u) * 2 * u }, 0, math.Sqrt(x), 200)
				return in + g.Survival(x)
			},
			xs: []float64{0.05, 0.5, 1, 3, 8, 20, 60, 300},
		},
		{
			// atoms + E + U: the shifted E + U closed form (expUniformSurvival)
			name:  "Discrete{0, 4.5} + Exp(1) + Uniform(0, 1)",
			terms: []dist.Law{dist.MustDiscrete([]float64{0, 4.5}, []float64{0.6, 0.4}), dist.MustExponential(1), dist.MustUniform(0, 1)},
			surv: func(x float64) float64 {
				return 0.6*expUniformSurvival(x) + 0.4*expUniformSurvival(x-4.5)
			},
			xs: []float64{0.2, 1, 3, 4.6, 5.5, 9, 30, 120, 600},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			l, err := dist.Sum(tc.terms...)
			require.NoError(t, err)
			acc := l.(dist.Estimated).Accuracy()
			assert.Contains(t, acc.Method, "closed form")
			var worstAbs, worstRel float64
			for _, x := range tc.xs {
				want := tc.surv(x)
				worstAbs = math.Max(worstAbs, math.Abs(l.CDF(x)-(1-want)))
				assert.InDelta(t, 1-want, l.CDF(x), acc.CDFAbs+1e-13, "CDF(%g)", x)
				if want > 1e-300 {
					r := testref.RelErr(l.Survival(x), want)
					worstRel = math.Max(worstRel, r)
					assert.LessOrEqual(t, r, math.Max(acc.SurvivalRel, 1e-11), "Survival(%g) = %g, want %g", x, l.Survival(x), want)
					if want < 0.5 {
						assert.InEpsilon(t, x, l.UpperQuantile(want), 1e-9)
					}
				}
			}
			t.Logf("%s: worst CDF abs %.2e, survival rel %.2e (oracle by quadrature); %+v", tc.name, worstAbs, worstRel, acc)
			var mean, variance float64
			for _, tm := range tc.terms {
				mean += tm.Mean()
				variance += tm.Variance()
			}
			assert.InEpsilon(t, mean, l.Mean(), 1e-14)
			assert.InEpsilon(t, variance, l.Variance(), 1e-14)
			require.NoError(t, disttest.Check(l))
		})
	}
}

func TestSumExponentialOverScaledTruncatedNormal(t *testing.T) {
	// a state energy 3.3 V·I·t with a truncated-normal current, plus an
	// exponential: the scaled truncation is recognised (affine of the
	// truncated normal); oracle the conditioning integral by quadrature over
	// the truncated normal's density (gonum distuv.Normal, renormalised by
	// its mass on [0, 2] from math.Erfc).
	tn := dist.MustTruncated(dist.MustNormal(1, 0.2), 0, 2)
	st, err := dist.Affine(tn, 3, 0.5)
	require.NoError(t, err)
	l, err := dist.Sum(st, dist.MustExponential(2))
	require.NoError(t, err)
	assert.Contains(t, l.(dist.Estimated).Accuracy().Method, "closed form")
	nrm := distuv.Normal{Mu: 1, Sigma: 0.2}
	mass := 0.5*math.Erfc(-1/(0.2*math.Sqrt2)) - 0.5*math.Erfc(1/(0.2*math.Sqrt2))
	for _, x := range []float64{2, 3.5, 5, 7, 12, 40, 200} {
		// X = 3C + 0.5 + E: S(x) = ∫ P(E > x - 3c - 0.5)·f_C(c) dc over [0, 2]
		want := panelQuad(func(c float64) float64 {
			y := x - 3*c - 0.5
			s := 1.0
			if y > 0 {
				s = math.Exp(-2 * y)
			}
			return s * nrm.Prob(c) / mass
		}, 0, 2, 200)
		assert.LessOrEqual(t, testref.RelErr(l.Survival(x), want), 1e-9, "Survival(%g) = %g, want %g", x, l.Survival(x), want)
	}
	require.NoError(t, disttest.Check(l))
}
