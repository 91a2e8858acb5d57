package ble

import (
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// Advertising timing (Bluetooth Core Specification v5.3, Vol 6, Part B,
// §4.4.2.2: T_advEvent = advInterval + advDelay).
const (
	// AdvIntervalStep is the unit of advInterval, s (0.625 ms).
	AdvIntervalStep = 0.625e-3
	// MinAdvInterval is the least advInterval, s (20 ms).
	MinAdvInterval = 20e-3
	// MaxAdvInterval is the largest advInterval this package accepts, s
	// (10.24 s, the range of the legacy advertising parameters; v5.x allows
	// longer intervals for extended advertising, not modelled here).
	MaxAdvInterval = 10.24
	// AdvDelayMax is the upper end of advDelay, the pseudo-random delay
	// added to every advertising event, s (0 … 10 ms).
	AdvDelayMax = 10e-3
	// MaxPDUSpacing is the largest time between the starts of two
	// consecutive advertising PDUs of one event, s (10 ms; v5.3 Vol 6
	// Part B §4.4.2, from memory).
	MaxPDUSpacing = 10e-3
	// TIFSTolerance is the tolerance on T_IFS, s (±2 µs; from memory).
	TIFSTolerance = 2e-6
	// DefaultChannelGap is the default of Advertiser.Gap, s: 0.5 ms. It is a
	// planning assumption, not a specification value: set it from your
	// radio's measured advertising event.
	DefaultChannelGap = 0.5e-3
)

// Primary advertising channel indices (v5.3 Vol 6 Part B §1.4.1).
const (
	Channel37 = 37
	Channel38 = 38
	Channel39 = 39
)

// PDUType is a legacy advertising PDU type (v5.3 Vol 6 Part B §2.3.1).
// Legacy advertising PDUs are sent on the LE 1M PHY.
type PDUType int

const (
	// AdvInd is ADV_IND: connectable and scannable undirected; the
	// advertiser listens after each PDU for SCAN_REQ or CONNECT_IND.
	AdvInd PDUType = iota
	// AdvDirectInd is ADV_DIRECT_IND in low duty cycle mode (sent every
	// advInterval): connectable directed, 12-octet payload (AdvA,
	// TargetA); the advertiser listens for CONNECT_IND.
	AdvDirectInd
	// AdvNonconnInd is ADV_NONCONN_IND: non-connectable, non-scannable;
	// no listening.
	AdvNonconnInd
	// AdvScanInd is ADV_SCAN_IND: scannable undirected; the advertiser
	// listens for SCAN_REQ.
	AdvScanInd
)

// Legacy advertising payload sizes (v5.3 Vol 6 Part B §2.3.1–§2.3.2).
const (
	// AddressOctets is a device address (AdvA, ScanA, TargetA), octets.
	AddressOctets = 6
	// MaxAdvData is the largest AdvData or ScanRspData of a legacy PDU,
	// octets.
	MaxAdvData = 31
	// ScanReqPayload is the payload of SCAN_REQ (ScanA, AdvA), octets.
	ScanReqPayload = 2 * AddressOctets
)

// String returns the PDU type as the specification writes it.
func (t PDUType) String() string {
	switch t {
	case AdvInd:
		return "ADV_IND"
	case AdvDirectInd:
		return "ADV_DIRECT_IND"
	case AdvNonconnInd:
		return "ADV_NONCONN_IND"
	case AdvScanInd:
		return "ADV_SCAN_IND"
	}
	return fmt.Sprintf("PDUType(%d)", int(t))
}

// listens reports whether the advertiser listens after each PDU.
func (t PDUType) listens() bool { return t != AdvNonconnInd }

// scannable reports whether the PDU type accepts SCAN_REQ.
func (t PDUType) scannable() bool { return t == AdvInd || t == AdvScanInd }

// Currents are a node's supply currents in the radio's states, at one
// supply voltage. Every current must be finite and at least Floor.
type Currents struct {
	Voltage float64 // supply voltage, V, > 0
	TX      float64 // while transmitting at the chosen power, A
	RX      float64 // while receiving or listening, A
	Idle    float64 // radio on, neither sending nor receiving (start-up, turnaround, channel change), A
	Floor   float64 // between events (sleep with the timer running), A
}

// ExampleCurrents returns an example set for the common class of 2.4 GHz
// low-energy radio systems-on-chip with a DC-DC converter at 3.0 V: transmit
// at 0 dBm 5.3 mA, receive 5.4 mA, idle 1.2 mA, sleep 1.5 µA. Typical values,
// from memory, for examples only; use your radio's data sheet.
func ExampleCurrents() Currents {
	return Currents{Voltage: 3.0, TX: 5.3e-3, RX: 5.4e-3, Idle: 1.2e-3, Floor: 1.5e-6}
}

func (c Currents) validate(fn string) error {
	if !finite(c.Voltage) || c.Voltage <= 0 {
		return paramErr(fn, "Currents.Voltage", c.Voltage, "must be finite and > 0 V")
	}
	if !finite(c.Floor) || c.Floor < 0 {
		return paramErr(fn, "Currents.Floor", c.Floor, "must be finite and >= 0 A")
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"TX", c.TX}, {"RX", c.RX}, {"Idle", c.Idle}} {
		if !finite(f.v) || f.v < c.Floor {
			return paramErr(fn, "Currents."+f.name, f.v, fmt.Sprintf("must be finite and >= Floor (%g A)", c.Floor))
		}
	}
	return nil
}

