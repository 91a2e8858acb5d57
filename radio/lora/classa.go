package lora

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// TXCurrent is the supply current a node draws while transmitting at one
// power.
type TXCurrent struct {
	EIRP    float64 // transmit power, dBm EIRP
	Current float64 // supply current, A
}

// Currents are a node's supply currents in the states of a class A cycle,
// at one supply voltage. Every current must be finite and at least Floor.
type Currents struct {
	Voltage float64     // supply voltage, V, > 0
	TX      []TXCurrent // current while transmitting, per transmit power used
	RX      float64     // current while a receive window is open, A
	Wait    float64     // current between the uplink and the windows and between attempts, A
	Floor   float64     // current between cycles (sleep), A
}

// TypicalCurrents returns an example set for a LoRa transceiver of the
// common sub-GHz class with a low-power microcontroller at 3.3 V, for the EU863-870 transmit powers
// (16 … 2 dBm). Typical values, from memory; use your radio's data sheet:
// transmit 90 mA at 16 dBm falling to 20 mA at 2 dBm, receive 12 mA, wait
// and floor 2 µA (microcontroller asleep with its timer running, radio
// asleep).
func TypicalCurrents() Currents {
	return Currents{
		Voltage: 3.3,
		TX: []TXCurrent{
			{EIRP: 16, Current: 90e-3}, {EIRP: 14, Current: 45e-3}, {EIRP: 12, Current: 38e-3},
			{EIRP: 10, Current: 32e-3}, {EIRP: 8, Current: 28e-3}, {EIRP: 6, Current: 25e-3},
			{EIRP: 4, Current: 22e-3}, {EIRP: 2, Current: 20e-3},
		},
		RX:    12e-3,
		Wait:  2e-6,
		Floor: 2e-6,
	}
}

// txCurrent returns the transmit current at eirp (dBm).
func (c Currents) txCurrent(eirp float64) (float64, error) {
	for _, t := range c.TX {
		if math.Abs(t.EIRP-eirp) <= 1e-9 {
			return t.Current, nil
		}
	}
	return 0, paramErr("ClassA", "Currents.TX", fmt.Sprintf("%d entries", len(c.TX)), fmt.Sprintf("has no current for %g dBm", eirp))
}

func (c Currents) validate() error {
	const fn = "ClassA"
	if !finite(c.Voltage) || c.Voltage <= 0 {
		return paramErr(fn, "Currents.Voltage", c.Voltage, "must be finite and > 0 V")
	}
	if !finite(c.Floor) || c.Floor < 0 {
		return paramErr(fn, "Currents.Floor", c.Floor, "must be finite and >= 0 A")
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"RX", c.RX}, {"Wait", c.Wait}} {
		if !finite(f.v) || f.v < c.Floor {
			return paramErr(fn, "Currents."+f.name, f.v, fmt.Sprintf("must be finite and >= Floor (%g A)", c.Floor))
		}
	}
	for i, t := range c.TX {
		if !finite(t.Current) || t.Current < c.Floor || !finite(t.EIRP) {
			return paramErr(fn, fmt.Sprintf("Currents.TX[%d]", i), t, fmt.Sprintf("needs a finite EIRP and a current >= Floor (%g A)", c.Floor))
		}
	}
	return nil
}

// Windows gives, for one attempt, the probabilities that the node receives
// a downlink in RX1 and in RX2. A network sends at most one downlink per
// uplink, so RX1 + RX2 ≤ 1; with probability 1 − RX1 − RX2 both windows
// stay empty.
type Windows struct {
	RX1 float64 // P(a downlink is received in RX1)
	RX2 float64 // P(a downlink is received in RX2)
}

// DownlinkWindows derives Windows from the chain of events of one attempt:
// the uplink is received (upReceived), the network answers (answers), it
// answers in RX1 with probability inRX1 and otherwise in RX2, and the
// answer reaches the node with probability rx1Received or rx2Received:
//
//	RX1 = up·answers·inRX1·rx1Received,  RX2 = up·answers·(1 − inRX1)·rx2Received
//
// (each a DownlinkProbability). Every argument must be in [0, 1].
func DownlinkWindows(upReceived, answers, inRX1, rx1Received, rx2Received float64) (Windows, error) {
	if !(inRX1 >= 0 && inRX1 <= 1) {
		return Windows{}, paramErr("DownlinkWindows", "inRX1", inRX1, "must be a probability in [0, 1]")
	}
	p1, err := DownlinkProbability(upReceived, answers, rx1Received)
	if err != nil {
		return Windows{}, fmt.Errorf("lora.DownlinkWindows: %w", err)
	}
	p2, err := DownlinkProbability(upReceived, answers, rx2Received)
	if err != nil {
		return Windows{}, fmt.Errorf("lora.DownlinkWindows: %w", err)
	}
	return Windows{RX1: p1 * inRX1, RX2: p2 * (1 - inRX1)}, nil
}

