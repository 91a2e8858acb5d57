package energy

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// Physical constants and limits of the thermal model.
const (
	// gasConstant is the molar gas constant R (J/(mol·K)), exact since the
	// 2019 SI redefinition (CODATA 2018: R = N_A·k =
	// 6.02214076e23 × 1.380649e-23).
	gasConstant = 8.31446261815324
	// zeroCelsius is 0 °C in kelvin.
	zeroCelsius = 273.15

	thermalMaxActivation = 200e3 // largest SelfDischargeActivation (J/mol)
	thermalMinDoubling   = 1.0   // smallest non-zero FloorDoublingInterval (°C)
	thermalMaxDoubling   = 100.0 // largest FloorDoublingInterval (°C)
	thermalMaxDerating   = 64    // most points in a derating table
	thermalLowest        = -100.0
	thermalHighest       = 150.0 // temperatures of a Thermal lie in [-100, 150] °C
)

// DeratingPoint is one row of a data sheet's capacity-versus-temperature
// table.
type DeratingPoint struct {
	Temperature float64 // °C
	Fraction    float64 // fraction of the rated capacity delivered at Temperature, in (0, 1.5]
}

// Thermal is how a cell and a board respond to temperature: the
// self-discharge rate (Arrhenius), the floor (sleep and leakage) current
// (doubling every FloorDoublingInterval), the capacity (a derating table)
// and the cell's rated operating range. Build one with NewThermal or start
// from TypicalThermal. A validated Thermal is a value safe for concurrent
// use as long as the Derating slice is not modified.
type Thermal struct {
	// ReferenceTemperature (°C) is the temperature at which
	// BatterySpec.SelfDischargePerYear, the state currents and the floor
	// were given; in [-100, 150].
	ReferenceTemperature float64
	// SelfDischargeActivation is the Arrhenius activation energy Ea
	// (J/mol) of self-discharge, in [0, 200e3]; 0 makes self-discharge
	// independent of temperature.
	SelfDischargeActivation float64
	// FloorDoublingInterval (°C) is the temperature rise that doubles the
	// floor (sleep, leakage) current: 0 (independent of temperature) or in
	// [1, 100].
	FloorDoublingInterval float64
	// Derating is the capacity fraction versus temperature, strictly
	// ascending in temperature, interpolated linearly; empty means 1 at
	// every temperature. 2 to 64 points when given, temperatures in
	// [-100, 150] °C.
	Derating []DeratingPoint
	// MinTemperature and MaxTemperature (°C) are the cell's rated operating
	// range: finite, in [-100, 150], MinTemperature < MaxTemperature.
	MinTemperature, MaxTemperature float64
}

