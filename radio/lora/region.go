package lora

import (
	"fmt"
	"math"
)

// DataRate is one LoRa data rate of a region's table.
type DataRate struct {
	Index         int     // the DR number of the region's table
	SF            int     // spreading factor, 7 … 12
	Bandwidth     float64 // Hz
	Uplink        bool    // usable by end devices for uplinks
	Downlink      bool    // usable by the network for downlinks
	MaxMACPayload int     // M: largest MACPayload (FHDR + FPort + FRMPayload), bytes
	MaxAppPayload int     // N: largest FRMPayload without FOpts, bytes (= M − 8)
}

// UplinkPHY returns the uplink frame settings at this data rate (see the
// function UplinkPHY).
func (d DataRate) UplinkPHY() PHY { return UplinkPHY(d.SF, d.Bandwidth) }

// DownlinkPHY returns the downlink frame settings at this data rate (see
// the function DownlinkPHY).
func (d DataRate) DownlinkPHY() PHY { return DownlinkPHY(d.SF, d.Bandwidth) }

// String prints "DR3 (SF9/125 kHz)".
func (d DataRate) String() string {
	return fmt.Sprintf("DR%d (SF%d/%g kHz)", d.Index, d.SF, d.Bandwidth/1e3)
}

// Timing holds a region's class A timing constants and ADR counters.
type Timing struct {
	ReceiveDelay1    float64 // RECEIVE_DELAY1: end of uplink to opening of RX1, s
	ReceiveDelay2    float64 // RECEIVE_DELAY2: end of uplink to opening of RX2, s
	JoinAcceptDelay1 float64 // JOIN_ACCEPT_DELAY1, s
	JoinAcceptDelay2 float64 // JOIN_ACCEPT_DELAY2, s
	AckTimeoutMin    float64 // lower end of ACK_TIMEOUT (2 ± 1 s), s
	AckTimeoutMax    float64 // upper end of ACK_TIMEOUT, s
	ADRAckLimit      int     // ADR_ACK_LIMIT, uplinks
	ADRAckDelay      int     // ADR_ACK_DELAY, uplinks
}

// Channel is one channel of a region's channel plan.
type Channel struct {
	Frequency float64 // centre frequency, Hz
	Bandwidth float64 // Hz
	MinDR     int     // lowest data rate allowed on the channel
	MaxDR     int     // highest data rate allowed on the channel
}

// SubBand is a frequency band with a transmitter duty-cycle limit (European
// short-range-device rules).
type SubBand struct {
	Low       float64 // lower edge, Hz
	High      float64 // upper edge, Hz
	DutyCycle float64 // largest share of any hour spent transmitting, in (0, 1]
	MaxERP    float64 // largest radiated power, dBm e.r.p.
}

// String prints "868.0–868.6 MHz (1 %)".
func (s SubBand) String() string {
	return fmt.Sprintf("%.1f–%.2f MHz (%g %%)", s.Low/1e6, s.High/1e6, 100*s.DutyCycle)
}

// Contains reports whether freq (Hz) lies in [Low, High].
func (s SubBand) Contains(freq float64) bool { return freq >= s.Low && freq <= s.High }

// OffTime returns the shortest silence after a transmission of the given
// duration (s) that keeps the sub-band's duty cycle d, in seconds:
// airtime·(1/d − 1) (common practice for an even share of each hour). The
// airtime must be finite and ≥ 0.
func (s SubBand) OffTime(airtime float64) (float64, error) {
	if !finite(airtime) || airtime < 0 {
		return 0, paramErr("SubBand.OffTime", "airtime", airtime, "must be finite and >= 0 s")
	}
	return airtime * (1/s.DutyCycle - 1), nil
}

// drEntry is one row of a region's data-rate table.
type drEntry struct {
	kind     string // "" for LoRa; otherwise why it is not modelled ("FSK", "LR-FHSS", "RFU")
	sf       int
	bw       float64
	up, down bool
	maxMAC   int
}

