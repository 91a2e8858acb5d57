package energy

import (
	"fmt"
	"math"
)

// BatterySpec describes a cell (or pack) as its data sheet gives it. Give
// the nominal capacity either as a charge (Charge, C; 2400 mAh is
// 2400*MilliAmpHour) or as an energy (Energy, J), not both.
type BatterySpec struct {
	Name      string // free text, e.g. "ER14505, maker X"
	Chemistry string // free text, e.g. "Li-SOCl2 bobbin"

	Charge float64 // nominal capacity (C); 0 when Energy is given
	Energy float64 // nominal energy (J); 0 when Charge is given

	// NominalVoltage is the voltage (V) at which the charge is delivered: it
	// converts Charge to energy (J = C·V) and power to current for the pulse
	// check. Required, finite and > 0.
	NominalVoltage float64
	// CutoffVoltage is the end-of-discharge voltage (V) the capacity is
	// rated to; informational (0 if not given). It must be below
	// NominalVoltage.
	CutoffVoltage float64

	// UsableFraction is the fraction of the nominal capacity the node can
	// draw before its supply falls to the cut-off under its own load, in
	// (0, 1].
	UsableFraction float64
	// SelfDischargePerYear is the fraction of the nominal capacity lost per
	// year to self-discharge, in [0, 1); modelled as a constant drain
	// SelfDischargePerYear·nominal energy / Year (W) added to the floor.
	SelfDischargePerYear float64
	// TemperatureDerating multiplies the usable capacity at the operating
	// temperature, in (0, 1]; 0 means 1 (no derating).
	TemperatureDerating float64
	// PulseCurrent is the largest pulse current (A) the cell is rated to
	// deliver; 0 when not given (the pulse check is then skipped).
	PulseCurrent float64
}

// Battery is a validated cell description. It is an immutable value, safe
// for concurrent use.
type Battery struct {
	spec BatterySpec
}

// NewBattery validates spec and returns the battery. Errors name the field
// and its value: exactly one of Charge and Energy must be given, finite and
// > 0; NominalVoltage finite and > 0; CutoffVoltage in [0, NominalVoltage);
// UsableFraction in (0, 1]; SelfDischargePerYear in [0, 1);
// TemperatureDerating in [0, 1] (0 meaning 1); PulseCurrent finite and >= 0.
func NewBattery(spec BatterySpec) (Battery, error) {
	const fn = "NewBattery"
	pre := "battery"
	if spec.Name != "" {
		pre = fmt.Sprintf("battery %q", spec.Name)
	}
	field := func(f string) string { return pre + ": " + f }
	switch {
	case spec.Charge != 0 && spec.Energy != 0:
		return Battery{}, paramErr(fn, field("Energy"), spec.Energy, "give Charge or Energy, not both")
	case spec.Charge == 0 && spec.Energy == 0:
		return Battery{}, paramErr(fn, field("Charge"), spec.Charge, "capacity must be > 0: give Charge (C) or Energy (J)")
	case spec.Charge != 0 && (!finite(spec.Charge) || spec.Charge < 0):
		return Battery{}, paramErr(fn, field("Charge"), spec.Charge, "must be finite and > 0 (C)")
	case spec.Energy != 0 && (!finite(spec.Energy) || spec.Energy < 0):
		return Battery{}, paramErr(fn, field("Energy"), spec.Energy, "must be finite and > 0 (J)")
	case !finite(spec.NominalVoltage) || spec.NominalVoltage <= 0:
		return Battery{}, paramErr(fn, field("NominalVoltage"), spec.NominalVoltage, "must be finite and > 0 (V)")
	case !(spec.CutoffVoltage >= 0 && spec.CutoffVoltage < spec.NominalVoltage):
		return Battery{}, paramErr(fn, field("CutoffVoltage"), spec.CutoffVoltage, "must be in [0, NominalVoltage) (V)")
	case !(spec.UsableFraction > 0 && spec.UsableFraction <= 1):
		return Battery{}, paramErr(fn, field("UsableFraction"), spec.UsableFraction, "must be in (0, 1]")
	case !(spec.SelfDischargePerYear >= 0 && spec.SelfDischargePerYear < 1):
		return Battery{}, paramErr(fn, field("SelfDischargePerYear"), spec.SelfDischargePerYear, "must be in [0, 1) (fraction per year; 1 %/year is 0.01)")
	case !(spec.TemperatureDerating >= 0 && spec.TemperatureDerating <= 1):
		return Battery{}, paramErr(fn, field("TemperatureDerating"), spec.TemperatureDerating, "must be in (0, 1], or 0 for none")
	case !finite(spec.PulseCurrent) || spec.PulseCurrent < 0:
		return Battery{}, paramErr(fn, field("PulseCurrent"), spec.PulseCurrent, "must be finite and >= 0 (A; 0 if not rated)")
	}
	if spec.TemperatureDerating == 0 {
		spec.TemperatureDerating = 1
	}
	b := Battery{spec: spec}
	if e := b.UsableEnergy(); !(e > 0 && e <= MaxBatteryEnergy) {
		name, v := "Charge", spec.Charge
		if spec.Energy != 0 {
			name, v = "Energy", spec.Energy
		}
		return Battery{}, paramErr(fn, field(name), v,
			fmt.Sprintf("gives a usable energy of %g J: must be > 0 and at most MaxBatteryEnergy = %g J", e, MaxBatteryEnergy))
	}
	return b, nil
}

// MaxBatteryEnergy caps a battery's usable energy (J): 10^12 J (about 280
// MWh) is far beyond any sensor node's cell, and keeps the lifetimes and
// charges derived from it far from overflow (a charge of 1e308 C used to
// give NaN lifetimes).
const MaxBatteryEnergy = 1e12