// MaxAttempts caps TruncatedGeometric's m (one atom, 16 bytes, per
// attempt). LoRaWAN's NbTrans is at most 15 (LoRaWAN 1.0.3, LinkADRReq);
// the cap leaves room for other retry rules while keeping the law small
// (m = MaxInt used to panic, m = 1e9 to allocate 16 GB).
const MaxAttempts = 1 << 16

// TruncatedGeometric returns the law of the number of transmissions of a
// frame that is repeated until it succeeds (probability q per attempt,
// independently) or m attempts are spent:
//
//	P(N = k) = (1 − q)^(k−1)·q  for k < m,   P(N = m) = (1 − q)^(m−1)
//
// with mean (1 − (1 − q)^m)/q. q must be in [0, 1] and m in
// [1, MaxAttempts]; attempts whose probability underflows to 0 are left
// out.
func TruncatedGeometric(q float64, m int) (dist.Discrete, error) {
	if !(q >= 0 && q <= 1) {
		return dist.Discrete{}, paramErr("TruncatedGeometric", "q", q, "must be a probability in [0, 1]")
	}
	if m < 1 || m > MaxAttempts {
		return dist.Discrete{}, paramErr("TruncatedGeometric", "m", m, fmt.Sprintf("must be in [1, MaxAttempts = %d]", MaxAttempts))
	}
	vals := make([]float64, m)
	probs := make([]float64, m)
	l := math.Log1p(-q) // log(1 − q); −Inf at q = 1
	for k := 1; k <= m; k++ {
		vals[k-1] = float64(k)
		pk := math.Exp(float64(k-1) * l) // (1 − q)^(k−1)
		if k-1 == 0 {
			pk = 1
		}
		if k < m {
			pk *= q
		}
		probs[k-1] = pk
	}
	return dist.NewDiscrete(vals, probs)
}

