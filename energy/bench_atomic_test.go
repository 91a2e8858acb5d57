package energy_test

import (
	"testing"

	"github.com/joulelaw/joulelaw/energy"
)

// BenchmarkLifetimeThree1e6: lifetimeWork for a three-energy class A-like
// cycle (threeEnergyCycle) at about 10^6 cycles, on the exact path
// (binomial tails summed over the least likely energy's count).
func BenchmarkLifetimeThree1e6(b *testing.B) {
	c := threeEnergyCycle(b)
	cell := energy.MustBattery(energy.BatterySpec{Energy: 1e6 * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	for b.Loop() {
		lifetimeWork(b, c, cell)
	}
}

// BenchmarkDiscreteBound1e6: building the lifetime of the six-energy cycle
// at about 10^6 cycles and its reported bound (Esseen's inequality, the far
// peaks of the transform bounded by branch and bound).
func BenchmarkDiscreteBound1e6(b *testing.B) {
	c := sixEnergyCycle(b)
	cell := energy.MustBattery(energy.BatterySpec{Energy: 1e6 * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	for b.Loop() {
		l, err := energy.NewLifetime(c, cell)
		if err != nil {
			b.Fatal(err)
		}
		_ = l.Accuracy()
	}
}
