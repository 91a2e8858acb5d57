package energy

import (
	"fmt"
	"math"
)

// Limits of a VoltageCurve.
const (
	voltageMaxPoints     = 256    // most depth-of-discharge points
	voltageMaxCold       = 64     // most temperature points
	voltageMaxOCV        = 100.0  // largest open-circuit voltage (V)
	voltageMaxResistance = 1e4    // largest internal resistance (Ω)
	voltageMaxMultiplier = 1000.0 // largest resistance multiplier
	voltageMaxCurrent    = 10.0   // largest pulse current (A)
)

// VoltageCurve describes end of life by voltage, the way practitioners of
// bobbin lithium cells judge it: a cell is spent when its loaded voltage
// under the node's largest pulse falls to the node's brown-out voltage,
// often well before its rated charge is drawn. The loaded voltage at depth
// of discharge d (fraction of the rated capacity drawn) and temperature T
// (°C) under a pulse of current I (A) is
//
//	V(d) = OCV(d) − I·R(d)·M(T)
//
// with the open-circuit voltage OCV and the internal resistance R (at
// ReferenceTemperature) interpolated linearly in the depth table, and the
// multiplier M interpolated linearly in the temperature table and held at
// its end values beyond it (1 when the table is empty). M should be 1 at
// ReferenceTemperature; the check is left to the data.
//
// Caution: a cell discharged deep into its knee, or pulsed beyond its
// rating in the cold, can behave outside its data sheet; primary lithium
// cells must not be recharged, shorted, crushed or heated beyond their
// rating. Follow the cell maker's data sheet and handling instructions; the
// fractions computed here are planning figures.
//
// A VoltageCurve built by NewVoltageCurve is a value safe for concurrent use
// as long as its slices are not modified.
type VoltageCurve struct {
	// DepthOfDischarge (fraction of rated capacity) is ascending from 0 to
	// 1 exactly: 2 to 256 points, strictly ascending.
	DepthOfDischarge []float64
	// OpenCircuit is the open-circuit voltage (V) at each depth, finite and
	// in (0, 100].
	OpenCircuit []float64
	// Resistance is the internal resistance (Ω) at each depth at
	// ReferenceTemperature, finite and in [0, 1e4].
	Resistance []float64
	// ReferenceTemperature (°C) is where Resistance was measured, in
	// [-100, 150].
	ReferenceTemperature float64
	// ColdTemperatures (°C) are the temperatures of the resistance
	// multipliers, strictly ascending in [-100, 150]; 0 to 64 points.
	ColdTemperatures []float64
	// ColdMultipliers multiply Resistance at each of ColdTemperatures
	// (typically >= 1 below ReferenceTemperature), finite and in (0, 1000].
	ColdMultipliers []float64
}

