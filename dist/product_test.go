package dist_test

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

func TestProductUniforms(t *testing.T) {
	// U·V for independent Uniform(0,1): F(z) = z - z·ln z on (0, 1] (a
	// standard result, obtained by integrating P(U <= z/v) over v — from
	// memory). Numerical path: checks the stated error bounds the true one.
	// The integrand F_U(z/v) has a kink at v = z, which the fixed panels do
	// not know: the CDF reaches about 1e-5 here, not the 1e-10 of smooth
	// factors (known gap).
	u := dist.MustUniform(0, 1)
	l, err := dist.Product(u, u)
	require.NoError(t, err)
	acc := l.(dist.Estimated).Accuracy()
	var worstAbs, worstRel float64
	for _, z := range []float64{1e-9, 1e-6, 1e-3, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99} {
		want := z - z*math.Log(z)
		wantS := (1 - z) + z*math.Log(z)
		worstAbs = math.Max(worstAbs, math.Abs(l.CDF(z)-want))
		worstRel = math.Max(worstRel, testref.RelErr(l.Survival(z), wantS))
		assert.LessOrEqual(t, math.Abs(l.CDF(z)-want), acc.CDFAbs, "CDF(%g)", z)
		assert.LessOrEqual(t, testref.RelErr(l.Survival(z), wantS), acc.SurvivalRel, "Survival(%g)", z)
	}
	t.Logf("U·V: worst CDF abs %.2e, survival rel %.2e; %+v", worstAbs, worstRel, acc)
	assert.LessOrEqual(t, worstAbs, 1e-5)
	assert.InEpsilon(t, 0.25, l.Mean(), 1e-14)
	assert.InEpsilon(t, 1.0/9-1.0/16, l.Variance(), 1e-12)
	require.NoError(t, disttest.Check(l, disttest.WithSamples(5000)))
}

func TestProductExactCases(t *testing.T) {
	// A constant factor scales: 3·Exp(2) = Exp(2/3) (a standard result).
	l, err := dist.Product(dist.MustPointMass(3), dist.MustExponential(2))
	require.NoError(t, err)
	for _, x := range []float64{0.1, 1, 10, 60} {
		assert.InEpsilon(t, math.Exp(-2*x/3), l.Survival(x), 1e-13)
	}
	// Log-normals multiply in closed form: log X + log Y is N(μ1+μ2, σ1²+σ2²).
	l, err = dist.Product(dist.MustLogNormal(0.5, 0.3), dist.MustLogNormal(-1, 0.4))
	require.NoError(t, err)
	ln, ok := l.(dist.LogNormal)
	require.True(t, ok)
	assert.InEpsilon(t, math.Exp(-0.5+0.25/2), ln.Mean(), 1e-14)
	// A two-level power times a duration: the mixture of scaled copies.
	d := dist.MustDiscrete([]float64{0.01, 0.1}, []float64{0.9, 0.1})
	l, err = dist.Product(dist.MustExponential(1), d)
	require.NoError(t, err)
	assert.InEpsilon(t, 0.9*math.Exp(-0.05/0.01)+0.1*math.Exp(-0.05/0.1), l.Survival(0.05), 1e-13)
	// bad input
	_, err = dist.Product(nil, d)
	assert.True(t, errors.Is(err, dist.ErrParam))
	_, err = dist.Product(dist.MustNormal(0, 1), dist.MustUniform(0, 1))
	assert.True(t, errors.Is(err, dist.ErrParam))
}

func TestProductCharFuncAndSum(t *testing.T) {
	// X ~ Exp(λ), Y ~ Uniform(a, b): φ_XY(t) = E[λ/(λ - i·t·Y)]
	// = i·λ/(t·(b - a))·(log(λ - i·t·b) - log(λ - i·t·a)), integrating the
	// exponential's characteristic function over y in closed form (principal
	// logarithms; Re(λ - i·t·y) = λ > 0, so no branch is crossed).
	const lambda, a, b = 2.0, 1.0, 3.0
	l, err := dist.Product(dist.MustExponential(lambda), dist.MustUniform(a, b))
	require.NoError(t, err)
	cf, ok := l.(dist.CharFunc)
	require.True(t, ok, "a product with an exponential factor has a transform")
	for _, tt := range []float64{0.01, 0.3, 1, 2.5, 7, 20, 60} {
		want := complex(0, lambda/(tt*(b-a))) * (cmplx.Log(complex(lambda, -tt*b)) - cmplx.Log(complex(lambda, -tt*a)))
		got := cf.CF(tt)
		assert.InDelta(t, 0, cmplx.Abs(got-want), 1e-9, "φ(%g) = %v, want %v", tt, got, want)
	}
	_, isDens := l.(dist.Densitied)
	assert.True(t, isDens)
	// as a term of Sum it is inverted with the other terms; against
	// sampling from the structure, KS at level 1e-6 (DKW/Massart), fixed seed
	s, err := dist.Sum(l, dist.MustNormal(1, 0.2), dist.MustPointMass(0.5))
	require.NoError(t, err)
	acc := s.(dist.Estimated).Accuracy()
	assert.LessOrEqual(t, acc.CDFAbs, 1e-6, "%+v", acc)
	r := rand.New(rand.NewPCG(7, 8))
	const n = 100000
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = r.ExpFloat64()/lambda*(a+(b-a)*r.Float64()) + 1 + 0.2*r.NormFloat64() + 0.5
	}
	assert.Less(t, testref.KSStatistic(xs, s.CDF), testref.KSCritical(n, 1e-6)+acc.CDFAbs)
	assert.InEpsilon(t, (a+b)/2/lambda+1.5, s.Mean(), 1e-12)
	require.NoError(t, disttest.Check(l, disttest.WithSamples(5000)))
}
