package main

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"gonum.org/v1/plot"
)

// Figures print with three significant digits in plain decimals: the
// rounding is fmt's %.3g (the Go standard library), the digits kept without
// an exponent and without trailing zeros.
func TestSig3(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want string
	}{
		{1010.4, "1010"}, {123456, "123000"}, {22.24, "22.2"}, {1.0149, "1.01"},
		{0.99951, "1"}, {0.016349, "0.0163"}, {0.00189, "0.00189"}, {20, "20"},
		{-0.5, "-0.5"}, {0, "0"},
	} {
		assert.Equal(t, c.want, sig3(c.x), "%g", c.x)
	}
}

// One unit per interval, chosen by the line's reference value: the issue's
// "99 % in [0.0163, 1.01] J" with a mean of 0.2 J reads "[16.3, 1010] mJ".
func TestEnergyUnitPerLine(t *testing.T) {
	u := unitFor(0.2)
	assert.Equal(t, "[16.3, 1010] mJ", u.pair([2]float64{0.0163, 1.01}))
	assert.Equal(t, "200 mJ", u.with(0.2))
	assert.Equal(t, "J", unitFor(3).name)
	assert.Equal(t, "µJ", unitFor(5e-4).name)
}

// Axis ticks fall on the 1-2-5 series of round steps (common practice for
// chart axes), labelled in plain decimals; a logarithmic axis labels each
// power of ten.
func TestAxisTicks(t *testing.T) {
	labels := func(ts []plot.Tick) []string {
		var out []string
		for _, tk := range ts {
			if tk.Label != "" {
				out = append(out, tk.Label)
			}
		}
		return out
	}
	for _, c := range []struct {
		lo, hi float64
		want   []string
	}{
		{0, 15.3, []string{"0", "2", "4", "6", "8", "10", "12", "14"}},
		{0, 1.02, []string{"0", "0.2", "0.4", "0.6", "0.8", "1"}},
		{0, 1680, []string{"0", "500", "1000", "1500"}},
		{22.2, 31.1, []string{"24", "26", "28", "30"}},
		{0, 306, []string{"0", "50", "100", "150", "200", "250", "300"}},
	} {
		assert.Equal(t, c.want, labels(roundTicks{}.Ticks(c.lo, c.hi)), "[%g, %g]", c.lo, c.hi)
	}
	assert.Equal(t, []string{"1e-7", "1e-6", "1e-5", "1e-4", "0.001", "0.01", "0.1", "1"}, labels(decadeTicks{}.Ticks(1e-7, 1.5)))
	assert.Empty(t, roundTicks{}.Ticks(1, 1))
	assert.Empty(t, decadeTicks{}.Ticks(0, 1))
}