// NewVoltageCurve checks v and returns it with its own copies of the
// tables. Errors wrap ErrParam and name the field, its value and the rule
// (the limits are on the fields of VoltageCurve).
func NewVoltageCurve(v VoltageCurve) (VoltageCurve, error) {
	const fn = "NewVoltageCurve"
	n := len(v.DepthOfDischarge)
	switch {
	case n < 2 || n > voltageMaxPoints:
		return VoltageCurve{}, paramErr(fn, "len(DepthOfDischarge)", n, "must be 2 to 256 points from 0 to 1")
	case len(v.OpenCircuit) != n:
		return VoltageCurve{}, paramErr(fn, "len(OpenCircuit)", len(v.OpenCircuit), fmt.Sprintf("must equal len(DepthOfDischarge) = %d", n))
	case len(v.Resistance) != n:
		return VoltageCurve{}, paramErr(fn, "len(Resistance)", len(v.Resistance), fmt.Sprintf("must equal len(DepthOfDischarge) = %d", n))
	case v.DepthOfDischarge[0] != 0:
		return VoltageCurve{}, paramErr(fn, "DepthOfDischarge[0]", v.DepthOfDischarge[0], "must be 0 (a fresh cell)")
	case v.DepthOfDischarge[n-1] != 1:
		return VoltageCurve{}, paramErr(fn, fmt.Sprintf("DepthOfDischarge[%d]", n-1), v.DepthOfDischarge[n-1], "must be 1 (the rated capacity drawn): the table covers the whole discharge")
	case !finite(v.ReferenceTemperature) || v.ReferenceTemperature < thermalLowest || v.ReferenceTemperature > thermalHighest:
		return VoltageCurve{}, paramErr(fn, "ReferenceTemperature", v.ReferenceTemperature, "must be finite and in [-100, 150] (°C)")
	case len(v.ColdTemperatures) > voltageMaxCold:
		return VoltageCurve{}, paramErr(fn, "len(ColdTemperatures)", len(v.ColdTemperatures), "must be at most 64")
	case len(v.ColdMultipliers) != len(v.ColdTemperatures):
		return VoltageCurve{}, paramErr(fn, "len(ColdMultipliers)", len(v.ColdMultipliers), fmt.Sprintf("must equal len(ColdTemperatures) = %d", len(v.ColdTemperatures)))
	}
	for i := 0; i < n; i++ {
		d, u, r := v.DepthOfDischarge[i], v.OpenCircuit[i], v.Resistance[i]
		switch {
		case i > 0 && !(d > v.DepthOfDischarge[i-1]):
			return VoltageCurve{}, paramErr(fn, fmt.Sprintf("DepthOfDischarge[%d]", i), d, fmt.Sprintf("must be above the previous depth %g: strictly ascending", v.DepthOfDischarge[i-1]))
		case !finite(u) || u <= 0 || u > voltageMaxOCV:
			return VoltageCurve{}, paramErr(fn, fmt.Sprintf("OpenCircuit[%d]", i), u, "must be finite and in (0, 100] (V)")
		case !finite(r) || r < 0 || r > voltageMaxResistance:
			return VoltageCurve{}, paramErr(fn, fmt.Sprintf("Resistance[%d]", i), r, "must be finite and in [0, 1e4] (Ω)")
		}
	}
	for i, t := range v.ColdTemperatures {
		m := v.ColdMultipliers[i]
		switch {
		case !finite(t) || t < thermalLowest || t > thermalHighest:
			return VoltageCurve{}, paramErr(fn, fmt.Sprintf("ColdTemperatures[%d]", i), t, "must be finite and in [-100, 150] (°C)")
		case i > 0 && !(t > v.ColdTemperatures[i-1]):
			return VoltageCurve{}, paramErr(fn, fmt.Sprintf("ColdTemperatures[%d]", i), t, fmt.Sprintf("must be above the previous temperature %g: strictly ascending", v.ColdTemperatures[i-1]))
		case !finite(m) || m <= 0 || m > voltageMaxMultiplier:
			return VoltageCurve{}, paramErr(fn, fmt.Sprintf("ColdMultipliers[%d]", i), m, "must be finite and in (0, 1000]")
		}
	}
	cp := func(s []float64) []float64 {
		if len(s) == 0 {
			return nil
		}
		return append([]float64(nil), s...)
	}
	return VoltageCurve{
		DepthOfDischarge:     cp(v.DepthOfDischarge),
		OpenCircuit:          cp(v.OpenCircuit),
		Resistance:           cp(v.Resistance),
		ReferenceTemperature: v.ReferenceTemperature,
		ColdTemperatures:     cp(v.ColdTemperatures),
		ColdMultipliers:      cp(v.ColdMultipliers),
	}, nil
}

// TypicalBobbinCurve returns the typical shape of a lithium–thionyl
// chloride bobbin cell of AA size (IEC 60086 designation ER14505), from
// memory; use your cell's data sheet. The open-circuit voltage stays on a
// plateau near 3.6 V (3.67 V fresh, 3.60 V at 80 % drawn) and collapses in
// the last few per cent; the internal resistance is about 5 Ω fresh at
// 20 °C, rising slowly to about 9 Ω at 80 % drawn and steeply after 90 %
// (the knee); it is about 1.5 times higher at 0 °C, 3 times at -20 °C and 8
// times at -40 °C, a little lower when warm. Under a 40 mA pulse at 20 °C
// with a 2.8 V brown-out, about 91 % of the capacity is usable; under
// 100 mA, about 71 %.
//
// Caution: these are planning figures, not a rating; bobbin cells are built
// for small currents, and transmit pulses are often carried by a buffer
// capacitor. Follow the cell maker's data sheet.
func TypicalBobbinCurve() VoltageCurve {
	return VoltageCurve{
		DepthOfDischarge:     []float64{0, 0.1, 0.5, 0.8, 0.9, 0.95, 0.98, 1},
		OpenCircuit:          []float64{3.67, 3.66, 3.64, 3.60, 3.55, 3.45, 3.20, 2.00},
		Resistance:           []float64{5, 5, 6, 9, 14, 30, 80, 200},
		ReferenceTemperature: 20,
		ColdTemperatures:     []float64{-40, -20, 0, 20, 60},
		ColdMultipliers:      []float64{8, 3, 1.5, 1, 0.8},
	}
}

// ResistanceMultiplier returns the multiplier M(T) of the internal
// resistance at temperature (°C): interpolated linearly in the
// ColdTemperatures table, held at its end values beyond it, 1 when the
// table is empty. NaN when temperature is NaN.
func (v VoltageCurve) ResistanceMultiplier(temperature float64) float64 {
	if math.IsNaN(temperature) {
		return math.NaN()
	}
	if len(v.ColdTemperatures) == 0 {
		return 1
	}
	return interpolate(len(v.ColdTemperatures), func(i int) (float64, float64) {
		return v.ColdTemperatures[i], v.ColdMultipliers[i]
	}, temperature)
}

