package scenario_test

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// Collisions swamping a data rate are flagged below SaturationThreshold; the
// success they report is pure ALOHA's exp(−2G') (Abramson 1970). The demo's
// loads are light (no warning); 100,000 probes on one gateway swamp some
// data rate, and each warning names a data rate below the threshold.
func TestCollisionWarnings(t *testing.T) {
	m, err := scenario.Build(scenario.Demo(), nil)
	require.NoError(t, err)
	assert.Empty(t, m.CollisionWarnings(), "the demo's loads are light")
	s, err := scenario.Demo().WithCounts([]int{60, 100000, 24, 40})
	require.NoError(t, err)
	m, err = scenario.Build(s, nil)
	require.NoError(t, err)
	ws := m.CollisionWarnings()
	want := 0
	for gi, g := range m.Groups {
		for _, d := range g.PerDR {
			assert.InDelta(t, math.Exp(-2*d.Vulnerable), d.UplinkSuccess, 1e-15)
			if d.UplinkSuccess < scenario.SaturationThreshold {
				want++
				found := false
				for _, w := range ws {
					found = found || w.Group == gi && strings.Contains(w.Text, "DR"+strconv.Itoa(d.DR))
				}
				assert.True(t, found, "group %d DR%d", gi, d.DR)
			}
		}
	}
	require.Positive(t, want, "100,000 probes on one gateway swamp some data rate")
	assert.Len(t, ws, want)
	for _, w := range ws {
		assert.Equal(t, scenario.Collisions, w.Kind)
		assert.True(t, strings.HasPrefix(w.Text, "COLLISIONS"), w.Text)
		assert.Equal(t, m.Groups[w.Group].Group.Gateway, w.Gateway)
	}
}

// Out-of-reach warnings: the demo's two groups with more than 1 % of their
// placements out of reach are warned about (the confirmed one's unheard
// nodes send every attempt and drain first); a group wholly out of reach
// gets the "EVERY node" warning. The drain figures are the cycles' mean
// currents mixed with the group's weights.
func TestOutOfReachWarnings(t *testing.T) {
	l, err := scenario.Compute(scenario.Demo(), 2, nil)
	require.NoError(t, err)
	ws := l.OutOfReachWarnings()
	want := 0
	for gi, g := range l.Model.Groups {
		if g.Unheard.Prob >= scenario.OutOfReachWarnShare {
			want++
		}
		d, err := l.Drain(gi)
		require.NoError(t, err)
		mean := 0.0
		for i, w := range g.AllWeights() {
			mean += w * l.Cycles[gi][i].MeanCurrent(g.Node.Voltage)
		}
		assert.InDelta(t, mean, d.Group, 1e-15*mean)
	}
	require.Len(t, ws, want)
	assert.Equal(t, 2, want, "two demo groups have more than 1 % out of reach")
	for _, w := range ws {
		assert.Equal(t, scenario.OutOfReach, w.Kind)
		assert.Contains(t, w.Text, "OUT OF REACH: group")
	}
	d, err := l.Drain(2)
	require.NoError(t, err)
	assert.True(t, d.Heaviest, "the confirmed group's unheard nodes send every attempt")
	_, err = l.Drain(4)
	assert.ErrorIs(t, err, scenario.ErrInvalid)
	// The whole fleet's warnings: the out-of-reach ones, group by group.
	all, err := l.Warnings()
	require.NoError(t, err)
	duty, err := l.Model.DutyWarnings()
	require.NoError(t, err)
	assert.Len(t, all, len(ws)+len(l.Model.CollisionWarnings())+len(duty)+len(l.CellWarnings())+len(l.Model.GatewayWarnings()))

	s, err := scenario.Demo().WithCounts([]int{5, 1, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[:1]
	s.Groups[0].InnerRadius, s.Groups[0].OuterRadius = 40000, 50000
	s.Environment.ShadowingSD = 0 // exactly out of reach beyond the margin's distance
	l, err = scenario.Compute(s, 2, nil)
	require.NoError(t, err)
	ws, err = l.Warnings()
	require.NoError(t, err)
	ws = only(ws, scenario.OutOfReach)
	require.Len(t, ws, 1)
	assert.Contains(t, ws[0].Text, "EVERY node of group")
	assert.Equal(t, 0, ws[0].Group)
}

// only keeps the warnings of one kind.
func only(ws []scenario.Warning, k scenario.WarningKind) []scenario.Warning {
	var out []scenario.Warning
	for _, w := range ws {
		if w.Kind == k {
			out = append(out, w)
		}
	}
	return out
}
