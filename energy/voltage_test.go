package energy_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
)

// handCurve is a made-up three-point table for hand computation.
func handCurve() energy.VoltageCurve {
	return energy.VoltageCurve{
		DepthOfDischarge:     []float64{0, 0.5, 1},
		OpenCircuit:          []float64{3.6, 3.5, 3.0},
		Resistance:           []float64{10, 10, 30},
		ReferenceTemperature: 20,
		ColdTemperatures:     []float64{-20, 20},
		ColdMultipliers:      []float64{3, 1},
	}
}

// TestUsableFractionHand checks the crossing on a hand-made table. Under
// 20 mA at 20 °C the loaded voltage is 3.4, 3.3 and 2.4 V at depths 0, 0.5
// and 1; on the second segment V(d) = 3.3 − 1.8·(d − 0.5), which meets
// 3.0 V at d = 0.5 + 1/6.
func TestUsableFractionHand(t *testing.T) {
	v, err := energy.NewVoltageCurve(handCurve())
	require.NoError(t, err)
	cases := []struct {
		name                 string
		current, temp, brown float64
		want                 float64
	}{
		{"second segment", 0.02, 20, 3.0, 0.5 + 1.0/6},
		{"first segment", 0.02, 20, 3.35, 0.25},                 // V = 3.4 − 0.2·d = 3.35 at d = 0.25
		{"at a table point", 0.02, 20, 3.3, 0.5},                // exactly the second point
		{"fresh cell sags", 0.02, 20, 3.4, 0},                   // V(0) = 3.4: already at brown-out
		{"never", 0.02, 20, 2.0, 1},                             // V(1) = 2.4 > 2.0
		{"no load", 0, 20, 3.25, 0.5 + 0.25/0.5*0.5},            // OCV alone: 3.5 − (d − 0.5) = 3.25 at d = 0.75
		{"cold, multiplier 2", 0.01, 0, 3.0, 0.5 + 0.3/0.9*0.5}, // I·M = 0.02: same as the first row
		{"colder than the table", 0.02 / 3, -40, 3.0, 0.5 + 1.0/6},
		{"warmer than the table", 0.02, 60, 3.0, 0.5 + 1.0/6},
	}
	for _, c := range cases {
		got, err := v.UsableFraction(c.current, c.temp, c.brown)
		require.NoError(t, err, c.name)
		assert.InDelta(t, c.want, got, 1e-14, c.name) // rounding: ~1e-16·V/ΔV of a segment
	}
	assert.Equal(t, 2.0, v.ResistanceMultiplier(0))
	assert.Equal(t, 3.0, v.ResistanceMultiplier(-60))
	assert.Equal(t, 1.0, v.ResistanceMultiplier(80))
	assert.InDelta(t, 3.3, v.LoadedVoltage(0.5, 0.02, 20), 1e-15)
	assert.InDelta(t, 3.0, v.LoadedVoltage(0.5+1.0/6, 0.02, 20), 1e-15)
	assert.True(t, math.IsNaN(v.LoadedVoltage(1.1, 0.02, 20)))
}

// TestUsableFractionScan checks the segment solution against an
// independent scan: the first point of a grid of step 1e-4 where the loaded
// voltage (LoadedVoltage, interpolated) is at or below brown-out, so the two
// must agree within the grid step; and that more current, more cold or a
// higher brown-out never leaves more usable capacity.
func TestUsableFractionScan(t *testing.T) {
	v := energy.TypicalBobbinCurve()
	const step = 1e-4
	scan := func(i, temp, b float64) float64 {
		for k := 0; k <= 10000; k++ {
			if d := float64(k) * step; v.LoadedVoltage(d, i, temp) <= b {
				return d
			}
		}
		return 1
	}
	for _, i := range []float64{0.005, 0.04, 0.1, 0.25} {
		for _, temp := range []float64{-40, -20, 0, 20, 60} {
			for _, b := range []float64{2.2, 2.8, 3.3} {
				got, err := v.UsableFraction(i, temp, b)
				require.NoError(t, err)
				assert.InDelta(t, scan(i, temp, b), got, step, "I %g, T %g, brown-out %g", i, temp, b)
				more, err := v.UsableFraction(1.5*i, temp, b)
				require.NoError(t, err)
				assert.LessOrEqual(t, more, got)
				colder, err := v.UsableFraction(i, temp-10, b)
				require.NoError(t, err)
				assert.LessOrEqual(t, colder, got)
			}
		}
	}
}

