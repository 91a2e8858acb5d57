package lora

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// MaxFCntGap is the largest forward jump of a device's frame counter read
// as frames sent but not received (LoRaWAN 1.0.x's MAX_FCNT_GAP, 16384,
// from memory); a larger jump, or a counter that goes back, starts a new
// session (see Observer.Uplink).
const MaxFCntGap = 16384

// LevelScale says how a device maps its cell's voltage to the battery
// level of its device-status answer. LoRaWAN fixes only the ends of the
// scale (DevStatusAns: 1 is the minimum, 254 the maximum, 0 means external
// power and 255 that the device could not measure; LoRaWAN L2 1.0.4
// specification, end-device status, from memory); the mapping between is
// the device maker's. This type reads it as linear in voltage: level L
// stands for the voltages in
//
//	[Empty + (L − 1.5)·q, Empty + (L − 0.5)·q),  q = (Full − Empty)/253,
//
// open below for level 1 and above for level 254. Give the device's own
// mapping where it differs (a level computed from the node's own charge
// count tells about the charge drawn, not the voltage: do not read it with
// a LevelScale).
type LevelScale struct {
	Empty float64 // V reported as level 1, > 0
	Full  float64 // V reported as level 254, > Empty, <= 100
	// Noise is the standard deviation (V) of the device's voltage
	// measurement (converter error, temperature, load at the moment), > 0.
	Noise float64
}

// Bin returns the voltage interval [lo, hi) that level stands for (1 …
// 254).
func (s LevelScale) Bin(level int) (lo, hi float64, err error) {
	if !(s.Empty > 0 && s.Full > s.Empty && s.Full <= 100) || !(s.Noise > 0) {
		return 0, 0, paramErr("LevelScale.Bin", "scale", s, "needs 0 < Empty < Full <= 100 V and Noise > 0 V")
	}
	if level < 1 || level > 254 {
		return 0, 0, paramErr("LevelScale.Bin", "level", level, "must be 1 … 254 (0 is external power, 255 not measured)")
	}
	q := (s.Full - s.Empty) / 253
	lo, hi = s.Empty+(float64(level)-1.5)*q, s.Empty+(float64(level)-0.5)*q
	if level == 1 {
		lo = math.Inf(-1)
	}
	if level == 254 {
		hi = math.Inf(1)
	}
	return lo, hi, nil
}

// ObserverOptions tune an Observer.
type ObserverOptions struct {
	Device energy.DeviceOptions // the posterior's options
	// Level maps DevStatusAns battery levels to voltages; the zero value
	// means the device's levels are not read (Observer.Status then only
	// notes external power and unmeasured answers).
	Level LevelScale
	// VoltageNoise is the standard deviation (V) of a supply voltage
	// reported in mV; 0 means 0.02 V.
	VoltageNoise float64
}

// Observer reads what a LoRaWAN network server sees of its class A
// devices into energy.DeviceModel tallies: uplinks by (data rate,
// TXPower), frame-counter gaps, repeats and retries, downlinks by window,
// joins, battery levels and supply voltages. One Observer serves a group
// of devices built alike (one ClassA, one NodeSpec); each device's state
// is a Device value.
//
// # What each record costs the node
//
// The energies are the class A model's (ClassA), above the floor, at the
// rail: a transmission at (DR, TXPower) costs the uplink and both receive
// windows left empty; a downlink in RX1 adds the receive over the empty
// listen and takes away the wait and RX2; a downlink in RX2 adds the
// receive over the empty RX2 listen; each new frame counter (a report)
// costs the node's own Before and After stages; a join costs a
// Join-request at TXPower 0 with its two windows empty (the accept, when
// there is one, is counted as a downlink). The wait between a frame's
// attempts (a confirmed frame's retries, an unconfirmed one's
// repetitions; RetryGap, by default ACK_TIMEOUT for confirmed frames and
// at least the sub-band's off-time, as ClassA describes) is charged in
// the radio's wait state: each attempt after a frame's first costs that
// wait at Currents.Wait above the floor (nothing when Wait equals Floor),
// as ClassA's own cycle charges it.
//
// # Frames the gateways missed
//
// Frame counters count what the node sent: a forward jump of g + 1 means
// g reports unheard, each charged NbTrans transmissions at the newest
// heard setting (an unheard frame got no downlink, so the node sent all
// its repetitions or retries); a heard frame that got no downlink and was
// seen fewer than NbTrans times is charged the missing repetitions when
// the next frame arrives. What the stream cannot show is not charged: the
// unheard attempts of a confirmed frame before the one that was
// acknowledged (the same counter, and nothing received). In the
// end-to-end check (TestObserverCalibrationConfirmed: attempts heard with
// probability 0.9, about 0.1 of a transmission per frame unseen) the
// remaining-life intervals still held their coverage.
//
// An Observer is an immutable value, safe for concurrent use.
type Observer struct{ o *observer }