// ClassA describes a LoRaWAN class A node's reports: the cycle is
//
//	Before → uplink at the drawn data rate and power → wait RECEIVE_DELAY1 →
//	RX1: a downlink (receive it) or none (listen for a preamble) →
//	if RX1 was empty: wait until RECEIVE_DELAY2 → RX2, likewise →
//	if no downlink and attempts remain: wait RetryGap, transmit again →
//	After → floor until the next cycle.
//
// A downlink in either window ends the attempts. For a confirmed uplink it
// carries the acknowledgement, and a frame left unacknowledged is sent
// again ACK_TIMEOUT (2 ± 1 s) after RX2, until acknowledged or NbTrans
// attempts are spent (LoRaWAN 1.0.3). An unconfirmed uplink is repeated
// NbTrans times, each repetition once the previous one's windows have
// closed (LoRaWAN 1.0.3, LinkADRReq; L2 1.0.4 §4.3.1.1 — from memory), and
// the model stops the repetitions at the first downlink as LoRaWAN 1.0.4
// prescribes. Either way the number of transmissions follows
// TruncatedGeometric with q = RX1 + RX2 and m = NbTrans; Confirmed chooses
// the default RetryGap. The default gap also keeps the duty cycle of the
// sub-band the node sends in (Region.UplinkDutyCycle over Mask, or the
// strictest sub-band of Mask for a data rate none of its channels carries): no
// transmission starts before Airtime/d after the previous one started
// (the off-time rule of SubBand.OffTime), so the gap is
//
//	max(G, Airtime/d − (Airtime + RECEIVE_DELAY2 − ClockMargin + RX2 listen))
//
// with G uniform over ACK_TIMEOUT (confirmed) or 0 (unconfirmed): at 1 %
// an SF12 frame of 1.5 s silences the node for 148 s, not 1 … 3 s. Check
// the local regulations and defer to the regulator: the limits here are
// for planning, not certification.
//
// The (data rate, power) setting is drawn once per cycle and shared by every
// state that depends on it: the uplink airtime and current, the RX1 data
// rate and so both windows' durations.
//
// Waits drawn at the floor current (Currents.Wait == Currents.Floor, the
// usual case of a sleeping microcontroller) cost exactly the floor energy
// that the cycle charges for all time outside states, so they are left to
// the floor rather than made states: the energy law is the same, the
// cycle's active time then excludes them, and a random retry gap keeps the
// law exact (finite discrete).
//
// Receive windows open ClockMargin early. An empty window listens for
// ClockMargin + PreambleSymbols symbols at its data rate; a window that
// receives a downlink is open for ClockMargin + the downlink's airtime.
//
// With JoinEvery = k > 0 the node also sends a Join-request (JoinRequestBytes)
// at its setting in one report of k, on average (a Bernoulli(1/k) draw per
// cycle), and listens in both join-accept windows (JOIN_ACCEPT_DELAY1 and 2)
// without an answer: the rejoin attempts of a node that no longer hears its
// network. It is meant for out-of-reach nodes; a node in reach would be
// answered and stop.
type ClassA struct {
	Region   Region   // regional parameters
	Currents Currents // supply currents per state
	App      int      // uplink application payload, bytes
	FOpts    int      // uplink FOpts, bytes
	// Settings is the law of the (data rate, TXPower) the node transmits
	// at: probabilities summing to 1, for example Settled.Reachable(). An
	// EIRP of 0 is filled in from the region; any other must match the
	// TXPower index.
	Settings  []Setting
	Confirmed bool // confirmed uplinks (acknowledged), else unconfirmed
	// NbTrans is the largest number of transmissions per report, 1 … 15;
	// 0 means 1.
	NbTrans     int
	RX1DROffset int // RX1DROffset, as the network configured it
	// DownlinkBytes is the PHY payload of a downlink, bytes; 0 means
	// EmptyFrameBytes (a bare acknowledgement).
	DownlinkBytes int
	// Downlink gives the window probabilities per attempt at every data
	// rate; DownlinkByDR overrides them for the data rates it lists (for
	// example collision-dependent success per data rate).
	Downlink     Windows
	DownlinkByDR map[int]Windows
	// PreambleSymbols is how many symbols an empty window listens for a
	// preamble before it closes; 0 means 6 (common practice in LoRaWAN
	// stacks, from memory).
	PreambleSymbols int
	// ClockMargin is the time each window opens early to absorb clock error,
	// s, >= 0, at most MaxClockMargin. DefaultClockMargin is a realistic
	// value; 0 is a perfect clock.
	ClockMargin float64
	// RX2 moves the second window off the region's default (many networks
	// use a faster RX2 data rate); the zero value keeps the default.
	RX2 RX2Window
	// Mask selects the uplink channels the node uses (Region.Mask,
	// Region.ChannelBlock); the zero mask means all of the plan. It sets
	// the duty cycle that times the default RetryGap.
	Mask ChannelMask
	// RetryGap is the law of the wait between a failed attempt's RX2 and the
	// next transmission, s; nil means the default described on ClassA: the
	// region's ACK_TIMEOUT range (1 … 3 s, uniform) for confirmed uplinks
	// and no wait for unconfirmed repetitions, either way at least until the
	// sub-band's off-time has passed. A law given here is used as it is.
	RetryGap dist.Law
	// JoinEvery is the mean number of reports per Join-request, 0 for none
	// (see ClassA), at most MaxJoinEvery.
	JoinEvery int
	// Before and After are the node's own stages (wake, sense, process); nil
	// means nothing.
	Before, After energy.Stage
}

// DefaultClockMargin is a realistic receive-window margin, s: 20 ms, the
// order that LoRaWAN end-device stacks allow for a 32 kHz crystal's error
// over the receive delays plus the radio's wake-up (common practice, from
// memory). Use your stack's value where you know it.
const DefaultClockMargin = 20e-3

// MaxClockMargin caps ClassA.ClockMargin, s: RECEIVE_DELAY1 is 1 s.
const MaxClockMargin = 1.0

// MaxJoinEvery caps ClassA.JoinEvery, reports.
const MaxJoinEvery = 1_000_000

// JoinRequestBytes is the PHY payload of a Join-request, bytes: MHDR 1,
// JoinEUI 8, DevEUI 8, DevNonce 2, MIC 4 (LoRaWAN 1.0.3 §6.2.4).
const JoinRequestBytes = 23

