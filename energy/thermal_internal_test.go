package energy

import (
	"math"
	"reflect"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"
)

// i0Quad is the integral representation I0(x) = (1/π)∫_0^π exp(x·cos θ) dθ
// (Abramowitz & Stegun 9.6.19) by gonum's Gauss–Legendre rule with 200
// points: an oracle independent of the series.
func i0Quad(x float64) float64 {
	return quad.Fixed(func(th float64) float64 { return math.Exp(x * math.Cos(th)) }, 0, math.Pi, 200, quad.Legendre{}, 0) / math.Pi
}

// TestBesselI0 checks the series for I0 against tabulated values
// (Abramowitz & Stegun Table 9.8 gives e^-x·I0(x); the full digits here are
// from memory, so each is also checked against the quadrature) and against
// gonum quadrature of the integral representation over the range the floor
// factor uses (x up to ln2·60/2 ≈ 20.8) and beyond.
func TestBesselI0(t *testing.T) {
	tab := []struct{ x, want float64 }{
		{0, 1},
		{0.5, 1.0634833707413236},
		{1, 1.2660658777520082},
		{2, 2.2795853023360673},
		{5, 27.239871823604442},
		{10, 2815.716628466254},
	}
	for _, c := range tab {
		assert.InEpsilon(t, c.want, besselI0(c.x), 1e-14, "x = %g (table)", c.x)
		assert.InEpsilon(t, c.want, i0Quad(c.x), 1e-13, "x = %g (quadrature vs table)", c.x)
	}
	for x := 0.01; x <= 40; x *= 1.37 {
		assert.InEpsilon(t, i0Quad(x), besselI0(x), 1e-13, "x = %g", x)
	}
}

// TestInterpolate checks the piecewise-linear interpolant: exact at the
// points, the straight line between them (hand-computed), constant beyond
// the ends.
func TestInterpolate(t *testing.T) {
	xs := []float64{-10, 0, 5, 20}
	ys := []float64{0.3, 0.9, 0.7, 1.1}
	at := func(i int) (float64, float64) { return xs[i], ys[i] }
	for i := range xs {
		assert.Equal(t, ys[i], interpolate(len(xs), at, xs[i]))
	}
	assert.InDelta(t, 0.6, interpolate(4, at, -5), 1e-15)
	assert.InDelta(t, 0.8, interpolate(4, at, 2.5), 1e-15)
	assert.InDelta(t, 0.9, interpolate(4, at, 12.5), 1e-15)
	assert.Equal(t, 0.3, interpolate(4, at, -50))
	assert.Equal(t, 1.1, interpolate(4, at, 50))
	assert.Equal(t, 2.0, interpolate(1, func(int) (float64, float64) { return 1, 2 }, -3))
}

// sameThermal must give reflect.DeepEqual's answer (the standard
// library's comparison is the oracle): equal for a copy and for a copy
// with its own derating table, unequal when any one field differs (each
// field of the type visited by reflection, so that a field added later
// fails here until sameThermal reads it), and a nil table unequal to an
// empty one.
func TestSameThermal(t *testing.T) {
	a := TypicalThermal()
	b := a
	b.Derating = append([]DeratingPoint(nil), a.Derating...)
	require.True(t, reflect.DeepEqual(a, b))
	assert.True(t, sameThermal(&a, &b), "a copy with its own table")
	v := reflect.ValueOf(&b).Elem()
	for i := range v.NumField() {
		c := a
		c.Derating = append([]DeratingPoint(nil), a.Derating...)
		f := reflect.ValueOf(&c).Elem().Field(i)
		switch f.Kind() {
		case reflect.Float64:
			f.SetFloat(f.Float() + 1)
		case reflect.Slice:
			c.Derating[0].Fraction /= 2
		default:
			t.Fatalf("field %s of kind %s: teach sameThermal and this test", v.Type().Field(i).Name, f.Kind())
		}
		require.False(t, reflect.DeepEqual(a, c), v.Type().Field(i).Name)
		assert.False(t, sameThermal(&a, &c), v.Type().Field(i).Name)
	}
	c, d := a, a
	c.Derating, d.Derating = nil, []DeratingPoint{}
	require.False(t, reflect.DeepEqual(c, d))
	assert.False(t, sameThermal(&c, &d), "nil and empty tables")
}