// regionTable is the immutable content of a Region. It is built afresh by
// each constructor and never modified afterwards.
type regionTable struct {
	name, version string
	drs           []drEntry
	maxEIRP       float64 // dBm
	powerSteps    int     // TXPower indices 0 … powerSteps−1
	powerStep     float64 // dB between indices
	rx1           [][]int // rx1[upDR][offset] = downlink DR, −1 where undefined
	rx2Freq       float64
	rx2DR         int
	timing        Timing
	dwell         float64 // s; 0 = no dwell-time limit
	channels      []Channel
	downlink      []float64 // RX1 channel frequencies, Hz, used as uplink channel mod len; nil: RX1 on the uplink's frequency
	subBands      []SubBand
	adrDRs        []int
}

// Region is a LoRaWAN regional parameter set: data rates, payload limits,
// transmit powers, receive-window settings and timing. Obtain one from
// EU868, US915, AU915, IN865 or Regions; the zero value is not valid and its methods return
// errors or empty results. A Region is immutable and safe for concurrent
// use; every slice it returns is a fresh copy.
//
// The tables are for planning, not certification: local regulations and
// the current LoRaWAN Regional Parameters govern.
type Region struct{ t *regionTable }

// errZeroRegion returns a fresh error for a method called on the zero Region.
func errZeroRegion() error {
	return paramErr("Region", "Region", "zero value", "use EU868(), US915(), AU915(), IN865() or Regions()")
}

// Name returns the region's name, e.g. "EU863-870".
func (r Region) Name() string {
	if r.t == nil {
		return ""
	}
	return r.t.name
}

// Version names the document and version the tables follow, e.g.
// "LoRaWAN Regional Parameters RP002-1.0.3".
func (r Region) Version() string {
	if r.t == nil {
		return ""
	}
	return r.t.version
}

// String returns the name.
func (r Region) String() string { return r.Name() }

// DataRate returns the region's LoRa data rate dr. It fails, wrapping
// ErrParam, when the region has no such data rate or when dr is not a LoRa
// data rate (FSK and LR-FHSS are not modelled).
func (r Region) DataRate(dr int) (DataRate, error) {
	if r.t == nil {
		return DataRate{}, errZeroRegion()
	}
	const fn = "Region.DataRate"
	if dr < 0 || dr >= len(r.t.drs) {
		return DataRate{}, paramErr(fn, "dr", dr, fmt.Sprintf("%s has no data rate %d (DR0 … DR%d)", r.t.name, dr, len(r.t.drs)-1))
	}
	e := r.t.drs[dr]
	switch e.kind {
	case "":
	case "RFU":
		return DataRate{}, paramErr(fn, "dr", dr, fmt.Sprintf("%s DR%d is reserved for future use", r.t.name, dr))
	default:
		return DataRate{}, paramErr(fn, "dr", dr, fmt.Sprintf("%s DR%d is %s, not a LoRa data rate; not modelled", r.t.name, dr, e.kind))
	}
	return DataRate{Index: dr, SF: e.sf, Bandwidth: e.bw, Uplink: e.up, Downlink: e.down,
		MaxMACPayload: e.maxMAC, MaxAppPayload: e.maxMAC - 8}, nil
}

// DataRates returns every LoRa data rate of the region, by increasing index.
func (r Region) DataRates() []DataRate {
	if r.t == nil {
		return nil
	}
	var out []DataRate
	for i := range r.t.drs {
		if d, err := r.DataRate(i); err == nil {
			out = append(out, d)
		}
	}
	return out
}

// UplinkDataRate returns DataRate(dr) and also fails when dr is not allowed
// for uplinks.
func (r Region) UplinkDataRate(dr int) (DataRate, error) {
	return r.directed("Region.UplinkDataRate", dr, false)
}

// DownlinkDataRate returns DataRate(dr) and also fails when dr is not
// allowed for downlinks.
func (r Region) DownlinkDataRate(dr int) (DataRate, error) {
	return r.directed("Region.DownlinkDataRate", dr, true)
}

// directed returns DataRate(dr) if dr is allowed in the given direction.
func (r Region) directed(fn string, dr int, down bool) (DataRate, error) {
	d, err := r.DataRate(dr)
	switch {
	case err != nil:
		return d, err
	case down && !d.Downlink:
		return DataRate{}, paramErr(fn, "dr", dr, fmt.Sprintf("%s DR%d is for uplinks only", r.t.name, dr))
	case !down && !d.Uplink:
		return DataRate{}, paramErr(fn, "dr", dr, fmt.Sprintf("%s DR%d is for downlinks only", r.t.name, dr))
	}
	return d, nil
}