// RX2Window is the second receive window's frequency (Hz) and data rate as
// the network configured them (RXParamSetupReq or the join's settings). The
// zero value (Frequency 0) means the region's default (Region.RX2).
type RX2Window struct {
	Frequency float64 // Hz; 0 for the region's default frequency and data rate
	DR        int     // a downlink data rate of the region
}

// Timeline is the plain-data class A timeline of one setting: the duration
// of each state and the branch probabilities.
type Timeline struct {
	Setting    Setting
	Uplink     float64       // uplink airtime, s
	RX1DR      int           // data rate of RX1
	RX2DR      int           // data rate of RX2
	RX2Freq    float64       // frequency of RX2, Hz
	DutyCycle  float64       // duty-cycle limit of the node's uplink sub-band (1: none)
	OffTimeGap float64       // shortest wait after an empty RX2 before the next transmission that keeps DutyCycle, s (>= 0)
	WaitRX1    float64       // end of uplink to RX1 opening, s
	RX1Listen  float64       // RX1 open and empty, s
	RX1Receive float64       // RX1 open, receiving a downlink, s
	WaitRX2    float64       // RX1 closing (empty) to RX2 opening, s
	RX2Listen  float64       // RX2 open and empty, s
	RX2Receive float64       // RX2 open, receiving a downlink, s
	Windows    Windows       // downlink probabilities per attempt
	Attempts   dist.Discrete // law of the number of transmissions per report
}

func (c ClassA) nbTrans() int {
	if c.NbTrans == 0 {
		return 1
	}
	return c.NbTrans
}

func (c ClassA) windows(dr int) Windows {
	if w, ok := c.DownlinkByDR[dr]; ok {
		return w
	}
	return c.Downlink
}

// checkWindows checks w, the parameter's name from param (called only for
// an error).
func checkWindows(param func() string, w Windows) error {
	if !(w.RX1 >= 0 && w.RX1 <= 1) || !(w.RX2 >= 0 && w.RX2 <= 1) || w.RX1+w.RX2 > 1+1e-12 {
		return paramErr("ClassA", param(), w, "needs RX1, RX2 in [0, 1] with RX1 + RX2 <= 1")
	}
	return nil
}

// validate checks everything but the settings' data rates.
func (c ClassA) validate() error {
	const fn = "ClassA"
	if c.Region.t == nil {
		return errZeroRegion()
	}
	if err := c.Currents.validate(); err != nil {
		return err
	}
	if n := c.nbTrans(); n < 1 || n > 15 {
		return paramErr(fn, "NbTrans", c.NbTrans, "must be 1 … 15 (0 means 1)")
	}
	if len(c.Settings) == 0 {
		return paramErr(fn, "Settings", "[]", "must not be empty")
	}
	sum := 0.0
	for i, s := range c.Settings {
		if !(s.Prob >= 0 && s.Prob <= 1) {
			return paramErr(fn, fmt.Sprintf("Settings[%d].Prob", i), s.Prob, "must be in [0, 1]")
		}
		sum += s.Prob
	}
	if math.Abs(sum-1) > 1e-9 {
		return paramErr(fn, "Settings", fmt.Sprintf("sum %.17g", sum), "probabilities must sum to 1 within 1e-9 (use Settled.Reachable)")
	}
	if err := checkWindows(func() string { return "Downlink" }, c.Downlink); err != nil {
		return err
	}
	for dr, w := range c.DownlinkByDR {
		if err := checkWindows(func() string { return fmt.Sprintf("DownlinkByDR[%d]", dr) }, w); err != nil {
			return err
		}
	}
	if c.PreambleSymbols < 0 {
		return paramErr(fn, "PreambleSymbols", c.PreambleSymbols, "must be >= 0 (0 means 6)")
	}
	if !(c.ClockMargin >= 0 && c.ClockMargin <= MaxClockMargin) {
		return paramErr(fn, "ClockMargin", c.ClockMargin, fmt.Sprintf("must be in [0, MaxClockMargin = %g] s", float64(MaxClockMargin)))
	}
	if c.JoinEvery < 0 || c.JoinEvery > MaxJoinEvery {
		return paramErr(fn, "JoinEvery", c.JoinEvery, fmt.Sprintf("must be 0 (none) … MaxJoinEvery = %d reports", MaxJoinEvery))
	}
	if c.RX2 != (RX2Window{}) {
		if !finite(c.RX2.Frequency) || c.RX2.Frequency <= 0 {
			return paramErr(fn, "RX2.Frequency", c.RX2.Frequency, "must be finite and > 0 Hz (0 with DR 0 for the region's default)")
		}
		if _, err := c.Region.DownlinkDataRate(c.RX2.DR); err != nil {
			return fmt.Errorf("lora.ClassA: RX2.DR: %w", err)
		}
	}
	if c.RetryGap != nil {
		if lo, hi := c.RetryGap.Support(); !(lo >= 0) || !finite(c.RetryGap.Variance()) || math.IsNaN(hi) {
			return paramErr(fn, "RetryGap", c.RetryGap, "must have support in [0, ∞) s and a finite variance")
		}
	}
	return nil
}