// TestUsableFractionRandom checks the crossing on seeded random tables
// against its definition: the loaded voltage at the answer equals the
// brown-out (within the stated rounding), and every table point before it
// is above the brown-out (so it is the first crossing); an answer of 1
// means every point stays above, 0 that the fresh cell is at or below.
func TestUsableFractionRandom(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	for trial := range 300 {
		n := 2 + r.IntN(12)
		c := energy.VoltageCurve{ReferenceTemperature: 20}
		for i := range n {
			c.DepthOfDischarge = append(c.DepthOfDischarge, float64(i)/float64(n-1))
			c.OpenCircuit = append(c.OpenCircuit, 2+2*r.Float64())
			c.Resistance = append(c.Resistance, 50*r.Float64())
		}
		v, err := energy.NewVoltageCurve(c)
		require.NoError(t, err)
		i, b := 0.05*r.Float64(), 1.5+2*r.Float64()
		u, err := v.UsableFraction(i, 20, b)
		require.NoError(t, err)
		require.True(t, u >= 0 && u <= 1, "trial %d: %g", trial, u)
		for k, d := range v.DepthOfDischarge {
			if d < u {
				assert.Greater(t, v.LoadedVoltage(d, i, 20), b, "trial %d, point %d before the crossing", trial, k)
			}
		}
		switch {
		case u == 0:
			assert.LessOrEqual(t, v.LoadedVoltage(0, i, 20), b, "trial %d", trial)
		case u == 1:
			assert.Greater(t, v.LoadedVoltage(1, i, 20), b, "trial %d", trial)
		default:
			assert.InDelta(t, b, v.LoadedVoltage(u, i, 20), 1e-12, "trial %d", trial)
		}
	}
	assert.Contains(t, energy.TypicalBobbinCurve().String(), "8 points: 3.67 V, 5 Ω fresh")
}

// TestTypicalBobbinCurve checks the figures its doc states, computed by
// hand on its table: under 40 mA at 20 °C with a 2.8 V brown-out the
// loaded voltage is 2.99 V at 90 % and 2.25 V at 95 %, so 0.9 +
// 0.05·0.19/0.74 ≈ 91.3 % is usable; under 100 mA, 3.04 V at 50 % and
// 2.70 V at 80 %, so 0.5 + 0.3·0.24/0.34 ≈ 71.2 %.
func TestTypicalBobbinCurve(t *testing.T) {
	v, err := energy.NewVoltageCurve(energy.TypicalBobbinCurve())
	require.NoError(t, err)
	u, err := v.UsableFraction(0.04, 20, 2.8)
	require.NoError(t, err)
	assert.InDelta(t, 0.9+0.05*0.19/0.74, u, 1e-12)
	u, err = v.UsableFraction(0.1, 20, 2.8)
	require.NoError(t, err)
	assert.InDelta(t, 0.5+0.3*0.24/0.34, u, 1e-12)
	u, err = v.UsableFraction(0, 20, 2.0)
	require.NoError(t, err)
	assert.Equal(t, 1.0, u, "no load and the rated cut-off: the whole capacity")
}