type observer struct {
	model     energy.DeviceModel
	tx        map[[2]int]int // (DR, TXPower) → kind
	dl        map[[2]int]int // (DR, window) → kind
	join      map[int]int    // DR → kind
	retry     map[int]int    // DR → kind of the wait before a further attempt; absent when free
	report    int            // kind, −1 for none
	nbTrans   int
	costs     []energy.EventCost // the model's event kinds, in order
	opt       energy.DeviceOptions
	level     LevelScale
	readLevel bool
	vNoise    float64
}

// Uplink is one received uplink frame (the network server's
// deduplicated view: one record per frame copy it got).
type Uplink struct {
	Time    float64 // s on the back-end's clock
	FCnt    uint32  // the frame counter (32 bits, as the network server reconstructs it)
	DR      int     // data rate
	TXPower int     // TXPower index the device used (from ADR, as the server set it)
}

// Device is one device as an Observer reads it: its energy.Tally and the
// state of its frame counter. A value: each Observer method returns an
// updated copy.
type Device struct {
	Tally energy.Tally

	fcnt        uint32
	heard       bool // an uplink in this session
	joined      bool // a join since the newest uplink
	kind        int  // kind of the newest uplink's setting
	dr          int
	copies      int
	answered    bool
	lastHigh    float64 // upper end of the newest reading's bin, V
	resetHigh   float64 // the same for the newest reading before the last restart
	watch       bool    // the first reading after a reset is pending
	Frames      int64   // frames heard
	Unheard     int64   // frames inferred from counter gaps
	Rejoins     int     // sessions begun by a join
	Resets      int     // frame counters that restarted without a join (a restart of the device)
	NotMeasured int     // status answers with battery 255
	// SuspectSwap is set when the first battery reading of a new session
	// (after a rejoin or a restart) lies clearly above the newest one before it (its bin's lower
	// end above the earlier bin's upper end by more than three Noise): the
	// mark of a fresh cell. The Observer never restarts a Tally by itself;
	// confirm the swap from the maintenance record and call Observer.Swap.
	SuspectSwap bool
}