// Timelines returns the timeline of every setting with positive
// probability, in the order of Settings. It fails, wrapping ErrParam, on
// any bad field: a data rate the region lacks, a payload too large for a
// data rate, a transmit power without a current, probabilities out of
// range, windows that overlap.
func (c ClassA) Timelines() ([]Timeline, error) {
	if err := c.validate(); err != nil {
		return nil, err
	}
	var out []Timeline
	for i, s := range c.Settings {
		if s.Prob == 0 {
			continue
		}
		tl, err := c.timeline(s)
		if err != nil {
			return nil, fmt.Errorf("lora.ClassA: Settings[%d] (DR%d, TXPower %d): %w", i, s.DR, s.TXPower, err)
		}
		out = append(out, tl)
	}
	return out, nil
}

func (c ClassA) timeline(s Setting) (Timeline, error) {
	reg := c.Region
	up, err := reg.UplinkAirtime(s.DR, c.App, c.FOpts)
	if err != nil {
		return Timeline{}, err
	}
	eirp, err := reg.TXPower(s.TXPower)
	if err != nil {
		return Timeline{}, err
	}
	if math.Abs(eirp-s.EIRP) > 1e-9 && s.EIRP != 0 {
		return Timeline{}, paramErr("ClassA", "Setting.EIRP", s.EIRP, fmt.Sprintf("TXPower %d is %g dBm in %s", s.TXPower, eirp, reg.Name()))
	}
	s.EIRP = eirp
	rx1, err := reg.RX1DataRate(s.DR, c.RX1DROffset)
	if err != nil {
		return Timeline{}, err
	}
	rx2f, rx2 := c.rx2()
	dlBytes := c.DownlinkBytes
	if dlBytes == 0 {
		dlBytes = EmptyFrameBytes
	}
	nsym := c.PreambleSymbols
	if nsym == 0 {
		nsym = 6
	}
	win := func(dr int) (listen, receive float64, err error) {
		d, err := reg.DownlinkDataRate(dr)
		if err != nil {
			return 0, 0, err
		}
		if dlBytes-5 > d.MaxMACPayload { // PHYPayload = MHDR + MACPayload + MIC
			return 0, 0, paramErr("ClassA", "DownlinkBytes", dlBytes, fmt.Sprintf("exceeds the PHY payload DR%d carries", dr))
		}
		p := d.DownlinkPHY()
		a, err := p.Airtime(dlBytes)
		if err != nil {
			return 0, 0, err
		}
		return c.ClockMargin + float64(nsym)*p.SymbolTime(), c.ClockMargin + a, nil
	}
	tl := Timeline{Setting: s, Uplink: up, RX1DR: rx1, RX2DR: rx2, RX2Freq: rx2f, Windows: c.windows(s.DR)}
	// A data rate that no channel of the mask carries (EU863-870 DR6 on the
	// default channels) is sent on a channel the network adds in the same
	// bands: the strictest sub-band of the mask binds.
	if tl.DutyCycle, err = reg.strictestDutyCycle(c.Mask, s.DR, reg.ChannelsCarrying(c.Mask, s.DR) == 0); err != nil {
		return Timeline{}, err
	}
	if tl.RX1Listen, tl.RX1Receive, err = win(rx1); err != nil {
		return Timeline{}, err
	}
	if tl.RX2Listen, tl.RX2Receive, err = win(rx2); err != nil {
		return Timeline{}, err
	}
	tm := reg.Timing()
	tl.WaitRX1 = tm.ReceiveDelay1 - c.ClockMargin
	tl.WaitRX2 = (tm.ReceiveDelay2 - c.ClockMargin) - (tl.WaitRX1 + tl.RX1Listen)
	if tl.WaitRX1 < 0 || tl.WaitRX2 < 0 {
		return Timeline{}, paramErr("ClassA", "ClockMargin", c.ClockMargin,
			fmt.Sprintf("windows overlap: RX1 at DR%d listens %.4g s, RECEIVE_DELAY2 − RECEIVE_DELAY1 = %g s", rx1, tl.RX1Listen, tm.ReceiveDelay2-tm.ReceiveDelay1))
	}
	// The off-time rule: the next start no earlier than Uplink/d after this
	// one; RX2 closes Uplink + RECEIVE_DELAY2 − margin + RX2 listen after it.
	tl.OffTimeGap = max(0, tl.Uplink/tl.DutyCycle-(tl.Uplink+tm.ReceiveDelay2-c.ClockMargin+tl.RX2Listen))
	if tl.Attempts, err = TruncatedGeometric(min(tl.Windows.RX1+tl.Windows.RX2, 1), c.nbTrans()); err != nil {
		return Timeline{}, err
	}
	return tl, nil
}

