package energy_test

import (
	"errors"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
)

// TestUnits checks the unit factors against their definitions: 1 mAh =
// 3.6 C (1e-3 A × 3600 s, SI), the Julian year of 365.25 days =
// 31 557 600 s (IAU definition), and the small prefixes.
func TestUnits(t *testing.T) {
	assert.Equal(t, 3600.0, 1000*energy.MilliAmpHour)
	assert.Equal(t, 31_557_600.0, energy.Year)
	assert.Equal(t, 86_400.0, energy.Day)
	assert.InDelta(t, 0.012, 12*energy.MilliAmp, 1e-18)
	assert.InDelta(t, 2e-6, 2*energy.MicroAmp, 1e-22)
	assert.InDelta(t, 0.25, 250*energy.Millisecond, 1e-16)
	assert.InDelta(t, 3e-3, 3*energy.MilliJoule, 1e-18)
	assert.InDelta(t, 4e-6, 4*energy.MicroJoule, 1e-21)
	assert.InDelta(t, 2400.0, energy.MilliAmpHours(2400*energy.MilliAmpHour), 1e-9)
	assert.InDelta(t, 2.0, energy.Years(2*energy.Year), 1e-15)
}

// TestTypicalCells checks the derived figures of the two example cells by
// hand arithmetic: 2400 mAh at 3.6 V is 8640 C, 31 104 J; 1 %/year of it is
// 311.04 J per 31 557 600 s, 9.856 µW; 225 mAh at 3 V is 2430 J.
func TestTypicalCells(t *testing.T) {
	er := energy.MustBattery(energy.TypicalER14505())
	assert.InDelta(t, 31104.0, er.NominalEnergy(), 1e-9)
	assert.InDelta(t, 31104.0, er.UsableEnergy(), 1e-9)
	assert.InDelta(t, 311.04/31557600, er.SelfDischargePower(), 1e-18)
	assert.Contains(t, er.Spec().Name, "from memory")
	cr := energy.MustBattery(energy.TypicalCR2032())
	assert.InDelta(t, 2430.0, cr.NominalEnergy(), 1e-9)
	assert.Equal(t, 2.0, cr.Spec().CutoffVoltage)
	assert.Contains(t, cr.Spec().Name, "data sheet")

	// Derating and usable fraction multiply the nominal energy.
	spec := energy.TypicalCR2032()
	spec.UsableFraction = 0.8
	spec.TemperatureDerating = 0.5
	assert.InDelta(t, 2430*0.4, energy.MustBattery(spec).UsableEnergy(), 1e-9)
}

func TestBatteryBadInput(t *testing.T) {
	base := energy.TypicalER14505()
	tests := []struct {
		name  string
		edit  func(*energy.BatterySpec)
		field string
	}{
		{"zero capacity", func(s *energy.BatterySpec) { s.Charge = 0 }, "Charge"},
		{"negative capacity", func(s *energy.BatterySpec) { s.Charge = -1 }, "Charge"},
		{"both capacities", func(s *energy.BatterySpec) { s.Energy = 100 }, "Energy"},
		{"negative energy", func(s *energy.BatterySpec) { s.Charge, s.Energy = 0, -5 }, "Energy"},
		{"usable zero", func(s *energy.BatterySpec) { s.UsableFraction = 0 }, "UsableFraction"},
		{"usable above one", func(s *energy.BatterySpec) { s.UsableFraction = 1.2 }, "UsableFraction"},
		{"self-discharge 100 %", func(s *energy.BatterySpec) { s.SelfDischargePerYear = 1 }, "SelfDischargePerYear"},
		{"self-discharge negative", func(s *energy.BatterySpec) { s.SelfDischargePerYear = -0.01 }, "SelfDischargePerYear"},
		{"voltage zero", func(s *energy.BatterySpec) { s.NominalVoltage = 0 }, "NominalVoltage"},
		{"cut-off above nominal", func(s *energy.BatterySpec) { s.CutoffVoltage = 4 }, "CutoffVoltage"},
		{"derating above one", func(s *energy.BatterySpec) { s.TemperatureDerating = 1.5 }, "TemperatureDerating"},
		{"pulse negative", func(s *energy.BatterySpec) { s.PulseCurrent = -1 }, "PulseCurrent"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s := base
			tc.edit(&s)
			_, err := energy.NewBattery(s)
			require.Error(t, err)
			assert.True(t, errors.Is(err, energy.ErrParam))
			var pe *energy.ParamError
			require.True(t, errors.As(err, &pe))
			assert.Contains(t, pe.Param, tc.field)
			assert.Contains(t, err.Error(), "ER14505")
		})
	}
}
