package energy_test

import (
	"testing"

	"gonum.org/v1/gonum/mathext"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
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

// gammaCycleValues is the gamma cycle of BenchmarkLifetimeGamma1e6 (a fixed
// floor plus a Gamma(2, 1) J burst: a shifted gamma) with a cell for about
// 10^6 cycles, and 1000 cycle counts k over ±5 renewal standard deviations.
func gammaCycleValues() (energy.Cycle, energy.Battery, []int64) {
	st, _ := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustGamma(2, 1))
	c := energy.MustCycle(st, dist.MustPointMass(60), 0.001)
	cell := energy.MustBattery(energy.BatterySpec{Energy: 1e6 * c.MeanEnergy(), NominalVoltage: 3, UsableFraction: 1})
	ks := make([]int64, 1000)
	for i := range ks {
		ks[i] = int64(1e6 - 2400 + 4.8*float64(i)) // sd(M) is about 480 cycles
	}
	return c, cell, ks
}

// BenchmarkLifetimeGammaValues: 1000 values of P(M >= k) = P(S_k <= C) of
// the gamma cycle near 10^6 cycles (a fresh lifetime each time, so no value
// is cached).
func BenchmarkLifetimeGammaValues(b *testing.B) {
	c, cell, ks := gammaCycleValues()
	defer testref.ReportCPU(b)()
	for b.Loop() {
		l := energy.MustLifetime(c, cell)
		for _, k := range ks {
			_, _ = l.Cycles(k)
		}
	}
}

// BenchmarkGammaIncRegBaseline is what a user would otherwise write for
// BenchmarkLifetimeGammaValues: gonum's regularised incomplete gamma
// (mathext.GammaIncReg) of shape 2k at the capacity less the k floors, the
// same 1000 values.
func BenchmarkGammaIncRegBaseline(b *testing.B) {
	c, cell, ks := gammaCycleValues()
	floor := c.Energy().Mean() - 2 // the cycle's fixed part (J)
	defer testref.ReportCPU(b)()
	for b.Loop() {
		for _, k := range ks {
			_ = mathext.GammaIncReg(2*float64(k), cell.UsableEnergy()-float64(k)*floor)
		}
	}
}