// Stage returns the class A report as an energy stage: the setting drawn
// once (energy.Configured), then the attempts as described on ClassA.
func (c ClassA) Stage() (energy.Stage, error) {
	tls, err := c.Timelines()
	if err != nil {
		return nil, err
	}
	vals := make([]float64, len(tls))
	probs := make([]float64, len(tls))
	for i, tl := range tls {
		vals[i], probs[i] = float64(i), tl.Setting.Prob
	}
	config, err := dist.NewDiscrete(vals, probs)
	if err != nil {
		return nil, fmt.Errorf("lora.ClassA: settings: %w", err)
	}
	parts := map[int]windowParts{}
	for _, tl := range tls {
		if _, ok := parts[tl.Setting.DR]; ok {
			continue
		}
		gap, err := c.retryGap(tl)
		if err != nil {
			return nil, fmt.Errorf("lora.ClassA: DR%d: %w", tl.Setting.DR, err)
		}
		w, err := c.windowParts(tl, gap)
		if err != nil {
			return nil, fmt.Errorf("lora.ClassA: DR%d: %w", tl.Setting.DR, err)
		}
		parts[tl.Setting.DR] = w
	}
	attempts, err := energy.Configured(config, func(v float64) (energy.Stage, error) {
		tl := tls[int(v)]
		st, err := c.attemptsStage(tl, parts[tl.Setting.DR])
		if err != nil || c.JoinEvery == 0 {
			return st, err
		}
		join, err := c.joinStage(tl)
		if err != nil {
			return nil, err
		}
		b := &builder{}
		return b.seq(st, join), b.err
	})
	if err != nil {
		return nil, fmt.Errorf("lora.ClassA: %w", err)
	}
	b := &builder{}
	st := b.seq(c.Before, attempts, c.After)
	return st, b.err
}

// Cycle returns the energy cycle of one report every period (law of the
// reporting interval, s), with the floor current between cycles.
func (c ClassA) Cycle(period dist.Law) (energy.Cycle, error) {
	st, err := c.Stage()
	if err != nil {
		return energy.Cycle{}, err
	}
	return energy.NewCycle(st, period, c.Currents.Floor*c.Currents.Voltage)
}

// windowParts are the stages of one data rate that do not depend on the
// transmit power: everything after the uplink, and the attempt law.
type windowParts struct {
	ok, fail, retry energy.Stage  // after the uplink: a downlink in RX1 or RX2; none; the retry gap (nil: floor)
	failures        dist.Discrete // failed attempts before the successful one
	pOK, pAllFail   float64       // P(some attempt gets a downlink), P(none does)
	single          bool          // one transmission decides (NbTrans = 1 or q = 1)
	p1, p2          float64       // window probabilities per attempt
	r1Tail, r2Tail  energy.Stage  // after the uplink: downlink in RX1, in RX2
}

// builder makes energy stages and keeps the first error, so that stage
// construction reads as a formula and never panics.
type builder struct {
	voltage float64
	err     error
}

func (b *builder) keep(s energy.Stage, err error) energy.Stage {
	if err != nil && b.err == nil {
		b.err = err
	}
	if s == nil {
		return energy.Nothing()
	}
	return s
}

// fixed is a state at a constant current (A) for a constant duration (s).
func (b *builder) fixed(name string, current, duration float64) energy.Stage {
	return b.keep(energy.NewFixedState(name, current, b.voltage, duration))
}

