package energy_test

import (
	"errors"
	"math"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/energy"
)

// dayMean is the mean of g(t + (swing/2)·sin φ) over φ in [0, 2π) by
// gonum's Gauss–Legendre rule with 800 points: an oracle independent of the
// package's adaptive quadrature and of the Bessel series (halving the
// points moves it by under 4e-15 relative on the integrands tested here).
func dayMean(g func(float64) float64, t, swing float64) float64 {
	f := func(phi float64) float64 { return g(t + swing/2*math.Sin(phi)) }
	return quad.Fixed(f, 0, 2*math.Pi, 800, quad.Legendre{}, 0) / (2 * math.Pi)
}

// TestFloorFactor checks the floor factor: without swing, exactly
// 2^((t − Tref)/d) (the doubling rule, common practice); with a swing,
// against gonum quadrature of the day's mean; 1 when the doubling interval
// is 0; NaN for a bad swing.
func TestFloorFactor(t *testing.T) {
	th := energy.TypicalThermal() // Tref 20 °C, doubling 10 °C
	assert.Equal(t, 1.0, th.FloorFactor(20, 0))
	assert.Equal(t, 2.0, th.FloorFactor(30, 0))
	assert.Equal(t, 0.5, th.FloorFactor(10, 0))
	assert.Equal(t, 8.0, th.FloorFactor(50, 0))
	for _, d := range []float64{1, 7, 10, 25} {
		th.FloorDoublingInterval = d
		g := func(x float64) float64 { return math.Exp2((x - 20) / d) }
		for _, tc := range [][2]float64{{20, 10}, {-30, 20}, {45, 60}, {0, 1}} {
			got, want := th.FloorFactor(tc[0], tc[1]), dayMean(g, tc[0], tc[1])
			assert.InEpsilon(t, want, got, 1e-14, "d %g, t %g, swing %g", d, tc[0], tc[1])
			assert.Greater(t, got, g(tc[0]), "a swing raises the mean of a convex rate (Jensen)")
		}
	}
	th.FloorDoublingInterval = 0
	assert.Equal(t, 1.0, th.FloorFactor(60, 30))
	assert.True(t, math.IsNaN(th.FloorFactor(20, -1)))
	assert.True(t, math.IsNaN(th.FloorFactor(math.NaN(), 0)))
}

// TestSelfDischargeFactor checks the Arrhenius factor: without swing,
// against exp(−Ea/R·(1/T − 1/Tref)) written directly (R = 8.314462618
// J/(mol·K) as CODATA 2018 prints it, and the exact N_A·k); a 10 °C step
// near room temperature with Ea = 50 kJ/mol roughly doubles the rate
// (common practice); with a swing, against gonum's 800-point Gauss–Legendre
// rule over the day, at the stated relative accuracy 1e-13, over
// activation energies to 200 kJ/mol, temperatures from -100 to 150 °C and
// swings to 60 °C.
func TestSelfDischargeFactor(t *testing.T) {
	const (
		r10   = 8.314462618                  // CODATA 2018, as printed
		exact = 6.02214076e23 * 1.380649e-23 // R = N_A·k, exact since 2019
	)
	th := energy.TypicalThermal() // Tref 20 °C, Ea 50 kJ/mol
	for _, x := range []float64{-55, -20, 0, 20, 25, 30, 60, 85} {
		assert.InEpsilon(t, math.Exp(-50e3/r10*(1/(x+273.15)-1/293.15)), th.SelfDischargeFactor(x, 0), 1e-9, "t = %g", x)
		assert.InEpsilon(t, math.Exp(-50e3/exact*(1/(x+273.15)-1/293.15)), th.SelfDischargeFactor(x, 0), 1e-13, "t = %g", x)
	}
	assert.Equal(t, 1.0, th.SelfDischargeFactor(20, 0))
	step := th.SelfDischargeFactor(30, 0)
	assert.InDelta(t, 2, step, 0.1, "doubling per 10 °C near room temperature (common practice)")
	assert.InDelta(t, 1.96735067449804, step, 1e-12) // hand computation: exp(50e3/R·(1/293.15 − 1/303.15))

	for _, ea := range []float64{1e3, 20e3, 50e3, 90e3, 200e3} {
		th.SelfDischargeActivation = ea
		g := func(x float64) float64 { return math.Exp(-ea / exact * (1/(x+273.15) - 1/293.15)) }
		for x := -100.0; x <= 150; x += 12.5 {
			for _, swing := range []float64{0.01, 0.5, 10, 30, 60} {
				got, want := th.SelfDischargeFactor(x, swing), dayMean(g, x, swing)
				assert.InEpsilon(t, want, got, 1e-13, "Ea %g, t %g, swing %g", ea, x, swing)
			}
		}
	}
	th.SelfDischargeActivation = 0
	assert.Equal(t, 1.0, th.SelfDischargeFactor(70, 20))
	assert.True(t, math.IsNaN(th.SelfDischargeFactor(-270, 10)), "absolute zero")
	assert.True(t, math.IsNaN(th.SelfDischargeFactor(20, math.Inf(1))))
	assert.True(t, math.IsNaN(th.SelfDischargeFactor(20, -1)))
}

