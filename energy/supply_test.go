package energy_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
)

// TestSupplyAccounting checks the energy through each supply path on
// hand-computed examples: a node drawing 10 mA at a 3.3 V rail for 1 s
// (33 mJ at the rail) from a 3.6 V cell.
func TestSupplyAccounting(t *testing.T) {
	const (
		vcell = 3.6
		inode = 10 * energy.MilliAmp
		dt    = 1.0
	)
	nodeJ := inode * 3.3 * dt // 33 mJ at the rail

	// direct: the cell gives what the node takes
	d := energy.DirectSupply()
	assert.Equal(t, 1.0, d.EnergyScale(vcell))
	assert.Equal(t, 0.0, d.QuiescentPower(vcell))
	assert.Equal(t, 0.0, d.RailVoltage())
	assert.NoError(t, d.Check(2.0))
	assert.Equal(t, "direct from the cell", d.String())

	// linear: the cell delivers the node's 10 mA plus 2 µA at 3.6 V:
	// 10 mA × 3.6 V × 1 s = 36 mJ for the node, 2 µA × 3.6 V = 7.2 µW idle
	lin, err := energy.LinearRegulator(3.3, 2*energy.MicroAmp)
	require.NoError(t, err)
	assert.InDelta(t, 36e-3, nodeJ*lin.EnergyScale(vcell), 1e-15)
	assert.InDelta(t, 7.2e-6, lin.QuiescentPower(vcell), 1e-20)
	cellJ := nodeJ*lin.EnergyScale(vcell) + lin.QuiescentPower(vcell)*dt
	assert.InDelta(t, (inode+2*energy.MicroAmp)*vcell*dt, cellJ, 1e-15, "cell current = node current + Iq")
	assert.Equal(t, 3.3, lin.RailVoltage())
	assert.Equal(t, 1.0, lin.Efficiency())
	assert.Equal(t, "linear regulator to 3.3 V, quiescent 2 µA", lin.String())

	// switching at 85 %: 33 mJ / 0.85 = 38.8235… mJ, plus 1 µA × 3.6 V
	sw, err := energy.SwitchingRegulator(3.3, 0.85, 1*energy.MicroAmp)
	require.NoError(t, err)
	assert.InDelta(t, 0.033/0.85, nodeJ*sw.EnergyScale(vcell), 1e-15)
	assert.InDelta(t, 3.6e-6, sw.QuiescentPower(vcell), 1e-20)
	assert.Equal(t, sw.EnergyScale(2.5), sw.EnergyScale(3.6), "a converter's scale does not depend on the cell voltage")
	assert.Equal(t, 0.85, sw.Efficiency())
	assert.Equal(t, 1*energy.MicroAmp, sw.QuiescentCurrent())
	assert.NoError(t, sw.Check(2.5), "a converter may boost")
	assert.Equal(t, "switching regulator to 3.3 V, efficiency 85 %, quiescent 1 µA", sw.String())

	// the linear path wastes the headroom: at 3.6 V in, 3.3 V out, 8.3 % more
	assert.InDelta(t, 3.6/3.3-1, lin.EnergyScale(vcell)-1, 1e-15)

	for _, s := range []energy.Supply{d, lin, sw} {
		assert.True(t, math.IsNaN(s.EnergyScale(math.NaN())), s.String())
		assert.True(t, math.IsNaN(s.EnergyScale(0)), s.String())
		assert.True(t, math.IsNaN(s.QuiescentPower(-1)), s.String())
	}
}

// TestSupplyCheck checks that a linear regulator below its rail is rejected
// and a bad cell voltage is an error for every path.
func TestSupplyCheck(t *testing.T) {
	lin, err := energy.LinearRegulator(3.3, 0)
	require.NoError(t, err)
	assert.NoError(t, lin.Check(3.3))
	err = lin.Check(3.0)
	assert.True(t, errors.Is(err, energy.ErrParam))
	assert.Contains(t, err.Error(), "cellVoltage")
	for _, v := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		assert.True(t, errors.Is(energy.DirectSupply().Check(v), energy.ErrParam), "v = %g", v)
	}
}

// TestSupplyErrors checks that every bad argument is rejected with an
// error wrapping ErrParam that names it.
func TestSupplyErrors(t *testing.T) {
	cases := []struct {
		name, field string
		build       func() (energy.Supply, error)
	}{
		{"zero rail", "railVoltage", func() (energy.Supply, error) { return energy.LinearRegulator(0, 0) }},
		{"NaN rail", "railVoltage", func() (energy.Supply, error) { return energy.LinearRegulator(math.NaN(), 0) }},
		{"huge rail", "railVoltage", func() (energy.Supply, error) { return energy.SwitchingRegulator(100, 0.9, 0) }},
		{"negative Iq", "quiescentCurrent", func() (energy.Supply, error) { return energy.LinearRegulator(3.3, -1e-6) }},
		{"huge Iq", "quiescentCurrent", func() (energy.Supply, error) { return energy.SwitchingRegulator(3.3, 0.9, 1) }},
		{"zero efficiency", "efficiency", func() (energy.Supply, error) { return energy.SwitchingRegulator(3.3, 0, 0) }},
		{"efficiency above 1", "efficiency", func() (energy.Supply, error) { return energy.SwitchingRegulator(3.3, 1.1, 0) }},
		{"NaN efficiency", "efficiency", func() (energy.Supply, error) { return energy.SwitchingRegulator(3.3, math.NaN(), 0) }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := tc.build()
			requireParamErr(t, err, tc.field)
		})
	}
}