// seq is energy.Sequence without the waits left to the floor (nil entries).
func (b *builder) seq(st ...energy.Stage) energy.Stage {
	keep := make([]energy.Stage, 0, len(st))
	for _, s := range st {
		if s != nil {
			keep = append(keep, s)
		}
	}
	if len(keep) == 0 {
		return energy.Nothing()
	}
	return b.keep(energy.Sequence(keep...))
}

func (b *builder) choice(probs []float64, st ...energy.Stage) energy.Stage {
	return b.keep(energy.Choice(probs, st))
}

func (b *builder) repeat(count dist.Law, st energy.Stage) energy.Stage {
	return b.keep(energy.Repeat(count, st))
}

// windowParts builds the power-independent stages of tl's data rate.
func (c ClassA) windowParts(tl Timeline, gap dist.Law) (windowParts, error) {
	cur := c.Currents
	b := &builder{voltage: cur.Voltage}
	var w windowParts
	var wait1, wait2 energy.Stage
	if cur.Wait > cur.Floor {
		wait1 = b.fixed("wait RX1", cur.Wait, tl.WaitRX1)
		wait2 = b.fixed("wait RX2", cur.Wait, tl.WaitRX2)
		if _, hi := gap.Support(); hi > 0 {
			at, err := dist.NewPointMass(cur.Wait)
			if err != nil {
				return w, err
			}
			w.retry = b.keep(energy.NewState("retry wait", at, cur.Voltage, gap))
		}
	}
	l1 := b.fixed("RX1 listen", cur.RX, tl.RX1Listen)
	r1 := b.fixed("RX1 downlink", cur.RX, tl.RX1Receive)
	l2 := b.fixed("RX2 listen", cur.RX, tl.RX2Listen)
	r2 := b.fixed("RX2 downlink", cur.RX, tl.RX2Receive)
	w.fail = b.seq(wait1, l1, wait2, l2)
	w.r1Tail = b.seq(wait1, r1)
	w.r2Tail = b.seq(wait1, l1, wait2, r2)
	m := c.nbTrans()
	w.p1, w.p2 = tl.Windows.RX1, tl.Windows.RX2
	q := min(w.p1+w.p2, 1)
	switch {
	case m == 1 || q == 1:
		w.single = true
		return w, b.err
	case q == 0:
		w.pAllFail = 1
		return w, b.err
	}
	w.ok = b.choice([]float64{w.p1 / q, w.p2 / q}, w.r1Tail, w.r2Tail)
	// Failures before the successful attempt: P(F = j) ∝ (1 − q)^j, j < m.
	lq := math.Log1p(-q)
	fv := make([]float64, m)
	fp := make([]float64, m)
	w.pOK = -math.Expm1(float64(m) * lq) // 1 − (1 − q)^m
	w.pAllFail = math.Exp(float64(m) * lq)
	for j := range fv {
		fv[j] = float64(j)
		fp[j] = math.Exp(float64(j)*lq) * q / w.pOK
	}
	var err error
	if w.failures, err = dist.NewDiscrete(fv, fp); err != nil {
		return w, err
	}
	return w, b.err
}

// attemptsStage builds the attempts of one setting from its data rate's
// window parts.
func (c ClassA) attemptsStage(tl Timeline, w windowParts) (energy.Stage, error) {
	itx, err := c.Currents.txCurrent(tl.Setting.EIRP)
	if err != nil {
		return nil, err
	}
	b := &builder{voltage: c.Currents.Voltage}
	tx := b.fixed(fmt.Sprintf("uplink %g dBm", tl.Setting.EIRP), itx, tl.Uplink)
	fail := b.seq(tx, w.fail)
	if w.single {
		// One transmission: its windows decide.
		st := b.choice([]float64{w.p1, w.p2, max(1-w.p1-w.p2, 0)}, b.seq(tx, w.r1Tail), b.seq(tx, w.r2Tail), fail)
		return st, b.err
	}
	failGap := b.seq(fail, w.retry)
	before, err := dist.NewPointMass(float64(c.nbTrans() - 1))
	if err != nil {
		return nil, err
	}
	allFail := b.seq(b.repeat(before, failGap), fail)
	if w.pAllFail == 1 {
		return allFail, b.err
	}
	okBranch := b.seq(b.repeat(w.failures, failGap), tx, w.ok)
	return b.choice([]float64{w.pOK, w.pAllFail}, okBranch, allFail), b.err
}

// rx2 returns the RX2 frequency (Hz) and data rate in force.
func (c ClassA) rx2() (float64, int) {
	if c.RX2 == (RX2Window{}) {
		return c.Region.RX2()
	}
	return c.RX2.Frequency, c.RX2.DR
}

