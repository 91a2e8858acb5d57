package dist_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// conformanceLaws lists laws that must pass every check of
// disttest.Check. Every law a constructor or operation of this package can
// return belongs here in at least one typical and one awkward form (far
// from 0, tiny or huge scale, atoms). Append entries; opts only loosen
// tolerances for numerically computed laws or add reference values.
var conformanceLaws = []struct {
	name string
	law  dist.Law
	opts []disttest.Option
}{
	// Normal: the far tail is checked against the 1600-bit table.
	{"Normal(0, 1)", dist.MustNormal(0, 1), []disttest.Option{normalTailReference()}},
	{"Normal(-3, 0.25)", dist.MustNormal(-3, 0.25), nil},
	{"Normal(1e6, 1e-3)", dist.MustNormal(1e6, 1e-3), nil},
	{"Normal(0, 1e9)", dist.MustNormal(0, 1e9), nil},

	// Exponential: the tail against gonum's incomplete gamma (shape 1).
	{"Exponential(2)", dist.MustExponential(2), []disttest.Option{exponentialTailReference(2)}},
	{"Exponential(1e-4)", dist.MustExponential(1e-4), nil},
	{"Exponential(1e5)", dist.MustExponential(1e5), nil},

	{"Uniform(0, 1)", dist.MustUniform(0, 1), nil},
	{"Uniform(-5, -2)", dist.MustUniform(-5, -2), nil},
	{"Uniform(1e6, 1e6+1)", dist.MustUniform(1e6, 1e6+1), nil},
	{"Uniform(-1e-9, 1e-9)", dist.MustUniform(-1e-9, 1e-9), nil},

	{"Discrete{1:0.2, 2:0.5, 5:0.3}", dist.MustDiscrete([]float64{1, 2, 5}, []float64{0.2, 0.5, 0.3}), nil},
	{"Discrete with negative values", dist.MustDiscrete([]float64{-3, -1, 0, 2.5}, []float64{0.1, 0.4, 0.25, 0.25}), nil},
	{"Discrete with a 1e-20 top atom", dist.MustDiscrete([]float64{0, 1, 2}, []float64{0.5, 0.5, 1e-20}), nil},
	{"Discrete Binomial(60, 0.3)", binomialLaw(60, 0.3), nil},
	{"PointMass(0)", dist.MustPointMass(0), nil},
	{"PointMass(-7.5)", dist.MustPointMass(-7.5), nil},

	// Gamma: the tail against the Erlang closed form for integer shape.
	{"Gamma(4, 0.5)", dist.MustGamma(4, 0.5), []disttest.Option{erlangTailReference(4, 0.5)}},
	{"Gamma(2.5, 3)", dist.MustGamma(2.5, 3), nil},
	{"Gamma(0.3, 1) (singular density at 0)", dist.MustGamma(0.3, 1), nil},
	{"Gamma(1e4, 1e3)", dist.MustGamma(1e4, 1e3), nil},
	{"LogNormal(0.5, 0.8)", dist.MustLogNormal(0.5, 0.8), nil},
	{"LogNormal(-7, 0.05)", dist.MustLogNormal(-7, 0.05), nil},

	// Truncations: the usual positive duration, a far-tail window, an atomic parent.
	{"Truncated(Normal(1, 0.6), [0, ∞))", dist.MustTruncated(dist.MustNormal(1, 0.6), 0, math.Inf(1)), nil},
	{"Truncated(Normal(2e-3, 1e-4), [1.9e-3, 2.3e-3])", dist.MustTruncated(dist.MustNormal(2e-3, 1e-4), 1.9e-3, 2.3e-3), nil},
	{"Truncated(Normal(0, 1), [10, 11])", dist.MustTruncated(dist.MustNormal(0, 1), 10, 11), nil},
	{"Truncated(Gamma(2, 1), [0.5, 3])", dist.MustTruncated(dist.MustGamma(2, 1), 0.5, 3), nil},
	{"Truncated(Mixture(atoms, Normal), [1, 4])", dist.MustTruncated(mustLaw(dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustDiscrete([]float64{1, 2, 3}, []float64{0.2, 0.3, 0.5}), dist.MustNormal(2, 1)})), 1, 4), nil},
	{"Truncated(Discrete, [2, 5])", dist.MustTruncated(dist.MustDiscrete([]float64{1, 2, 5, 7}, []float64{0.1, 0.2, 0.3, 0.4}), 2, 5), nil},

	// Exact transforms.
	{"Affine(Gamma(2, 1), -3, 1)", mustLaw(dist.Affine(dist.MustGamma(2, 1), -3, 1)), nil},
	{"Affine(LogNormal, 1e-3, 5)", mustLaw(dist.Affine(dist.MustLogNormal(0, 0.3), 1e-3, 5)), nil},
	{"Affine(atoms + exponential, 3, 0.1)", mustLaw(dist.Affine(atomsAndExponential(), 3, 0.1)), nil},
	{"Affine(atoms + exponential, -3, 0.1)", mustLaw(dist.Affine(atomsAndExponential(), -3, 0.1)), nil},
	{"Mixture(atoms, Normal)", mustLaw(dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustDiscrete([]float64{1, 2, 3}, []float64{0.2, 0.3, 0.5}), dist.MustNormal(2, 1)})), nil},
	{"Mixture(Uniform, Gamma) (density jump)", mustLaw(dist.Mixture([]float64{0.4, 0.6}, []dist.Law{dist.MustUniform(0, 1), dist.MustGamma(3, 1)})), nil},
	{"ScaleByDiscrete(Uniform(1, 2), {0.5, 2})", mustLaw(dist.ScaleByDiscrete(dist.MustUniform(1, 2), dist.MustDiscrete([]float64{0.5, 2}, []float64{0.5, 0.5}))), nil},
	{"Empirical of 5 samples", mustLaw(dist.NewEmpirical([]float64{1, 5, 2, 2, 8})), nil},
	// gonum's Weibull CDF loses relative accuracy below 1e-16: the adapter is
	// only as accurate as its source (documented), so quantiles get slack there.
	{"FromDistuv(Weibull(1.5, 2))", mustLaw(dist.FromDistuv(distuv.Weibull{K: 1.5, Lambda: 2})), []disttest.Option{disttest.WithQuantileTolerance(1e-3)}},

	// Sums with closed forms or closed-form pieces.
	{"Sum(Uniform(30, 30.001), Uniform(0.2, 0.5)) (trapezoid)", dist.MustSum(dist.MustUniform(30, 30.001), dist.MustUniform(0.2, 0.5)), nil},
	{"Sum(atoms, Uniform, Uniform) (shifted trapezoids)", dist.MustSum(dist.MustDiscrete([]float64{0, 10}, []float64{0.7, 0.3}), dist.MustUniform(0, 2), dist.MustUniform(1, 1.5)), nil},
	{"Sum(Exp(1), Exp(3), Uniform(0, 2)) (closed-form upper tail)", dist.MustSum(dist.MustExponential(1), dist.MustExponential(3), dist.MustUniform(0, 2)), nil},
	{"RandomSum({0..5}, Uniform(0, 1)) (low counts exact)", mustLaw(dist.RandomSum(dist.MustDiscrete([]float64{0, 1, 2, 3, 4, 5}, []float64{0.1, 0.3, 0.25, 0.15, 0.12, 0.08}), dist.MustUniform(0, 1))), nil},
}