// NewThermal checks t and returns it with its own copy of the derating
// table. Errors wrap ErrParam and name the field, its value and the rule
// (the limits are on the fields of Thermal).
func NewThermal(t Thermal) (Thermal, error) {
	const fn = "NewThermal"
	inRange := func(x float64) bool { return finite(x) && x >= thermalLowest && x <= thermalHighest }
	switch {
	case !inRange(t.ReferenceTemperature):
		return Thermal{}, paramErr(fn, "ReferenceTemperature", t.ReferenceTemperature, "must be finite and in [-100, 150] (°C)")
	case !finite(t.SelfDischargeActivation) || t.SelfDischargeActivation < 0 || t.SelfDischargeActivation > thermalMaxActivation:
		return Thermal{}, paramErr(fn, "SelfDischargeActivation", t.SelfDischargeActivation, "must be finite and in [0, 200e3] (J/mol; 0 = independent of temperature)")
	case t.FloorDoublingInterval != 0 && !(t.FloorDoublingInterval >= thermalMinDoubling && t.FloorDoublingInterval <= thermalMaxDoubling):
		return Thermal{}, paramErr(fn, "FloorDoublingInterval", t.FloorDoublingInterval, "must be 0 (independent of temperature) or in [1, 100] (°C per doubling)")
	case !inRange(t.MinTemperature):
		return Thermal{}, paramErr(fn, "MinTemperature", t.MinTemperature, "must be finite and in [-100, 150] (°C)")
	case !inRange(t.MaxTemperature) || t.MaxTemperature <= t.MinTemperature:
		return Thermal{}, paramErr(fn, "MaxTemperature", t.MaxTemperature, fmt.Sprintf("must be finite, in [-100, 150] and above MinTemperature = %g (°C)", t.MinTemperature))
	case len(t.Derating) == 1 || len(t.Derating) > thermalMaxDerating:
		return Thermal{}, paramErr(fn, "len(Derating)", len(t.Derating), "must be 0 (no derating) or 2 to 64 points")
	}
	for i, p := range t.Derating {
		switch {
		case !inRange(p.Temperature):
			return Thermal{}, paramErr(fn, fmt.Sprintf("Derating[%d].Temperature", i), p.Temperature, "must be finite and in [-100, 150] (°C)")
		case i > 0 && p.Temperature <= t.Derating[i-1].Temperature:
			return Thermal{}, paramErr(fn, fmt.Sprintf("Derating[%d].Temperature", i), p.Temperature,
				fmt.Sprintf("must be above the previous point's %g (°C): the table is sorted ascending without repeats", t.Derating[i-1].Temperature))
		case !(p.Fraction > 0 && p.Fraction <= 1.5):
			return Thermal{}, paramErr(fn, fmt.Sprintf("Derating[%d].Fraction", i), p.Fraction, "must be in (0, 1.5] (fraction of rated capacity)")
		}
	}
	if len(t.Derating) > 0 {
		t.Derating = append([]DeratingPoint(nil), t.Derating...)
	} else {
		t.Derating = nil
	}
	return t, nil
}

// TypicalThermal returns planning figures for a lithium–thionyl chloride
// bobbin cell on a low-power board; use your cell's and board's data
// sheets. The values and their standing:
//
//   - ReferenceTemperature 20 °C (room temperature, where data sheets
//     usually give self-discharge and sleep currents; common practice);
//   - SelfDischargeActivation 50 kJ/mol: the rule of thumb that a chemical
//     rate doubles for every 10 °C near room temperature (common practice)
//     corresponds to Ea ≈ 51 kJ/mol between 20 and 30 °C;
//   - FloorDoublingInterval 10 °C: leakage of CMOS parts doubling every
//     10 °C (common practice; a data sheet's sleep-current curve is better);
//   - Derating: delivered capacity at small currents falling to about 90 %
//     at 0 °C, 75 % at -20 °C, 55 % at -40 °C and 40 % at -55 °C, full at 20
//     to 60 °C and about 95 % at 85 °C (typical shape, from memory);
//   - rated range -55 to +85 °C (from memory).
//
// Caution: primary lithium cells must be kept within their rated
// temperature range; heating one beyond it can make it vent or burst. Follow
// the cell maker's data sheet and handling instructions; these values are
// planning figures, not a rating.
func TypicalThermal() Thermal {
	return Thermal{
		ReferenceTemperature:    20,
		SelfDischargeActivation: 50e3,
		FloorDoublingInterval:   10,
		Derating: []DeratingPoint{
			{-55, 0.40}, {-40, 0.55}, {-20, 0.75}, {0, 0.90},
			{20, 1.00}, {60, 1.00}, {85, 0.95},
		},
		MinTemperature: -55,
		MaxTemperature: 85,
	}
}

// FloorFactor returns the day-averaged ratio of the floor (sleep, leakage)
// current at mean temperature t (°C) with a sinusoidal daily swing (°C peak
// to peak) to its value at ReferenceTemperature. With d the doubling
// interval and T(φ) = t + (swing/2)·sin φ,
//
//	(1/2π)∫ 2^((T(φ) − Tref)/d) dφ = 2^((t − Tref)/d) · I0(ln2·swing/(2d))
//
// in closed form (I0 the modified Bessel function of the first kind, order
// 0: Abramowitz & Stegun 9.6.16), relative error below 1e-14. It is 1
// when FloorDoublingInterval is 0. NaN when t or swing is NaN or infinite or
// swing is negative.
func (th Thermal) FloorFactor(t, swing float64) float64 {
	if !finite(t) || !finite(swing) || swing < 0 {
		return math.NaN()
	}
	d := th.FloorDoublingInterval
	if d == 0 {
		return 1
	}
	return math.Exp2((t-th.ReferenceTemperature)/d) * besselI0(math.Ln2*swing/(2*d))
}

