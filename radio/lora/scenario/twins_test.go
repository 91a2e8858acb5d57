package scenario_test

import (
	"math"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// withCopies is the demo with a copy of its first and third groups (the
// third is confirmed, so its retransmissions feed back into the loads)
// appended: each copy named apart and its reports jittered by ±5 % of
// their interval, the originals left as they are. copyOf[i] is the
// original of group i (i itself for an original).
func withCopies() (s scenario.Scenario, copyOf []int) {
	s = scenario.Demo()
	s.Design = nil
	s.Groups = slices.Clone(s.Groups)
	for i := range s.Groups {
		copyOf = append(copyOf, i)
	}
	for _, i := range []int{0, 2} {
		g := s.Groups[i]
		g.Name += " (copy)"
		g.Jitter = g.Interval / 20
		s.Groups = append(s.Groups, g)
		copyOf = append(copyOf, i)
	}
	return s, copyOf
}

// The collision and retransmission model (Build's doc: pure ALOHA per
// gateway, data rate and channel, Abramson 1970) is symmetric in the
// groups: it does not depend on their order, and two groups alike but for
// their names and their periods' spread (which the model does not read:
// the load counts reports at the mean interval) meet the same loads. Its
// fixed point must show both: each copy's data rates the same numbers as
// its original's, to the bit (one sweep updates every group from the
// last sweep's values, and a group's vulnerable load is the gateway's
// total less its own node), and every group's the same whatever the
// order of the groups, to rounding.
func TestCollisionsSymmetricInGroups(t *testing.T) {
	s, copyOf := withCopies()
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	for g, o := range copyOf {
		assert.Equal(t, m.Groups[o].PerDR, m.Groups[g].PerDR, "group %d and its original %d", g, o)
		assert.Equal(t, m.Groups[o].Settings, m.Groups[g].Settings, "group %d and its original %d", g, o)
	}
	r := s
	r.Groups = slices.Clone(s.Groups)
	slices.Reverse(r.Groups)
	mr, err := scenario.Build(r, nil)
	require.NoError(t, err)
	n := len(s.Groups)
	for g := range n {
		a, b := m.Groups[g].PerDR, mr.Groups[n-1-g].PerDR
		require.Len(t, b, len(a))
		for k := range a {
			// The sums over the groups run in another order: the same
			// to rounding (the fixed point stops at a change below 1e-13).
			for _, f := range [][2]float64{{a[k].Load, b[k].Load}, {a[k].Vulnerable, b[k].Vulnerable},
				{a[k].UplinkSuccess, b[k].UplinkSuccess}, {a[k].Frames, b[k].Frames}, {a[k].RX1Sent, b[k].RX1Sent},
				{a[k].RX2Sent, b[k].RX2Sent}, {a[k].RX1Fallback, b[k].RX1Fallback}} {
				assert.InDelta(t, f[0], f[1], 1e-12*math.Max(1, f[0]), "group %d DR%d, the groups reversed", g, a[k].DR)
			}
		}
	}
}

// Two groups whose node models are the same (a copy that differs in its
// name and its period's spread only) get the same lifetime laws from
// energy.Site: its node laws and first failures answer the same to the
// bit, with the same stated errors.
func TestTwinGroupsSameLifetimeLaws(t *testing.T) {
	s, copyOf := withCopies()
	l, err := scenario.Compute(s, 2, nil)
	require.NoError(t, err)
	for g, o := range copyOf {
		for _, get := range []func(i int) (dist.Law, error){l.Site.NodeLifetime, l.Site.GroupFirstFailure} {
			a, err := get(o)
			require.NoError(t, err)
			b, err := get(g)
			require.NoError(t, err)
			for _, p := range []float64{0.01, 0.5, 0.99} {
				assert.Equal(t, a.Quantile(p), b.Quantile(p), "group %d, quantile %g", g, p)
			}
			assert.Equal(t, a.(dist.Estimated).Accuracy(), b.(dist.Estimated).Accuracy(), "group %d", g)
		}
	}
}
