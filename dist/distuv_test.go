package dist_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// nanQuantile is an outside law whose quantile is NaN inside (0, 1), as
// gonum's gamma quantile is in its far lower tail: an exponential with
// rate 1 (CDF 1 - e^{-x}, survival e^{-x}; closed forms).
type nanQuantile struct{}

func (nanQuantile) CDF(x float64) float64 { return -math.Expm1(-math.Max(x, 0)) }
func (nanQuantile) Survival(x float64) float64 {
	return math.Exp(-math.Max(x, 0))
}
func (nanQuantile) Quantile(p float64) float64 {
	switch p {
	case 0:
		return 0
	case 1:
		return math.Inf(1)
	}
	return math.NaN()
}

// TestFromDistuvGuardsSource: issue 13. gonum's gamma quantile is NaN below
// p ≈ 1e-20 (and panics at 5e-324), so a lifted gonum gamma could not be
// summed: SumIID failed for k >= 8 and IIDSums returned NaN. The lifted law
// now inverts its CDF wherever the source's quantile is NaN, out of the
// support, or panics. Oracles: the closed-form gamma (this package's Gamma,
// itself tested against 320-bit sums) for the k-fold sums, since
// Gamma(3, 2)^{*k} = Gamma(3k, 2) (any probability text), and the source's
// own CDF for the quantiles.
func TestFromDistuvGuardsSource(t *testing.T) {
	l, err := dist.FromDistuv(distuv.Gamma{Alpha: 3, Beta: 2})
	require.NoError(t, err)
	for _, p := range []float64{1e-20, 1e-25, 1e-30, 1e-100, 1e-300} {
		x := l.Quantile(p)
		require.True(t, x > 0 && !math.IsInf(x, 0), "Quantile(%g) = %v", p, x)
		// bisection to adjacent floats: the CDF's relative step there is 3·ulp
		assert.InDelta(t, 1, l.CDF(x)/p, 1e-12, "CDF(Quantile(%g))", p)
	}
	x := l.Quantile(5e-324)
	assert.True(t, x >= 0 && x < 1e-100, "Quantile(5e-324) = %v", x)
	assert.False(t, math.IsNaN(l.Rand(rand.New(rand.NewPCG(1, 2)))))

	s, err := dist.SumIID(l, 8)
	require.NoError(t, err)
	want := dist.MustGamma(24, 2)
	sums, err := dist.NewIIDSums(l)
	require.NoError(t, err)
	for _, x := range []float64{6, 10, 12, 16, 20} {
		// the lattice sum's stated CDF bound is about 1e-11 (Sum's doc)
		assert.InDelta(t, want.CDF(x), s.CDF(x), 1e-10, "SumIID(8).CDF(%g)", x)
		assert.InDelta(t, want.CDF(x), sums.CDF(8, x), 1e-10, "IIDSums.CDF(8, %g)", x)
	}

	// a source whose quantile is NaN everywhere inside (0, 1)
	e, err := dist.FromDistuv(nanQuantile{})
	require.NoError(t, err)
	for _, p := range []float64{1e-10, 0.3, 0.5, 0.9, 1 - 1e-9} {
		assert.InDelta(t, -math.Log1p(-p), e.Quantile(p), 1e-12*(1-math.Log1p(-p)), "Quantile(%g)", p)
		assert.InDelta(t, -math.Log(p), e.UpperQuantile(p), 1e-12*(1-math.Log(p)), "UpperQuantile(%g)", p)
	}
}
