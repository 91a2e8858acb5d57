package ieee802154

import (
	"fmt"
	"math"
	"slices"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// Currents are a node's supply currents in the states of sending a frame,
// at one supply voltage, in amperes. Every current must be finite and at
// least Sleep.
type Currents struct {
	Voltage    float64 // supply voltage, V, > 0
	TX         float64 // transmitting a frame, A
	RX         float64 // receiving: CCA, acknowledgement wait and reception, A
	Turnaround float64 // the RX-to-TX turnaround before a transmission, A
	Idle       float64 // radio idle (oscillator running): backoffs with BackoffIdle, waking with BackoffSleep, A
	Sleep      float64 // radio and microcontroller asleep: between cycles and backoffs with BackoffSleep, A
}

// TypicalCurrents returns an example set for a 2.4 GHz IEEE 802.15.4
// transceiver with a low-power microcontroller at 3 V: transmit 17 mA
// (0 dBm), receive 19 mA, turnaround 19 mA, idle 0.5 mA, sleep 2 µA.
// Typical values, from memory; use your radio's data sheet. The transmit
// power allowed depends on the band and the country: check local
// regulations.
func TypicalCurrents() Currents {
	return Currents{Voltage: 3, TX: 17e-3, RX: 19e-3, Turnaround: 19e-3, Idle: 0.5e-3, Sleep: 2e-6}
}

func (c Currents) validate(fn string) error {
	if !finite(c.Voltage) || c.Voltage <= 0 {
		return paramErr(fn, "Currents.Voltage", c.Voltage, "must be finite and > 0 V")
	}
	if !finite(c.Sleep) || c.Sleep < 0 {
		return paramErr(fn, "Currents.Sleep", c.Sleep, "must be finite and >= 0 A")
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"TX", c.TX}, {"RX", c.RX}, {"Turnaround", c.Turnaround}, {"Idle", c.Idle}} {
		if !finite(f.v) || f.v < c.Sleep {
			return paramErr(fn, "Currents."+f.name, f.v, fmt.Sprintf("must be finite and >= Sleep (%g A)", c.Sleep))
		}
	}
	return nil
}

// Backoff says what the radio does during a CSMA-CA backoff.
type Backoff int

const (
	// BackoffIdle keeps the radio idle during backoffs (Currents.Idle).
	BackoffIdle Backoff = iota
	// BackoffSleep puts the node to sleep during backoffs (Currents.Sleep)
	// and wakes it for Node.Wake at Currents.Idle before the CCA that
	// follows a backoff of at least one period.
	BackoffSleep
)

// MaxWake caps Node.Wake and Node.AckWait, in seconds (1 s, far above
// any radio's start-up or the standard's waits).
const MaxWake = 1.0

