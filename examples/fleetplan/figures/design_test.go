package main

import (
	"bytes"
	"math"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot/vg"

	"github.com/joulelaw/joulelaw/dist/distplot"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// TestWhatItTakes: the demo's "what it takes" section holds together: each
// group's answer meets the 1 %-by-8-years target within its stated error,
// the quantile table's row at the interval found puts the 1 % point at 8
// years (the same statement read as a quantile, within the 1 % bracket
// the search leaves), the interval is the shortest feasible one of the
// choices listed, and the cheapest policy meets the risk at the least
// mean cost among those that do. The report prints the section, the
// JSON holds it.
func TestWhatItTakes(t *testing.T) {
	if testing.Short() {
		t.Skip("the demo plan and its design search: seconds")
	}
	s := scenario.Demo()
	p, err := fleet.Build(s, "demo", func(string, ...any) {})
	require.NoError(t, err)
	require.Nil(t, p.Design, "only with -what-it-takes")
	p.Design, err = fleet.WhatItTakes(s, p, func(string, ...any) {})
	require.NoError(t, err)
	d := p.Design
	require.NotNil(t, d)
	require.Len(t, d.Groups, len(s.Groups))
	for _, g := range d.Groups {
		require.True(t, g.Feasible, g.Name)
		assert.LessOrEqual(t, g.Probability+g.ProbError, d.TargetLevel, g.Name)
		assert.InDelta(t, d.TargetLevel-g.Probability, g.Margin, 1e-15)
		assert.LessOrEqual(t, g.IntervalLowS, g.ReadingIntervalS)
		assert.InDelta(t, float64(g.ReadingsPerUplink)*g.ReadingIntervalS, g.UplinkIntervalS, 1e-9)
		found := false
		for _, q := range g.Quantiles {
			if q.IntervalS != g.ReadingIntervalS {
				continue
			}
			found = true
			assert.True(t, q.Meets, g.Name)
			if g.Binds == string(energy.BindEnergy) {
				// 1 % bracket on the interval: the life moves at most in
				// proportion to it.
				assert.InDelta(t, d.TargetYears, q.Years[0], 0.02*d.TargetYears, g.Name)
				assert.GreaterOrEqual(t, q.Years[0], d.TargetYears*(1-1e-6), g.Name)
			}
		}
		assert.True(t, found, "%s: the interval found is a row of the table", g.Name)
		for _, c := range g.Choices {
			if c.Feasible {
				assert.GreaterOrEqual(t, c.ReadingIntervalS, g.ReadingIntervalS*(1-fleet.DesignTolerance), "%s: %s", g.Name, c.Choice)
			}
		}
	}
	pp := d.Policies
	require.NotEmpty(t, pp.Rows)
	require.True(t, pp.Feasible)
	best := pp.Rows[pp.Cheapest]
	assert.LessOrEqual(t, best.AnyFlat+best.AnyFlatError, pp.Risk)
	for _, r := range pp.Rows {
		if r.AnyFlat+r.AnyFlatError <= pp.Risk {
			assert.LessOrEqual(t, best.Cost.Mean, r.Cost.Mean, r.Policy)
		}
		// (a mean may lie outside the 90 % band: rare failures lift it)
		assert.LessOrEqual(t, r.VisitsPerYear.Low, r.VisitsPerYear.High)
		assert.LessOrEqual(t, r.CellsPerYear.Low, r.CellsPerYear.High)
		assert.False(t, math.IsNaN(r.Cost.Mean))
	}
	// All four kinds of policy: scheduled for all, per group, per group with
	// failures between, and on failure alone (a failure is a visit and a
	// cell).
	onFailure := 0
	for _, r := range pp.Rows {
		if r.OnFailure && slices.Max(r.PeriodsYears) == 0 {
			onFailure++
			assert.InDelta(t, r.FailuresPerYear.Mean, r.VisitsPerYear.Mean, 1e-9)
			assert.InDelta(t, r.FailuresPerYear.Mean, r.CellsPerYear.Mean, 1e-9)
			assert.Greater(t, r.FailuresPerYear.Mean, 0.0)
		}
	}
	assert.Equal(t, 1, onFailure, "the replace-on-failure policy is compared")
	// The out-of-reach nodes are left to commissioning and listed: the
	// demo's groups each have some (scenario.GroupModel.OutOfReach).
	require.Len(t, pp.OutOfReach, len(s.Groups))
	for gi, o := range pp.OutOfReach {
		assert.Equal(t, p.Laws.Model.Groups[gi].OutOfReach, o.Share, o.Group)
		assert.InDelta(t, o.Share*float64(o.Nodes), o.ExpectedNodes, 1e-12, o.Group)
	}
	// The figure: one curve per group and the target, drawn as PNG.
	pl, err := designFigure(p)
	require.NoError(t, err)
	png, err := distplot.Encode(pl, "png", 18*vg.Centimeter, 11*vg.Centimeter)
	require.NoError(t, err)
	assert.True(t, bytes.HasPrefix(png, []byte("\x89PNG")), "PNG signature")
	assert.GreaterOrEqual(t, pl.Y.Max, d.TargetYears, "the target line is within the plot")
	var buf bytes.Buffer
	require.NoError(t, fleet.WriteReport(&buf, p))
	assert.Contains(t, buf.String(), "What it takes\n-------------")
	assert.Contains(t, buf.String(), "the cheapest policy that meets the accepted risk")
}

// TestWhatItTakesNeedsSection: -what-it-takes on a scenario without a design
// section is refused with a message that says where the format is.
func TestWhatItTakesNeedsSection(t *testing.T) {
	s := scenario.Demo()
	s.Design = nil
	_, err := fleet.WhatItTakes(s, &fleet.Plan{}, func(string, ...any) {})
	require.Error(t, err)
	assert.Contains(t, err.Error(), "FORMAT.md")
}
