package dist_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// holeyNormal is a standard normal from outside whose CDF is NaN and whose
// survival is +Inf on (0.5, 0.7): a law with a broken range.
type holeyNormal struct{ distuv.Normal }

func (h holeyNormal) CDF(x float64) float64 {
	if x > 0.5 && x < 0.7 {
		return math.NaN()
	}
	return h.Normal.CDF(x)
}

func (h holeyNormal) Survival(x float64) float64 {
	if x > 0.5 && x < 0.7 {
		return math.Inf(1)
	}
	return h.Normal.Survival(x)
}

// TestFromDistuvNaNRefused: issue 13. A FromDistuv law that answers NaN or
// +Inf somewhere was summed without complaint and every value of the sum
// was NaN. Sum and SumIID (the lattice path that tabulates the term's CDF
// and survival) now return an error wrapping ErrParam that names the method
// and the point; the lifted law itself answers NaN there, as documented.
func TestFromDistuvNaNRefused(t *testing.T) {
	h, err := dist.FromDistuv(holeyNormal{distuv.Normal{Mu: 0, Sigma: 1}})
	require.NoError(t, err)
	assert.True(t, math.IsNaN(h.CDF(0.6)))
	for _, tc := range []struct {
		name string
		make func() (dist.Law, error)
	}{
		{"Sum", func() (dist.Law, error) { return dist.Sum(h, dist.MustNormal(0, 1)) }},
		{"SumIID k=3", func() (dist.Law, error) { return dist.SumIID(h, 3) }},
		{"SumIID k=10", func() (dist.Law, error) { return dist.SumIID(h, 10) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			l, err := tc.make()
			require.Error(t, err, "law %v", l)
			assert.True(t, errors.Is(err, dist.ErrParam), "%v", err)
			assert.Contains(t, err.Error(), "not a probability")
		})
	}
	// the same law without the hole sums fine (the test is not vacuous)
	g, err := dist.FromDistuv(distuv.Normal{Mu: 0, Sigma: 1})
	require.NoError(t, err)
	s, err := dist.Sum(g, dist.MustNormal(0, 1))
	require.NoError(t, err)
	assert.InDelta(t, 0.5, s.CDF(0), 1e-9)
}
