package energy

import (
	"fmt"
	"math"
)

// Event is a number of events of one kind a back-end has seen (or
// inferred) for a device, at one time.
type Event struct {
	Time  float64 // s on the back-end's clock (for example Unix seconds)
	Kind  int     // index into the DeviceModel's costs
	Count int64   // how many, 1 … MaxEventCount; 0 means 1
}

// Reading is one report of the cell's voltage by the device: the voltage
// it measured (before quantisation) lay in [Low, High), and its
// measurement error is normal with standard deviation Noise. A quantised
// report gives the bin of the reported value (a millivolt reading m is
// [m − 0.5, m + 0.5) mV; a coarse battery level a wider bin, open at the
// scale's ends).
type Reading struct {
	Time float64 // s on the back-end's clock
	Low  float64 // V, may be −Inf
	High float64 // V, may be +Inf; Low < High
	// Noise is the standard deviation (V) of the measurement error, > 0:
	// the analogue-to-digital converter's error, the spread of the voltage
	// curve from cell to cell and with temperature, and the unknown load
	// at the moment of measurement. It states how much a reading can say:
	// where the curve is flat within a few Noise, a reading says little.
	Noise float64
}

// reading is a Reading kept in a Tally with the active energy spent by its
// time.
type reading struct {
	tau, lo, hi, noise, active float64
}

// Tally is the summary of one device that a back-end keeps: what has been
// counted since its cell was installed, updated one event at a time in
// constant work and constant memory (no history). It holds
//
//   - the installation time (deployment or the last cell swap);
//   - the count of events of each kind, and the mean and variance of the
//     active energy (J, at the cell) they cost;
//   - an exponentially weighted sum of that energy (time constant
//     DeviceOptions.Memory), from which the device's recent active power is
//     taken for the future;
//   - the newest MaxReadings readings, each with the active energy spent by
//     its time (older readings are dropped: the newest lie deepest in the
//     discharge, where the voltage curve says most);
//   - whether the device reports external power.
//
// A Tally is a value: DeviceModel.Observe and Read return an updated copy
// and leave the one given unchanged, so a Tally is safe for concurrent use
// and can be stored as it is. The zero Tally is not valid: start with
// DeviceModel.NewTally.
type Tally struct {
	install, newest float64
	ok              bool
	active, actVar  float64 // J, J²
	ewE, ewV, ewAt  float64 // J, J², s
	ewX, ewY        float64 // s: the weighted exposure ∫w and ∫w², each gap credited at its end as its events are
	events          int64
	counts          [MaxEventKinds]int64
	reads           [MaxReadings]reading
	nRead, next     int
	external        bool
}

// NewTally starts the summary of a device whose cell was installed at
// install (s on the back-end's clock; finite).
func (m DeviceModel) NewTally(install float64) (Tally, error) {
	if m.d == nil {
		return Tally{}, paramErr("DeviceModel.NewTally", "model", "zero DeviceModel", "must be built by NewDeviceModel")
	}
	if !finite(install) {
		return Tally{}, paramErr("DeviceModel.NewTally", "install", install, "must be finite (s)")
	}
	return Tally{install: install, newest: install, ewAt: install, ok: true}, nil
}

// Install returns the installation time (s); NaN for a zero Tally.
func (t Tally) Install() float64 {
	if !t.ok {
		return math.NaN()
	}
	return t.install
}

// Newest returns the time (s) of the newest event or reading, the
// installation time before any.
func (t Tally) Newest() float64 {
	if !t.ok {
		return math.NaN()
	}
	return t.newest
}

// Events returns the number of events counted.
func (t Tally) Events() int64 { return t.events }

// Count returns the number of events of kind k counted (0 for a kind out
// of range).
func (t Tally) Count(k int) int64 {
	if k < 0 || k >= MaxEventKinds {
		return 0
	}
	return t.counts[k]
}

// Readings returns the number of readings kept (at most MaxReadings).
func (t Tally) Readings() int { return t.nRead }

// External reports whether the device's newest status said it runs on
// external power.
func (t Tally) External() bool { return t.external }

// ActiveEnergy returns the mean (J) and the variance (J²) of the active
// energy at the cell spent by the events counted.
func (t Tally) ActiveEnergy() (mean, variance float64) { return t.active, t.actVar }

// checkTime applies the rules on an event's time: finite, not before the
// installation, at most MaxLateness before the newest (and then counted
// at the newest time). It returns the time to use.
func (t Tally) checkTime(fn string, time float64) (float64, error) {
	switch {
	case !t.ok:
		return 0, paramErr(fn, "tally", "zero Tally", "must be started by DeviceModel.NewTally")
	case !finite(time):
		return 0, paramErr(fn, "Time", time, "must be finite (s)")
	case time < t.install:
		return 0, paramErr(fn, "Time", time, fmt.Sprintf("is before the installation at %.17g s", t.install))
	case time < t.newest-MaxLateness:
		return 0, paramErr(fn, "Time", time, fmt.Sprintf("goes backwards by %.6g s, more than MaxLateness (%g s) before the newest event at %.17g s", t.newest-time, float64(MaxLateness), t.newest))
	}
	return max(time, t.newest), nil
}