// retryGap returns the law of the wait after a failed attempt's RX2 at tl's
// setting: RetryGap when given, otherwise max(G, OffTimeGap) with G uniform
// over ACK_TIMEOUT (confirmed) or 0.
func (c ClassA) retryGap(tl Timeline) (dist.Law, error) {
	if c.RetryGap != nil {
		return c.RetryGap, nil
	}
	off := tl.OffTimeGap
	if !c.Confirmed {
		return dist.NewPointMass(off)
	}
	tm := c.Region.Timing()
	return UniformAtLeast(tm.AckTimeoutMin, tm.AckTimeoutMax, off)
}

// UniformAtLeast returns the law of max(U, c) for U uniform on [lo, hi]
// (s, 0 <= lo < hi, finite) and a floor c >= 0 (s): U itself when c <= lo,
// the point mass c when c >= hi, and otherwise the mixture of an atom at c
// with probability (c − lo)/(hi − lo) and the uniform law on [c, hi]. It is
// the wait before a retransmission drawn over ACK_TIMEOUT that must also
// respect a duty-cycle off-time.
func UniformAtLeast(lo, hi, c float64) (dist.Law, error) {
	const fn = "UniformAtLeast"
	if !finite(lo) || !finite(hi) || lo < 0 || hi <= lo {
		return nil, paramErr(fn, "lo, hi", [2]float64{lo, hi}, "need finite 0 <= lo < hi s")
	}
	if !finite(c) || c < 0 {
		return nil, paramErr(fn, "c", c, "must be finite and >= 0 s")
	}
	switch {
	case c <= lo:
		return dist.NewUniform(lo, hi)
	case c >= hi:
		return dist.NewPointMass(c)
	}
	atom, err := dist.NewPointMass(c)
	if err != nil {
		return nil, err
	}
	rest, err := dist.NewUniform(c, hi)
	if err != nil {
		return nil, err
	}
	p := (c - lo) / (hi - lo)
	return dist.Mixture([]float64{p, 1 - p}, []dist.Law{atom, rest})
}

// joinStage is one Join-request at tl's setting with both join-accept
// windows empty, taken with probability 1/JoinEvery.
func (c ClassA) joinStage(tl Timeline) (energy.Stage, error) {
	reg := c.Region
	d, err := reg.UplinkDataRate(tl.Setting.DR)
	if err != nil {
		return nil, err
	}
	up, err := d.UplinkPHY().Airtime(JoinRequestBytes)
	if err != nil {
		return nil, err
	}
	itx, err := c.Currents.txCurrent(tl.Setting.EIRP)
	if err != nil {
		return nil, err
	}
	nsym := c.PreambleSymbols
	if nsym == 0 {
		nsym = 6
	}
	listen := func(dr int) (float64, error) {
		dd, err := reg.DownlinkDataRate(dr)
		if err != nil {
			return 0, err
		}
		return c.ClockMargin + float64(nsym)*dd.DownlinkPHY().SymbolTime(), nil
	}
	// The join-accept's RX1 uses RX1DROffset 0; RX2 the region's default.
	rx1, err := reg.RX1DataRate(tl.Setting.DR, 0)
	if err != nil {
		return nil, err
	}
	_, rx2 := reg.RX2()
	l1, err := listen(rx1)
	if err != nil {
		return nil, err
	}
	l2, err := listen(rx2)
	if err != nil {
		return nil, err
	}
	tm := reg.Timing()
	cur := c.Currents
	b := &builder{voltage: cur.Voltage}
	var w1, w2 energy.Stage
	if cur.Wait > cur.Floor {
		w1 = b.fixed("join wait RX1", cur.Wait, tm.JoinAcceptDelay1-c.ClockMargin)
		w2 = b.fixed("join wait RX2", cur.Wait, (tm.JoinAcceptDelay2-tm.JoinAcceptDelay1)-l1)
	}
	join := b.seq(b.fixed(fmt.Sprintf("join request %g dBm", tl.Setting.EIRP), itx, up), w1,
		b.fixed("join RX1 listen", cur.RX, l1), w2, b.fixed("join RX2 listen", cur.RX, l2))
	p := 1 / float64(c.JoinEvery)
	if p == 1 {
		return join, b.err
	}
	return b.choice([]float64{p, 1 - p}, join, energy.Nothing()), b.err
}