// mustLaw unwraps a (law, error) pair built from valid literals.
func mustLaw(l dist.Law, err error) dist.Law {
	if err != nil {
		panic(err) // panic-ok: test tables are built from valid literals
	}
	return l
}

// atomsAndExponential is a mixture with three atoms and an exponential part.
func atomsAndExponential() dist.Law {
	return mustLaw(dist.Mixture([]float64{0.3, 0.7}, []dist.Law{
		dist.MustDiscrete([]float64{1, 2, 3}, []float64{0.2, 0.3, 0.5}), dist.MustExponential(2)}))
}

// erlangTailReference checks a gamma law of integer shape against the closed
// form P(Gamma(n, λ) > x) = e^{-λx} Σ_{j<n} (λx)^j/j! (Poisson–gamma
// relation; any probability text), down to 1e-300.
func erlangTailReference(n int, rate float64) disttest.Option {
	var xs []float64
	for x := 0.5 / rate; erlangSurvival(n, rate, x) > 1e-300; x *= 1.6 {
		xs = append(xs, x)
	}
	return disttest.WithReference(func(x float64) float64 { return erlangSurvival(n, rate, x) }, xs, 1e-12)
}

// TestConformance runs disttest.Check on every law of conformanceLaws.
func TestConformance(t *testing.T) {
	for _, tc := range conformanceLaws {
		t.Run(tc.name, func(t *testing.T) {
			require.NoError(t, disttest.Check(tc.law, tc.opts...))
		})
	}
}

// normalTailReference checks a standard normal's Survival against
// testref.NormalUpperTail (1600-bit math/big values) at the table's worst
// conditioning tolerance.
func normalTailReference() disttest.Option {
	zs := make([]float64, len(testref.NormalUpperTail))
	for i, p := range testref.NormalUpperTail {
		zs[i] = p.Z
	}
	q := func(z float64) float64 {
		for _, p := range testref.NormalUpperTail {
			if p.Z == z {
				return p.Q
			}
		}
		return math.NaN()
	}
	return disttest.WithReference(q, zs, testref.NormalTailTol(37.5))
}

// exponentialTailReference checks an exponential law's Survival against
// gonum's regularised upper incomplete gamma of shape 1, down to 1e-304.
func exponentialTailReference(rate float64) disttest.Option {
	xs := []float64{0, 1e-9 / rate, 0.5 / rate, 1 / rate, 10 / rate, 100 / rate, 700 / rate}
	return disttest.WithReference(func(x float64) float64 { return testref.ExponentialSurvival(rate, x) }, xs, 1e-13)
}

// binomialLaw returns the Binomial(n, p) law as a Discrete, with the
// probabilities from log-gamma functions.
func binomialLaw(n int, p float64) dist.Discrete {
	return dist.MustDiscrete(binomialMasses(n, p))
}

// binomialMasses returns the values 0, …, n and the masses binomialLaw
// builds its law from.
func binomialMasses(n int, p float64) (values, probs []float64) {
	values = make([]float64, n+1)
	probs = make([]float64, n+1)
	lgN, _ := math.Lgamma(float64(n + 1))
	for k := 0; k <= n; k++ {
		lgK, _ := math.Lgamma(float64(k + 1))
		lgNK, _ := math.Lgamma(float64(n - k + 1))
		values[k] = float64(k)
		probs[k] = math.Exp(lgN - lgK - lgNK + float64(k)*math.Log(p) + float64(n-k)*math.Log1p(-p))
	}
	return values, probs
}

// assertParamError checks that err reports a bad parameter: it wraps
// dist.ErrParam, is a *dist.ParamError from function fn naming param, and
// its message names the parameter.
func assertParamError(t *testing.T, err error, fn, param string) {
	t.Helper()
	require.Error(t, err)
	assert.ErrorIs(t, err, dist.ErrParam)
	var pe *dist.ParamError
	require.True(t, errors.As(err, &pe), "%v is not a *dist.ParamError", err)
	assert.Equal(t, fn, pe.Func)
	assert.Equal(t, param, pe.Param)
	assert.Contains(t, err.Error(), param)
}