// TestThermalDeterministic checks that the factors give the same bits on
// 8 goroutines at once as alone (they keep no state between calls).
func TestThermalDeterministic(t *testing.T) {
	th := energy.TypicalThermal()
	want := make([]float64, 0, 40)
	for x := -50.0; x < 50; x += 5 {
		want = append(want, th.SelfDischargeFactor(x, 12), th.FloorFactor(x, 12))
	}
	var wg sync.WaitGroup
	got := make([][]float64, 8)
	for g := range got {
		wg.Go(func() {
			for x := -50.0; x < 50; x += 5 {
				got[g] = append(got[g], th.SelfDischargeFactor(x, 12), th.FloorFactor(x, 12))
			}
		})
	}
	wg.Wait()
	for g := range got {
		assert.Equal(t, want, got[g], "goroutine %d", g)
	}
}

// TestCapacityFactor checks the derating table: its own values at its
// points, straight lines between them (hand-computed), an error outside it.
func TestCapacityFactor(t *testing.T) {
	th := energy.TypicalThermal()
	for _, p := range th.Derating {
		got, err := th.CapacityFactor(p.Temperature)
		require.NoError(t, err)
		assert.Equal(t, p.Fraction, got)
	}
	for _, c := range []struct{ t, want float64 }{
		{-30, 0.65},    // halfway between (-40, 0.55) and (-20, 0.75)
		{-10, 0.825},   // halfway between (-20, 0.75) and (0, 0.90)
		{40, 1},        // flat between 20 and 60
		{72.5, 0.975},  // halfway between (60, 1) and (85, 0.95)
		{-50, 0.45},    // a third of the way from (-55, 0.40) to (-40, 0.55)
		{5, 0.925},     // a quarter of the way from (0, 0.90) to (20, 1)
		{-47.5, 0.475}, // halfway between -55 and -40
	} {
		got, err := th.CapacityFactor(c.t)
		require.NoError(t, err)
		assert.InDelta(t, c.want, got, 1e-15, "t = %g", c.t)
	}
	for _, x := range []float64{-56, 86, math.NaN(), math.Inf(-1)} {
		_, err := th.CapacityFactor(x)
		assert.True(t, errors.Is(err, energy.ErrParam), "t = %g", x)
	}
	th.Derating = nil
	got, err := th.CapacityFactor(-80)
	require.NoError(t, err)
	assert.Equal(t, 1.0, got)
}