// ADRDataRates returns the uplink data rates among which this package's ADR
// model chooses by default (EU863-870: DR0 … DR5; US902-928: DR0 … DR4).
func (r Region) ADRDataRates() []int {
	if r.t == nil {
		return nil
	}
	return append([]int(nil), r.t.adrDRs...)
}

// MaxAppPayload returns the largest application payload (FRMPayload) at
// data rate dr with fOpts bytes of FOpts (0 … 15), in bytes: N − fOpts.
func (r Region) MaxAppPayload(dr, fOpts int) (int, error) {
	d, err := r.DataRate(dr)
	if err != nil {
		return 0, err
	}
	if fOpts < 0 || fOpts > MaxFOpts {
		return 0, paramErr("Region.MaxAppPayload", "fOpts", fOpts, fmt.Sprintf("must be 0 … %d bytes", MaxFOpts))
	}
	return d.MaxAppPayload - fOpts, nil
}

// CheckPayload returns nil when an application payload of app bytes with
// fOpts bytes of FOpts fits data rate dr, and otherwise an error wrapping
// ErrParam that gives the limit.
func (r Region) CheckPayload(dr, app, fOpts int) error {
	n, err := r.MaxAppPayload(dr, fOpts)
	if err != nil {
		return err
	}
	if app < 0 {
		return paramErr("Region.CheckPayload", "app", app, "must be >= 0 bytes")
	}
	if app > n {
		return paramErr("Region.CheckPayload", "app", app,
			fmt.Sprintf("%s DR%d carries at most %d application bytes with %d bytes of FOpts", r.t.name, dr, n, fOpts))
	}
	return nil
}

// airtime returns the time on air of a data frame at dr, after the payload check.
func (r Region) airtime(fn string, dr, app, fOpts int, down bool) (float64, error) {
	d, err := r.directed(fn, dr, down)
	if err != nil {
		return 0, err
	}
	if err := r.CheckPayload(dr, app, fOpts); err != nil {
		return 0, err
	}
	n, err := PHYPayloadBytes(app, fOpts)
	if err != nil {
		return 0, err
	}
	p := d.UplinkPHY()
	if down {
		p = d.DownlinkPHY()
	}
	return p.Airtime(n)
}

// UplinkAirtime returns the time on air, in seconds, of an uplink data frame
// at data rate dr carrying app application bytes and fOpts bytes of FOpts
// (LoRaWAN framing, payload CRC on). It fails when the region lacks dr,
// when dr is downlink-only or when the payload is too large for dr.
func (r Region) UplinkAirtime(dr, app, fOpts int) (float64, error) {
	return r.airtime("Region.UplinkAirtime", dr, app, fOpts, false)
}

// DownlinkAirtime returns the time on air, in seconds, of a downlink data
// frame at data rate dr (no payload CRC); see UplinkAirtime.
func (r Region) DownlinkAirtime(dr, app, fOpts int) (float64, error) {
	return r.airtime("Region.DownlinkAirtime", dr, app, fOpts, true)
}

// TXPowerSteps returns the number of TXPower indices (0 … n−1).
func (r Region) TXPowerSteps() int {
	if r.t == nil {
		return 0
	}
	return r.t.powerSteps
}

// MaxEIRP returns the default maximum EIRP, in dBm.
func (r Region) MaxEIRP() float64 {
	if r.t == nil {
		return math.NaN()
	}
	return r.t.maxEIRP
}

// TXPower returns the EIRP of TXPower index i, in dBm: MaxEIRP − 2·i dB.
func (r Region) TXPower(i int) (float64, error) {
	if r.t == nil {
		return 0, errZeroRegion()
	}
	if i < 0 || i >= r.t.powerSteps {
		return 0, paramErr("Region.TXPower", "i", i, fmt.Sprintf("%s TXPower index must be 0 … %d", r.t.name, r.t.powerSteps-1))
	}
	return r.t.maxEIRP - r.t.powerStep*float64(i), nil
}

