package lifesim

import (
	"errors"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// monthly integrates a piecewise-constant monthly factor: the i-th month
// after deployment has factor i+1 here, so sums are hand-computed.
func TestMonthly(t *testing.T) {
	var rate [12]float64
	for i := range rate {
		rate[i] = float64(i + 1)
	}
	m := energy.Month
	for _, tc := range []struct {
		name   string
		t0, t1 float64
		want   float64 // in Month·factor
	}{
		{"inside a month", 0.25 * m, 0.75 * m, 0.5},
		{"across a boundary", 0.5 * m, 2.5 * m, 0.5*1 + 2 + 0.5*3},
		{"a whole year", 0, 12 * m, 78},
		{"across the year's end", 11.5 * m, 12.5 * m, 0.5*12 + 0.5*1},
		{"second year", 13 * m, 14 * m, 2},
		{"empty", 3 * m, 3 * m, 0},
	} {
		assert.InDelta(t, tc.want, monthly(&rate, tc.t0, tc.t1)/m, 1e-9, tc.name)
	}
}

// A life longer than the cap is an error, not an endless loop (the cap is
// lowered here so the test runs fast).
func TestCycleCap(t *testing.T) {
	tx, err := energy.NewFixedState("tx", 1*energy.MilliAmp, 3.6, 0.01)
	require.NoError(t, err)
	c, err := energy.NewCycle(energy.MustSequence(tx), dist.MustPointMass(60), 1e-6*3.6)
	require.NoError(t, err)
	b, err := energy.NewBattery(energy.BatterySpec{Charge: 100 * energy.MilliAmpHour, NominalVoltage: 3.6, UsableFraction: 1})
	require.NoError(t, err)
	p, err := NewPlayer(energy.SiteSpec{Groups: []energy.SiteGroup{{Count: 1, Node: energy.NodeSpec{
		Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b}}}})
	require.NoError(t, err)
	p.maxCycles = 1000
	_, err = p.Fleet(rand.New(rand.NewPCG(1, 2)))
	require.Error(t, err)
	assert.True(t, errors.Is(err, ErrParam))
	assert.Contains(t, err.Error(), "MaxCycles")
}
