package main

import (
	"testing"

	"github.com/stretchr/testify/assert"
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