// NewObserver builds the observer of devices that run c, described by
// spec in env (spec's cell, supply, thermal response, voltage curve and
// spreads; its first setting's cycle gives the floor and the planned
// power, for example c.Cycle(period)). Every (data rate, TXPower) the
// region's ADR uses, whose payload fits and whose EIRP has a current in
// c.Currents, gets an event kind. Errors wrap ErrParam (and
// energy.ErrParam from the model).
func NewObserver(c ClassA, spec energy.NodeSpec, env energy.Environment, opt ObserverOptions) (Observer, error) {
	const fn = "NewObserver"
	if c.Region.t == nil {
		return Observer{}, errZeroRegion()
	}
	if opt.Level != (LevelScale{}) {
		if _, _, err := opt.Level.Bin(1); err != nil {
			return Observer{}, err
		}
	}
	o := &observer{tx: map[[2]int]int{}, dl: map[[2]int]int{}, join: map[int]int{}, retry: map[int]int{}, report: -1,
		nbTrans: c.nbTrans(), level: opt.Level, readLevel: opt.Level != (LevelScale{}), vNoise: opt.VoltageNoise}
	if o.vNoise == 0 {
		o.vNoise = 0.02
	}
	if !(o.vNoise >= 1e-4 && o.vNoise <= 10) {
		return Observer{}, paramErr(fn, "opt.VoltageNoise", opt.VoltageNoise, "must be in [1e-4, 10] V (0 for 0.02)")
	}
	floorP := c.Currents.Floor * c.Currents.Voltage
	// meanOf returns the energy above the floor of one run of st.
	meanOf := func(st energy.Stage) (dist.Law, error) {
		cyc, err := energy.NewCycle(st, dist.MustPointMass(energy.Hour), floorP)
		if err != nil {
			return nil, err
		}
		return dist.Affine(cyc.Energy(), 1, -floorP*energy.Hour)
	}
	var costs []energy.EventCost
	add := func(name string, l dist.Law) int {
		costs = append(costs, energy.EventCost{Name: name, Energy: l})
		return len(costs) - 1
	}
	one := c
	one.Before, one.After, one.NbTrans, one.JoinEvery, one.DownlinkByDR, one.RetryGap = nil, nil, 1, 0, nil, nil
	reg := c.Region
	seenDR := map[int]bool{}
	for _, dr := range reg.ADRDataRates() {
		if reg.CheckPayload(dr, c.App, c.FOpts) != nil {
			continue
		}
		for p := 0; p < reg.TXPowerSteps(); p++ {
			eirp, err := reg.TXPower(p)
			if err != nil {
				continue
			}
			if _, err := c.Currents.txCurrent(eirp); err != nil {
				continue
			}
			s := one
			s.Settings = []Setting{{DR: dr, TXPower: p, Prob: 1}}
			var e [3]float64
			var laws [3]dist.Law
			for i, w := range []Windows{{}, {RX1: 1}, {RX2: 1}} {
				s.Downlink = w
				st, err := s.Stage()
				if err != nil {
					return Observer{}, fmt.Errorf("lora.NewObserver: DR%d, TXPower %d: %w", dr, p, err)
				}
				l, err := meanOf(st)
				if err != nil {
					return Observer{}, fmt.Errorf("lora.NewObserver: DR%d, TXPower %d: %w", dr, p, err)
				}
				laws[i], e[i] = l, l.Mean()
			}
			o.tx[[2]int{dr, p}] = add(fmt.Sprintf("uplink DR%d TXPower %d", dr, p), laws[0])
			if !seenDR[dr] {
				seenDR[dr] = true
				for i, name := range []string{"RX1", "RX2"} {
					pm, err := dist.NewPointMass(e[i+1] - e[0])
					if err != nil {
						return Observer{}, err
					}
					o.dl[[2]int{dr, i + 1}] = add(fmt.Sprintf("downlink %s after DR%d", name, dr), pm)
				}
				j := c
				j.JoinEvery = 1
				tl, err := j.timeline(Setting{DR: dr, TXPower: 0, Prob: 1})
				if err != nil {
					return Observer{}, fmt.Errorf("lora.NewObserver: join at DR%d: %w", dr, err)
				}
				js, err := j.joinStage(tl)
				if err != nil {
					return Observer{}, fmt.Errorf("lora.NewObserver: join at DR%d: %w", dr, err)
				}
				l, err := meanOf(js)
				if err != nil {
					return Observer{}, err
				}
				o.join[dr] = add(fmt.Sprintf("join DR%d", dr), l)
				// The wait between attempts (RetryGap, or ACK_TIMEOUT and
				// the off-time), in the radio's wait state: above the
				// floor by (Wait − Floor)·Voltage per second.
				if extra := (c.Currents.Wait - c.Currents.Floor) * c.Currents.Voltage; extra > 0 && o.nbTrans > 1 {
					tl, err := c.timeline(Setting{DR: dr, TXPower: p, Prob: 1})
					if err != nil {
						return Observer{}, fmt.Errorf("lora.NewObserver: retry wait at DR%d: %w", dr, err)
					}
					gap, err := c.retryGap(tl)
					if err != nil {
						return Observer{}, fmt.Errorf("lora.NewObserver: retry wait at DR%d: %w", dr, err)
					}
					wl, err := dist.Affine(gap, extra, 0)
					if err != nil {
						return Observer{}, err
					}
					o.retry[dr] = add(fmt.Sprintf("retry wait after DR%d", dr), wl)
				}
			}
		}
	}
	if len(o.tx) == 0 {
		return Observer{}, paramErr(fn, "c", c.Region.Name(), "no (data rate, TXPower) of the region fits the payload and has a current")
	}
	if c.Before != nil || c.After != nil {
		b := &builder{}
		st := b.seq(c.Before, c.After)
		if b.err != nil {
			return Observer{}, b.err
		}
		l, err := meanOf(st)
		if err != nil {
			return Observer{}, err
		}
		o.report = add("report (Before, After)", l)
	}
	m, err := energy.NewDeviceModel(spec, env, costs, opt.Device)
	if err != nil {
		return Observer{}, fmt.Errorf("lora.NewObserver: %w", err)
	}
	o.model, o.costs, o.opt = m, costs, opt.Device
	return Observer{o: o}, nil
}

