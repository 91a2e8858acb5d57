package dist_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// TestTruncatedExponentialCF: the closed-form transform of a truncated
// exponential against gonum's fixed Gauss–Legendre quadrature of
// e^{itx}·λe^{−λx}/P over [lo, hi] (4000 nodes: exact to rounding for
// these phases), within 1e-12, from t = 0 to far out where the old
// panel quadrature was slow.
func TestTruncatedExponentialCF(t *testing.T) {
	for _, c := range []struct{ rate, lo, hi float64 }{
		{0.3, 0, 6}, {0.3, 2, 6}, {2, 0.1, 0.2}, {1e-8, 0, 1e8}, {5, -1, 3},
	} {
		law, err := dist.NewTruncated(dist.MustExponential(c.rate), c.lo, c.hi)
		require.NoError(t, err)
		cf, ok := law.(dist.CharFunc)
		require.True(t, ok, "%T", law)
		a := math.Max(c.lo, 0)
		mass := math.Exp(-c.rate*a) - math.Exp(-c.rate*c.hi)
		for _, w := range []float64{0, 0.01, 1, 7, 100, 3000} {
			tt := w / (c.hi - a)
			re := quad.Fixed(func(x float64) float64 { return math.Cos(tt*x) * c.rate * math.Exp(-c.rate*x) / mass }, a, c.hi, 4000, quad.Legendre{}, 0)
			im := quad.Fixed(func(x float64) float64 { return math.Sin(tt*x) * c.rate * math.Exp(-c.rate*x) / mass }, a, c.hi, 4000, quad.Legendre{}, 0)
			got := cf.CF(tt)
			assert.InDelta(t, re, real(got), 1e-12, "%+v t·w = %g", c, w)
			assert.InDelta(t, im, imag(got), 1e-12, "%+v t·w = %g", c, w)
		}
	}
}

// TestSumIIDTruncatedExponential: an exponential cut below at lo is lo
// plus an exponential (memoryless), so its k-fold sum is k·lo plus a
// gamma of shape k (gonum's distuv.Gamma, within the sum's stated error);
// a life cut at a calendar limit c (a truncated exponential mixed with an
// atom at c), summed twice, against 20000 seeded draws of the structure
// (the Dvoretzky–Kiefer–Wolfowitz bound at level 1e-6: 0.019).
func TestSumIIDTruncatedExponential(t *testing.T) {
	const rate, lo = 0.3, 2.0
	law, err := dist.NewTruncated(dist.MustExponential(rate), lo, math.Inf(1))
	require.NoError(t, err)
	for _, k := range []int{2, 3, 8} {
		s, err := dist.SumIID(law, k)
		require.NoError(t, err)
		tol := 1e-9
		if e, ok := s.(dist.Estimated); ok {
			tol += e.Accuracy().CDFAbs
		}
		g := distuv.Gamma{Alpha: float64(k), Beta: rate}
		for _, q := range []float64{0.01, 0.2, 0.5, 0.9, 0.999} {
			x := float64(k)*lo + g.Quantile(q)
			assert.InDelta(t, q, s.CDF(x), tol, "k = %d, q = %g", k, q)
		}
	}

	const cal = 6.0
	cut, err := dist.NewTruncated(dist.MustExponential(rate), 0, cal)
	require.NoError(t, err)
	a := math.Exp(-rate * cal)
	life, err := dist.Mixture([]float64{1 - a, a}, []dist.Law{cut, dist.MustPointMass(cal)})
	require.NoError(t, err)
	s, err := dist.SumIID(life, 2)
	require.NoError(t, err)
	const n = 20000
	src := rand.New(rand.NewPCG(16, 3))
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = math.Min(src.ExpFloat64()/rate, cal) + math.Min(src.ExpFloat64()/rate, cal)
	}
	sort.Float64s(xs)
	dkw := math.Sqrt(math.Log(2/1e-6) / (2 * n))
	for _, x := range []float64{1, 3, 5, 7, 9, 11, 11.99} {
		emp := float64(sort.SearchFloat64s(xs, x)) / n
		assert.InDelta(t, emp, s.CDF(x), dkw, "x = %g", x)
	}
	assert.InDelta(t, 1, s.CDF(12), 1e-9) // both at the atom
}
