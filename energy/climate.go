package energy

import (
	"fmt"
	"math"
)

// Limits of a Climate (°C). Operating temperatures of sensor nodes outside
// [-60, 100] °C are beyond any cell this package describes; a daily range
// above 60 °C peak to peak is not a climate but a fault.
const (
	climateLowest   = -60.0 // lowest monthly mean (°C)
	climateHighest  = 100.0 // highest monthly mean (°C)
	climateMaxSwing = 60.0  // largest daily swing, peak to peak (°C)
	monthsPerYear   = 12    // months in a Climate
)

// monthName returns the name of calendar month m in 0..11, for messages.
func monthName(m int) string {
	return [monthsPerYear]string{"January", "February", "March", "April", "May", "June",
		"July", "August", "September", "October", "November", "December"}[m]
}

// Climate is a year of operating temperature (°C): twelve monthly means,
// month 0 being January, and a daily swing. Each month lasts Month
// (Year/12, 30.4375 days). Within a month, a day's temperature is
//
//	T(φ) = Month(m) + (DailySwing/2)·sin φ,   φ uniform on [0, 2π)
//
// so the daily swing is the peak-to-peak range of a sinusoidal day.
// A Climate is an immutable value, safe for concurrent use; the zero value
// is a constant 0 °C with no swing.
type Climate struct {
	months [monthsPerYear]float64 // monthly means (°C), January first
	swing  float64                // daily range, peak to peak (°C)
}

// NewClimate returns the climate with the given monthly means (°C, January
// first) and daily swing (°C peak to peak). monthly must hold exactly 12
// finite means in [-60, 100] °C (a profile must cover a year); dailySwing
// must be finite and in [0, 60] °C. Errors wrap ErrParam and name the field,
// its value and the rule.
func NewClimate(monthly []float64, dailySwing float64) (Climate, error) {
	const fn = "NewClimate"
	if len(monthly) != monthsPerYear {
		return Climate{}, paramErr(fn, "len(monthly)", len(monthly), "must cover a year: 12 monthly means")
	}
	var c Climate
	for m, t := range monthly {
		if !finite(t) || t < climateLowest || t > climateHighest {
			return Climate{}, paramErr(fn, fmt.Sprintf("monthly[%d] (%s)", m, monthName(m)), t,
				"must be finite and in [-60, 100] (°C)")
		}
		c.months[m] = t
	}
	if err := checkSwing(fn, dailySwing); err != nil {
		return Climate{}, err
	}
	c.swing = dailySwing
	return c, nil
}

func checkSwing(fn string, swing float64) error {
	if !finite(swing) || swing < 0 || swing > climateMaxSwing {
		return paramErr(fn, "dailySwing", swing, "must be finite and in [0, 60] (°C, peak to peak)")
	}
	return nil
}

// seasonalCos returns cos(2π·k/12) for k in 0..11, exact where the value
// is rational (±1, ±1/2, 0) and correctly rounded where it is ±√3/2, so a
// seasonal climate is exactly symmetric about its warmest month.
func seasonalCos(k int) float64 {
	const r3 = 0.86602540378443864676 // √3/2
	return [monthsPerYear]float64{1, r3, 0.5, 0, -0.5, -r3, -1, -r3, -0.5, 0, 0.5, r3}[k]
}

// NewSeasonalClimate returns the climate whose monthly means (°C) follow one
// cosine over the year, warmest in month warmestMonth (0 = January):
//
//	Month(m) = mean + amplitude·cos(2π(m − warmestMonth)/12)
//
// mean and amplitude are in °C (amplitude >= 0: half the difference between
// the warmest and the coldest month), warmestMonth in 0..11, dailySwing in
// [0, 60] °C peak to peak. Every monthly mean must lie in [-60, 100] °C.
// Errors wrap ErrParam.
func NewSeasonalClimate(mean, amplitude float64, warmestMonth int, dailySwing float64) (Climate, error) {
	const fn = "NewSeasonalClimate"
	switch {
	case !finite(mean) || mean < climateLowest || mean > climateHighest:
		return Climate{}, paramErr(fn, "mean", mean, "must be finite and in [-60, 100] (°C)")
	case !finite(amplitude) || amplitude < 0:
		return Climate{}, paramErr(fn, "amplitude", amplitude, "must be finite and >= 0 (°C)")
	case mean-amplitude < climateLowest || mean+amplitude > climateHighest:
		return Climate{}, paramErr(fn, "amplitude", amplitude, fmt.Sprintf(
			"mean ± amplitude = [%.4g, %.4g] must lie in [-60, 100] (°C)", mean-amplitude, mean+amplitude))
	case warmestMonth < 0 || warmestMonth >= monthsPerYear:
		return Climate{}, paramErr(fn, "warmestMonth", warmestMonth, "must be in 0..11 (0 = January)")
	}
	if err := checkSwing(fn, dailySwing); err != nil {
		return Climate{}, err
	}
	c := Climate{swing: dailySwing}
	for m := range c.months {
		k := (m - warmestMonth + monthsPerYear) % monthsPerYear
		c.months[m] = mean + amplitude*seasonalCos(k)
	}
	return c, nil
}

