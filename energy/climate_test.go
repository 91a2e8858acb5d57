package energy_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
)

// TestClimateMonthly checks a climate given month by month: the months come
// back as given (January first, indices taken mod 12), and the annual
// mean, the extremes and the daily temperature follow their definitions
// (hand-computed).
func TestClimateMonthly(t *testing.T) {
	months := []float64{-5, -3, 2, 8, 13, 17, 19, 18, 14, 9, 3, -2}
	c, err := energy.NewClimate(months, 8)
	require.NoError(t, err)
	for m, want := range months {
		assert.Equal(t, want, c.Month(m))
		assert.Equal(t, want, c.Month(m+12))
		assert.Equal(t, want, c.Month(m-24))
	}
	assert.Equal(t, -2.0, c.Month(-1), "December")
	assert.Equal(t, months, c.Months())
	assert.Equal(t, 8.0, c.DailySwing())
	assert.InDelta(t, 93.0/12, c.Mean(), 1e-14) // sum of the months is 93
	assert.Equal(t, -9.0, c.Min())              // -5 − 8/2
	assert.Equal(t, 23.0, c.Max())              // 19 + 8/2
	assert.InDelta(t, 17+4.0, c.At(5, math.Pi/2), 1e-15)
	assert.InDelta(t, 17-4.0, c.At(5, 3*math.Pi/2), 1e-15)

	// the climate keeps its own copy of the months
	months[0] = 50
	assert.Equal(t, -5.0, c.Month(0))
	got := c.Months()
	got[1] = 50
	assert.Equal(t, -3.0, c.Month(1))

	s := c.Shift(-2.5)
	for m := range 12 {
		assert.Equal(t, c.Month(m)-2.5, s.Month(m))
	}
	assert.Equal(t, c.DailySwing(), s.DailySwing())
	assert.Equal(t, -5.0, c.Month(0), "Shift leaves the receiver alone")
	assert.Contains(t, c.String(), "warmest July 19")
}

// TestSeasonalClimate checks the seasonal profile against the closed form
// mean + amplitude·cos(2π(m − w)/12) (math.Cos as the oracle), its exact
// values at the warmest, coldest and middle months, and its annual mean
// (the twelve cosines sum to zero).
func TestSeasonalClimate(t *testing.T) {
	for _, w := range []int{0, 3, 6, 11} {
		c, err := energy.NewSeasonalClimate(11, 9, w, 6)
		require.NoError(t, err)
		for m := range 12 {
			want := 11 + 9*math.Cos(2*math.Pi*float64(m-w)/12)
			assert.InDelta(t, want, c.Month(m), 1e-14, "warmest %d, month %d", w, m)
		}
		assert.Equal(t, 20.0, c.Month(w))
		assert.Equal(t, 2.0, c.Month(w+6))
		assert.Equal(t, 11.0, c.Month(w+3))
		assert.Equal(t, 11.0, c.Month(w+9))
		assert.Equal(t, c.Month(w+1), c.Month(w-1), "symmetric about the warmest month")
		assert.InDelta(t, 11, c.Mean(), 1e-14)
		assert.Equal(t, 23.0, c.Max())
		assert.Equal(t, -1.0, c.Min())
	}
	c, err := energy.ConstantClimate(25)
	require.NoError(t, err)
	assert.Equal(t, 25.0, c.Min())
	assert.Equal(t, 25.0, c.Max())
	assert.Equal(t, 0.0, c.DailySwing())
}

// TestClimateErrors checks that every bad field is rejected with an error
// wrapping ErrParam that names it.
func TestClimateErrors(t *testing.T) {
	year := func(v float64, at int) []float64 {
		m := make([]float64, 12)
		m[at] = v
		return m
	}
	cases := []struct {
		name, field string
		build       func() (energy.Climate, error)
	}{
		{"eleven months", "must cover a year", func() (energy.Climate, error) { return energy.NewClimate(make([]float64, 11), 0) }},
		{"thirteen months", "must cover a year", func() (energy.Climate, error) { return energy.NewClimate(make([]float64, 13), 0) }},
		{"no months", "must cover a year", func() (energy.Climate, error) { return energy.NewClimate(nil, 0) }},
		{"NaN month", "monthly[4] (May)", func() (energy.Climate, error) { return energy.NewClimate(year(math.NaN(), 4), 0) }},
		{"too cold", "monthly[0]", func() (energy.Climate, error) { return energy.NewClimate(year(-61, 0), 0) }},
		{"too hot", "monthly[11]", func() (energy.Climate, error) { return energy.NewClimate(year(101, 11), 0) }},
		{"infinite", "monthly[2]", func() (energy.Climate, error) { return energy.NewClimate(year(math.Inf(1), 2), 0) }},
		{"negative swing", "dailySwing", func() (energy.Climate, error) { return energy.NewClimate(year(0, 0), -1) }},
		{"huge swing", "dailySwing", func() (energy.Climate, error) { return energy.NewClimate(year(0, 0), 61) }},
		{"NaN swing", "dailySwing", func() (energy.Climate, error) { return energy.NewClimate(year(0, 0), math.NaN()) }},
		{"seasonal NaN mean", "mean", func() (energy.Climate, error) { return energy.NewSeasonalClimate(math.NaN(), 1, 0, 0) }},
		{"seasonal negative amplitude", "amplitude", func() (energy.Climate, error) { return energy.NewSeasonalClimate(10, -1, 0, 0) }},
		{"seasonal too wide", "amplitude", func() (energy.Climate, error) { return energy.NewSeasonalClimate(90, 20, 0, 0) }},
		{"seasonal month 12", "warmestMonth", func() (energy.Climate, error) { return energy.NewSeasonalClimate(10, 1, 12, 0) }},
		{"seasonal month -1", "warmestMonth", func() (energy.Climate, error) { return energy.NewSeasonalClimate(10, 1, -1, 0) }},
		{"seasonal swing", "dailySwing", func() (energy.Climate, error) { return energy.NewSeasonalClimate(10, 1, 6, 70) }},
		{"constant NaN", "t", func() (energy.Climate, error) { return energy.ConstantClimate(math.NaN()) }},
		{"constant too hot", "t", func() (energy.Climate, error) { return energy.ConstantClimate(120) }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := tc.build()
			requireParamErr(t, err, tc.field)
		})
	}
}

// requireParamErr checks that err is an error wrapping ErrParam whose
// message names field.
func requireParamErr(t *testing.T, err error, field string) {
	t.Helper()
	require.Error(t, err)
	assert.True(t, errors.Is(err, energy.ErrParam), "%v", err)
	assert.Contains(t, err.Error(), field)
}
