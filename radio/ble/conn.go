package ble

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// Connection timing (Bluetooth Core Specification v5.3, Vol 6, Part B,
// §4.5.1 connection events, §4.5.2 supervision timeout, §4.5.7 window
// widening, §4.2.2 sleep clock accuracy).
const (
	// ConnIntervalStep is the unit of connInterval, s (1.25 ms).
	ConnIntervalStep = 1.25e-3
	// MinConnInterval is the least connInterval, s (7.5 ms).
	MinConnInterval = 7.5e-3
	// MaxConnInterval is the largest connInterval, s (4 s).
	MaxConnInterval = 4.0
	// SupervisionTimeoutStep is the unit of connSupervisionTimeout, s (10 ms).
	SupervisionTimeoutStep = 10e-3
	// MinSupervisionTimeout is the least connSupervisionTimeout, s (100 ms).
	MinSupervisionTimeout = 100e-3
	// MaxSupervisionTimeout is the largest connSupervisionTimeout, s (32 s).
	MaxSupervisionTimeout = 32.0
	// MaxPeripheralLatency is the largest connPeripheralLatency (499; from
	// memory).
	MaxPeripheralLatency = 499
	// MaxSCA is the worst sleep clock accuracy allowed, ppm (±500 ppm).
	MaxSCA = 500
	// WindowJitter is the instantaneous timing allowance the receive
	// window opens by besides the window widening, s (±16 µs of the sleep
	// clock's jitter, v5.3 Vol 6 Part B §4.2.2; from memory).
	WindowJitter = 16e-6
	// MaxDataPayload is the largest data channel PDU payload before the
	// MIC, octets (251).
	MaxDataPayload = 251
	// MaxExchanges caps the number of packet exchanges in one connection
	// event that the Exchanges law may give.
	MaxExchanges = 1 << 12
)

// Connection describes a peripheral node's side of a connection. The node
// wakes once every (connPeripheralLatency + 1) connection intervals (it
// uses its latency fully; data waits for its wake-up) and runs one
// connection event:
//
//	Before → radio start-up (Idle) → listen (RX) from the widened window's
//	opening until the central's packet starts → exchange 1: receive the
//	central's packet (RX), T_IFS (Idle), send its own (TX) → each further
//	exchange: T_IFS (Idle), receive, T_IFS (Idle), send → After → floor.
//
// The window opens w + WindowJitter before the expected anchor point, with
// the window widening
//
//	w = (centralSCA + peripheralSCA) / 10⁶ · timeSinceLastAnchor
//
// (v5.3 Vol 6 Part B §4.5.7) and timeSinceLastAnchor = (latency + 1) ·
// connInterval. The model takes the central's packet to start uniformly
// within ±(w + WindowJitter) of the expected anchor, so the listen before it
// is uniform on [0, 2(w + WindowJitter)]: a stated model, pessimistic when
// the clocks are better than their stated accuracy. Packets that carry no
// data are empty PDUs (header only); encrypted packets with data carry a
// 4-octet MIC. The number of exchanges per event is the law Exchanges.
// The central's side and the loss of packets are not modelled.
type Connection struct {
	PHY PHY // the connection's PHY, both directions
	// Interval is connInterval, s: 7.5 ms … 4 s in steps of 1.25 ms.
	Interval float64
	// PeripheralLatency is connPeripheralLatency: 0 … 499, and
	// (1 + latency)·Interval·2 < SupervisionTimeout.
	PeripheralLatency int
	// SupervisionTimeout is connSupervisionTimeout, s: 100 ms … 32 s in
	// steps of 10 ms.
	SupervisionTimeout float64
	// CentralSCA and PeripheralSCA are the sleep clock accuracies, ppm,
	// 0 … 500.
	CentralSCA, PeripheralSCA float64
	// Exchanges is the law of the number of packet exchanges (central
	// packet, peripheral packet) per event: integer values 1 …
	// MaxExchanges; a zero Discrete means one exchange.
	Exchanges dist.Discrete
	// CentralPayload and PeripheralPayload are each packet's data payload,
	// octets, 0 … 251; 0 sends empty PDUs.
	CentralPayload, PeripheralPayload int
	Encrypted                         bool // packets with data carry a MIC
	// Startup is the radio's start-up before the window opens, at Idle
	// current, s, >= 0.
	Startup  float64
	Currents Currents // supply currents
	// Before and After are the node's own stages per wake-up; nil means
	// nothing.
	Before, After energy.Stage
}

