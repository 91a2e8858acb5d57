package energy

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestLifetimeFourEnergies: the lifetime of a cycle with two independent
// two-way choices (an uplink repeated or not, 3.4 %; a downlink window of
// one length or another, 15 %), four cycle energies, about 20 000 cycles:
// P(M >= k) = P(S_k <= C) against the exact two-binomial oracle (testref.TwoBinomialCDF) for k over
// ±5 renewal standard deviations, within the lifetime's reported bound.
func TestLifetimeFourEnergies(t *testing.T) {
	t.Parallel()
	up := MustFixedState("uplink", 40*MilliAmp, 3.6, 0.0617)
	again := MustFixedState("repeat", 40*MilliAmp, 3.6, 0.0617*math.Sqrt2)
	rx1 := MustFixedState("rx1", 11*MilliAmp, 3.6, 0.0123)
	rx2 := MustFixedState("rx2", 11*MilliAmp, 3.6, 0.0123*(1+(math.Sqrt(5)-1)/2))
	st := MustSequence(up, MustChoice([]float64{0.034, 0.966}, []Stage{again, Nothing()}), MustChoice([]float64{0.15, 0.85}, []Stage{rx2, rx1}))
	c := MustCycle(st, dist.MustPointMass(600), 1.5*MicroAmp*3.6)
	at := c.Energy().(dist.Atomic).Atoms()
	require.Len(t, at, 4)
	base, da, db := at[0].Value, at[2].Value-at[0].Value, at[1].Value-at[0].Value
	require.InDelta(t, at[3].Value, base+da+db, 1e-12)
	require.InDelta(t, at[1].Mass, 0.966*0.15, 1e-12)
	b := MustBattery(BatterySpec{Energy: 20_000 * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	l := MustLifetime(c, b)
	acc := l.Accuracy()
	t.Logf("reported bound %.3g (%s)", acc.CDFAbs, acc.Method)
	mk, sd := l.cltK()
	worst := 0.0
	for z := -5.0; z <= 5; z += 0.5 {
		k := int64(math.Round(mk + z*sd))
		want := testref.TwoBinomialCDF(int(k), base, da, 0.034, db, 0.15, b.UsableEnergy())
		got, _ := l.Cycles(k)
		worst = math.Max(worst, math.Abs(got-want))
		assert.LessOrEqual(t, math.Abs(got-want), acc.CDFAbs, "k=%d", k)
	}
	t.Logf("largest error of P(M >= k) %.3g", worst)
}