// TestVoltageCurveErrors checks that every bad field or argument is
// rejected with an error wrapping ErrParam that names it, and that
// NewVoltageCurve keeps its own copies of the tables.
func TestVoltageCurveErrors(t *testing.T) {
	in := handCurve()
	v, err := energy.NewVoltageCurve(in)
	require.NoError(t, err)
	in.OpenCircuit[0] = 1
	assert.Equal(t, 3.6, v.OpenCircuit[0])

	cases := []struct {
		name, field string
		edit        func(*energy.VoltageCurve)
	}{
		{"one point", "len(DepthOfDischarge)", func(v *energy.VoltageCurve) {
			v.DepthOfDischarge, v.OpenCircuit, v.Resistance = v.DepthOfDischarge[:1], v.OpenCircuit[:1], v.Resistance[:1]
		}},
		{"too many", "len(DepthOfDischarge)", func(v *energy.VoltageCurve) { v.DepthOfDischarge = make([]float64, 257) }},
		{"short OCV", "len(OpenCircuit)", func(v *energy.VoltageCurve) { v.OpenCircuit = v.OpenCircuit[:2] }},
		{"short R", "len(Resistance)", func(v *energy.VoltageCurve) { v.Resistance = v.Resistance[:2] }},
		{"first depth", "DepthOfDischarge[0]", func(v *energy.VoltageCurve) { v.DepthOfDischarge[0] = 0.1 }},
		{"last depth", "DepthOfDischarge[2]", func(v *energy.VoltageCurve) { v.DepthOfDischarge[2] = 0.9 }},
		{"unsorted", "DepthOfDischarge[1]", func(v *energy.VoltageCurve) { v.DepthOfDischarge[1] = 0 }},
		{"NaN depth", "DepthOfDischarge[1]", func(v *energy.VoltageCurve) { v.DepthOfDischarge[1] = math.NaN() }},
		{"zero OCV", "OpenCircuit[1]", func(v *energy.VoltageCurve) { v.OpenCircuit[1] = 0 }},
		{"negative R", "Resistance[2]", func(v *energy.VoltageCurve) { v.Resistance[2] = -1 }},
		{"NaN R", "Resistance[0]", func(v *energy.VoltageCurve) { v.Resistance[0] = math.NaN() }},
		{"reference", "ReferenceTemperature", func(v *energy.VoltageCurve) { v.ReferenceTemperature = math.Inf(1) }},
		{"cold lengths", "len(ColdMultipliers)", func(v *energy.VoltageCurve) { v.ColdMultipliers = v.ColdMultipliers[:1] }},
		{"cold unsorted", "ColdTemperatures[1]", func(v *energy.VoltageCurve) { v.ColdTemperatures[1] = -30 }},
		{"cold NaN", "ColdTemperatures[0]", func(v *energy.VoltageCurve) { v.ColdTemperatures[0] = math.NaN() }},
		{"zero multiplier", "ColdMultipliers[0]", func(v *energy.VoltageCurve) { v.ColdMultipliers[0] = 0 }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := handCurve()
			tc.edit(&c)
			_, err := energy.NewVoltageCurve(c)
			requireParamErr(t, err, tc.field)
		})
	}

	args := []struct {
		name, field          string
		current, temp, brown float64
	}{
		{"negative current", "pulseCurrent", -0.01, 20, 3},
		{"huge current", "pulseCurrent", 11, 20, 3},
		{"NaN current", "pulseCurrent", math.NaN(), 20, 3},
		{"NaN temperature", "temperature", 0.01, math.NaN(), 3},
		{"zero brown-out", "brownout", 0.01, 20, 0},
		{"infinite brown-out", "brownout", 0.01, 20, math.Inf(1)},
	}
	for _, a := range args {
		_, err := v.UsableFraction(a.current, a.temp, a.brown)
		assert.True(t, errors.Is(err, energy.ErrParam), a.name)
		assert.Contains(t, err.Error(), a.field, a.name)
	}
	_, err = energy.VoltageCurve{}.UsableFraction(0.01, 20, 3)
	assert.True(t, errors.Is(err, energy.ErrParam), "the zero curve")
}