// UplinkKind returns the event kind of an uplink transmission at (dr,
// txPower) in the Model's costs, and whether there is one.
func (o Observer) UplinkKind(dr, txPower int) (int, bool) {
	if o.o == nil {
		return 0, false
	}
	k, ok := o.o.tx[[2]int{dr, txPower}]
	return k, ok
}

// Costs returns the event kinds the observer charges (a copy, in the
// order of the Model's costs): with Options, what energy.EstimateSpread
// and energy.PlanSharedService need to rebuild the model with other
// spreads or shared factors.
func (o Observer) Costs() []energy.EventCost {
	if o.o == nil {
		return nil
	}
	return append([]energy.EventCost(nil), o.o.costs...)
}

// Options returns the posterior's options the observer was built with.
func (o Observer) Options() energy.DeviceOptions {
	if o.o == nil {
		return energy.DeviceOptions{}
	}
	return o.o.opt
}

// Model returns the energy.DeviceModel the observer feeds (for
// Posterior).
func (o Observer) Model() energy.DeviceModel {
	if o.o == nil {
		return energy.DeviceModel{}
	}
	return o.o.model
}

// NewDevice starts a device whose cell was installed at install (s on the
// back-end's clock).
func (o Observer) NewDevice(install float64) (Device, error) {
	if o.o == nil {
		return Device{}, paramErr("Observer.NewDevice", "observer", "zero Observer", "must be built by NewObserver")
	}
	t, err := o.o.model.NewTally(install)
	if err != nil {
		return Device{}, err
	}
	return Device{Tally: t, lastHigh: math.NaN(), resetHigh: math.NaN()}, nil
}

// Swap returns the device with a fresh cell installed at time: a new
// Tally, the frame-counter state kept.
func (o Observer) Swap(d Device, time float64) (Device, error) {
	nd, err := o.NewDevice(time)
	if err != nil {
		return d, err
	}
	if time < d.Tally.Newest() {
		return d, paramErr("Observer.Swap", "time", time, fmt.Sprintf("is before the device's newest record at %.17g s", d.Tally.Newest()))
	}
	d.Tally = nd.Tally
	d.SuspectSwap, d.watch = false, false
	d.lastHigh, d.resetHigh = math.NaN(), math.NaN()
	return d, nil
}

func (o *observer) count(d *Device, time float64, kind int, n int64) error {
	if n <= 0 || kind < 0 {
		return nil
	}
	t, err := o.model.Observe(d.Tally, energy.Event{Time: time, Kind: kind, Count: n})
	if err != nil {
		return err
	}
	d.Tally = t
	return nil
}