// besselI0 returns I0(x) = Σ (x²/4)^k / (k!)² for 0 <= x <= 700 (Abramowitz &
// Stegun 9.6.12). Every term is positive, so the sum, stopped when a term
// falls below 2^-53 of the sum, has relative error below (k+2)·2^-53 with k
// the number of terms (about x + 20).
func besselI0(x float64) float64 {
	q := x * x / 4
	term, sum := 1.0, 1.0
	for k := 1; k < 2000; k++ {
		term *= q / float64(k*k)
		sum += term
		if term <= sum*0x1p-53 {
			break
		}
	}
	return sum
}

// SelfDischargeFactor returns the day-averaged ratio of the self-discharge
// rate at mean temperature t (°C) with a sinusoidal daily swing (°C peak to
// peak) to its rate at ReferenceTemperature, by the Arrhenius law with
// temperatures in kelvin:
//
//	(1/2π)∫ exp(−Ea/R·(1/T(φ) − 1/Tref)) dφ,   T(φ) = t + (swing/2)·sin φ
//
// (R = 8.31446261815324 J/(mol·K), exact: CODATA 2018). As sin φ takes each
// value twice a period, the mean is (1/π) times the integral over
// [−π/2, π/2], taken by the package's adaptive Gauss–Kronrod quadrature
// (internal/quad) to a relative error estimate of 1e-13; the estimate is
// the Gauss–Kronrod difference, which overstates the error of the value
// returned (measured against 800-point Gauss–Legendre over Ea up to
// 200 kJ/mol, t from −60 to 100 °C and swings to 60 °C: below 1e-14). It
// is 1 when SelfDischargeActivation is 0, and exactly the Arrhenius ratio
// when swing is 0. NaN when t or swing is NaN or infinite, swing is
// negative, or the day reaches absolute zero (t − swing/2 <= −273.15), and
// (never seen for a Thermal from NewThermal) when the quadrature misses
// its target within its default budget of 10000 evaluations.
func (th Thermal) SelfDischargeFactor(t, swing float64) float64 {
	if !finite(t) || !finite(swing) || swing < 0 || t-swing/2 <= -zeroCelsius {
		return math.NaN()
	}
	if th.SelfDischargeActivation == 0 {
		return 1
	}
	if swing == 0 {
		return th.arrhenius(t)
	}
	// The closure holds the two numbers it reads, not the Thermal.
	ea, ref := th.SelfDischargeActivation, th.ReferenceTemperature
	f := func(phi float64) float64 { return arrheniusAt(ea, ref, t+swing/2*math.Sin(phi)) }
	res, err := quad.Adaptive(f, -math.Pi/2, math.Pi/2, quad.Options{RelTol: selfDischargeTol})
	if err != nil {
		return math.NaN()
	}
	return res.Value / math.Pi
}

// selfDischargeTol is the relative error target of SelfDischargeFactor's
// quadrature.
const selfDischargeTol = 1e-13

// arrhenius returns exp(−Ea/R·(1/T − 1/Tref)) at T = t °C, with the
// difference of reciprocals written (Tref − T)/(T·Tref) to avoid
// cancellation.
func (th Thermal) arrhenius(t float64) float64 {
	return arrheniusAt(th.SelfDischargeActivation, th.ReferenceTemperature, t)
}

// arrheniusAt is Thermal.arrhenius for the activation energy ea (J/mol)
// and the reference temperature ref (°C).
func arrheniusAt(ea, ref, t float64) float64 {
	tk, rk := t+zeroCelsius, ref+zeroCelsius
	return math.Exp(-ea / gasConstant * (ref - t) / (tk * rk))
}