// Node describes a node that wakes, does its own work (Before), sends one
// data frame by unslotted CSMA-CA, does more work (After) and sleeps until
// the next cycle. Sending the frame is, per attempt:
//
//	CSMA-CA run: (backoff → CCA) × N, N = 1 … macMaxCSMABackoffs + 1 →
//	  all busy: channel-access failure, the frame is dropped;
//	  idle: turnaround (aTurnaroundTime) → transmit the PPDU →
//	    no acknowledgement requested: done;
//	    acknowledgement received: receive for aTurnaroundTime + the
//	    acknowledgement's PPDU, done;
//	    none: receive for macAckWaitDuration, then a new attempt while
//	    retries (macMaxFrameRetries) remain.
//
// Each CCA is busy with probability Busy and each transmission goes
// unacknowledged with probability AckLoss, independently (see
// CSMA.CCAs for the assumption and BusyFromTraffic for a value derived
// from the offered load). The backoffs are drawn as the standard
// prescribes, each uniform on 0 … 2^BE − 1 unit backoff periods. The
// energy law is exact (finite discrete): every state has a constant
// current and a constant or finite discrete duration.
//
// Size and cost. The law has one atom per distinct energy: 6775 for the test
// node of this package's tests (default attributes, 30 % busy CCAs, 20 % of
// transmissions unacknowledged), built in about 0.45 s of CPU, nearly all of
// it package dist's exact convolutions of discrete laws. It grows with
// macMaxBE, macMaxCSMABackoffs and macMaxFrameRetries, and with BackoffSleep
// in FrameEnergy (the sleep current's small energies separate atoms that the
// cycle, counting above the sleep floor, keeps merged). Package energy also
// builds the law of the active time, which has one atom per distinct
// duration. Settings whose frame has more than MaxFramePaths distinct paths
// (attempts and outcome, CCAs, backoff periods, wakes: a bound on the atoms
// of both laws, counted from the structure in about a millisecond), for
// example macMaxFrameRetries 7 or macMaxBE 8 with 7 retries, would run for
// tens of seconds into package dist's caps on exact sums; for them
// FrameEnergy, FrameStage, Stage and Cycle enumerate the paths attempt by
// attempt, prune every partial or complete path of probability below
// PathTolerance, and put the pruned mass ε on the worst-case path (every
// attempt, every CCA, the longest backoffs, every acknowledgement wait:
// the largest energy and active time of the setting). The result is a
// valid law that stochastically dominates the exact one and lies within
// total-variation distance ε of it: every CDF and survival value is within
// ε (Node.PathError; FrameEnergy's law reports it as dist.Estimated). The
// 7-retry test node keeps 26 192 paths (11 132 energy atoms) at the default
// tolerance, ε = 3.0e-9, in a few seconds of CPU. Only a setting whose
// pruned enumeration still keeps more than the cap is refused, with an
// error naming the cap and PathTolerance. The CSMA laws (CSMA.CCAs,
// CSMA.BackoffTime, CSMA.Frame) stay small (at most 1531 atoms), build in
// about a millisecond and have no such limit.
type Node struct {
	PHY      PHY      // the PHY, e.g. OQPSK2450()
	CSMA     CSMA     // the MAC attributes, e.g. DefaultCSMA()
	Currents Currents // supply currents per state
	// Payload is the MAC payload of each frame, octets, >= 0; the frame
	// must fit aMaxPhyPacketSize with its Addressing (DataFrameOctets).
	Payload    int
	Addressing Addressing // addressing and security of the frame
	AckRequest bool       // request an acknowledgement (and retry without one)
	// Busy is the probability that a CCA finds the channel busy, in
	// [0, 1].
	Busy float64
	// AckLoss is the probability that a transmission gets no
	// acknowledgement (the frame or its acknowledgement lost), in [0, 1];
	// ignored without AckRequest.
	AckLoss float64
	Backoff Backoff // what the radio does in backoffs
	// Wake is the time from sleep to a CCA, s, at Currents.Idle, charged
	// before each CCA that follows a non-empty backoff with BackoffSleep;
	// 0 … MaxWake. Must be 0 with BackoffIdle. The model appends it to the
	// backoff; a node that wakes early within the backoff instead spends
	// Sleep·Voltage·Wake less per wake and its CCA comes Wake sooner (a
	// simplification worth 6 nJ per wake at 2 µA, 3 V and 1 ms).
	Wake float64
	// AckWait is macAckWaitDuration, s, 0 … MaxWake; 0 means the PHY's
	// default (PHY.AckWaitDuration, 864 µs on OQPSK2450). It must cover
	// the turnaround and the acknowledgement's PPDU.
	AckWait float64
	// PathTolerance is the probability (dimensionless) below which a
	// path of the frame is pruned when the setting has more than
	// MaxFramePaths distinct paths; 0 means DefaultPathTolerance (1e-12).
	// It must be 0 or in (0, MaxPathTolerance]. Settings within the cap are
	// always exact and ignore it. See Node.PathError for the error stated.
	PathTolerance float64
	// Before and After are the node's own stages (wake, sense, process);
	// nil means nothing.
	Before, After energy.Stage
}

// Timeline is the plain-data timing of a Node's frame: every state's
// duration (s) and the outcome probabilities.
type Timeline struct {
	FrameOctets  int      // the PSDU (MAC frame), octets
	Frame        float64  // the data PPDU on air, s
	UnitBackoff  float64  // aUnitBackoffPeriod, s
	CCA          float64  // one CCA, s
	Turnaround   float64  // aTurnaroundTime before a transmission, s
	AckReceive   float64  // aTurnaroundTime + the acknowledgement's PPDU, s
	AckWait      float64  // macAckWaitDuration, s
	Wake         float64  // wake before a CCA after a sleeping backoff, s
	Outcomes     Outcomes // the frame's fates and counts
	AccessFail   float64  // P(one CSMA-CA run fails), b^(m+1)
	MaxFrameTime float64  // the longest time sending the frame can take, s
}

