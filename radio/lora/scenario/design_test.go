package scenario_test

import (
	"errors"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// TestDesignSection: the demo's design section reads into SI units; a file
// without one has none (the one optional section).
func TestDesignSection(t *testing.T) {
	d := scenario.Demo().Design
	require.NotNil(t, d)
	assert.Equal(t, energy.Target{Kind: energy.NodeFlat, Date: 8 * energy.Year, Level: 0.01}, d.Target)
	assert.Equal(t, []int{0, 1}, d.Cells)
	assert.Equal(t, []energy.Link{{Transmissions: 1}, {Confirmed: true, Transmissions: 4}}, d.Links)
	assert.Equal(t, []int{1, 2}, d.Batches)
	assert.Equal(t, 300.0, d.MinInterval)
	assert.Equal(t, 86400.0, d.MaxInterval)
	assert.InDelta(t, 0.010, d.Windows[0].Margin, 1e-15)
	assert.InDelta(t, 15*energy.Year, d.Horizon, 1e-6)
	assert.Equal(t, energy.Costs{Visit: 400, Cell: 15}, d.Costs)

	s, err := scenario.Parse(mutate(t, func(m map[string]any) { delete(m, "design") }))
	require.NoError(t, err)
	assert.Nil(t, s.Design)
}

// TestDesignSectionRejected: each bad entry is named by field, value and
// rule (wrapping ErrInvalid).
func TestDesignSectionRejected(t *testing.T) {
	des := func(m map[string]any) map[string]any { return obj(m["design"]) }
	for _, c := range []struct {
		name, field string
		edit        func(m map[string]any)
	}{
		{"level 0", "design.target.level", func(m map[string]any) { obj(des(m)["target"])["level"] = 0 }},
		{"level 1", "design.target.level", func(m map[string]any) { obj(des(m)["target"])["level"] = 1 }},
		{"negative date", "design.target.years", func(m map[string]any) { obj(des(m)["target"])["years"] = -1 }},
		{"kind", "design.target.kind", func(m map[string]any) { obj(des(m)["target"])["kind"] = "soon" }},
		{"negative horizon", "design.horizon_years", func(m map[string]any) { des(m)["horizon_years"] = -5 }},
		{"negative visit cost", "design.costs.per_visit", func(m map[string]any) { obj(des(m)["costs"])["per_visit"] = -1 }},
		{"negative cell cost", "design.costs.per_cell", func(m map[string]any) { obj(des(m)["costs"])["per_cell"] = -1 }},
		{"no cells", "design.cells", func(m map[string]any) { des(m)["cells"] = []any{} }},
		{"unknown cell", "design.cells[0]", func(m map[string]any) { des(m)["cells"] = []any{"no such cell"} }},
		{"no links", "design.links", func(m map[string]any) { des(m)["links"] = []any{} }},
		{"unconfirmed repeats", "design.links[0].max_transmissions", func(m map[string]any) {
			obj(des(m)["links"].([]any)[0])["max_transmissions"] = 3
		}},
		{"no batches", "design.readings_per_uplink", func(m map[string]any) { des(m)["readings_per_uplink"] = []any{} }},
		{"payload too long", "design.readings_per_uplink[0]", func(m map[string]any) { des(m)["readings_per_uplink"] = []any{3} }},
		{"no windows", "design.receive_windows", func(m map[string]any) { des(m)["receive_windows"] = []any{} }},
		{"interval order", "design.reading_interval_s", func(m map[string]any) { des(m)["reading_interval_s"] = []any{600, 60} }},
		{"unknown field", "design.budget", func(m map[string]any) { des(m)["budget"] = 1 }},
		{"missing field", "design.costs", func(m map[string]any) { delete(des(m), "costs") }},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := scenario.Parse(mutate(t, c.edit))
			require.Error(t, err)
			assert.True(t, errors.Is(err, scenario.ErrInvalid), "%v", err)
			assert.Contains(t, err.Error(), c.field)
		})
	}
}