// Observe returns t with the event e counted: its kind's count, the active
// energy's mean and variance, and the recent activity. An event at most
// MaxLateness before the newest one is counted at the newest time (records
// arriving out of order); an earlier one, a kind out of range or a count
// out of [0, MaxEventCount] is an error wrapping ErrParam, and t is
// returned unchanged. Constant work (no allocation).
func (m DeviceModel) Observe(t Tally, e Event) (Tally, error) {
	const fn = "DeviceModel.Observe"
	if m.d == nil {
		return t, paramErr(fn, "model", "zero DeviceModel", "must be built by NewDeviceModel")
	}
	tm, err := t.checkTime(fn, e.Time)
	if err != nil {
		return t, err
	}
	switch {
	case e.Kind < 0 || e.Kind >= len(m.d.costs):
		return t, paramErr(fn, "Kind", e.Kind, fmt.Sprintf("must be in [0, %d): the model's event kinds", len(m.d.costs)))
	case e.Count < 0 || e.Count > MaxEventCount:
		return t, paramErr(fn, "Count", e.Count, "must be in [0, MaxEventCount] (0 means 1)")
	}
	n := e.Count
	if n == 0 {
		n = 1
	}
	c := m.d.costs[e.Kind]
	fn64 := float64(n)
	t.decay(m.d.memory, tm)
	t.active += fn64 * c.mean
	t.actVar += fn64 * c.vr
	t.ewE += fn64 * c.mean
	t.ewV += fn64 * c.vr
	t.counts[e.Kind] += n
	t.events += n
	t.newest = tm
	return t, nil
}

// decay brings the exponentially weighted sums to time tm.
func (t *Tally) decay(memory, tm float64) {
	if tm > t.ewAt {
		gap := tm - t.ewAt
		w := math.Exp(-gap / memory)
		t.ewE *= w
		t.ewV *= w
		t.ewX = t.ewX*w + gap
		t.ewY = t.ewY*w*w + gap
		t.ewAt = tm
	}
}

// Read returns t with the reading r kept (the oldest kept reading is
// dropped when MaxReadings are held). The time rules are Observe's; Low <
// High (either end may be infinite, not both), finite ends within
// [0, 100] V and Noise in [1e-4, 10] V are required, else an error
// wrapping ErrParam and t unchanged. A reading also clears the external
// power flag (the device measured its cell). The model must have a voltage
// curve (NodeSpec.Voltage).
func (m DeviceModel) Read(t Tally, r Reading) (Tally, error) {
	const fn = "DeviceModel.Read"
	if m.d == nil {
		return t, paramErr(fn, "model", "zero DeviceModel", "must be built by NewDeviceModel")
	}
	tm, err := t.checkTime(fn, r.Time)
	if err != nil {
		return t, err
	}
	okEnd := func(v float64) bool { return math.IsInf(v, 0) || (v >= 0 && v <= voltageMaxOCV) }
	switch {
	case m.d.curve == nil:
		return t, paramErr(fn, "model", "no voltage curve", "readings need NodeSpec.Voltage to relate a voltage to the depth of discharge")
	case math.IsNaN(r.Low) || math.IsNaN(r.High) || !(r.Low < r.High) || !okEnd(r.Low) || !okEnd(r.High) || (math.IsInf(r.Low, 0) && math.IsInf(r.High, 0)):
		return t, paramErr(fn, "Low, High", fmt.Sprintf("[%g, %g)", r.Low, r.High), "must satisfy Low < High, finite ends in [0, 100] V, at most one end infinite")
	case !(r.Noise >= 1e-4 && r.Noise <= 10):
		return t, paramErr(fn, "Noise", r.Noise, "must be in [1e-4, 10] V")
	}
	t.reads[t.next] = reading{tau: tm - t.install, lo: r.Low, hi: r.High, noise: r.Noise, active: t.active}
	t.next = (t.next + 1) % MaxReadings
	if t.nRead < MaxReadings {
		t.nRead++
	}
	t.newest = tm
	t.external = false
	return t, nil
}

// SetExternal returns t with the external-power flag set or cleared at
// time (the time rules are Observe's). A device on external power has no
// battery life to estimate: DeviceModel.Posterior refuses it until a
// reading or SetExternal(false) clears the flag.
func (m DeviceModel) SetExternal(t Tally, time float64, external bool) (Tally, error) {
	tm, err := t.checkTime("DeviceModel.SetExternal", time)
	if err != nil {
		return t, err
	}
	t.newest = tm
	t.external = external
	return t, nil
}

// activePower returns the device's future active power (W at the cell)
// and its variance rate (J²/s) at τ after installation: its exponentially
// weighted recent energy over the weighted exposure, blended with the
// planned power at weight PriorTime.
func (d *deviceData) activePower(t *Tally, now float64) (p, v float64) {
	// The exposure as the events are credited: each gap between them at
	// its end (records that arrive in batches, a day's counts at its end,
	// are then weighted as they came), and the time since the newest
	// event at now.
	w := math.Exp(-max(0, now-t.ewAt) / d.memory)
	expo := t.ewX*w + max(0, now-t.ewAt)
	p = (t.ewE*w + d.planP*d.prior) / (expo + d.prior)
	v = (t.ewV*w + d.planV*d.prior) / (expo + d.prior)
	return p, v
}
