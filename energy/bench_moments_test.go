package energy_test

import (
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// benchMoments builds the lifetime of cycle c on a cell sized for the given
// number of mean cycles and asks its Mean and Variance (the sums of
// P(M >= k) over the some 17 renewal standard deviations where it moves
// from 1 to 0).
func benchMoments(b *testing.B, c energy.Cycle, cycles float64) {
	cell := energy.MustBattery(energy.BatterySpec{Energy: cycles * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	for b.Loop() {
		l, err := energy.NewLifetime(c, cell)
		if err != nil {
			b.Fatal(err)
		}
		_ = l.Mean() + l.Variance()
	}
}

// BenchmarkLifetimeMomentsThree: the three-energy class A-like cycle at
// about 2·10^5 cycles (the curve some 600 cycles wide), on the exact
// three-value path.
func BenchmarkLifetimeMomentsThree(b *testing.B) {
	benchMoments(b, threeEnergyCycle(b), 2e5)
}

// BenchmarkLifetimeMomentsSoil: the soil node (a uniform sensing time: the
// tilted-inversion path) at about 10^5 cycles.
func BenchmarkLifetimeMomentsSoil(b *testing.B) {
	benchMoments(b, benchSoil(b, []float64{0.6, 0.3, 0.1}), 1e5)
}

// BenchmarkLifetimeMomentsGamma: a gamma cycle (closed form) at about 10^6
// cycles.
func BenchmarkLifetimeMomentsGamma(b *testing.B) {
	st, _ := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustGamma(2, 1))
	benchMoments(b, energy.MustCycle(st, dist.MustPointMass(60), 0.001), 1e6)
}
