package energy

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
)

// State is an operating mode of a node (sleep, sensing, transmitting,
// listening...) that lasts a random time at a random power. Its energy is
//
//	E = P·t   (J)
//
// with the power P (W) and the duration t (s) independent. A State is an
// immutable value, safe for concurrent use, and is itself a Stage: it can be
// placed directly in a Sequence, Choice, Repeat or Configured stage.
//
// A state described by its current I (A) at a supply voltage V (V) has
// power P = V·I; that current is what PulseCheck compares against a cell's
// rating.
type State struct {
	name     string
	power    dist.Law // W
	current  dist.Law // A; nil when the state was described by its power
	voltage  float64  // V; 0 when the state was described by its power
	duration dist.Law // s
}

// NewState returns the state called name that draws the current law
// current (A) at the supply voltage voltage (V) for the duration law
// duration (s). Both laws must have support in [0, ∞) (truncate a normal
// law with dist.NewTruncated first) and a finite mean and variance; voltage
// must be finite and > 0; name must not be empty.
func NewState(name string, current dist.Law, voltage float64, duration dist.Law) (State, error) {
	const fn = "NewState"
	if err := checkName(fn, name); err != nil {
		return State{}, err
	}
	if err := checkStateLaw(fn, name, "current", current); err != nil {
		return State{}, err
	}
	if !finite(voltage) || voltage <= 0 {
		return State{}, paramErr(fn, fmt.Sprintf("state %q: voltage", name), voltage, "must be finite and > 0 (V)")
	}
	if err := checkStateLaw(fn, name, "duration", duration); err != nil {
		return State{}, err
	}
	p, err := dist.Affine(current, voltage, 0)
	if err != nil {
		return State{}, causeErr(fn, fmt.Sprintf("state %q: current", name), current, "cannot be scaled by the voltage", err)
	}
	return State{name: name, power: p, current: current, voltage: voltage, duration: duration}, nil
}

// NewPowerState returns the state called name that draws the power law
// power (W) for the duration law duration (s). Both laws must have support
// in [0, ∞) and a finite mean and variance; name must not be empty.
func NewPowerState(name string, power, duration dist.Law) (State, error) {
	const fn = "NewPowerState"
	if err := checkName(fn, name); err != nil {
		return State{}, err
	}
	if err := checkStateLaw(fn, name, "power", power); err != nil {
		return State{}, err
	}
	if err := checkStateLaw(fn, name, "duration", duration); err != nil {
		return State{}, err
	}
	return State{name: name, power: power, duration: duration}, nil
}

// NewFixedState returns the state called name that draws the constant
// current current (A) at the voltage voltage (V) for the constant duration
// duration (s): a state whose energy is the point mass current·voltage·duration.
// current and duration must be finite and >= 0, voltage finite and > 0.
func NewFixedState(name string, current, voltage, duration float64) (State, error) {
	const fn = "NewFixedState"
	if !finite(current) || current < 0 {
		return State{}, paramErr(fn, fmt.Sprintf("state %q: current", name), current, "must be finite and >= 0 (A)")
	}
	if !finite(duration) || duration < 0 {
		return State{}, paramErr(fn, fmt.Sprintf("state %q: duration", name), duration, "must be finite and >= 0 (s)")
	}
	i, _ := dist.NewPointMass(current)
	t, _ := dist.NewPointMass(duration)
	s, err := NewState(name, i, voltage, t)
	if err != nil {
		if pe, ok := err.(*ParamError); ok {
			pe.Func = fn
		}
		return State{}, err
	}
	return s, nil
}

// MustState is NewState that panics on bad input; for examples and tests.
func MustState(name string, current dist.Law, voltage float64, duration dist.Law) State {
	s, err := NewState(name, current, voltage, duration)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return s
}

// MustFixedState is NewFixedState that panics on bad input; for examples and tests.
func MustFixedState(name string, current, voltage, duration float64) State {
	s, err := NewFixedState(name, current, voltage, duration)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return s
}