// LoadedVoltage returns the voltage (V) at depth of discharge depth (in
// [0, 1]) and temperature (°C) under a pulse of pulseCurrent (A):
// OCV(depth) − pulseCurrent·R(depth)·M(temperature), by linear
// interpolation in the tables (exact at their points). NaN when an argument
// is NaN or depth is outside [0, 1].
func (v VoltageCurve) LoadedVoltage(depth, pulseCurrent, temperature float64) float64 {
	if !(depth >= 0 && depth <= 1) || math.IsNaN(pulseCurrent) || math.IsNaN(temperature) || len(v.DepthOfDischarge) == 0 {
		return math.NaN()
	}
	n := len(v.DepthOfDischarge)
	ocv := interpolate(n, func(i int) (float64, float64) { return v.DepthOfDischarge[i], v.OpenCircuit[i] }, depth)
	r := interpolate(n, func(i int) (float64, float64) { return v.DepthOfDischarge[i], v.Resistance[i] }, depth)
	return ocv - pulseCurrent*r*v.ResistanceMultiplier(temperature)
}

// UsableFraction returns the depth of discharge at which the loaded voltage
// OCV(d) − I·R(d)·M(T) under a pulse of pulseCurrent I (A) at temperature
// T (°C) first falls to brownout (V): the usable fraction of the rated
// capacity. It is 1 when the voltage stays above brownout to the end of the
// table, and 0 when even a fresh cell sags to it. The loaded voltage is
// linear in d between table points, so the crossing is solved exactly on
// the segment where it occurs: the only error is rounding, about
// 2^-52·V/ΔV of the segment's length with ΔV the voltage fall across it
// (below 1e-14 for the tables of a data sheet).
// pulseCurrent must be finite and in [0, 10] A, temperature finite and in
// [-100, 150] °C, brownout finite and > 0 V; errors wrap ErrParam. The
// curve must come from NewVoltageCurve or TypicalBobbinCurve.
func (v VoltageCurve) UsableFraction(pulseCurrent, temperature, brownout float64) (float64, error) {
	const fn = "VoltageCurve.UsableFraction"
	switch {
	case len(v.DepthOfDischarge) < 2 || len(v.OpenCircuit) != len(v.DepthOfDischarge) || len(v.Resistance) != len(v.DepthOfDischarge):
		return 0, paramErr(fn, "curve", len(v.DepthOfDischarge), "is not a curve built by NewVoltageCurve")
	case !finite(pulseCurrent) || pulseCurrent < 0 || pulseCurrent > voltageMaxCurrent:
		return 0, paramErr(fn, "pulseCurrent", pulseCurrent, "must be finite and in [0, 10] (A)")
	case !finite(temperature) || temperature < thermalLowest || temperature > thermalHighest:
		return 0, paramErr(fn, "temperature", temperature, "must be finite and in [-100, 150] (°C)")
	case !finite(brownout) || brownout <= 0:
		return 0, paramErr(fn, "brownout", brownout, "must be finite and > 0 (V)")
	}
	drop := pulseCurrent * v.ResistanceMultiplier(temperature)
	loaded := func(i int) float64 { return v.OpenCircuit[i] - drop*v.Resistance[i] }
	prev := loaded(0)
	if prev <= brownout {
		return 0, nil
	}
	for i := 1; i < len(v.DepthOfDischarge); i++ {
		cur := loaded(i)
		if cur <= brownout {
			// prev > brownout >= cur: the crossing is inside (d[i-1], d[i]]
			d0, d1 := v.DepthOfDischarge[i-1], v.DepthOfDischarge[i]
			return d0 + (d1-d0)*((prev-brownout)/(prev-cur)), nil
		}
		prev = cur
	}
	return 1, nil
}

// String summarises the curve in one line: its open-circuit voltage and
// internal resistance fresh and at the end of the table, and the
// resistance multiplier at the table's coldest temperature.
func (v VoltageCurve) String() string {
	n := len(v.DepthOfDischarge)
	if n == 0 || len(v.OpenCircuit) != n || len(v.Resistance) != n {
		return "VoltageCurve(empty)"
	}
	s := fmt.Sprintf("VoltageCurve(%d points: %.4g V, %.4g Ω fresh; %.4g V, %.4g Ω at the end; at %g °C",
		n, v.OpenCircuit[0], v.Resistance[0], v.OpenCircuit[n-1], v.Resistance[n-1], v.ReferenceTemperature)
	if len(v.ColdTemperatures) > 0 && len(v.ColdMultipliers) == len(v.ColdTemperatures) {
		s += fmt.Sprintf(", resistance ×%.3g at %g °C", v.ColdMultipliers[0], v.ColdTemperatures[0])
	}
	return s + ")"
}
