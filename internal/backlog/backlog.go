// Package backlog generates the records a network back-end would hold for a
// fleet of battery-powered devices whose per-node parameters are drawn and
// hidden, and plays every device on to the true end of its cell: the
// independent path against which energy.DeviceModel's remaining-life laws
// are checked (tests only; the data are invented).
//
// It knows nothing of those laws. It draws, per device and once for its
// life, a capacity factor c ~ N(1, σc), an active factor a ~ N(1, σa), a
// floor factor f = exp(σf·Z) and a traffic profile (by weight); then day
// by day a Poisson number of events of each kind (the profile's mean per
// day; Knuth's product method below a mean of 50, the normal law rounded
// above), each costing a·e_k plus a normal per-event noise of standard
// deviation a·s_k, and the floor f·P_f for the whole day. The depth of
// discharge (fraction of the rated energy N drawn) is
//
//	d = drawn/(c·N) + SelfDischarge·t/Year,
//
// and the device is flat when d reaches EndDepth, at the share of the day
// that its remaining depth pays for (so the end is known to within a day's
// spread of the spending). Every ReadEvery days the device reports the
// voltage Curve.LoadedVoltage(d, ReadLoad, Temperature) plus a normal
// error of standard deviation Noise, rounded to a multiple of Quantum and
// held within [Low, High].
//
// Only deterministic functions are taken from package energy
// (VoltageCurve.LoadedVoltage). A Spec is a plain value; every draw comes
// from the caller's *rand.Rand in a fixed order, so a seed fixes every
// result.
package backlog

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/energy"
)

// ErrParam is wrapped by every error of this package.
var ErrParam = errors.New("backlog: invalid parameter")

// MaxDays caps a device's played life.
const MaxDays = 100 * 366

// Kind is one kind of event.
type Kind struct {
	Energy float64 // J at the cell, mean per event at active factor 1
	SD     float64 // J, standard deviation per event, >= 0
}

// Profile is one traffic profile: the mean number of events of each kind
// per day.
type Profile struct {
	Weight float64 // share of devices
	PerDay []float64
}

// Spec describes the fleet.
type Spec struct {
	Kinds         []Kind
	Profiles      []Profile
	Nominal       float64 // J, rated energy N
	EndDepth      float64 // depth at which the device is flat, (0, 1]
	SelfDischarge float64 // fraction of N per year
	FloorPower    float64 // W, median board
	Capacity      float64 // σc
	Active        float64 // σa
	Floor         float64 // σf (log)

	ReadEvery   int                  // days between readings; 0 for none
	Curve       *energy.VoltageCurve // needed with ReadEvery
	ReadLoad    float64              // A
	Temperature float64              // °C
	Noise       float64              // V
	Quantum     float64              // V; 0 for none
	Low, High   float64              // V, the reported range
}

// Device is one device's hidden truth.
type Device struct {
	C, A, F float64 // capacity, active and floor factors
	Profile int
}

// Record is one day of a device's back-end log.
type Record struct {
	Day     int     // day after installation, from 0
	Time    float64 // s after installation at the end of the day
	Counts  []int64 // events of each kind that day
	Reading float64 // V reported at Time; NaN when none
}

// Draw draws a device.
func (s Spec) Draw(r *rand.Rand) (Device, error) {
	if len(s.Profiles) == 0 || len(s.Kinds) == 0 || !(s.Nominal > 0) || !(s.EndDepth > 0 && s.EndDepth <= 1) {
		return Device{}, fmt.Errorf("%w: needs kinds, profiles, Nominal > 0 and EndDepth in (0, 1]", ErrParam)
	}
	d := Device{
		C: 1 + s.Capacity*r.NormFloat64(),
		A: 1 + s.Active*r.NormFloat64(),
		F: math.Exp(s.Floor * r.NormFloat64()),
	}
	u := r.Float64()
	for i, p := range s.Profiles {
		u -= p.Weight
		if u < 0 || i == len(s.Profiles)-1 {
			d.Profile = i
			break
		}
	}
	return d, nil
}

// poisson draws a Poisson count of mean lam.
func poisson(r *rand.Rand, lam float64) int64 {
	if lam <= 0 {
		return 0
	}
	if lam >= 50 {
		return int64(max(0, math.Round(lam+math.Sqrt(lam)*r.NormFloat64())))
	}
	l := math.Exp(-lam)
	k := int64(0)
	p := r.Float64()
	for p > l {
		k++
		p *= r.Float64()
	}
	return k
}

// Play plays device dev from installation, calling emit for every day that
// ends at or before until (s after installation), and returns the time (s
// after installation) at which its cell is flat.
func (s Spec) Play(r *rand.Rand, dev Device, until float64, emit func(Record)) (float64, error) {
	if s.ReadEvery > 0 && s.Curve == nil {
		return 0, fmt.Errorf("%w: ReadEvery needs a Curve", ErrParam)
	}
	prof := s.Profiles[dev.Profile]
	if len(prof.PerDay) != len(s.Kinds) {
		return 0, fmt.Errorf("%w: profile %d has %d rates for %d kinds", ErrParam, dev.Profile, len(prof.PerDay), len(s.Kinds))
	}
	drawn := 0.0
	capE := dev.C * s.Nominal
	counts := make([]int64, len(s.Kinds))
	for day := 0; day < MaxDays; day++ {
		e := dev.F * s.FloorPower * energy.Day
		for k, kd := range s.Kinds {
			n := poisson(r, prof.PerDay[k])
			counts[k] = n
			if n > 0 {
				e += dev.A * (float64(n)*kd.Energy + kd.SD*math.Sqrt(float64(n))*r.NormFloat64())
			}
		}
		t0 := float64(day) * energy.Day
		d0 := drawn/capE + s.SelfDischarge*t0/energy.Year
		d1 := (drawn+e)/capE + s.SelfDischarge*(t0+energy.Day)/energy.Year
		if d1 >= s.EndDepth {
			return t0 + energy.Day*(s.EndDepth-d0)/(d1-d0), nil
		}
		drawn += e
		t1 := t0 + energy.Day
		if t1 <= until && emit != nil {
			rec := Record{Day: day, Time: t1, Counts: counts, Reading: math.NaN()}
			if s.ReadEvery > 0 && (day+1)%s.ReadEvery == 0 {
				v := s.Curve.LoadedVoltage(min(1, d1), s.ReadLoad, s.Temperature) + s.Noise*r.NormFloat64()
				if s.Quantum > 0 {
					v = s.Quantum * math.Round(v/s.Quantum)
				}
				rec.Reading = min(s.High, max(s.Low, v))
			}
			emit(rec)
		}
	}
	return 0, fmt.Errorf("%w: device still alive after MaxDays = %d days", ErrParam, MaxDays)
}