// Uplink returns d with the uplink u counted. The frame counter decides
// what it is:
//
//   - the first uplink of a session (after NewDevice, a join or a
//     restart): a report and one transmission;
//   - the same counter as the newest frame: a repetition (unconfirmed,
//     NbTrans > 1) or a retry (confirmed), one more transmission;
//   - a counter ahead by 1 … MaxFCntGap: the missing repetitions of the
//     newest frame (see Observer), the unheard frames between, and the new
//     frame;
//   - a counter that goes back, or jumps further: a new session. After a
//     join it is a rejoin (Rejoins); without one, a restart of the device
//     (Resets). Either may follow a cell swap (a device that loses its
//     session on power-down rejoins): the stream alone cannot tell, so the
//     first battery reading of the new session is compared with the newest
//     before it (SuspectSwap), and the Tally goes on until Swap is called.
//
// A (DR, TXPower) without an event kind, and every time error of
// energy.DeviceModel.Observe, are errors (wrapping ErrParam or
// energy.ErrParam); d is then returned unchanged.
func (o Observer) Uplink(d Device, u Uplink) (Device, error) {
	if o.o == nil {
		return d, paramErr("Observer.Uplink", "observer", "zero Observer", "must be built by NewObserver")
	}
	ob := o.o
	kind, ok := ob.tx[[2]int{u.DR, u.TXPower}]
	if !ok {
		return d, paramErr("Observer.Uplink", "DR, TXPower", fmt.Sprintf("DR%d, TXPower %d", u.DR, u.TXPower), "is not a setting of the observer's region with a current and room for the payload")
	}
	nd := d
	var err error
	switch {
	case !d.heard:
		if d.joined && d.Frames > 0 { // a session after an earlier one
			nd.Rejoins++
			nd.watch = true
			nd.resetHigh = d.lastHigh
		}
		err = ob.newFrame(&nd, u.Time, kind)
	case u.FCnt == d.fcnt:
		nd.copies++
		if err = ob.count(&nd, u.Time, ob.retryKind(d.dr), 1); err == nil {
			err = ob.count(&nd, u.Time, kind, 1)
		}
	case u.FCnt > d.fcnt && u.FCnt-d.fcnt <= MaxFCntGap:
		gap := int64(u.FCnt - d.fcnt - 1)
		if err = ob.closeFrame(&nd, u.Time); err == nil && gap > 0 {
			nd.Unheard += gap
			if err = ob.count(&nd, u.Time, ob.report, gap); err == nil {
				err = ob.count(&nd, u.Time, d.kind, gap*int64(ob.nbTrans))
			}
			if err == nil {
				err = ob.count(&nd, u.Time, ob.retryKind(d.dr), gap*int64(ob.nbTrans-1))
			}
		}
		if err == nil {
			err = ob.newFrame(&nd, u.Time, kind)
		}
	default:
		if err = ob.closeFrame(&nd, u.Time); err == nil {
			if d.joined {
				nd.Rejoins++
			} else {
				nd.Resets++
			}
			nd.watch = true
			nd.resetHigh = d.lastHigh
			err = ob.newFrame(&nd, u.Time, kind)
		}
	}
	if err != nil {
		return d, err
	}
	nd.fcnt, nd.heard, nd.joined, nd.kind, nd.dr = u.FCnt, true, false, kind, u.DR
	return nd, nil
}

// newFrame counts a new frame's report and first transmission.
func (o *observer) newFrame(d *Device, time float64, kind int) error {
	if err := o.count(d, time, o.report, 1); err != nil {
		return err
	}
	if err := o.count(d, time, kind, 1); err != nil {
		return err
	}
	d.copies, d.answered = 1, false
	d.Frames++
	return nil
}

// closeFrame charges the newest frame's repetitions that were sent but
// not heard: NbTrans in all unless a downlink stopped them.
func (o *observer) closeFrame(d *Device, time float64) error {
	if !d.heard || d.answered || d.copies >= o.nbTrans {
		return nil
	}
	n := int64(o.nbTrans - d.copies)
	if err := o.count(d, time, o.retryKind(d.dr), n); err != nil {
		return err
	}
	return o.count(d, time, d.kind, n)
}

// retryKind returns the event kind of the wait before a further attempt
// at data rate dr, −1 when it costs nothing above the floor.
func (o *observer) retryKind(dr int) int {
	if k, ok := o.retry[dr]; ok {
		return k
	}
	return -1
}

