package dist_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

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
	values := make([]float64, n+1)
	probs := make([]float64, n+1)
	lgN, _ := math.Lgamma(float64(n + 1))
	for k := 0; k <= n; k++ {
		lgK, _ := math.Lgamma(float64(k + 1))
		lgNK, _ := math.Lgamma(float64(n - k + 1))
		values[k] = float64(k)
		probs[k] = math.Exp(lgN - lgK - lgNK + float64(k)*math.Log(p) + float64(n-k)*math.Log1p(-p))
	}
	return dist.MustDiscrete(values, probs)
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
