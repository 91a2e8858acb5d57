package energy_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// reachSites returns an invented two-group site whose group "a" has a
// share u of short-lived nodes (a setting reporting every 6 s instead of
// every 60 s: unheard nodes that retransmit, say) beside one built from
// the other setting alone: the oracle for the site served without them.
func reachSites(t *testing.T, u float64, calendar float64) (mixed, alone energy.Site) {
	t.Helper()
	build := func(withShort bool) energy.Site {
		var groups []energy.SiteGroup
		for g, e := range []float64{600, 800} { // J
			b, err := energy.NewBattery(energy.BatterySpec{Name: "small cell", Energy: e, NominalVoltage: 3, UsableFraction: 1})
			require.NoError(t, err)
			st := energy.MustFixedState("uplink", 10*energy.MilliAmp, 3, 0.05)
			settings := []energy.NodeSetting{{Weight: 1, Cycle: energy.MustCycle(st, dist.MustPointMass(60), 3e-6)}}
			if g == 0 && withShort {
				settings[0].Weight = 1 - u
				settings = append(settings, energy.NodeSetting{Weight: u, Cycle: energy.MustCycle(st, dist.MustPointMass(6), 3e-6)})
			}
			groups = append(groups, energy.SiteGroup{Name: []string{"a", "b"}[g], Count: []int64{30, 20}[g], Node: energy.NodeSpec{
				Settings: settings, Battery: b, Spread: energy.NodeSpread{Capacity: 0.08}, CalendarLife: calendar}})
		}
		s, err := energy.NewSite(energy.SiteSpec{Shared: energy.SharedSpread{Batch: 0.02}, Groups: groups})
		require.NoError(t, err)
		return s
	}
	return build(true), build(false)
}

// TestServicedLeavesOut: a site served without group a's short-lived
// setting answers as the site built without it (an independent path: its
// own node laws and tables), for the schedule, the probability of any
// flat node and the count laws of scheduled and on-failure policies, each
// within the two stated errors; the short-lived share alone would set the
// schedule far shorter.
func TestServicedLeavesOut(t *testing.T) {
	const u = 0.002
	mixed, alone := reachSites(t, u, 3*energy.Year)
	v, err := mixed.Serviced([][]int{{1}, nil})
	require.NoError(t, err)
	assert.InDelta(t, u, v.Left(0), 1e-15)
	assert.Equal(t, 0.0, v.Left(1))
	assert.True(t, math.IsNaN(v.Left(2)))
	H := 4 * energy.Year
	const risk = 0.05

	got, err := v.Schedule(risk, H, true)
	require.NoError(t, err)
	want, err := alone.Schedule(risk, H, true)
	require.NoError(t, err)
	assert.Equal(t, want, got)
	all, err := mixed.Schedule(risk, H, true)
	require.NoError(t, err)
	assert.Less(t, all[0], got[0]/2, "the short-lived share sets the group's dates when served")

	costs := energy.Costs{Visit: 50, Cell: 10}
	for _, p := range []energy.Policy{energy.ReplaceGroups(got), energy.ReplaceOnFailure(), energy.ReplaceGroupsAndFailures(got)} {
		o, err := v.Replacement(p, H, costs)
		require.NoError(t, err)
		w, err := alone.Replacement(p, H, costs)
		require.NoError(t, err)
		assert.InDelta(t, w.AnyFlat, o.AnyFlat, w.AnyFlatError+o.AnyFlatError+1e-12, p.Name)
		tol := w.CountError + o.CountError + 1e-9
		assert.Less(t, tol, 1e-2, p.Name)
		if len(p.Every) > 0 {
			m, err := mixed.Replacement(p, H, costs)
			require.NoError(t, err)
			assert.Greater(t, math.Abs(m.AnyFlat-w.AnyFlat), 10*(w.AnyFlatError+m.AnyFlatError), "%s: the short-lived share matters when served", p.Name)
		}
		for k := 0.0; k <= 60; k++ {
			assert.InDelta(t, w.Failures.CDF(k), o.Failures.CDF(k), tol, "%s: k = %g", p.Name, k)
		}
	}

	// Every setting left out: no node of the group served.
	none, err := mixed.Serviced([][]int{{0, 1}, nil})
	require.NoError(t, err)
	o, err := none.Replacement(energy.ReplaceOnFailure(), H, costs)
	require.NoError(t, err)
	assert.Equal(t, 1.0, none.Left(0))
	assert.Greater(t, o.FailuresPerYear.Mean, 0.0) // group b still fails

	for _, bad := range [][][]int{{{2}, nil}, {{-1}, nil}, {{1, 1}, nil}, {{1}}} {
		_, err := mixed.Serviced(bad)
		require.ErrorIs(t, err, energy.ErrParam, "%v", bad)
		assert.Contains(t, err.Error(), "left")
	}
	_, err = energy.Site{}.Serviced(nil)
	require.ErrorIs(t, err, energy.ErrParam)
}