// Advertiser describes a node that sends legacy advertising events. Each
// event is
//
//	Before → radio start-up (Idle) → for each channel in Channels:
//	    the PDU (TX) → if the type listens: listen (RX) for a request, and
//	    with probability ScanRequest receive SCAN_REQ, turn around (T_IFS)
//	    and send SCAN_RSP (TX) → Gap (Idle) before the next channel's PDU
//	→ After → floor until the next event,
//
// and events start every advInterval + advDelay, advDelay uniform on
// [0, AdvDelayMax] afresh for each event (v5.3 Vol 6 Part B §4.4.2.2; the
// specification asks for a pseudo-random value, modelled as continuous
// uniform). The requests on the three channels are independent. A
// CONNECT_IND, which would end advertising, is not modelled.
//
// An empty listen lasts from the end of the PDU until a request's access
// address would have been heard: T_IFS + TIFSTolerance + 40 µs (LE 1M
// preamble and access address). A listen that receives SCAN_REQ lasts T_IFS
// + its airtime (176 µs).
type Advertiser struct {
	Type        PDUType // legacy PDU type
	AdvData     int     // AdvData, octets, 0 … 31 (none for AdvDirectInd)
	ScanRspData int     // ScanRspData of SCAN_RSP, octets, 0 … 31 (scannable types)
	// Interval is advInterval, s: 20 ms … 10.24 s in steps of 0.625 ms.
	Interval float64
	// Channels are the primary channels used, in the order sent: a
	// non-empty subset of 37, 38, 39 in increasing order; nil means all
	// three.
	Channels []int
	// Gap is the time from the end of one channel's activity (its PDU and
	// any listening and response) to the start of the next channel's PDU,
	// at Idle current, s, > 0; 0 means DefaultChannelGap.
	Gap float64
	// Startup is the radio's start-up before an event's first PDU, at Idle
	// current, s, >= 0.
	Startup float64
	// ScanRequest is the probability that a PDU is followed by a SCAN_REQ
	// that the advertiser answers, in [0, 1]; it must be 0 unless Type is
	// AdvInd or AdvScanInd.
	ScanRequest float64
	Currents    Currents // supply currents
	// Before and After are the node's own stages per event (wake, sense);
	// nil means nothing.
	Before, After energy.Stage
}

// AdvTimeline is the plain-data timeline of one advertising event, s.
type AdvTimeline struct {
	PDU        float64 // airtime of the advertising PDU
	Listen     float64 // listening after a PDU when no request comes (0 if the type does not listen)
	Request    float64 // listening that receives SCAN_REQ: T_IFS + its airtime
	Turnaround float64 // from the end of SCAN_REQ to the start of SCAN_RSP: T_IFS
	Response   float64 // airtime of SCAN_RSP
	Gap        float64 // between channels
	// Spacing is the time between the starts of consecutive PDUs of an
	// event without requests: PDU + Listen + Gap.
	Spacing  float64
	Channels []int   // the channels, in the order sent
	Event    float64 // an event without requests: Startup + n·(PDU + Listen) + (n − 1)·Gap
}

func (a Advertiser) channels() []int {
	if a.Channels == nil {
		return []int{Channel37, Channel38, Channel39}
	}
	return append([]int(nil), a.Channels...)
}

func (a Advertiser) gap() float64 {
	if a.Gap == 0 {
		return DefaultChannelGap
	}
	return a.Gap
}

