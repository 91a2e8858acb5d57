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
	"github.com/joulelaw/joulelaw/internal/testref"
)

// weibullExp returns Exp(rate) as a Weibull law with shape 1 and scale
// 1/rate through FromDistuv: it has no known transform, so sums of it take
// the lattice fallback. (A Weibull law with shape 1 and scale λ is the
// exponential law with rate 1/λ: its CDF 1 - exp(-(x/λ)^k), common
// practice.)
func weibullExp(rate float64) dist.Law {
	return mustLaw(dist.FromDistuv(distuv.Weibull{K: 1, Lambda: 1 / rate}))
}

// hypoExp2 returns the CDF and survival of Exp(a) + Exp(b), a != b:
// S(x) = (b·e^{-ax} - a·e^{-bx})/(b - a) for x >= 0 (the convolution
// integral of the two densities; standard closed form, from memory).
func hypoExp2(a, b float64) (cdf, surv func(float64) float64) {
	surv = func(x float64) float64 {
		if x <= 0 {
			return 1
		}
		return (b*math.Exp(-a*x) - a*math.Exp(-b*x)) / (b - a)
	}
	cdf = func(x float64) float64 {
		if x <= 0 {
			return 0
		}
		// 1 - S without cancellation: (b·(1-e^{-ax}) - a·(1-e^{-bx}))/(b-a)
		return (-b*math.Expm1(-a*x) + a*math.Expm1(-b*x)) / (b - a)
	}
	return cdf, surv
}

// gamma3 returns the CDF and survival of Gamma(3, 1) (gonum distuv.Gamma for
// the CDF, mathext.GammaIncRegComp for the upper tail).
func gamma3() (cdf, surv func(float64) float64) {
	return func(x float64) float64 {
			if x <= 0 {
				return 0
			}
			return distuv.Gamma{Alpha: 3, Beta: 1}.CDF(x)
		}, func(x float64) float64 {
			if x <= 0 {
				return 1
			}
			return mathext.GammaIncRegComp(3, x)
		}
}

// shiftedCDF returns the exact mixture Σ p_i·G(x - v_i) of a closed form G.
func shiftedCDF(vals, probs []float64, g func(float64) float64) func(float64) float64 {
	return func(x float64) float64 {
		s := 0.0
		for i, v := range vals {
			s += probs[i] * g(x-v)
		}
		return s
	}
}

type latticeCase struct {
	name  string
	terms []dist.Law
	cdf   func(x float64) float64
	surv  func(x float64) float64
	lo    float64 // the oracle is checked on [lo, lo + 40]
	// maxAbs is what the stated CDF bound must stay below (0: 1e-10, the
	// accuracy asked of sums mixing atoms and continuous laws)
	maxAbs float64
}

