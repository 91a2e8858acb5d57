package ieee802154_test

import (
	"errors"
	"math"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// genericCurrents are currents with no simple ratios between them, so that
// distinct paths have distinct energies (invented, for the count's test).
func genericCurrents() ieee802154.Currents {
	return ieee802154.Currents{Voltage: 3.1, TX: 17.13e-3, RX: 19.371e-3, Turnaround: 18.29e-3, Idle: 0.5317e-3, Sleep: 2.11e-6}
}

// distinct counts the distinct values among xs, merging those within 1e-12
// relative (as dist merges atoms).
func distinct(xs []float64) int {
	sort.Float64s(xs)
	n := 0
	for i, x := range xs {
		if i == 0 || x-xs[i-1] > 1e-12*math.Abs(x) {
			n++
		}
	}
	return n
}

// TestFramePathCount checks the structural counts against every path of
// the packet-level state machine (enumFrames, independent code written from
// the standard): with generic currents the count of frame-energy atoms
// equals the number of distinct path energies, and the path count equals
// the number of distinct (energy, active time) pairs and bounds the
// distinct active times; and against the atoms package dist builds for
// the cycle (energies above the sleep floor).
func TestFramePathCount(t *testing.T) {
	small := func(edit func(*ieee802154.Node)) ieee802154.Node {
		n := testNode()
		n.Currents = genericCurrents()
		n.CSMA = ieee802154.CSMA{MinBE: 1, MaxBE: 3, MaxCSMABackoffs: 2, MaxFrameRetries: 2}
		edit(&n)
		return n
	}
	for name, n := range map[string]ieee802154.Node{
		"acknowledged":           small(func(*ieee802154.Node) {}),
		"sleeping, with a wake":  small(func(n *ieee802154.Node) { n.Backoff, n.Wake, n.CSMA.MinBE = ieee802154.BackoffSleep, 0.4e-3, 0 }),
		"sleeping, no wake":      small(func(n *ieee802154.Node) { n.Backoff = ieee802154.BackoffSleep }),
		"no acknowledgement":     small(func(n *ieee802154.Node) { n.AckRequest = false }),
		"7 retries, one backoff": small(func(n *ieee802154.Node) { n.CSMA.MaxFrameRetries, n.CSMA.MaxCSMABackoffs, n.Busy = 7, 0, 0.5 }),
		"idle channel":           small(func(n *ieee802154.Node) { n.Busy = 0 }),
		"always busy":            small(func(n *ieee802154.Node) { n.Busy = 1 }),
		"every ack lost":         small(func(n *ieee802154.Node) { n.Busy, n.AckLoss = 0, 1 }),
	} {
		var energies, times, pairs []float64
		enumFrames(n, func(o simOut, p float64) {
			if p > 0 {
				energies = append(energies, o.energy)
				times = append(times, o.active)
				// a pair keyed as one number: the energy plus the time
				// scaled far beyond the energies' spread
				pairs = append(pairs, o.energy+1e3*o.active)
			}
		})
		assert.Equal(t, float64(distinct(energies)), ieee802154.FrameAtoms(n, false), "%s: energy atoms", name)
		paths := ieee802154.FramePaths(n)
		assert.Equal(t, float64(distinct(pairs)), paths, "%s: paths", name)
		assert.LessOrEqual(t, float64(distinct(times)), paths, "%s: active times", name)

		law, err := n.FrameEnergy()
		require.NoError(t, err, name)
		assert.Len(t, law.(dist.Atomic).Atoms(), distinct(energies), name)
		cy, err := n.Cycle(dist.MustPointMass(10))
		require.NoError(t, err, name)
		assert.Len(t, cy.Energy().(dist.Atomic).Atoms(), int(ieee802154.FrameAtoms(n, true)), "%s: cycle atoms", name)
	}
}

// TestFramePathCap: settings beyond MaxFramePaths whose pruned
// enumeration at the default PathTolerance still keeps more paths than the
// cap are refused (no law is built) with an error wrapping ErrParam that
// names the cap, the tolerance and the attributes; the default attributes
// are accepted exactly, and 7 retries by pruning. The counts quoted in
// MaxFramePaths's and DefaultPathTolerance's documentation are checked here.
func TestFramePathCap(t *testing.T) {
	n := testNode()
	assert.Equal(t, 18689.0, ieee802154.FramePaths(n), "default attributes")
	seven := testNode()
	seven.CSMA.MaxFrameRetries = 7
	assert.Equal(t, 116321.0, ieee802154.FramePaths(seven), "7 retries")
	kept, _, ok := ieee802154.PrunedPaths(seven, ieee802154.DefaultPathTolerance, 1<<30)
	assert.True(t, ok)
	assert.Equal(t, 26192, kept, "7 retries, pruned at the default tolerance")
	eight := testNode()
	eight.CSMA.MaxBE, eight.CSMA.MaxFrameRetries = 8, 7
	kept, _, _ = ieee802154.PrunedPaths(eight, ieee802154.DefaultPathTolerance, 1<<30)
	assert.Equal(t, 49154, kept, "macMaxBE 8, 7 retries, pruned at the default tolerance")
	kept, _, _ = ieee802154.PrunedPaths(eight, 1e-10, 1<<30)
	assert.Equal(t, 26505, kept, "macMaxBE 8, 7 retries, pruned at 1e-10")
	big := []struct {
		name  string
		edit  func(*ieee802154.Node)
		paths float64
	}{
		{"macMaxBE 8, 7 retries", func(n *ieee802154.Node) { n.CSMA.MaxBE, n.CSMA.MaxFrameRetries = 8, 7 }, 229217},
		{"macMaxBE 8, 7 retries, asleep", func(n *ieee802154.Node) {
			n.CSMA.MaxBE, n.CSMA.MaxFrameRetries, n.Backoff, n.AckLoss = 8, 7, ieee802154.BackoffSleep, 0.5
		}, 229217},
	}
	for _, tc := range big {
		m := testNode()
		tc.edit(&m)
		assert.Equal(t, tc.paths, ieee802154.FramePaths(m), tc.name)
		_, err := m.FrameEnergy()
		require.Error(t, err, tc.name)
		assert.True(t, errors.Is(err, ieee802154.ErrParam), tc.name)
		assert.ErrorContains(t, err, "MaxFramePaths (32768)", tc.name)
		assert.ErrorContains(t, err, "PathTolerance (1e-12)", tc.name)
		assert.ErrorContains(t, err, "macMaxFrameRetries 7}", tc.name)
		var pe *ieee802154.ParamError
		require.ErrorAs(t, err, &pe)
		assert.Equal(t, "Node.FrameEnergy", pe.Func)
		_, err = m.Cycle(dist.MustPointMass(60))
		assert.ErrorContains(t, err, "MaxFramePaths", tc.name)
		_, err = m.FrameStage()
		assert.ErrorContains(t, err, "MaxFramePaths", tc.name)
	}
	m := testNode()
	m.CSMA.MaxBE = 6
	assert.Equal(t, 27521.0, ieee802154.FramePaths(m), "macMaxBE 6")
}
