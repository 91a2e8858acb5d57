package energy_test

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// threeEnergyCycle is an invented class A-like node with three cycle
// energies: an uplink, then a downlink in the first window (1.7 %), in the
// second (0.2 %) or an empty first window (the rest), every state fixed,
// period 600 s.
func threeEnergyCycle(t testing.TB) energy.Cycle {
	t.Helper()
	up := energy.MustFixedState("uplink", 40*energy.MilliAmp, 3.6, 0.0617)
	rx1 := energy.MustFixedState("rx1 frame", 11*energy.MilliAmp, 3.6, 0.0413)
	rx2 := energy.MustFixedState("rx2 frame", 11*energy.MilliAmp, 3.6, 0.0658)
	empty := energy.MustFixedState("rx1 empty", 11*energy.MilliAmp, 3.6, 0.0061)
	st := energy.MustSequence(up, energy.MustChoice([]float64{0.017, 0.002, 0.981}, []energy.Stage{rx1, rx2, empty}))
	return energy.MustCycle(st, dist.MustPointMass(600), 1.5*energy.MicroAmp*3.6)
}

// TestLifetimeThreeEnergies: a three-energy cycle's lifetime is computed
// exactly (binomial tails summed over the third energy's count), reports a
// bound at the rounding level, and agrees with walking the cycles one by one
// from the structure (Simulate), KS at level 1e-6 on a grid of 200 sample
// quantiles, at about 3000 cycles.
func TestLifetimeThreeEnergies(t *testing.T) {
	t.Parallel()
	c := threeEnergyCycle(t)
	assert.Len(t, c.Energy().(dist.Atomic).Atoms(), 3)
	b := energy.MustBattery(energy.BatterySpec{Energy: 3000 * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	l := energy.MustLifetime(c, b)
	acc := l.Accuracy()
	assert.Contains(t, acc.Method, "exact")
	assert.LessOrEqual(t, acc.CDFAbs, 1e-12)
	r := rand.New(rand.NewPCG(41, 42))
	const n = 4000
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = l.Simulate(r)
	}
	assert.Less(t, gridKS(xs, l.CDF, 200), testref.KSCritical(n, 1e-6)+acc.CDFAbs)
}

// TestCyclesExactEnergies: the law of a week (1008 cycles) of a three-energy
// cycle and of a two-energy one (uplink, downlink or not), both on the exact
// paths with atoms as large as 0.03 (samples land on them exactly), pass the
// shared conformance checker and report bounds at the rounding level (the
// two-energy week has 1009 atoms, which dist.SumIID lists exactly).
func TestCyclesExactEnergies(t *testing.T) {
	up := energy.MustFixedState("uplink", 40*energy.MilliAmp, 3.6, 0.06)
	down := energy.MustFixedState("rx", 11*energy.MilliAmp, 3.6, 0.03)
	two := energy.MustCycle(energy.MustSequence(up, energy.MustChoice([]float64{0.2, 0.8}, []energy.Stage{down, energy.Nothing()})),
		dist.MustPointMass(600), 1.5*energy.MicroAmp*3.6)
	for i, c := range []energy.Cycle{threeEnergyCycle(t), two} {
		w, err := c.Cycles(1008)
		require.NoError(t, err)
		if e, ok := w.(dist.Estimated); ok {
			acc := e.Accuracy()
			assert.Contains(t, acc.Method, "exact")
			assert.LessOrEqual(t, acc.CDFAbs, 1e-12)
		} else {
			// at most 1024 atoms (1009 for two energies): listed exactly
			_, ok := w.(dist.Discrete)
			assert.True(t, ok, "%d energies: %T", 3-i, w)
		}
		require.NoError(t, disttest.Check(w, disttest.WithSeed(8+uint64(i))), "%d energies", 3-i)
	}
}
