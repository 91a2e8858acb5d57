package scenario_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// BuildGroup against Build (the oracle: the whole model built from
// scratch) for the changes a design search makes to one group — interval,
// payload, confirmed uplinks, cell, receive window (a node appended),
// placement, gateway — and for a scenario that differs elsewhere (built
// in full).
// The two solves stop at a change below 1e-13 between rounds from
// different starting points, and the rounds contract by a factor of about
// 0.004 in the demo, so they agree to about 1e-13 (tolerance 1e-11
// relative on every per-data-rate figure and on each setting's mean cycle
// energy).
func TestBuildGroupAsBuild(t *testing.T) {
	demo := scenario.Demo()
	base, err := scenario.Build(demo, nil)
	require.NoError(t, err)
	change := map[string]func(s *scenario.Scenario, gi int){
		"unchanged": func(*scenario.Scenario, int) {},
		"interval":  func(s *scenario.Scenario, gi int) { s.Groups[gi].Interval *= 0.3; s.Groups[gi].Jitter *= 0.3 },
		"payload":   func(s *scenario.Scenario, gi int) { s.Groups[gi].Payload *= 2 },
		"confirmed": func(s *scenario.Scenario, gi int) {
			s.Groups[gi].Confirmed, s.Groups[gi].MaxTransmissions = true, 4
			s.Groups[gi].Interval /= 8
		},
		"cell": func(s *scenario.Scenario, gi int) { s.Groups[gi].Cell = (s.Groups[gi].Cell + 1) % len(s.Cells) },
		"window": func(s *scenario.Scenario, gi int) {
			n := s.Nodes[s.Groups[gi].Node]
			n.WindowSymbols, n.WindowMargin = 16, 0.02
			s.Nodes = append(s.Nodes, n)
			s.Groups[gi].Node = len(s.Nodes) - 1
		},
		"placement": func(s *scenario.Scenario, gi int) { s.Groups[gi].OuterRadius *= 1.5 },
		"gateway": func(s *scenario.Scenario, gi int) {
			s.Groups[gi].Gateway = (s.Groups[gi].Gateway + 1) % len(s.Gateways)
		},
		"environment": func(s *scenario.Scenario, gi int) { s.Environment.ShadowingSD += 1 },
		"other group": func(s *scenario.Scenario, gi int) { s.Groups[(gi+1)%len(s.Groups)].Interval /= 2 },
	}
	worst := 0.0
	rel := func(a, b float64) float64 {
		if a == b {
			return 0
		}
		r := math.Abs(a-b) / math.Max(math.Abs(a), math.Abs(b))
		worst = math.Max(worst, r)
		return r
	}
	for name, f := range change {
		for gi := range demo.Groups {
			s := demo
			s.Groups = append([]scenario.Group(nil), demo.Groups...)
			s.Nodes = append([]scenario.Node(nil), demo.Nodes...)
			f(&s, gi)
			want, err := scenario.Build(s, nil)
			require.NoError(t, err, "%s, group %d", name, gi)
			got, err := scenario.BuildGroup(base, s, gi)
			require.NoError(t, err, "%s, group %d", name, gi)
			w := want.Groups[gi]
			assert.Equal(t, w.Settings, got.Settings, "%s, group %d", name, gi)
			assert.Equal(t, w.Unheard, got.Unheard, "%s, group %d", name, gi)
			require.Len(t, got.PerDR, len(w.PerDR), "%s, group %d", name, gi)
			for k, d := range w.PerDR {
				g := got.PerDR[k]
				for _, p := range [][2]float64{{d.Load, g.Load}, {d.Vulnerable, g.Vulnerable}, {d.UplinkSuccess, g.UplinkSuccess}, {d.Frames, g.Frames},
					{d.RX1Sent, g.RX1Sent}, {d.RX2Sent, g.RX2Sent}, {d.RX1Fallback, g.RX1Fallback}, {d.Windows.RX1, g.Windows.RX1}, {d.Windows.RX2, g.Windows.RX2}} {
					assert.LessOrEqual(t, rel(p[0], p[1]), 1e-11, "%s, group %d, DR%d: %v", name, gi, d.DR, p)
				}
			}
			for i := range w.AllWeights() {
				cw, err := w.AllSettingCycle(i)
				require.NoError(t, err)
				cg, err := got.AllSettingCycle(i)
				require.NoError(t, err)
				assert.LessOrEqual(t, rel(cw.MeanEnergy(), cg.MeanEnergy()), 1e-11, "%s, group %d, setting %d", name, gi, i)
			}
		}
	}
	t.Logf("largest relative difference %.2g", worst)
	_, err = scenario.BuildGroup(base, demo, len(demo.Groups))
	require.Error(t, err)
}