func latticeCases() []latticeCase {
	e1, e2 := weibullExp(1), weibullExp(2)
	hc, hs := hypoExp2(1, 2)
	gc, gs := gamma3()
	dv, dp := []float64{0, 1, 2.5}, []float64{0.5, 0.3, 0.2}
	u := mustLaw(dist.FromDistuv(distuv.Uniform{Min: 0, Max: 1}))
	g05 := mustLaw(dist.FromDistuv(distuv.Gamma{Alpha: 0.5, Beta: 1}))
	disc := dist.MustDiscrete(dv, dp)
	// an exponential with an atom, wrapped by Affine so that it is not a
	// mixture term the expansion sees: 0.3 at 0.5, 0.7 spread as Exp(1)
	mixed := mustLaw(dist.Affine(mustLaw(dist.Mixture([]float64{0.3, 0.7},
		[]dist.Law{dist.MustPointMass(0), e1})), 1, 0.5))
	g2c := func(x float64) float64 { // Gamma(2, 1): gonum distuv.Gamma
		if x <= 0 {
			return 0
		}
		return distuv.Gamma{Alpha: 2, Beta: 1}.CDF(x)
	}
	g2s := func(x float64) float64 { // mathext.GammaIncRegComp
		if x <= 0 {
			return 1
		}
		return mathext.GammaIncRegComp(2, x)
	}
	return []latticeCase{
		// Exp(1) + Gamma(2, 1) = Gamma(3, 1)
		{"Exp(1) as Weibull + Gamma(2, 1)", []dist.Law{e1, dist.MustGamma(2, 1)}, gc, gs, 0, 0},
		// Exp(1) + Exp(2), both as Weibulls: the hypoexponential law
		{"Exp(1) + Exp(2) as Weibulls", []dist.Law{e1, e2}, hc, hs, 0, 0},
		// a finite discrete term enters exactly: Σ p_i·H(x - v_i), H the
		// hypoexponential closed form
		{"Discrete + Exp(1) + Exp(2) as Weibulls", []dist.Law{disc, e1, e2},
			shiftedCDF(dv, dp, hc), shiftedCDF(dv, dp, hs), 0, 0},
		// a point mass is a shift: Gamma(3, 1) moved by 2
		{"PointMass(2) + Exp(1) as Weibull + Gamma(2, 1)", []dist.Law{dist.MustPointMass(2), e1, dist.MustGamma(2, 1)},
			shiftedCDF([]float64{2}, []float64{1}, gc), shiftedCDF([]float64{2}, []float64{1}, gs), 2, 0},
		// a term with an atom and a transform-less continuous part, split:
		// 0.3·Gamma(2, 1)(x - 0.5) + 0.7·Gamma(3, 1)(x - 0.5)
		{"(0.3 atom + 0.7 Exp(1) as Weibull) + Exp(1) as Weibull + Exp(1)", []dist.Law{mixed, e1, dist.MustExponential(1)},
			func(x float64) float64 { return 0.3*g2c(x-0.5) + 0.7*gc(x-0.5) },
			func(x float64) float64 { return 0.3*g2s(x-0.5) + 0.7*gs(x-0.5) }, 0.5, 0},
		// the same atom as a mixture term (the mixture expansion takes it)
		{"Mixture(0.3 PointMass(0.5), 0.7 Exp(1) as Weibull) + Gamma(2, 1)", []dist.Law{
			mustLaw(dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(0.5), e1})), dist.MustGamma(2, 1)},
			func(x float64) float64 { return 0.3*g2c(x-0.5) + 0.7*gc(x) },
			func(x float64) float64 { return 0.3*g2s(x-0.5) + 0.7*gs(x) }, 0, 0},
		// a kink inside the support: U(0,1) + U(0,1) is triangular,
		// F = x²/2 on [0, 1], 1 - (2-x)²/2 on [1, 2] (Irwin–Hall, n = 2;
		// common practice)
		{"Uniform + Uniform as FromDistuv", []dist.Law{u, u},
			func(x float64) float64 {
				switch {
				case x <= 0:
					return 0
				case x <= 1:
					return x * x / 2
				case x <= 2:
					return 1 - (2-x)*(2-x)/2
				}
				return 1
			},
			func(x float64) float64 {
				switch {
				case x <= 0:
					return 1
				case x <= 1:
					return 1 - x*x/2
				case x <= 2:
					return (2 - x) * (2 - x) / 2
				}
				return 0
			}, 0, 1e-9},
		// densities singular at 0 (x^(-1/2)): Gamma(1/2) + Gamma(1/2) =
		// Exp(1) and Gamma(1/2) + Gamma(3/2) = Gamma(2) (gamma additivity,
		// common practice; gonum distuv.Gamma, mathext.GammaIncRegComp); the
		// extrapolation does not remove an O(δ^1.5) error, and says so
		{"Gamma(1/2) + Gamma(1/2) as FromDistuv", []dist.Law{g05, g05},
			func(x float64) float64 { return math.Max(0, -math.Expm1(-x)) },
			func(x float64) float64 { return math.Exp(-math.Max(0, x)) }, 0, 1e-3},
		{"Gamma(1/2) + Gamma(3/2) as FromDistuv", []dist.Law{g05, mustLaw(dist.FromDistuv(distuv.Gamma{Alpha: 1.5, Beta: 1}))},
			g2c, g2s, 0, 1e-4},
	}
}

func TestSumLatticeFallback(t *testing.T) {
	for _, c := range latticeCases() {
		t.Run(c.name, func(t *testing.T) {
			l, err := dist.Sum(c.terms...)
			require.NoError(t, err)
			est, ok := l.(dist.Estimated)
			require.True(t, ok)
			acc := est.Accuracy()
			var worst, worstRel float64
			for x := c.lo - 0.5; x < c.lo+30; x += 0.000731 {
				worst = math.Max(worst, math.Abs(l.CDF(x)-c.cdf(x)))
				worst = math.Max(worst, math.Abs(l.Survival(x)-c.surv(x)))
			}
			for x := c.lo + 0.01; x < c.lo+45; x += 0.0571 {
				if want := c.surv(x); want >= acc.TailFloor {
					worstRel = math.Max(worstRel, math.Abs(l.Survival(x)/want-1))
				}
			}
			t.Logf("%s: worst CDF/survival abs error %.2e, survival rel %.2e; %+v", c.name, worst, worstRel, acc)
			assert.LessOrEqual(t, worst, acc.CDFAbs, "stated CDF bound")
			assert.LessOrEqual(t, worstRel, acc.SurvivalRel, "stated survival bound")
			maxAbs := c.maxAbs
			if maxAbs == 0 {
				maxAbs = 1e-10
			}
			assert.Less(t, acc.CDFAbs, maxAbs, "extrapolated lattice")
			assert.Less(t, acc.TailFloor, 1e-15, "tilted tails")
			// mean and variance are the terms' sums, exactly
			var m, v float64
			for _, x := range c.terms {
				m += x.Mean()
				v += x.Variance()
			}
			assert.InDelta(t, m, l.Mean(), 1e-12*m)
			assert.InDelta(t, v, l.Variance(), 1e-12*v)
			if cf, ok := l.(dist.CharFunc); ok {
				// the mixture expansion leaves lattice combinations to
				// latticeSum, so a law claiming a transform has one
				assert.False(t, math.IsNaN(real(cf.CF(0.5))), "%T claims CharFunc and its CF is NaN", l)
			}
			require.NoError(t, disttest.Check(l, disttest.WithQuantileTolerance(1e-6)))
		})
	}
}