// Timeline validates the advertiser and returns its event's timeline. It
// fails, wrapping ErrParam, on any field out of range, naming the field and
// its range.
func (a Advertiser) Timeline() (AdvTimeline, error) {
	const fn = "Advertiser.Timeline"
	if a.Type < AdvInd || a.Type > AdvScanInd {
		return AdvTimeline{}, paramErr(fn, "Type", int(a.Type), "must be AdvInd, AdvDirectInd, AdvNonconnInd or AdvScanInd")
	}
	if err := checkAdvInterval(fn, "Interval", a.Interval); err != nil {
		return AdvTimeline{}, err
	}
	if a.Type == AdvDirectInd {
		if a.AdvData != 0 {
			return AdvTimeline{}, paramErr(fn, "AdvData", a.AdvData, "ADV_DIRECT_IND carries no AdvData: must be 0")
		}
	} else if a.AdvData < 0 || a.AdvData > MaxAdvData {
		return AdvTimeline{}, paramErr(fn, "AdvData", a.AdvData, fmt.Sprintf("must be 0 … %d octets", MaxAdvData))
	}
	if a.ScanRspData < 0 || a.ScanRspData > MaxAdvData {
		return AdvTimeline{}, paramErr(fn, "ScanRspData", a.ScanRspData, fmt.Sprintf("must be 0 … %d octets", MaxAdvData))
	}
	if !(a.ScanRequest >= 0 && a.ScanRequest <= 1) {
		return AdvTimeline{}, paramErr(fn, "ScanRequest", a.ScanRequest, "must be a probability in [0, 1]")
	}
	if a.ScanRequest > 0 && !a.Type.scannable() {
		return AdvTimeline{}, paramErr(fn, "ScanRequest", a.ScanRequest, fmt.Sprintf("must be 0: %v is not scannable", a.Type))
	}
	chs := a.channels()
	if err := checkChannels(fn, chs); err != nil {
		return AdvTimeline{}, err
	}
	if !finite(a.Gap) || a.Gap < 0 {
		return AdvTimeline{}, paramErr(fn, "Gap", a.Gap, "must be finite and > 0 s (0 means DefaultChannelGap)")
	}
	if !finite(a.Startup) || a.Startup < 0 {
		return AdvTimeline{}, paramErr(fn, "Startup", a.Startup, "must be finite and >= 0 s")
	}
	if err := a.Currents.validate(fn); err != nil {
		return AdvTimeline{}, err
	}
	payload := AddressOctets + a.AdvData
	if a.Type == AdvDirectInd {
		payload = 2 * AddressOctets
	}
	tl := AdvTimeline{
		PDU:        LE1M.airtime(payload),
		Turnaround: TIFS,
		Gap:        a.gap(),
		Channels:   chs,
	}
	if a.Type.listens() {
		tl.Listen = TIFS + TIFSTolerance + LE1M.PreambleAndAddress()
	}
	if a.Type.scannable() {
		tl.Request = TIFS + LE1M.airtime(ScanReqPayload)
		tl.Response = LE1M.airtime(AddressOctets + a.ScanRspData)
	}
	tl.Spacing = tl.PDU + tl.Listen + tl.Gap
	n := float64(len(chs))
	tl.Event = a.Startup + n*(tl.PDU+tl.Listen) + (n-1)*tl.Gap
	// The longest start-to-start spacing: a request answered on the channel.
	longest := tl.Spacing
	if a.ScanRequest > 0 {
		longest = tl.PDU + tl.Request + tl.Turnaround + tl.Response + tl.Gap
	}
	if len(chs) > 1 && longest > MaxPDUSpacing*(1+1e-12) {
		return AdvTimeline{}, paramErr(fn, "Gap", tl.Gap, fmt.Sprintf("PDUs start %.4g ms apart: at most %g ms within an event (v5.3 Vol 6 Part B §4.4.2)", longest*1e3, MaxPDUSpacing*1e3))
	}
	full := a.Startup + n*(longest-tl.Gap) + (n-1)*tl.Gap
	if full > a.Interval {
		return AdvTimeline{}, paramErr(fn, "Interval", a.Interval, fmt.Sprintf("shorter than the event (%.4g ms)", full*1e3))
	}
	return tl, nil
}

// checkAdvInterval checks an advInterval: 20 ms … 10.24 s in 0.625 ms steps.
func checkAdvInterval(fn, param string, x float64) error {
	_, ok := onGrid(x, AdvIntervalStep)
	if !finite(x) || x < MinAdvInterval*(1-1e-12) || x > MaxAdvInterval*(1+1e-12) || !ok {
		return paramErr(fn, param, x, "advInterval must be 20 ms … 10.24 s in steps of 0.625 ms (v5.3 Vol 6 Part B §4.4.2.2)")
	}
	return nil
}