// MustBattery is NewBattery that panics on bad input; for examples and tests.
func MustBattery(spec BatterySpec) Battery {
	b, err := NewBattery(spec)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return b
}

// Spec returns the description (with TemperatureDerating 0 replaced by 1).
func (b Battery) Spec() BatterySpec { return b.spec }

// NominalEnergy returns the nominal energy (J): Energy, or Charge·NominalVoltage.
func (b Battery) NominalEnergy() float64 {
	if b.spec.Energy != 0 {
		return b.spec.Energy
	}
	return b.spec.Charge * b.spec.NominalVoltage
}

// UsableEnergy returns the energy the node can draw (J):
// NominalEnergy·UsableFraction·TemperatureDerating.
func (b Battery) UsableEnergy() float64 {
	return b.NominalEnergy() * b.spec.UsableFraction * b.spec.TemperatureDerating
}

// SelfDischargePower returns the constant drain (W) that models
// self-discharge: SelfDischargePerYear·NominalEnergy/Year.
func (b Battery) SelfDischargePower() float64 {
	return b.spec.SelfDischargePerYear * b.NominalEnergy() / Year
}

// PulseWarning reports a state whose peak current exceeds the cell's rated
// pulse current.
type PulseWarning struct {
	State  string  // the state's name
	Peak   float64 // the state's largest current (A)
	Rating float64 // the cell's rated pulse current (A)
}

// String describes the warning in one line.
func (w PulseWarning) String() string {
	return fmt.Sprintf("state %q draws up to %.4g mA, above the cell's rated pulse current %.4g mA: the voltage may sag below the cut-off; check the data sheet or add a buffer capacitor",
		w.State, w.Peak/MilliAmp, w.Rating/MilliAmp)
}

// PulseCheck compares the largest current of every state of c with the
// cell's rated pulse current and returns one warning per state above it
// (nil when none is, or when PulseCurrent is not given). A state's largest
// current is the upper end of its current law's support (its upper 1e-6
// quantile when unbounded); a state described by its power is converted at
// the battery's NominalVoltage.
func (b Battery) PulseCheck(c Cycle) []PulseWarning {
	if b.spec.PulseCurrent == 0 {
		return nil
	}
	return pulseCheck(c.statesView(), b.spec.NominalVoltage, b.spec.PulseCurrent)
}

// pulseCheck is PulseCheck of a cycle's distinct states (only read), on a
// cell of nominal voltage volt (V) and pulse rating (A; 0 for none).
func pulseCheck(states []State, volt, rating float64) []PulseWarning {
	if rating == 0 {
		return nil
	}
	var out []PulseWarning
	for _, s := range states {
		if p := s.peakCurrent(volt); p > rating {
			out = append(out, PulseWarning{State: s.name, Peak: p, Rating: rating})
		}
	}
	return out
}

// DeterministicLifetime returns the lifetime (s) of a node drawing the
// constant average power p (W) from b, with self-discharge as a constant
// drain: the usable energy is spent at p + SelfDischargePower, so
//
//	L = UsableEnergy / (p + SelfDischargePerYear·NominalEnergy/Year)
//
// (common practice: capacity ÷ average power, with the leak added to the
// load). +Inf when both powers are 0; NaN when p is NaN or negative.
func (b Battery) DeterministicLifetime(p float64) float64 {
	if !(p >= 0) {
		return math.NaN()
	}
	return b.UsableEnergy() / (p + b.SelfDischargePower())
}

// String summarises the battery.
func (b Battery) String() string {
	return fmt.Sprintf("Battery(%s: %.6g J nominal, %.6g J usable, %.4g V, self-discharge %.3g %%/yr)",
		b.spec.Name, b.NominalEnergy(), b.UsableEnergy(), b.spec.NominalVoltage, 100*b.spec.SelfDischargePerYear)
}

// TypicalER14505 returns a description of a lithium–thionyl chloride bobbin
// cell of AA size (IEC 60086 designation ER14505). Typical values, from
// memory; use your cell's data sheet: 2.4–2.7 Ah (2.4 Ah taken, the low end)
// at 3.6 V to a 2.0 V cut-off, about 1 %/year self-discharge at room
// temperature, pulses of about 100 mA at most (bobbin cells are built for
// small currents; LoRa transmit pulses often need a buffer capacitor).
func TypicalER14505() BatterySpec {
	return BatterySpec{
		Name:                 "ER14505 (typical, from memory; use your cell's data sheet)",
		Chemistry:            "Li-SOCl2 bobbin",
		Charge:               2400 * MilliAmpHour,
		NominalVoltage:       3.6,
		CutoffVoltage:        2.0,
		UsableFraction:       1,
		SelfDischargePerYear: 0.01,
		PulseCurrent:         100 * MilliAmp,
	}
}

// TypicalCR2032 returns a description of a lithium–manganese dioxide coin
// cell (IEC 60086 designation CR2032). Typical values, from memory; use your
// cell's data sheet: about 225 mAh at 3 V to a 2.0 V cut-off, about
// 1 %/year self-discharge, pulses of about 15 mA at most (coin cells sag
// badly under transmit pulses).
func TypicalCR2032() BatterySpec {
	return BatterySpec{
		Name:                 "CR2032 (typical, from memory; use your cell's data sheet)",
		Chemistry:            "Li-MnO2 coin",
		Charge:               225 * MilliAmpHour,
		NominalVoltage:       3.0,
		CutoffVoltage:        2.0,
		UsableFraction:       1,
		SelfDischargePerYear: 0.01,
		PulseCurrent:         15 * MilliAmp,
	}
}
