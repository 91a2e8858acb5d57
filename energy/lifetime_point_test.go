package energy_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestLifetimeStatedAgainstIrwinHall: a 1 W burst of a uniform length in
// [0, 1] s above a 1 mW floor over a fixed 60 s period costs
// 0.06 + 0.999·U J a cycle (a law dist inverts by tilted series, so the
// lifetime's values come from dist.PointTails), and
// P(S_k <= C) = P(U_1 + … + U_k <= (C − 0.06k)/0.999), the Irwin–Hall law
// (testref.IrwinHall, exact in rational arithmetic). For cells of 40 and 90
// mean cycles, at every k whose tails are both above 1e-300, the lifetime's
// CDF and Survival are within the stated Accuracy: CDFAbs absolute, and
// SurvivalRel relative where the survival is at least TailFloor.
func TestLifetimeStatedAgainstIrwinHall(t *testing.T) {
	st, err := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustUniform(0, 1))
	require.NoError(t, err)
	c := energy.MustCycle(st, dist.MustPointMass(60), 0.001)
	for _, cycles := range []float64{40, 90} {
		b := energy.MustBattery(energy.BatterySpec{Energy: cycles * c.MeanEnergy(), NominalVoltage: 3, UsableFraction: 1})
		l := energy.MustLifetime(c, b)
		acc := l.Accuracy()
		require.Contains(t, acc.Method, "dist.PointTails")
		var worstAbs, worstRel float64
		for k := int64(1); k < int64(4*cycles); k++ {
			y := (l.Capacity() - 0.06*float64(k)) / 0.999
			wantS, wantF := testref.IrwinHall(int(k), y) // P(M >= k) = P(S_k <= C)
			if math.Min(wantS, wantF) < 1e-300 {
				continue
			}
			t0 := (float64(k) - 0.5) * l.Step() // floor(t/T) + 1 = k
			gotF, gotS := l.CDF(t0), l.Survival(t0)
			worstAbs = math.Max(worstAbs, math.Abs(gotF-wantF))
			assert.LessOrEqual(t, math.Abs(gotF-wantF), acc.CDFAbs, "%g cycles, k=%d: CDF %g, want %g", cycles, k, gotF, wantF)
			if wantS >= acc.TailFloor {
				r := math.Abs(gotS-wantS) / wantS
				worstRel = math.Max(worstRel, r)
				assert.LessOrEqual(t, r, acc.SurvivalRel, "%g cycles, k=%d: survival %g, want %g", cycles, k, gotS, wantS)
			}
		}
		t.Logf("%g cycles: CDF error %.2e (stated %.2e), survival relative error %.2e (stated %.2e above %g)",
			cycles, worstAbs, acc.CDFAbs, worstRel, acc.SurvivalRel, acc.TailFloor)
	}
}