// Name returns the state's name.
func (s State) Name() string { return s.name }

// Power returns the law of the state's power (W).
func (s State) Power() dist.Law { return s.power }

// Duration returns the law of the state's duration (s).
func (s State) Duration() dist.Law { return s.duration }

// Current returns the law of the state's current (A) and its supply voltage
// (V), or ok = false for a state described by its power.
func (s State) Current() (current dist.Law, voltage float64, ok bool) {
	return s.current, s.voltage, s.current != nil
}

// MeanEnergy returns E[P·t] = E[P]·E[t] (J).
func (s State) MeanEnergy() float64 {
	if s.power == nil {
		return math.NaN()
	}
	return s.power.Mean() * s.duration.Mean()
}

// Energy returns the law of the state's energy P·t (J). It is exact when the
// power or the duration is a finite discrete law (a constant included);
// otherwise it is the numerical product of package dist, whose
// dist.Estimated accuracy it reports.
func (s State) Energy() (dist.Law, error) {
	if s.power == nil {
		return nil, paramErr("State.Energy", "s", "zero State", "must be built by NewState, NewPowerState or NewFixedState")
	}
	l, err := product(s.power, s.duration)
	if err != nil {
		return nil, causeErr("State.Energy", fmt.Sprintf("state %q", s.name), s.String(), "energy law", err)
	}
	return l, nil
}

// excess returns the law of (P - floor)·t (J), the state's energy above the
// floor power floor (W) over its own duration.
func (s State) excess(floor float64) (dist.Law, error) {
	fn := "NewCycle"
	if lo, _ := s.power.Support(); lo < floor*(1-1e-12) {
		return nil, paramErr(fn, fmt.Sprintf("state %q: power", s.name), lo, fmt.Sprintf("lower end of the power's support must be >= the floor power %g W", floor))
	}
	if e, ok := fixedExcess(s.power, s.duration, floor); ok {
		return e, nil
	}
	p := s.power
	if floor != 0 {
		var err error
		if p, err = dist.Affine(s.power, 1, -floor); err != nil {
			return nil, causeErr(fn, fmt.Sprintf("state %q: power", s.name), s.power, "cannot be shifted by the floor", err)
		}
	}
	l, err := product(p, s.duration)
	if err != nil {
		return nil, causeErr(fn, fmt.Sprintf("state %q", s.name), s.String(), "energy law", err)
	}
	return l, nil
}

// fixedExcess returns the excess energy law of a state whose power and
// duration are both one atom of mass 1 (a fixed state): the point mass
// (P − floor)·t, each step the arithmetic of the general path (the power
// shifted by dist.Affine(power, 1, −floor), then scaled by the duration as
// dist.Product does: dist.Affine(duration, P − floor, 0)), so the same
// law, without building the intermediate laws. ok is false for any other
// state (and where the product leaves the finite numbers: the general
// path reports it).
func fixedExcess(power, duration dist.Law, floor float64) (dist.Law, bool) {
	p, ok := pointOne(power)
	if !ok {
		return nil, false
	}
	t, ok := pointOne(duration)
	if !ok {
		return nil, false
	}
	if floor != 0 {
		p = 1*p + -floor
	}
	switch p {
	case 0:
		return dist.MustPointMass(0), true
	case 1:
		return duration, true
	}
	e := p*t + 0
	if !finite(p) || !finite(e) {
		return nil, false
	}
	return dist.MustPointMass(e), true
}

// pointOne returns the value of l when l is a dist.Discrete of one atom
// of mass 1.
func pointOne(l dist.Law) (float64, bool) {
	d, ok := l.(dist.Discrete)
	if !ok || d.Len() != 1 {
		return 0, false
	}
	lo, _ := d.Support()
	if d.Survival(lo) != 0 || d.CDF(lo) != 1 {
		return 0, false
	}
	return lo, true
}