// ConstantClimate returns the climate at t °C all year, with no daily
// swing. t must be finite and in [-60, 100] °C; errors wrap ErrParam.
func ConstantClimate(t float64) (Climate, error) {
	if !finite(t) || t < climateLowest || t > climateHighest {
		return Climate{}, paramErr("ConstantClimate", "t", t, "must be finite and in [-60, 100] (°C)")
	}
	var c Climate
	for m := range c.months {
		c.months[m] = t
	}
	return c, nil
}

// Month returns the mean temperature (°C) of month m mod 12 (0 = January;
// 12 is January again, -1 is December): a life longer than a year repeats
// the profile.
func (c Climate) Month(m int) float64 {
	m %= monthsPerYear
	if m < 0 {
		m += monthsPerYear
	}
	return c.months[m]
}

// Months returns the twelve monthly means (°C), January first, in a new
// slice.
func (c Climate) Months() []float64 {
	out := make([]float64, monthsPerYear)
	copy(out, c.months[:])
	return out
}

// DailySwing returns the daily range (°C, peak to peak).
func (c Climate) DailySwing() float64 { return c.swing }

// At returns the temperature (°C) in month m (mod 12) at the daily phase
// φ (radians): Month(m) + (DailySwing/2)·sin φ. NaN when phase is NaN or
// infinite.
func (c Climate) At(m int, phase float64) float64 {
	return c.Month(m) + c.swing/2*math.Sin(phase)
}

// Mean returns the annual mean temperature (°C): the mean of the twelve
// monthly means (months are of equal length; the daily swing averages out).
func (c Climate) Mean() float64 {
	s := 0.0
	for _, t := range c.months {
		s += t
	}
	return s / monthsPerYear
}

// Min returns the lowest temperature of the year (°C): the coldest monthly
// mean minus half the daily swing.
func (c Climate) Min() float64 {
	lo := c.months[0]
	for _, t := range c.months[1:] {
		lo = min(lo, t)
	}
	return lo - c.swing/2
}

// Max returns the highest temperature of the year (°C): the warmest monthly
// mean plus half the daily swing.
func (c Climate) Max() float64 {
	hi := c.months[0]
	for _, t := range c.months[1:] {
		hi = max(hi, t)
	}
	return hi + c.swing/2
}

// Shift returns the climate with every monthly mean moved by dt (°C): a
// year warmer or colder than the profile by one offset shared by a whole
// site. The daily swing is kept. Shift does not re-check the [-60, 100] °C
// limits (a shared offset is drawn from a law, and the caller checks the
// result against the cell with Thermal.RangeWarnings); a NaN or infinite
// dt gives NaN or infinite months.
func (c Climate) Shift(dt float64) Climate {
	for m := range c.months {
		c.months[m] += dt
	}
	return c
}

// String summarises the climate in one line: the annual mean, the coldest
// and warmest monthly means and the daily swing.
func (c Climate) String() string {
	lo, hi := 0, 0
	for m, t := range c.months {
		if t < c.months[lo] {
			lo = m
		}
		if t > c.months[hi] {
			hi = m
		}
	}
	return fmt.Sprintf("Climate(mean %.4g °C, coldest %s %.4g °C, warmest %s %.4g °C, daily swing %.4g °C)",
		c.Mean(), monthName(lo), c.months[lo], monthName(hi), c.months[hi], c.swing)
}
