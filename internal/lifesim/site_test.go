package lifesim_test

import (
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// The configuration of the validation (invented test input, not data-sheet
// values): three groups of 8 nodes at a temperate site, each node's life a
// few hundred cycles of 8 or 12 hours, so that a fleet plays in a few
// milliseconds while the seasons, the self-discharge, the supply paths and
// (for group "C") the calendar limit all move the lifetimes.
//
// Periods against the lifetime spread: the sampler knows a lifetime to
// within one period (it interpolates within the last cycle, taking its
// energy as spent evenly), the law counts t/E[T] cycles continuously. The
// relative spread of a lifetime here is about 10 % of some 700 cycles, so
// a difference of half a period shifts the CDF by at most about
// 0.5·density·period ≈ 0.5/(2.5·70) < 0.003, far below the KS bounds used
// (0.05 to 0.1).
const (
	fleetGroups = 3
	perGroup    = 8
)

func cycleOf(t testing.TB, period, floorCurrent, txTime float64) energy.Cycle {
	t.Helper()
	tx, err := energy.NewFixedState("tx", 60*energy.MilliAmp, 3.6, txTime)
	require.NoError(t, err)
	rx, err := energy.NewState("rx", dist.MustPointMass(15*energy.MilliAmp), 3.6,
		dist.MustDiscrete([]float64{0.2, 3}, []float64{0.7, 0.3}))
	require.NoError(t, err)
	c, err := energy.NewCycle(energy.MustSequence(tx, rx), dist.MustPointMass(period), floorCurrent*3.6)
	require.NoError(t, err)
	return c
}

func siteSpec(t testing.TB) energy.SiteSpec {
	t.Helper()
	clim, err := energy.NewSeasonalClimate(12, 10, 6, 8)
	require.NoError(t, err)
	th, err := energy.NewThermal(energy.TypicalThermal())
	require.NoError(t, err)
	cell := energy.BatterySpec{Charge: 100 * energy.MilliAmpHour, NominalVoltage: 3.6, UsableFraction: 0.95,
		SelfDischargePerYear: 0.05}
	b, err := energy.NewBattery(cell)
	require.NoError(t, err)
	sw, err := energy.SwitchingRegulator(3.0, 0.85, 1*energy.MicroAmp)
	require.NoError(t, err)
	lin, err := energy.LinearRegulator(3.0, 0.5*energy.MicroAmp)
	require.NoError(t, err)
	h := energy.Hour
	return energy.SiteSpec{
		Climate: &clim,
		Shared:  energy.SharedSpread{Batch: 0.03, Temperature: 2},
		Groups: []energy.SiteGroup{
			{Name: "A", Count: perGroup, Node: energy.NodeSpec{
				Settings: []energy.NodeSetting{{Weight: 1, Cycle: cycleOf(t, 24*h, 8*energy.MicroAmp, 4)}},
				Battery:  b, Thermal: &th, StorageTime: 0.25 * energy.Year,
				Spread: energy.NodeSpread{Capacity: 0.04, Floor: 0.15, Active: 0.05}}},
			{Name: "B", Count: perGroup, Node: energy.NodeSpec{
				Settings: []energy.NodeSetting{
					{Weight: 0.6, Cycle: cycleOf(t, 24*h, 6*energy.MicroAmp, 4)},
					{Weight: 0.4, Cycle: cycleOf(t, 16*h, 6*energy.MicroAmp, 2)}},
				Battery: b, Thermal: &th, Supply: sw, StartMonth: 3,
				Spread: energy.NodeSpread{Capacity: 0.03, Floor: 0.2, Active: 0.05}}},
			{Name: "C", Count: perGroup, Node: energy.NodeSpec{
				Settings: []energy.NodeSetting{{Weight: 1, Cycle: cycleOf(t, 24*h, 5*energy.MicroAmp, 4)}},
				Battery:  b, Thermal: &th, Supply: lin, StartMonth: 9,
				CalendarLife: 1.65 * energy.Year, StorageTime: 0.5 * energy.Year,
				Spread: energy.NodeSpread{Capacity: 0.04, Floor: 0.15, Active: 0.04}}},
		},
	}
}