// peakCurrent returns the largest current (A) the state draws at the
// supply voltage v (V): the upper end of its current's support, or of its
// power's divided by v, replaced by the upper 1e-6 quantile when the support
// is unbounded.
func (s State) peakCurrent(v float64) float64 {
	l, scale := s.current, 1.0
	if l == nil {
		l, scale = s.power, 1/v
	}
	_, hi := l.Support()
	if math.IsInf(hi, 1) {
		hi = l.UpperQuantile(1e-6)
	}
	return hi * scale
}

// String describes the state in one line, e.g.
// `tx: I=PointMass(0.04) A at 3.3 V for PointMass(0.05) s`.
func (s State) String() string {
	if s.current != nil {
		return fmt.Sprintf("%s: I=%v A at %.4g V for %v s", s.name, s.current, s.voltage, s.duration)
	}
	return fmt.Sprintf("%s: P=%v W for %v s", s.name, s.power, s.duration)
}

// Stage interface.

func (s State) isStage() {}

func (s State) sample(r *rand.Rand, floor float64, rec recorder) (excess, active float64) {
	p, t := s.power.Rand(r), s.duration.Rand(r)
	e := (p - floor) * t
	if rec != nil {
		rec(s.name, e)
	}
	return e, t
}

func (s State) laws(floor float64) (excess, active dist.Law, err error) {
	e, err := s.excess(floor)
	if err != nil {
		return nil, nil, err
	}
	return e, s.duration, nil
}

func (s State) moments(floor float64) moments {
	m, p := s.momentsPart(floor)
	m.parts = []part{p}
	return m
}

// momentsPart is moments without the list of parts, and its one part.
func (s State) momentsPart(floor float64) (moments, part) {
	mp, vp := s.power.Mean(), s.power.Variance()
	mt, vt := s.duration.Mean(), s.duration.Variance()
	mx := mp - floor
	// Var(XY) = E[(XY)²] − (E X·E Y)² = Var X·Var Y + Var X·(E Y)² +
	// Var Y·(E X)² for independent X, Y: the sum of non-negative terms,
	// without the difference's cancellation (which left a fixed state's
	// variance at −3e-20 J² rather than 0).
	ownVar := vp*vt + vp*mt*mt + vt*mp*mp
	exVar := vp*vt + vp*mt*mt + vt*mx*mx
	m := moments{
		meanX: mx * mt, varX: exVar,
		meanT: mt, varT: vt,
	}
	return m, part{name: s.name, count: 1, own: mp * mt, ownVar: ownVar, excess: mx * mt, cov: exVar}
}

func (s State) visit(f func(State)) { f(s) }

// checks

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func checkName(fn, name string) error {
	if name == "" {
		return paramErr(fn, "name", `""`, "must not be empty")
	}
	return nil
}

// checkNonNegLaw checks that l is a law on [0, ∞) with finite mean and
// variance.
func checkNonNegLaw(fn, param string, l dist.Law) error {
	return checkNonNegLawOf(fn, l, func() string { return param })
}

// checkStateLaw is checkNonNegLaw for the law what ("current", "power",
// "duration") of the state called name; the parameter's name is written
// out only for an error.
func checkStateLaw(fn, name, what string, l dist.Law) error {
	return checkNonNegLawOf(fn, l, func() string { return fmt.Sprintf("state %q: %s", name, what) })
}

// checkNonNegLawOf is checkNonNegLaw with the parameter's name from param,
// called only for an error.
func checkNonNegLawOf(fn string, l dist.Law, param func() string) error {
	if l == nil {
		return paramErr(fn, param(), nil, "must not be nil")
	}
	if lo, _ := l.Support(); !(lo >= 0) {
		return paramErr(fn, param(), l, fmt.Sprintf("support starts at %g: must be >= 0 (truncate the law at 0)", lo))
	}
	if m := l.Mean(); !finite(m) {
		return paramErr(fn, param(), l, fmt.Sprintf("mean %g must be finite", m))
	}
	if v := l.Variance(); !finite(v) || v < 0 {
		return paramErr(fn, param(), l, fmt.Sprintf("variance %g must be finite", v))
	}
	return nil
}