// TestSumLatticeAtomsExact checks that the atoms of a sum whose terms can all
// take an atom at once stay exact: 0.3·PointMass(0.5) of the wrapped term
// plus a purely discrete term gives atoms of mass 0.3·p_i.
func TestSumLatticeAtomsExact(t *testing.T) {
	e1 := weibullExp(1)
	mixed := mustLaw(dist.Affine(mustLaw(dist.Mixture([]float64{0.3, 0.7},
		[]dist.Law{dist.MustPointMass(0), e1})), 1, 0.5))
	mixed2 := mustLaw(dist.Affine(mustLaw(dist.Mixture([]float64{0.4, 0.6},
		[]dist.Law{dist.MustPointMass(0), weibullExp(2)})), 1, 1))
	l, err := dist.Sum(dist.MustDiscrete([]float64{0, 1}, []float64{0.5, 0.5}), mixed, mixed2)
	require.NoError(t, err)
	al, ok := l.(dist.Atomic)
	require.True(t, ok)
	atoms := al.Atoms()
	// P(both atoms) = 0.3·0.4 = 0.12, at 1.5 + {0, 1}
	want := []dist.Atom{{Value: 1.5, Mass: 0.06}, {Value: 2.5, Mass: 0.06}}
	require.Len(t, atoms, len(want))
	for i, w := range want {
		assert.InDelta(t, w.Value, atoms[i].Value, 1e-15)
		assert.InDelta(t, w.Mass, atoms[i].Mass, 1e-15)
	}
	// the jump at the atom is exact to the stated bound
	acc := l.(dist.Estimated).Accuracy()
	jump := l.CDF(1.5) - l.CDF(math.Nextafter(1.5, 0))
	assert.InDelta(t, 0.06, jump, 2*acc.CDFAbs)
	require.NoError(t, disttest.Check(l, disttest.WithQuantileTolerance(1e-6)))
}

// TestSumLatticeMonteCarlo compares a lattice sum with atoms against draws
// from its structure (each term's own sampler), by the Kolmogorov–Smirnov
// distance at level 1e-6 (Dvoretzky–Kiefer–Wolfowitz–Massart bound,
// testref.KSCritical), fixed seed.
func TestSumLatticeMonteCarlo(t *testing.T) {
	terms := []dist.Law{
		dist.MustDiscrete([]float64{0, 0.3, 2}, []float64{0.6, 0.3, 0.1}),
		mustLaw(dist.FromDistuv(distuv.Weibull{K: 1.5, Lambda: 2})),
		mustLaw(dist.FromDistuv(distuv.Weibull{K: 0.8, Lambda: 0.5})),
		mustLaw(dist.Affine(mustLaw(dist.Mixture([]float64{0.2, 0.8},
			[]dist.Law{dist.MustPointMass(0), weibullExp(3)})), 1, 0.1)),
	}
	l, err := dist.Sum(terms...)
	require.NoError(t, err)
	const n = 200000
	xs := structuralSamples(terms, n, 7, 11)
	d := testref.KSStatistic(xs, l.CDF)
	crit := testref.KSCritical(n, 1e-6)
	t.Logf("KS distance %.4g, critical %.4g; %+v", d, crit, l.(dist.Estimated).Accuracy())
	assert.Less(t, d, crit)
	require.NoError(t, disttest.Check(l, disttest.WithQuantileTolerance(1e-6)))
}

// TestSumLatticeTooManyCombinations checks the documented limit: seven
// terms that each mix an atom with a transform-less continuous part make
// 2^7 = 128 combinations, beyond the 64 the lattice fallback expands, and
// the error wraps ErrParam.
func TestSumLatticeTooManyCombinations(t *testing.T) {
	var terms []dist.Law
	for i := 0; i < 7; i++ {
		terms = append(terms, mustLaw(dist.Affine(mustLaw(dist.Mixture([]float64{0.5, 0.5},
			[]dist.Law{dist.MustPointMass(0), weibullExp(1)})), 1, float64(i+1))))
	}
	_, err := dist.Sum(terms...)
	require.Error(t, err)
	assert.ErrorIs(t, err, dist.ErrParam)
	// three of them (8 combinations) are summed
	l, err := dist.Sum(terms[:3]...)
	require.NoError(t, err)
	assert.InDelta(t, 6+1.5, l.Mean(), 1e-12)
}