// Timeline returns the frame's timing and outcomes, or an error wrapping
// ErrParam naming the first bad field.
func (n Node) Timeline() (Timeline, error) {
	const fn = "Node"
	if err := n.PHY.Validate(); err != nil {
		return Timeline{}, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	if err := n.CSMA.Validate(); err != nil {
		return Timeline{}, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	if err := n.Currents.validate(fn); err != nil {
		return Timeline{}, err
	}
	octets, err := DataFrameOctets(n.Payload, n.Addressing)
	if err != nil {
		return Timeline{}, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	if !probability(n.Busy) {
		return Timeline{}, paramErr(fn, "Busy", n.Busy, "must be a probability in [0, 1]")
	}
	if !probability(n.AckLoss) {
		return Timeline{}, paramErr(fn, "AckLoss", n.AckLoss, "must be a probability in [0, 1]")
	}
	if n.Backoff != BackoffIdle && n.Backoff != BackoffSleep {
		return Timeline{}, paramErr(fn, "Backoff", int(n.Backoff), "must be BackoffIdle or BackoffSleep")
	}
	if !(n.Wake >= 0 && n.Wake <= MaxWake) || (n.Backoff == BackoffIdle && n.Wake != 0) {
		return Timeline{}, paramErr(fn, "Wake", n.Wake, fmt.Sprintf("must be 0 … %g s with BackoffSleep and 0 with BackoffIdle", MaxWake))
	}
	p := n.PHY
	tl := Timeline{
		FrameOctets: octets, Frame: p.ppduTime(octets), UnitBackoff: p.UnitBackoffPeriod(),
		CCA: p.CCATime(), Turnaround: p.TurnaroundTime(), AckReceive: p.TurnaroundTime() + p.AckTime(),
		AckWait: p.AckWaitDuration(), Wake: n.Wake,
	}
	if n.AckWait != 0 {
		if !(n.AckWait >= tl.AckReceive && n.AckWait <= MaxWake) {
			return Timeline{}, paramErr(fn, "AckWait (macAckWaitDuration)", n.AckWait,
				fmt.Sprintf("must be 0 (the PHY's default) or %.4g … %g s (aTurnaroundTime plus the acknowledgement)", tl.AckReceive, MaxWake))
		}
		tl.AckWait = n.AckWait
	}
	if tl.Outcomes, err = n.CSMA.Frame(n.Busy, n.AckLoss, n.AckRequest); err != nil {
		return Timeline{}, err
	}
	_, tl.AccessFail, _ = n.CSMA.ccaProbs(n.Busy)
	run := 0.0
	for i := range n.CSMA.stages() {
		run += float64(int(1)<<n.CSMA.BE(i)-1)*tl.UnitBackoff + tl.Wake + tl.CCA
	}
	attempt := run + tl.Turnaround + tl.Frame
	tl.MaxFrameTime = attempt
	if n.AckRequest {
		tl.MaxFrameTime = float64(n.CSMA.MaxFrameRetries+1) * (attempt + max(tl.AckWait, tl.AckReceive))
	}
	return tl, nil
}

// FrameStage returns the sending of one frame as an energy stage, as
// described on Node (Before and After excluded).
func (n Node) FrameStage() (energy.Stage, error) {
	tl, err := n.Timeline()
	if err != nil {
		return nil, err
	}
	st, _, err := n.buildFrame("Node.FrameStage", tl)
	return st, err
}

// buildFrame returns the frame's stage and the mass pruned from it: the
// exact stage (pruned 0) when the frame has at most MaxFramePaths paths,
// the pruned enumeration otherwise, and an error naming the cap when even
// that keeps more.
func (n Node) buildFrame(fn string, tl Timeline) (energy.Stage, float64, error) {
	tol, err := n.pathTolerance(fn)
	if err != nil {
		return nil, 0, err
	}
	paths := n.framePaths()
	if paths <= MaxFramePaths {
		st, err := n.frameStage(tl)
		return st, 0, err
	}
	pp, ok := n.prunePaths(tl, tol, MaxFramePaths-1)
	if !ok {
		return nil, 0, n.sizeErr(fn, paths, tol)
	}
	st, err := n.prunedStage(tl, pp)
	if err != nil {
		return nil, 0, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	return st, pp.pruned, nil
}

// PathError returns the error stated for the node's frame laws
// (FrameEnergy, FrameStage, Stage, Cycle): the probability mass of the
// paths pruned below PathTolerance and moved to the worst-case path, a
// bound on the total-variation distance between the law built and the
// exact law, hence on the absolute error of every CDF and survival value.
// It is 0 when the frame has at most MaxFramePaths paths (the laws are
// exact). The mass is summed with compensation (gonum's
// floats.SumCompensated); its own rounding error is a few units of 1e-16
// relative. Errors are those of FrameStage.
func (n Node) PathError() (float64, error) {
	const fn = "Node.PathError"
	tl, err := n.Timeline()
	if err != nil {
		return 0, err
	}
	tol, err := n.pathTolerance(fn)
	if err != nil {
		return 0, err
	}
	paths := n.framePaths()
	if paths <= MaxFramePaths {
		return 0, nil
	}
	pp, ok := n.prunePaths(tl, tol, MaxFramePaths-1)
	if !ok {
		return 0, n.sizeErr(fn, paths, tol)
	}
	return pp.pruned, nil
}

// FrameEnergy returns the law of the energy of sending one frame, in
// joules: Σ current·voltage·time over its states, Before and After
// excluded. Exact (finite discrete, atoms merged within
// dist.AtomMergeTolerance).
func (n Node) FrameEnergy() (dist.Law, error) {
	tl, err := n.Timeline()
	if err != nil {
		return nil, err
	}
	st, pruned, err := n.buildFrame("Node.FrameEnergy", tl)
	if err != nil {
		return nil, err
	}
	// A cycle with no floor power charges exactly the states' energy; its
	// period only has to cover the shortest active time.
	period, err := dist.NewPointMass(tl.MaxFrameTime)
	if err != nil {
		return nil, fmt.Errorf("ieee802154.Node.FrameEnergy: %w", err)
	}
	cy, err := energy.NewCycle(st, period, 0)
	if err != nil {
		return nil, fmt.Errorf("ieee802154.Node.FrameEnergy: %w", err)
	}
	return withPathError(cy.Energy(), pruned, n.framePaths() > MaxFramePaths), nil
}

// Stage returns the node's active stage: Before, the frame, After.
func (n Node) Stage() (energy.Stage, error) {
	fr, err := n.FrameStage()
	if err != nil {
		return nil, err
	}
	a := &assembly{}
	return a.then(n.Before, fr, n.After), a.err
}

// Cycle returns the energy cycle of one frame every period (law of the
// reporting interval, s), with the sleep current between cycles.
func (n Node) Cycle(period dist.Law) (energy.Cycle, error) {
	st, err := n.Stage()
	if err != nil {
		return energy.Cycle{}, err
	}
	return energy.NewCycle(st, period, n.Currents.Sleep*n.Currents.Voltage)
}

// assembly builds the frame's stages at one supply voltage and keeps the
// first error met, so that the frame reads as a formula and never panics.
type assembly struct {
	volt float64
	err  error
}

// note records err (the first one wins) and returns s, or Nothing in its
// place when there is none.
func (a *assembly) note(s energy.Stage, err error) energy.Stage {
	if a.err == nil {
		a.err = err
	}
	if err != nil || s == nil {
		return energy.Nothing()
	}
	return s
}

// state is a constant current (A) for a constant duration (s).
func (a *assembly) state(name string, current, duration float64) energy.Stage {
	st, err := energy.NewFixedState(name, current, a.volt, duration)
	return a.note(st, err)
}

// then runs the stages in order, leaving out the nil ones.
func (a *assembly) then(st ...energy.Stage) energy.Stage {
	st = slices.DeleteFunc(slices.Clone(st), func(s energy.Stage) bool { return s == nil })
	if len(st) == 0 {
		return energy.Nothing()
	}
	return a.note(energy.Sequence(st...))
}

// oneOf runs st[i] with probability probs[i], leaving out the branches that
// cannot happen (which may be nil).
func (a *assembly) oneOf(probs []float64, st ...energy.Stage) energy.Stage {
	var p []float64
	var s []energy.Stage
	for i := range probs {
		if probs[i] > 0 {
			p = append(p, probs[i])
			s = append(s, st[i])
		}
	}
	if len(s) == 1 {
		return s[0]
	}
	return a.note(energy.Choice(p, s))
}

// count is the point mass at k, for a fixed number of repetitions.
func (a *assembly) count(k int) dist.Law {
	d, err := dist.NewPointMass(float64(k))
	if err != nil && a.err == nil {
		a.err = err
	}
	return d
}

// times runs st a random number of times (count).
func (a *assembly) times(count dist.Law, st energy.Stage) energy.Stage {
	return a.note(energy.Repeat(count, st))
}

// backoffStage returns the i-th backoff of a run: a state whose duration is
// uniform on 0 … 2^BE(i) − 1 unit backoff periods; with BackoffSleep and a
// wake time, an empty backoff costs nothing and a non-empty one is followed
// by the wake.
func (n Node) backoffStage(b *assembly, tl Timeline, i int) energy.Stage {
	cur := n.Currents
	size := 1 << n.CSMA.BE(i)
	first := 0
	wake := n.Backoff == BackoffSleep && tl.Wake > 0
	if wake {
		if size == 1 {
			return nil // a backoff of 0 periods: no sleep, no wake
		}
		first = 1
	}
	vals := make([]float64, 0, size)
	probs := make([]float64, 0, size)
	for j := first; j < size; j++ {
		vals, probs = append(vals, float64(j)*tl.UnitBackoff), append(probs, 1/float64(size-first))
	}
	d, err := dist.NewDiscrete(vals, probs)
	if err != nil {
		return b.note(nil, err)
	}
	at := cur.Idle
	if n.Backoff == BackoffSleep {
		at = cur.Sleep
	}
	current, err := dist.NewPointMass(at)
	if err != nil {
		return b.note(nil, err)
	}
	st := b.note(energy.NewState("backoff", current, cur.Voltage, d))
	if !wake {
		return st
	}
	slept := b.then(st, b.state("wake", cur.Idle, tl.Wake))
	return b.oneOf([]float64{1 / float64(size), 1 - 1/float64(size)}, energy.Nothing(), slept)
}

// frameStage builds the frame's stage from its timeline.
func (n Node) frameStage(tl Timeline) (energy.Stage, error) {
	cur := n.Currents
	b := &assembly{volt: cur.Voltage}
	m1 := n.CSMA.stages()
	// runs[k-1]: a CSMA-CA run of k backoffs and CCAs.
	cca := b.state("CCA", cur.RX, tl.CCA)
	runs := make([]energy.Stage, m1)
	var parts []energy.Stage
	for k := 1; k <= m1; k++ {
		parts = append(parts, n.backoffStage(b, tl, k-1), cca)
		runs[k-1] = b.then(parts...)
	}
	probs, f, sOK := n.CSMA.ccaProbs(n.Busy)
	fail := runs[m1-1]
	var ok energy.Stage // a successful run, conditioned on success
	if f < 1 {
		cond := make([]float64, m1)
		for k := range m1 - 1 {
			cond[k] = probs[k] / sOK
		}
		// The last run succeeds with probability b^m·(1 − b), computed
		// directly (1 − the others loses its digits when it is small).
		cond[m1-1] = probs[m1-1] * (1 - n.Busy) / sOK
		ok = b.oneOf(cond, runs...)
	}
	send := b.then(b.state("turnaround", cur.Turnaround, tl.Turnaround), b.state("transmit", cur.TX, tl.Frame))
	if b.err != nil {
		return nil, b.err
	}
	if !n.AckRequest {
		if f == 1 {
			return fail, nil
		}
		st := b.oneOf([]float64{sOK, f}, b.then(ok, send), fail)
		return st, b.err
	}
	// With L = (1 − f)·a the probability that an attempt is transmitted
	// and unacknowledged, the sending is J such attempts, P(J = j) ∝ L^j
	// for j = 0 … R, then an attempt that ends it (an access failure or a
	// delivery, in proportion f : (1 − f)(1 − a)); or, with probability
	// L^(R+1), R + 1 unacknowledged attempts (the retry limit).
	a := n.AckLoss
	lost, notLost := attemptProbs(f, sOK, a)
	r1 := n.CSMA.MaxFrameRetries + 1
	var lostAttempt, delivered energy.Stage
	if f < 1 {
		lostAttempt = b.then(ok, send, b.state("ack wait", cur.RX, tl.AckWait))
		delivered = b.then(ok, send, b.state("ack receive", cur.RX, tl.AckReceive))
	}
	if lost == 1 { // every attempt transmitted and unacknowledged
		return b.times(b.count(r1), lostAttempt), b.err
	}
	end := b.oneOf([]float64{f / notLost, sOK * (1 - a) / notLost}, fail, delivered)
	body := end
	if lost > 0 {
		jv := make([]float64, r1)
		jp := make([]float64, r1)
		lj := 1.0
		for j := range jv {
			jv[j], jp[j] = float64(j), lj
			lj *= lost
		}
		tot := sumFloats(jp)
		for j := range jp {
			jp[j] /= tot
		}
		count, err := dist.NewDiscrete(jv, jp)
		if err != nil {
			return nil, err
		}
		body = b.then(b.times(count, lostAttempt), end)
	}
	limit := math.Pow(lost, float64(r1))
	if limit == 0 {
		return body, b.err
	}
	all := b.times(b.count(r1), lostAttempt)
	st := b.oneOf([]float64{-math.Expm1(float64(r1) * math.Log(lost)), limit}, body, all)
	return st, b.err
}

func sumFloats(xs []float64) float64 {
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return s
}
