package orderstat_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

// TestZeroValues: issue 13. Support (and Quantile, Rand, Mean) on the zero
// dist.Discrete, orderstat.Statistic and orderstat.Count panicked, while
// energy's zero values return NaN. One documented behaviour now: a zero
// value is not a valid law, its numerical methods return NaN and none
// panics (package docs of dist and orderstat).
func TestZeroValues(t *testing.T) {
	laws := []struct {
		name string
		law  dist.Law
	}{
		{"dist.Discrete", dist.Discrete{}},
		{"orderstat.Statistic", orderstat.Statistic{}},
		{"orderstat.Count", orderstat.Count{}},
	}
	r := rand.New(rand.NewPCG(1, 2))
	for _, tc := range laws {
		t.Run(tc.name, func(t *testing.T) {
			l := tc.law
			require.NotPanics(t, func() {
				lo, hi := l.Support()
				assert.True(t, math.IsNaN(lo) && math.IsNaN(hi), "Support = %v, %v", lo, hi)
				for _, v := range []float64{l.CDF(0), l.Survival(0), l.Quantile(0), l.Quantile(0.5), l.Quantile(1),
					l.UpperQuantile(0), l.UpperQuantile(0.5), l.UpperQuantile(1), l.Mean(), l.Variance(), l.Rand(r)} {
					assert.True(t, math.IsNaN(v), "%v", v)
				}
				if a, ok := l.(dist.Atomic); ok {
					assert.Empty(t, a.Atoms())
				}
				if e, ok := l.(dist.Estimated); ok {
					assert.True(t, math.IsNaN(e.Accuracy().CDFAbs))
				}
				if c, ok := l.(dist.CharFunc); ok {
					v := c.CF(1)
					assert.True(t, math.IsNaN(real(v)))
				}
				assert.Contains(t, l.(interface{ String() string }).String(), "zero")
			})
		})
	}
	s := orderstat.Statistic{}
	assert.Zero(t, s.Rank())
	assert.Zero(t, s.Count())
	assert.Nil(t, s.Groups())
	m, v := s.MomentError()
	assert.True(t, math.IsNaN(m) && math.IsNaN(v))
	assert.Zero(t, orderstat.Count{}.N())
}
