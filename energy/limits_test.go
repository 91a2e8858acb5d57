package energy_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// TestOverflowGuards: issue 13. A battery charge of 1e308 C was accepted
// and overflowed to NaN downstream; Cycle.Over with d >= 9e21 s reported
// "k = -9223372036854775808" (the int64 conversion of a huge float) instead
// of naming d. Both are now refused, the error naming the field.
func TestOverflowGuards(t *testing.T) {
	bad := []struct {
		name  string
		spec  energy.BatterySpec
		field string
	}{
		{"charge 1e308 C", energy.BatterySpec{Charge: 1e308, NominalVoltage: 3.6, UsableFraction: 1}, "Charge"},
		{"energy 1e300 J", energy.BatterySpec{Energy: 1e300, NominalVoltage: 3.6, UsableFraction: 1}, "Energy"},
		{"charge 1e-320 C", energy.BatterySpec{Charge: 1e-320, NominalVoltage: 3.6, UsableFraction: 1e-10}, "Charge"},
	}
	for _, tc := range bad {
		_, err := energy.NewBattery(tc.spec)
		require.ErrorIs(t, err, energy.ErrParam, tc.name)
		assert.Contains(t, err.Error(), tc.field, tc.name)
		assert.Contains(t, err.Error(), "MaxBatteryEnergy", tc.name)
	}
	// a large but real cell is still accepted (a 100 Ah, 12 V bank: 4.32e6 J)
	_, err := energy.NewBattery(energy.BatterySpec{Charge: 100 * 3600, NominalVoltage: 12, UsableFraction: 1})
	require.NoError(t, err)

	st := energy.MustFixedState("tx", 40*energy.MilliAmp, 3.3, 0.6)
	c := energy.MustCycle(st, dist.MustPointMass(60), 1e-6)
	for _, d := range []float64{9e21, 1e300, math.MaxFloat64} {
		_, err := c.Over(d)
		require.ErrorIs(t, err, energy.ErrParam, "d = %g", d)
		assert.Contains(t, err.Error(), "d = ", "d = %g", d)
		assert.NotContains(t, err.Error(), "-9223372036854775808", "d = %g", d)
	}
}

// TestLiftedGammaLifetime: issue 13. gonum's gamma quantile is NaN below
// p ≈ 1e-20, so a cycle whose step lasted a gonum gamma lifted by
// FromDistuv could not be summed and NewLifetime failed; the lifted law now
// inverts its CDF there. Oracle: the same cycle with this module's
// closed-form Gamma (k-fold sums of a gamma are gammas; any probability
// text), within the lattice sum's stated accuracy.
func TestLiftedGammaLifetime(t *testing.T) {
	lifted, err := dist.FromDistuv(distuv.Gamma{Alpha: 3, Beta: 30})
	require.NoError(t, err)
	cycle := func(d dist.Law) energy.Cycle {
		st := energy.MustState("tx", dist.MustPointMass(40*energy.MilliAmp), 3.3, d)
		return energy.MustCycle(st, dist.MustPointMass(60), 1e-6)
	}
	native := cycle(dist.MustGamma(3, 30))
	b := energy.MustBattery(energy.BatterySpec{Energy: 2000 * native.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	want, err := energy.NewLifetime(native, b)
	require.NoError(t, err)
	got, err := energy.NewLifetime(cycle(lifted), b)
	require.NoError(t, err)
	for _, p := range []float64{0.01, 0.5, 0.99} {
		assert.InEpsilon(t, want.Quantile(p), got.Quantile(p), 1e-6, "Quantile(%g)", p)
	}
}