// TestRangeWarnings checks that a climate inside the rated range gives no
// warning, and one that leaves it (or the derating table) gives one per
// way it leaves.
func TestRangeWarnings(t *testing.T) {
	th := energy.TypicalThermal()
	c, err := energy.NewSeasonalClimate(10, 15, 6, 10) // -10 .. 30 °C by day
	require.NoError(t, err)
	assert.Empty(t, th.RangeWarnings(c))
	cold := th.RangeWarnings(c.Shift(-50)) // coldest day -5 - 5 - 50 = -60 °C
	require.Len(t, cold, 2)
	assert.Contains(t, cold[0], "below the cell's rated minimum -55")
	assert.Contains(t, cold[1], "derating table covers only")
	hot := th.RangeWarnings(c.Shift(60)) // warmest day 25 + 5 + 60 = 90 °C
	require.Len(t, hot, 2)
	assert.Contains(t, hot[0], "above the cell's rated maximum 85")

	th.Derating = []energy.DeratingPoint{{0, 0.9}, {40, 1}}
	th, err = energy.NewThermal(th)
	require.NoError(t, err)
	w := th.RangeWarnings(c)
	require.Len(t, w, 1)
	assert.Contains(t, w[0], "spans [-10, 30] °C but the derating table covers only [0, 40] °C")
}

// TestNewThermal checks that TypicalThermal is valid, that NewThermal keeps
// its own copy of the table, and that every bad field is rejected with an
// error wrapping ErrParam that names it.
func TestNewThermal(t *testing.T) {
	typ := energy.TypicalThermal()
	got, err := energy.NewThermal(typ)
	require.NoError(t, err)
	assert.Equal(t, typ, got)
	assert.Equal(t, "Thermal(reference 20 °C, Ea 50 kJ/mol, floor doubling every 10 °C, 7 derating points, rated -55 to 85 °C)", got.String())
	typ.Derating[0].Fraction = 0.01
	assert.Equal(t, 0.40, got.Derating[0].Fraction)

	cases := []struct {
		name, field string
		edit        func(*energy.Thermal)
	}{
		{"NaN reference", "ReferenceTemperature", func(t *energy.Thermal) { t.ReferenceTemperature = math.NaN() }},
		{"negative Ea", "SelfDischargeActivation", func(t *energy.Thermal) { t.SelfDischargeActivation = -1 }},
		{"huge Ea", "SelfDischargeActivation", func(t *energy.Thermal) { t.SelfDischargeActivation = 1e6 }},
		{"tiny doubling", "FloorDoublingInterval", func(t *energy.Thermal) { t.FloorDoublingInterval = 0.5 }},
		{"negative doubling", "FloorDoublingInterval", func(t *energy.Thermal) { t.FloorDoublingInterval = -10 }},
		{"inverted range", "MaxTemperature", func(t *energy.Thermal) { t.MaxTemperature = -60 }},
		{"NaN min", "MinTemperature", func(t *energy.Thermal) { t.MinTemperature = math.NaN() }},
		{"one point", "len(Derating)", func(t *energy.Thermal) { t.Derating = t.Derating[:1] }},
		{"too many points", "len(Derating)", func(t *energy.Thermal) { t.Derating = make([]energy.DeratingPoint, 65) }},
		{"unsorted", "Derating[3].Temperature", func(t *energy.Thermal) { t.Derating[3].Temperature = -30 }},
		{"repeat", "Derating[1].Temperature", func(t *energy.Thermal) { t.Derating[1].Temperature = -55 }},
		{"zero fraction", "Derating[2].Fraction", func(t *energy.Thermal) { t.Derating[2].Fraction = 0 }},
		{"large fraction", "Derating[2].Fraction", func(t *energy.Thermal) { t.Derating[2].Fraction = 1.6 }},
		{"NaN temperature", "Derating[0].Temperature", func(t *energy.Thermal) { t.Derating[0].Temperature = math.NaN() }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			th := energy.TypicalThermal()
			tc.edit(&th)
			_, err := energy.NewThermal(th)
			requireParamErr(t, err, tc.field)
		})
	}
}

// BenchmarkSelfDischargeFactor measures one day-averaged Arrhenius factor
// (a month of a lifetime needs one) on a cold, swinging day.
func BenchmarkSelfDischargeFactor(b *testing.B) {
	th := energy.TypicalThermal()
	for b.Loop() {
		th.SelfDischargeFactor(-5, 12)
	}
}

// BenchmarkFloorFactor measures one day-averaged floor factor (closed form).
func BenchmarkFloorFactor(b *testing.B) {
	th := energy.TypicalThermal()
	for b.Loop() {
		th.FloorFactor(-5, 12)
	}
}
