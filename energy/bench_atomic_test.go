package energy_test

import (
	"testing"

	"github.com/joulelaw/joulelaw/energy"
)

// benchMillionCycles runs work on cycle c and a cell sized for 10^6 of its
// mean cycles.
func benchMillionCycles(b *testing.B, c energy.Cycle, work func(*testing.B, energy.Cycle, energy.Battery)) {
	cell := energy.MustBattery(energy.BatterySpec{Energy: 1e6 * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	for b.Loop() {
		work(b, c, cell)
	}
}

// BenchmarkLifetimeThree1e6: lifetimeWork for a three-energy class A-like
// cycle (threeEnergyCycle) at about 10^6 cycles, on the exact path
// (binomial tails summed over the least likely energy's count).
func BenchmarkLifetimeThree1e6(b *testing.B) {
	benchMillionCycles(b, threeEnergyCycle(b), lifetimeWork)
}

// BenchmarkDiscreteBound1e6: building the lifetime of the six-energy cycle
// at about 10^6 cycles and its reported bound (Esseen's inequality, the far
// peaks of the transform bounded by branch and bound).
func BenchmarkDiscreteBound1e6(b *testing.B) {
	benchMillionCycles(b, sixEnergyCycle(b), func(b *testing.B, c energy.Cycle, cell energy.Battery) {
		l, err := energy.NewLifetime(c, cell)
		if err != nil {
			b.Fatal(err)
		}
		_ = l.Accuracy()
	})
}