// sameThermal reports whether a and b are the same Thermal field for
// field: reflect.DeepEqual's answer (TestSameThermal), without boxing
// either in an interface.
func sameThermal(a, b *Thermal) bool {
	return a.ReferenceTemperature == b.ReferenceTemperature && a.SelfDischargeActivation == b.SelfDischargeActivation &&
		a.FloorDoublingInterval == b.FloorDoublingInterval && a.MinTemperature == b.MinTemperature &&
		a.MaxTemperature == b.MaxTemperature && (a.Derating == nil) == (b.Derating == nil) && slices.Equal(a.Derating, b.Derating)
}

// CapacityFactor returns the derating fraction of the rated capacity at t
// (°C), by linear interpolation in the Derating table (exact at its points;
// 1 when the table is empty). A t outside the table's range, or NaN, is an
// error wrapping ErrParam: a data-sheet table is not extrapolated.
func (th Thermal) CapacityFactor(t float64) (float64, error) {
	n := len(th.Derating)
	if n == 0 {
		if math.IsNaN(t) {
			return 0, paramErr("Thermal.CapacityFactor", "t", t, "must be a temperature (°C), not NaN")
		}
		return 1, nil
	}
	lo, hi := th.Derating[0].Temperature, th.Derating[n-1].Temperature
	if !(t >= lo && t <= hi) {
		return 0, paramErr("Thermal.CapacityFactor", "t", t,
			fmt.Sprintf("outside the derating table's range [%g, %g] (°C): give the data sheet's value there", lo, hi))
	}
	return interpolate(n, func(i int) (float64, float64) { return th.Derating[i].Temperature, th.Derating[i].Fraction }, t), nil
}

// interpolate returns the piecewise-linear interpolant through the n >= 1
// points at(0..n-1) (x strictly ascending) at x, held constant beyond the
// end points. At a table point it returns that point's y exactly; between
// points, y0 + (y1 − y0)·(x − x0)/(x1 − x0), within a few units of
// rounding.
func interpolate(n int, at func(int) (x, y float64), x float64) float64 {
	i := sort.Search(n, func(i int) bool { xi, _ := at(i); return xi >= x })
	if i == n {
		_, y := at(n - 1)
		return y
	}
	xi, yi := at(i)
	if xi == x || i == 0 {
		return yi
	}
	x0, y0 := at(i - 1)
	return y0 + (yi-y0)*((x-x0)/(xi-x0))
}

// RangeWarnings returns one human-readable warning for each way the
// climate c leaves the cell's rated range [MinTemperature, MaxTemperature]
// (its coldest or warmest day, monthly mean ∓ half the daily swing) or the
// reach of the derating table; nil when it stays inside. To check a year
// warmer or colder than the profile, pass c.Shift(dt).
func (th Thermal) RangeWarnings(c Climate) []string {
	var out []string
	lo, hi := c.Min(), c.Max()
	if lo < th.MinTemperature {
		out = append(out, fmt.Sprintf("the coldest day reaches %.4g °C, below the cell's rated minimum %.4g °C: capacity and pulse voltage are not rated there; follow the cell maker's data sheet", lo, th.MinTemperature))
	}
	if hi > th.MaxTemperature {
		out = append(out, fmt.Sprintf("the warmest day reaches %.4g °C, above the cell's rated maximum %.4g °C: a primary lithium cell may vent or leak beyond its rating; follow the cell maker's data sheet", hi, th.MaxTemperature))
	}
	if n := len(th.Derating); n > 0 {
		dlo, dhi := th.Derating[0].Temperature, th.Derating[n-1].Temperature
		if lo < dlo || hi > dhi {
			out = append(out, fmt.Sprintf("the year spans [%.4g, %.4g] °C but the derating table covers only [%.4g, %.4g] °C: extend it from the data sheet", lo, hi, dlo, dhi))
		}
	}
	return out
}

// String summarises the thermal description in one line.
func (th Thermal) String() string {
	return fmt.Sprintf("Thermal(reference %g °C, Ea %.4g kJ/mol, floor doubling every %g °C, %d derating points, rated %g to %g °C)",
		th.ReferenceTemperature, th.SelfDischargeActivation/1e3, th.FloorDoublingInterval, len(th.Derating), th.MinTemperature, th.MaxTemperature)
}