// TXPowers returns the EIRP of every TXPower index, in dBm, by index.
func (r Region) TXPowers() []float64 {
	if r.t == nil {
		return nil
	}
	out := make([]float64, r.t.powerSteps)
	for i := range out {
		out[i], _ = r.TXPower(i)
	}
	return out
}

// RX1DROffsets returns the number of RX1DROffset values (0 … n−1).
func (r Region) RX1DROffsets() int {
	if r.t == nil || len(r.t.rx1) == 0 {
		return 0
	}
	return len(r.t.rx1[0])
}

// RX1DataRate returns the data rate of the RX1 window after an uplink at
// data rate up with the given RX1DROffset.
func (r Region) RX1DataRate(up, offset int) (int, error) {
	if _, err := r.UplinkDataRate(up); err != nil {
		return 0, err
	}
	if up >= len(r.t.rx1) {
		return 0, paramErr("Region.RX1DataRate", "up", up, fmt.Sprintf("%s has no RX1 mapping for DR%d", r.t.name, up))
	}
	row := r.t.rx1[up]
	if offset < 0 || offset >= len(row) || row[offset] < 0 {
		return 0, paramErr("Region.RX1DataRate", "offset", offset, fmt.Sprintf("%s RX1DROffset must be 0 … %d", r.t.name, len(row)-1))
	}
	return row[offset], nil
}

// RX2 returns the default frequency (Hz) and data rate of the RX2 window.
func (r Region) RX2() (frequency float64, dr int) {
	if r.t == nil {
		return math.NaN(), -1
	}
	return r.t.rx2Freq, r.t.rx2DR
}

// Timing returns the region's class A timing constants.
func (r Region) Timing() Timing {
	if r.t == nil {
		return Timing{}
	}
	return r.t.timing
}

// DwellTime returns the longest time on air of one uplink on one channel,
// in seconds, or +Inf when the region sets none.
func (r Region) DwellTime() float64 {
	if r.t == nil || r.t.dwell == 0 {
		return math.Inf(1)
	}
	return r.t.dwell
}

// CheckDwellTime returns nil when an uplink at dr with app application bytes
// and fOpts bytes of FOpts keeps the region's dwell-time limit, an error
// wrapping ErrLimit when it does not, and one wrapping ErrParam for bad
// arguments.
func (r Region) CheckDwellTime(dr, app, fOpts int) error {
	t, err := r.UplinkAirtime(dr, app, fOpts)
	if err != nil {
		return err
	}
	if lim := r.DwellTime(); t > lim {
		return &LimitError{Func: "Region.CheckDwellTime", Limit: r.t.name + " dwell time", Value: t, Bound: lim, Unit: "s"}
	}
	return nil
}

// UplinkChannels returns the channel plan for uplinks (EU863-870: the three
// default channels every device supports; US902-928: all 72 channels).
func (r Region) UplinkChannels() []Channel {
	if r.t == nil {
		return nil
	}
	return append([]Channel(nil), r.t.channels...)
}

// SubBands returns the duty-cycle sub-bands that apply to the region's
// devices, by frequency (EU863-870), or nil where the region imposes none
// (US902-928).
func (r Region) SubBands() []SubBand {
	if r.t == nil {
		return nil
	}
	return append([]SubBand(nil), r.t.subBands...)
}

// SubBandAt returns the duty-cycle sub-band holding frequency freq (Hz). It
// fails, wrapping ErrParam, when freq lies outside every sub-band of the
// region (or the region has none).
func (r Region) SubBandAt(freq float64) (SubBand, error) {
	if r.t == nil {
		return SubBand{}, errZeroRegion()
	}
	for _, s := range r.t.subBands {
		if s.Contains(freq) {
			return s, nil
		}
	}
	if len(r.t.subBands) == 0 {
		return SubBand{}, paramErr("Region.SubBandAt", "freq", freq, r.t.name+" has no duty-cycle sub-bands")
	}
	return SubBand{}, paramErr("Region.SubBandAt", "freq", freq,
		fmt.Sprintf("%.4f MHz lies outside every %s duty-cycle sub-band", freq/1e6, r.t.name))
}