// ConnTimeline is the plain-data timeline of one connection event, s.
type ConnTimeline struct {
	Central    float64 // airtime of the central's packet
	Peripheral float64 // airtime of the peripheral's packet
	// Widening is the window widening w; the listen before the central's
	// packet is uniform on [0, 2(w + WindowJitter)].
	Widening float64
	Period   float64 // time between wake-ups: (latency + 1) · connInterval
	// Longest is the longest event: Startup + 2(w + WindowJitter) + n·(
	// Central + Peripheral + 2·T_IFS) − T_IFS for the largest n.
	Longest float64
}

func (c Connection) exchanges() dist.Discrete {
	if c.Exchanges.Len() == 0 {
		return dist.MustPointMass(1)
	}
	return c.Exchanges
}

func (c Connection) payloadBytes(data int) int {
	if data > 0 && c.Encrypted {
		return data + MICOctets
	}
	return data
}

// Timeline validates the connection and returns its event's timeline. It
// fails, wrapping ErrParam, on any field out of range or any broken
// constraint between connInterval, connPeripheralLatency and
// connSupervisionTimeout, naming the field and the rule.
func (c Connection) Timeline() (ConnTimeline, error) {
	const fn = "Connection.Timeline"
	if err := c.PHY.Validate(); err != nil {
		return ConnTimeline{}, causeErr(fn, "PHY", int(c.PHY), "unknown PHY", err)
	}
	if err := checkConnParams(fn, c.Interval, c.PeripheralLatency, c.SupervisionTimeout); err != nil {
		return ConnTimeline{}, err
	}
	for _, s := range []struct {
		name string
		v    float64
	}{{"CentralSCA", c.CentralSCA}, {"PeripheralSCA", c.PeripheralSCA}} {
		if !(s.v >= 0 && s.v <= MaxSCA) {
			return ConnTimeline{}, paramErr(fn, s.name, s.v, "sleep clock accuracy must be 0 … 500 ppm (v5.3 Vol 6 Part B §4.2.2)")
		}
	}
	for _, p := range []struct {
		name string
		v    int
	}{{"CentralPayload", c.CentralPayload}, {"PeripheralPayload", c.PeripheralPayload}} {
		if p.v < 0 || p.v > MaxDataPayload {
			return ConnTimeline{}, paramErr(fn, p.name, p.v, fmt.Sprintf("must be 0 … %d octets", MaxDataPayload))
		}
	}
	if !finite(c.Startup) || c.Startup < 0 {
		return ConnTimeline{}, paramErr(fn, "Startup", c.Startup, "must be finite and >= 0 s")
	}
	if err := c.Currents.validate(fn); err != nil {
		return ConnTimeline{}, err
	}
	ex := c.exchanges()
	for _, a := range ex.Atoms() {
		if a.Value < 1 || a.Value > MaxExchanges || a.Value != math.Trunc(a.Value) {
			return ConnTimeline{}, paramErr(fn, "Exchanges", ex, fmt.Sprintf("values must be whole numbers 1 … %d", MaxExchanges))
		}
	}
	tl := ConnTimeline{
		Central:    c.PHY.airtime(c.payloadBytes(c.CentralPayload)),
		Peripheral: c.PHY.airtime(c.payloadBytes(c.PeripheralPayload)),
		Period:     float64(c.PeripheralLatency+1) * c.Interval,
	}
	tl.Widening = (c.CentralSCA + c.PeripheralSCA) * 1e-6 * tl.Period
	if tl.Widening >= c.Interval/2-TIFS {
		return ConnTimeline{}, paramErr(fn, "PeripheralLatency", c.PeripheralLatency,
			fmt.Sprintf("window widening %.4g ms must be less than connInterval/2 − T_IFS = %.4g ms (v5.3 Vol 6 Part B §4.5.7, from memory)", tl.Widening*1e3, (c.Interval/2-TIFS)*1e3))
	}
	_, nMax := ex.Support()
	tl.Longest = c.Startup + 2*(tl.Widening+WindowJitter) + nMax*(tl.Central+tl.Peripheral+2*TIFS) - TIFS
	if tl.Longest > c.Interval-TIFS {
		return ConnTimeline{}, paramErr(fn, "Exchanges", ex,
			fmt.Sprintf("%g exchanges take %.4g ms: the event must end T_IFS before the next (connInterval %.4g ms)", nMax, tl.Longest*1e3, c.Interval*1e3))
	}
	return tl, nil
}

