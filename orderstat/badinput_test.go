package orderstat_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

// nanLaw is a law whose median is NaN (a broken parent).
type nanLaw struct{ dist.Normal }

func (nanLaw) Quantile(float64) float64 { return math.NaN() }

func TestBadInput(t *testing.T) {
	nrm := dist.MustNormal(0, 1)
	tests := []struct {
		name  string
		call  func() error
		param string
	}{
		{"Max n=0", func() error { _, err := orderstat.Max(nrm, 0); return err }, "n"},
		{"Max n<0", func() error { _, err := orderstat.Max(nrm, -3); return err }, "n"},
		{"Max n too large", func() error { _, err := orderstat.Max(nrm, orderstat.MaxCount+1); return err }, "n"},
		{"Max nil law", func() error { _, err := orderstat.Max(nil, 3); return err }, "l"},
		{"Min n=0", func() error { _, err := orderstat.Min(nrm, 0); return err }, "n"},
		{"Kth k=0", func() error { _, err := orderstat.Kth(nrm, 0, 5); return err }, "k"},
		{"Kth k>n", func() error { _, err := orderstat.Kth(nrm, 6, 5); return err }, "k"},
		{"Kth n=0", func() error { _, err := orderstat.Kth(nrm, 1, 0); return err }, "n"},
		{"Max NaN median", func() error { _, err := orderstat.Max(nanLaw{nrm}, 3); return err }, "median"},
		{"groups empty", func() error { _, err := orderstat.MaxOfGroups(nil); return err }, "groups"},
		{"groups zero count", func() error {
			_, err := orderstat.MinOfGroups([]orderstat.Group{{Law: nrm, Count: 2}, {Law: nrm, Count: 0}})
			return err
		}, "groups[1].Count"},
		{"groups nil law", func() error { _, err := orderstat.MaxOfGroups([]orderstat.Group{{Count: 2}}); return err }, "groups[0].Law"},
		{"groups total too large", func() error {
			_, err := orderstat.MaxOfGroups([]orderstat.Group{{Law: nrm, Count: orderstat.MaxCount}, {Law: nrm, Count: 1}})
			return err
		}, "groups"},
		{"KthOfGroups k too large", func() error {
			_, err := orderstat.KthOfGroups([]orderstat.Group{{Law: nrm, Count: 2}}, 3)
			return err
		}, "k"},
		{"PoissonBinomial empty", func() error { _, err := orderstat.PoissonBinomial(nil, nil); return err }, "probs"},
		{"PoissonBinomial p>1", func() error { _, err := orderstat.PoissonBinomial([]float64{0.5, 1.5}, nil); return err }, "probs[1]"},
		{"PoissonBinomial NaN p", func() error { _, err := orderstat.PoissonBinomial([]float64{math.NaN()}, nil); return err }, "probs[0]"},
		{"PoissonBinomial counts mismatch", func() error { _, err := orderstat.PoissonBinomial([]float64{0.5, 0.5}, []int64{3}); return err }, "counts"},
		{"PoissonBinomial zero count", func() error { _, err := orderstat.PoissonBinomial([]float64{0.5}, []int64{0}); return err }, "counts[0]"},
		{"Exceedances counts mismatch", func() error {
			_, err := orderstat.Exceedances([]dist.Law{nrm, nrm}, []int64{1, 2, 3}, 0)
			return err
		}, "counts"},
		{"Exceedances empty", func() error { _, err := orderstat.Exceedances(nil, nil, 0); return err }, "laws"},
		{"Exceedances NaN threshold", func() error { _, err := orderstat.Exceedances([]dist.Law{nrm}, nil, math.NaN()); return err }, "threshold"},
		{"AtOrBelow nil law", func() error { _, err := orderstat.AtOrBelow([]dist.Law{nil}, nil, 1); return err }, "laws[0]"},
		{"Range n=0", func() error { _, err := orderstat.Range(nrm, 0); return err }, "n"},
		{"Range mixed parent", func() error {
			m, err := dist.Mixture([]float64{0.5, 0.5}, []dist.Law{dist.MustPointMass(1), nrm})
			require.NoError(t, err)
			_, err = orderstat.Range(m, 3)
			return err
		}, "l"},
		{"Screen p=0", func() error { _, err := orderstat.Screen([]float64{1}, []dist.Law{nrm}, 0); return err }, "p"},
		{"Screen p=1", func() error { _, err := orderstat.Screen([]float64{1}, []dist.Law{nrm}, 1); return err }, "p"},
		{"Screen NaN p", func() error { _, err := orderstat.Screen([]float64{1}, []dist.Law{nrm}, math.NaN()); return err }, "p"},
		{"Screen laws mismatch", func() error {
			_, err := orderstat.Screen([]float64{1, 2, 3}, []dist.Law{nrm, nrm}, 0.01)
			return err
		}, "laws"},
		{"Screen Inf value", func() error { _, err := orderstat.Screen([]float64{1, math.Inf(1)}, []dist.Law{nrm}, 0.01); return err }, "values[1]"},
		{"Screen empty", func() error { _, err := orderstat.Screen(nil, []dist.Law{nrm}, 0.01); return err }, "values"},
		{"GumbelMax n=1", func() error { _, err := orderstat.GumbelMax(nrm, 1); return err }, "n"},
		{"WeibullMax unbounded", func() error { _, err := orderstat.WeibullMax(nrm, 100); return err }, "l"},
		{"WeibullMin unbounded", func() error { _, err := orderstat.WeibullMin(nrm, 100); return err }, "l"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var err error
			require.NotPanics(t, func() { err = tc.call() })
			require.Error(t, err)
			assert.True(t, errors.Is(err, orderstat.ErrParam), "wraps orderstat.ErrParam: %v", err)
			assert.True(t, errors.Is(err, dist.ErrParam), "wraps dist.ErrParam: %v", err)
			assert.Contains(t, err.Error(), tc.param)
		})
	}
}