// Downlink returns d with a downlink sent in window (1 for RX1, 2 for
// RX2) after its newest uplink counted; it also marks that frame as
// answered (no further repetitions). A downlink before any uplink of the
// session, or a window other than 1 or 2, is an error.
func (o Observer) Downlink(d Device, time float64, window int) (Device, error) {
	if o.o == nil {
		return d, paramErr("Observer.Downlink", "observer", "zero Observer", "must be built by NewObserver")
	}
	if window != 1 && window != 2 {
		return d, paramErr("Observer.Downlink", "window", window, "must be 1 (RX1) or 2 (RX2)")
	}
	if !d.heard {
		return d, paramErr("Observer.Downlink", "device", "no uplink in this session", "a class A downlink answers an uplink")
	}
	nd := d
	if err := o.o.count(&nd, time, o.o.dl[[2]int{d.dr, window}], 1); err != nil {
		return d, err
	}
	nd.answered = true
	return nd, nil
}

// Join returns d with a Join-request at data rate dr counted; the next
// uplink begins a new session (a rejoin).
func (o Observer) Join(d Device, time float64, dr int) (Device, error) {
	if o.o == nil {
		return d, paramErr("Observer.Join", "observer", "zero Observer", "must be built by NewObserver")
	}
	k, ok := o.o.join[dr]
	if !ok {
		return d, paramErr("Observer.Join", "dr", dr, "is not a data rate of the observer's region")
	}
	nd := d
	if err := o.o.closeFrame(&nd, time); err != nil {
		return d, err
	}
	if err := o.o.count(&nd, time, k, 1); err != nil {
		return d, err
	}
	nd.joined, nd.heard = true, false
	return nd, nil
}

// Status returns d with a device-status answer's battery field read: 0
// marks the device as on external power (its Posterior is refused until a
// reading or a later status clears it); 255 (not measured) is counted in
// NotMeasured and otherwise ignored; 1 … 254 is a reading through the
// observer's LevelScale (ignored, but for clearing external power, when
// the observer has none). Any other value is an error.
func (o Observer) Status(d Device, time float64, battery int) (Device, error) {
	if o.o == nil {
		return d, paramErr("Observer.Status", "observer", "zero Observer", "must be built by NewObserver")
	}
	nd := d
	var err error
	switch {
	case battery < 0 || battery > 255:
		return d, paramErr("Observer.Status", "battery", battery, "must be 0 … 255 (DevStatusAns)")
	case battery == 0:
		nd.Tally, err = o.o.model.SetExternal(d.Tally, time, true)
	case battery == 255:
		nd.Tally, err = o.o.model.SetExternal(d.Tally, time, false)
		nd.NotMeasured++
	case !o.o.readLevel:
		nd.Tally, err = o.o.model.SetExternal(d.Tally, time, false)
	default:
		lo, hi, e := o.o.level.Bin(battery)
		if e != nil {
			return d, e
		}
		return o.o.read(d, energy.Reading{Time: time, Low: lo, High: hi, Noise: o.o.level.Noise})
	}
	if err != nil {
		return d, err
	}
	return nd, nil
}

// Voltage returns d with a supply voltage reported in mV (1 … 100000)
// read as the bin [mV − 0.5, mV + 0.5) with the observer's VoltageNoise.
func (o Observer) Voltage(d Device, time float64, mV int) (Device, error) {
	if o.o == nil {
		return d, paramErr("Observer.Voltage", "observer", "zero Observer", "must be built by NewObserver")
	}
	if mV < 1 || mV > 100000 {
		return d, paramErr("Observer.Voltage", "mV", mV, "must be 1 … 100000 mV")
	}
	v := float64(mV) / 1000
	return o.o.read(d, energy.Reading{Time: time, Low: v - 0.0005, High: v + 0.0005, Noise: o.o.vNoise})
}

func (o *observer) read(d Device, r energy.Reading) (Device, error) {
	t, err := o.model.Read(d.Tally, r)
	if err != nil {
		return d, err
	}
	nd := d
	nd.Tally = t
	if d.watch {
		nd.watch = false
		// A fresh cell: the new bin lies above the old one by more than
		// three noise standard deviations.
		if !math.IsNaN(d.resetHigh) && !math.IsInf(d.resetHigh, 1) && r.Low > d.resetHigh+3*r.Noise {
			nd.SuspectSwap = true
		}
	}
	nd.lastHigh = r.High
	return nd, nil
}
