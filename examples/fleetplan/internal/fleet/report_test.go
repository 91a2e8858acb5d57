package fleet

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
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

// Each law's one-line summary: a finite discrete law is exact with its
// atoms counted; the largest of n states its own error (orderstat's
// Accuracy); a law of neither kind is a closed form. The figures are the
// law's own: the normal law's 90 % interval is μ ± 1.6449σ (z of 0.95,
// Abramowitz & Stegun 26.2, table 26.1) and its support the whole line.
func TestLawLine(t *testing.T) {
	d := dist.MustDiscrete([]float64{0.01, 0.02, 0.5}, []float64{0.5, 0.3, 0.2})
	how, bound := method(d)
	assert.Equal(t, "exact: finite discrete, 3 atoms", how)
	assert.Zero(t, bound)

	mx, err := orderstat.Max(d, 304)
	require.NoError(t, err)
	how, bound = method(mx)
	assert.Equal(t, mx.(dist.Estimated).Accuracy().Method, how)
	assert.Positive(t, bound)
	assert.Less(t, bound, 1e-9)

	n := dist.MustNormal(10, 2)
	s, err := summarise(n, 1)
	require.NoError(t, err)
	line := lawLine(s, yearsText)
	assert.Equal(t, "mean 10 years, sd 2 years, 90 % in [6.71 years, 13.3 years], support [−∞ years, ∞ years]; closed form", line)

	// A law whose 90 % interval is its upper end (a lifetime at the
	// calendar limit) says that it is an atom there.
	atom := lawLine(Summary{Mean: 14.5, In90: [2]float64{14.5, 14.5}, Support: [2]float64{0, 14.5}, Method: "m"}, yearsText)
	assert.Contains(t, atom, "90 % in [14.5 years, 14.5 years] (an atom at the end of the support: the calendar limit")
	// The same within the quantiles' stated 1e-12 relative (the demo's
	// pump alarms read 14.500000000000876 at one build and 14.5 at the
	// next): the note does not turn on or off with the last bits.
	near := lawLine(Summary{Mean: 14.5, In90: [2]float64{14.500000000000876, 14.5}, Support: [2]float64{0, 14.5}, Method: "m"}, yearsText)
	assert.Contains(t, near, "(an atom at the end of the support")
	apart := lawLine(Summary{Mean: 14.5, In90: [2]float64{14.4999, 14.5}, Support: [2]float64{0, 14.5}, Method: "m"}, yearsText)
	assert.NotContains(t, apart, "an atom", "an interval of its own is no atom")
}

// sameTime is equality within the quantiles' stated 1e-12 relative.
func TestSameTime(t *testing.T) {
	for _, c := range []struct {
		a, b float64
		want bool
	}{
		{14.5, 14.5, true},
		{14.5, 14.500000000000876, true},  // 6e-14 relative
		{14.5, 14.5 * (1 + 2e-12), false}, // beyond the stated accuracy
		{0, 0, true},
		{0, 1e-300, false},
		{math.Inf(1), math.Inf(1), true},
	} {
		assert.Equal(t, c.want, sameTime(c.a, c.b), "%v %v", c.a, c.b)
		assert.Equal(t, c.want, sameTime(c.b, c.a), "%v %v", c.b, c.a)
	}
}