// checkConnParams checks connInterval, connPeripheralLatency and
// connSupervisionTimeout and the constraints between them (v5.3 Vol 6 Part
// B §4.5.1, §4.5.2).
func checkConnParams(fn string, interval float64, latency int, timeout float64) error {
	if _, ok := onGrid(interval, ConnIntervalStep); !finite(interval) || !ok ||
		interval < MinConnInterval*(1-1e-12) || interval > MaxConnInterval*(1+1e-12) {
		return paramErr(fn, "Interval", interval, "connInterval must be 7.5 ms … 4 s in steps of 1.25 ms (v5.3 Vol 6 Part B §4.5.1)")
	}
	if _, ok := onGrid(timeout, SupervisionTimeoutStep); !finite(timeout) || !ok ||
		timeout < MinSupervisionTimeout*(1-1e-12) || timeout > MaxSupervisionTimeout*(1+1e-12) {
		return paramErr(fn, "SupervisionTimeout", timeout, "connSupervisionTimeout must be 100 ms … 32 s in steps of 10 ms (v5.3 Vol 6 Part B §4.5.2)")
	}
	if latency < 0 || latency > MaxPeripheralLatency {
		return paramErr(fn, "PeripheralLatency", latency, "connPeripheralLatency must be 0 … 499 (v5.3 Vol 6 Part B §4.5.1)")
	}
	if need := 2 * float64(1+latency) * interval; !(timeout > need*(1+1e-12)) {
		return paramErr(fn, "SupervisionTimeout", timeout,
			fmt.Sprintf("must exceed (1 + connPeripheralLatency)·connInterval·2 = %.6g s (v5.3 Vol 6 Part B §4.5.2)", need))
	}
	return nil
}

// Stage returns one connection event of the peripheral as an energy stage
// (see Connection).
func (c Connection) Stage() (energy.Stage, error) {
	tl, err := c.Timeline()
	if err != nil {
		return nil, err
	}
	cur := c.Currents
	b := &stager{cur: cur, fn: "Connection.Stage"}
	var listen energy.Stage
	if cur.RX > cur.Floor {
		rx, err := dist.NewPointMass(cur.RX)
		if err != nil {
			return nil, err
		}
		span, err := dist.NewUniform(0, 2*(tl.Widening+WindowJitter))
		if err != nil {
			return nil, err
		}
		listen = b.keep(energy.NewState("window listen", rx, cur.Voltage, span))
	}
	first := b.seq(b.state("central packet", cur.RX, tl.Central), b.state("turnaround", cur.Idle, TIFS),
		b.state("peripheral packet", cur.TX, tl.Peripheral))
	more := b.seq(b.state("turnaround", cur.Idle, TIFS), first)
	ex := c.exchanges()
	var rest energy.Stage
	if _, hi := ex.Support(); hi > 1 && more != nil {
		extra, err := dist.Affine(ex, 1, -1)
		if err != nil {
			return nil, err
		}
		rest = b.keep(energy.Repeat(extra, more))
	}
	st := b.orNothing(b.seq(c.Before, b.state("start-up", cur.Idle, c.Startup), listen, first, rest, c.After))
	return st, b.err
}

// Cycle returns the energy cycle of one connection event every
// (connPeripheralLatency + 1) connection intervals, with the floor current
// between events. Its energy law is exact: a finite discrete law (the
// exchanges) plus a uniform (the listen within the widened window).
func (c Connection) Cycle() (energy.Cycle, error) {
	st, err := c.Stage()
	if err != nil {
		return energy.Cycle{}, err
	}
	tl, _ := c.Timeline()
	cy, err := energy.NewCycle(st, dist.MustPointMass(tl.Period), c.Currents.Floor*c.Currents.Voltage)
	if err != nil {
		return energy.Cycle{}, causeErr("Connection.Cycle", "cycle", "", "energy cycle", err)
	}
	return cy, nil
}
