package scenario_test

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// The duty-cycle warning: a group whose reporting interval is shorter than
// attempts·airtime/d at a data rate its nodes use (the off-time rule of
// ERC Rec. 70-03 Annex 1, 1 % in 868.0–868.6 MHz, with every attempt of a
// report counted) is warned about, and only then. The demo's intervals keep
// the limit; its confirmed group (4 attempts, out-of-reach nodes at DR0,
// SF12) reporting every 60 s does not: 4 × 1.5 s / 0.01 = 600 s.
func TestDutyWarnings(t *testing.T) {
	m, err := scenario.Build(scenario.Demo(), nil)
	require.NoError(t, err)
	ws, err := m.DutyWarnings()
	require.NoError(t, err)
	assert.Empty(t, ws, "the demo keeps the duty cycle")
	for _, g := range m.Groups {
		dc, err := g.DutyCheck(m.Scenario)
		require.NoError(t, err)
		assert.True(t, dc.Feasible, g.Group.Name)
		assert.Equal(t, "868.0–868.60 MHz (1 %)", dc.SubBand)
	}

	s := scenario.Demo()
	s.Groups = s.Groups[2:3]
	s.Groups[0].Interval = 60
	m, err = scenario.Build(s, nil)
	require.NoError(t, err)
	dc, err := m.Groups[0].DutyCheck(s)
	require.NoError(t, err)
	assert.False(t, dc.Feasible)
	air, err := s.Region.UplinkAirtime(0, s.Groups[0].Payload, 0)
	require.NoError(t, err)
	for _, r := range dc.Rows {
		a, err := s.Region.UplinkAirtime(r.DR, s.Groups[0].Payload, 0)
		require.NoError(t, err)
		want := float64(dc.Attempts) * a / 0.01
		assert.InEpsilon(t, want, r.MinInterval, 1e-9, "DR%d", r.DR)
		assert.Equal(t, want <= 60, r.Feasible, "DR%d", r.DR)
	}
	assert.Greater(t, float64(dc.Attempts)*air/0.01, 60.0, "DR0 breaks it")
	ws, err = m.DutyWarnings()
	require.NoError(t, err)
	require.Len(t, ws, 1)
	assert.Equal(t, scenario.DutyCycle, ws[0].Kind)
	assert.Contains(t, ws[0].Text, "DUTY CYCLE: group")
	assert.Contains(t, ws[0].Text, "DR0")
	assert.Contains(t, ws[0].Text, "defer to the regulator")

	// US902-928: no sub-bands; every payload the format admits fits the
	// 400 ms dwell time (RP002-1.0.3 §2.5, from memory).
	us, err := scenario.Load("testdata/us902-928.json")
	require.NoError(t, err)
	m, err = scenario.Build(us, nil)
	require.NoError(t, err)
	for _, g := range m.Groups {
		dc, err := g.DutyCheck(us)
		require.NoError(t, err)
		assert.Empty(t, dc.SubBand)
		assert.Equal(t, 0.4, dc.DwellTime)
		assert.True(t, dc.Feasible)
	}
}

// The cell's warnings come from package energy and reach Laws.Warnings: a
// cell rated for 20 mA pulses under a node that transmits at 90 mA (the
// demo's typical currents, from memory) gets a CELL PULSE warning per state
// above the rating; a cell rated from 10 °C only meets the demo's winters
// below its rated range (energy.Thermal.RangeWarnings) and gets a CLIMATE
// warning.
// The demo itself gets neither.
func TestCellWarnings(t *testing.T) {
	s := scenario.Demo()
	s.Groups = s.Groups[:1]
	l, err := scenario.Compute(s, 2, nil)
	require.NoError(t, err)
	assert.Empty(t, l.CellWarnings(), "the demo's cells and climate are within their ratings")

	cell := s.Groups[0].Cell
	s.Cells = append([]scenario.Cell(nil), s.Cells...)
	s.Cells[cell].Spec.PulseCurrent = 20e-3
	th := *s.Cells[cell].Thermal
	th.MinTemperature = 10 // the demo's winters are colder
	s.Cells[cell].Thermal = &th
	l, err = scenario.Compute(s, 2, nil)
	require.NoError(t, err)
	ws, err := l.Warnings()
	require.NoError(t, err)
	pulse, climate := only(ws, scenario.CellPulse), only(ws, scenario.Climate)
	require.NotEmpty(t, pulse)
	require.NotEmpty(t, climate)
	for _, w := range pulse {
		assert.Contains(t, w.Text, "above the cell's rated pulse current 20 mA")
	}
	assert.Contains(t, climate[0].Text, "CLIMATE: group")
	assert.Contains(t, climate[0].Text, "below the cell's rated minimum 10 °C")
}