// checkChannels checks a primary channel list: non-empty, increasing, within 37 … 39.
func checkChannels(fn string, chs []int) error {
	if len(chs) == 0 || len(chs) > 3 {
		return paramErr(fn, "Channels", chs, "must list 1 … 3 primary channels (nil means 37, 38, 39)")
	}
	for i, c := range chs {
		if c < Channel37 || c > Channel39 || (i > 0 && c <= chs[i-1]) {
			return paramErr(fn, "Channels", chs, "must be distinct primary channels 37, 38, 39 in increasing order")
		}
	}
	return nil
}

// IntervalLaw returns the law of the time between the starts of
// consecutive events, advInterval + advDelay: uniform on [Interval,
// Interval + AdvDelayMax], s.
func (a Advertiser) IntervalLaw() (dist.Law, error) {
	if err := checkAdvInterval("Advertiser.IntervalLaw", "Interval", a.Interval); err != nil {
		return nil, err
	}
	return dist.NewUniform(a.Interval, a.Interval+AdvDelayMax)
}

// stager builds energy stages at one supply voltage and keeps the first
// error, so that stage construction reads as a formula.
type stager struct {
	cur Currents
	fn  string
	err error
}

func (b *stager) keep(s energy.Stage, err error) energy.Stage {
	if err != nil && b.err == nil {
		b.err = causeErr(b.fn, "stage", "", "energy stage", err)
	}
	if s == nil {
		return energy.Nothing()
	}
	return s
}

// state is a state at current i (A) for duration d (s); nil (left to the
// floor) when it draws the floor current or lasts no time.
func (b *stager) state(name string, i, d float64) energy.Stage {
	if i == b.cur.Floor || d == 0 {
		return nil
	}
	return b.keep(energy.NewFixedState(name, i, b.cur.Voltage, d))
}

// seq is energy.Sequence of the non-nil stages; nil if none.
func (b *stager) seq(st ...energy.Stage) energy.Stage {
	keep := make([]energy.Stage, 0, len(st))
	for _, s := range st {
		if s != nil {
			keep = append(keep, s)
		}
	}
	if len(keep) == 0 {
		return nil
	}
	return b.keep(energy.Sequence(keep...))
}

func (b *stager) orNothing(s energy.Stage) energy.Stage {
	if s == nil {
		return energy.Nothing()
	}
	return s
}

// Stage returns one advertising event as an energy stage (see Advertiser).
func (a Advertiser) Stage() (energy.Stage, error) {
	tl, err := a.Timeline()
	if err != nil {
		return nil, err
	}
	c := a.Currents
	b := &stager{cur: c, fn: "Advertiser.Stage"}
	pdu := b.state("advertising PDU", c.TX, tl.PDU)
	var after energy.Stage // what follows each PDU
	switch {
	case a.ScanRequest > 0:
		answered := b.orNothing(b.seq(b.state("scan request", c.RX, tl.Request), b.state("turnaround", c.Idle, tl.Turnaround),
			b.state("scan response", c.TX, tl.Response)))
		listen := b.orNothing(b.state("listen", c.RX, tl.Listen))
		if a.ScanRequest == 1 {
			after = answered
		} else {
			after = b.keep(energy.Choice([]float64{a.ScanRequest, 1 - a.ScanRequest}, []energy.Stage{answered, listen}))
		}
	case tl.Listen > 0:
		after = b.state("listen", c.RX, tl.Listen)
	}
	parts := []energy.Stage{a.Before, b.state("start-up", c.Idle, a.Startup)}
	for i := range tl.Channels {
		if i > 0 {
			parts = append(parts, b.state("channel gap", c.Idle, tl.Gap))
		}
		parts = append(parts, pdu, after)
	}
	parts = append(parts, a.After)
	st := b.orNothing(b.seq(parts...))
	return st, b.err
}

// Cycle returns the energy cycle of one advertising event every
// advInterval + advDelay (IntervalLaw), with the floor current between
// events. Its energy law is exact: a finite discrete law (the requests)
// plus the floor power times the uniform interval.
func (a Advertiser) Cycle() (energy.Cycle, error) {
	st, err := a.Stage()
	if err != nil {
		return energy.Cycle{}, err
	}
	period, err := a.IntervalLaw()
	if err != nil {
		return energy.Cycle{}, err
	}
	cy, err := energy.NewCycle(st, period, a.Currents.Floor*a.Currents.Voltage)
	if err != nil {
		return energy.Cycle{}, causeErr("Advertiser.Cycle", "cycle", "", "energy cycle", err)
	}
	return cy, nil
}
