package energy

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A Serviced's memos of its laws' survivals and stated errors never change
// an answer (the oracle: the same Serviced with no memo, computing every
// figure afresh): Schedule, common and per group, and ComparePolicies on
// the policies fleetplan compares give the same bits in either order of
// calls, on the invented site of tabTestSpec with a setting of one group
// left out (the reachLife laws) and with none.
func TestServicedMemosAsFresh(t *testing.T) {
	spec := tabTestSpec(t)
	site, err := NewSite(spec)
	require.NoError(t, err)
	const horizon, risk = 3 * Year, 0.05
	for _, left := range [][][]int{nil, {nil, {1}, nil}} {
		memo, err := site.Serviced(left)
		require.NoError(t, err)
		fresh := memo
		fresh.errs, fresh.survs = nil, nil
		run := func(v Serviced, policiesFirst bool) (all, per []float64, pc PolicyComparison) {
			schedules := func() {
				all, err = v.Schedule(risk, horizon, false)
				require.NoError(t, err)
				per, err = v.Schedule(risk, horizon, true)
				require.NoError(t, err)
			}
			if !policiesFirst {
				schedules()
			}
			ps := []Policy{ReplaceAll(Year), ReplaceAll(horizon / 3), ReplaceGroups([]float64{Year, horizon / 2, horizon / 4}),
				ReplaceGroupsAndFailures([]float64{Year, horizon / 2, horizon / 4}), ReplaceOnFailure()}
			pc, err = v.ComparePolicies(ps, horizon, risk, Costs{Visit: 50, Cell: 5})
			require.NoError(t, err)
			if policiesFirst {
				schedules()
			}
			return all, per, pc
		}
		a1, p1, c1 := run(memo, false)
		a2, p2, c2 := run(fresh, true)
		assert.Equal(t, a2, a1)
		assert.Equal(t, p2, p1)
		assert.Equal(t, c2, c1)
		assert.NotEmpty(t, memo.survs.m)
	}
}