// KthOfGroups with a rank whose count window would be enormous says so.
func TestKthOfGroupsTooLarge(t *testing.T) {
	nrm := dist.MustNormal(0, 1)
	_, err := orderstat.KthOfGroups([]orderstat.Group{{Law: nrm, Count: 1e12}, {Law: nrm, Count: 1e12}}, 1e12)
	require.Error(t, err)
	assert.True(t, errors.Is(err, orderstat.ErrRange), "%v", err)
}

// Special values of the returned laws, as documented on dist.Law.
func TestSpecialValues(t *testing.T) {
	l, err := orderstat.Max(dist.MustNormal(0, 1), 100)
	require.NoError(t, err)
	assert.True(t, math.IsNaN(l.CDF(math.NaN())))
	assert.True(t, math.IsNaN(l.Survival(math.NaN())))
	assert.True(t, math.IsNaN(l.Quantile(-0.1)))
	assert.True(t, math.IsNaN(l.UpperQuantile(1.1)))
	assert.Equal(t, 1.0, l.CDF(math.Inf(1)))
	assert.Equal(t, 0.0, l.Survival(math.Inf(1)))
	assert.True(t, math.IsInf(l.Quantile(1), 1))
	assert.True(t, math.IsInf(l.UpperQuantile(1), -1))
}

// AsStatistic unwraps the laws of this package and reports the rank and
// count; it refuses other laws.
func TestAsStatistic(t *testing.T) {
	l, err := orderstat.Kth(dist.MustNormal(0, 1), 3, 10)
	require.NoError(t, err)
	s, ok := orderstat.AsStatistic(l)
	require.True(t, ok)
	assert.Equal(t, int64(3), s.Rank())
	assert.Equal(t, int64(10), s.Count())
	assert.Len(t, s.Groups(), 1)
	_, ok = orderstat.AsStatistic(dist.MustNormal(0, 1))
	assert.False(t, ok)
	d, _ := orderstat.Max(dist.MustDiscrete([]float64{1, 2}, []float64{0.5, 0.5}), 3)
	s, ok = orderstat.AsStatistic(d)
	require.True(t, ok)
	assert.InDelta(t, 0.125, s.Atoms()[0].Mass, 1e-15) // P(max = 1) = 0.5^3
}
