package lora

import (
	"fmt"
	"math"
)

// LowDataRate selects the low-data-rate optimisation of a LoRa frame (the
// DE term of the airtime formula).
type LowDataRate int

const (
	// LowDataRateAuto turns the optimisation on when the symbol time
	// exceeds LowDataRateSymbolTime (16 ms), as LoRa transceivers require
	// and LoRaWAN regions prescribe (SF11 and SF12 at 125 kHz, SF12 at
	// 250 kHz).
	LowDataRateAuto LowDataRate = iota
	// LowDataRateOn forces the optimisation on.
	LowDataRateOn
	// LowDataRateOff forces the optimisation off.
	LowDataRateOff
)

// LowDataRateSymbolTime is the symbol time above which LowDataRateAuto turns
// the low-data-rate optimisation on, in seconds (16 ms; common practice).
const LowDataRateSymbolTime = 16e-3

// MaxPHYPayload is the largest LoRa PHY payload, in bytes (the 8-bit length
// field of the explicit header).
const MaxPHYPayload = 255

// PHY holds the LoRa modulation and frame settings that fix the time on air.
// The zero value is not valid: use UplinkPHY, DownlinkPHY or fill every
// field.
type PHY struct {
	SF             int         // spreading factor, 7 … 12
	Bandwidth      float64     // channel bandwidth, Hz: 125e3, 250e3 or 500e3
	CodingRate     int         // denominator n of the coding rate 4/n: 5, 6, 7 or 8
	Preamble       int         // programmed preamble length, symbols, 1 … 65535 (LoRaWAN: 8)
	ImplicitHeader bool        // true: no PHY header (implicit header mode)
	CRC            bool        // true: a 16-bit payload CRC follows the payload
	LowDataRate    LowDataRate // low-data-rate optimisation: auto, on or off
}

// UplinkPHY returns the settings LoRaWAN 1.0.3 prescribes for an uplink at
// the given spreading factor and bandwidth (Hz): coding rate 4/5, 8-symbol
// preamble, explicit header, payload CRC on, low-data-rate optimisation
// automatic.
func UplinkPHY(sf int, bandwidth float64) PHY {
	return PHY{SF: sf, Bandwidth: bandwidth, CodingRate: 5, Preamble: 8, CRC: true}
}

// DownlinkPHY returns the settings of a LoRaWAN 1.0.3 downlink: as UplinkPHY
// but without payload CRC (LoRaWAN 1.0.3, §3.1–3.2: uplinks carry a payload CRC, downlinks do not).
func DownlinkPHY(sf int, bandwidth float64) PHY {
	p := UplinkPHY(sf, bandwidth)
	p.CRC = false
	return p
}

// Validate returns an error wrapping ErrParam naming the first field out of
// range, or nil.
func (p PHY) Validate() error {
	const fn = "PHY.Validate"
	if p.SF < 7 || p.SF > 12 {
		return paramErr(fn, "SF", p.SF, "must be 7 … 12")
	}
	if p.Bandwidth != 125e3 && p.Bandwidth != 250e3 && p.Bandwidth != 500e3 {
		return paramErr(fn, "Bandwidth", p.Bandwidth, "must be 125e3, 250e3 or 500e3 Hz")
	}
	if p.CodingRate < 5 || p.CodingRate > 8 {
		return paramErr(fn, "CodingRate", p.CodingRate, "must be 5 … 8 (coding rate 4/5 … 4/8)")
	}
	if p.Preamble < 1 || p.Preamble > 65535 {
		return paramErr(fn, "Preamble", p.Preamble, "must be 1 … 65535 symbols")
	}
	if p.LowDataRate < LowDataRateAuto || p.LowDataRate > LowDataRateOff {
		return paramErr(fn, "LowDataRate", int(p.LowDataRate), "must be LowDataRateAuto, LowDataRateOn or LowDataRateOff")
	}
	return nil
}

// SymbolTime returns the LoRa symbol time 2^SF / BW, in seconds, for SF 7 …
// 12 and a bandwidth of 125, 250 or 500 kHz (given in Hz).
func SymbolTime(sf int, bandwidth float64) (float64, error) {
	p := PHY{SF: sf, Bandwidth: bandwidth, CodingRate: 5, Preamble: 8}
	if err := p.Validate(); err != nil {
		return 0, fmt.Errorf("lora.SymbolTime: %w", err)
	}
	return p.symbolTime(), nil
}

func (p PHY) symbolTime() float64 { return math.Ldexp(1, p.SF) / p.Bandwidth }

// SymbolTime returns 2^SF / BW, in seconds. It assumes valid settings.
func (p PHY) SymbolTime() float64 { return p.symbolTime() }

// LowDataRateOptimised reports whether the low-data-rate optimisation is in
// effect: forced on, or automatic with a symbol time above 16 ms.
func (p PHY) LowDataRateOptimised() bool {
	switch p.LowDataRate {
	case LowDataRateOn:
		return true
	case LowDataRateOff:
		return false
	default:
		return p.symbolTime() > LowDataRateSymbolTime
	}
}

// PreambleTime returns the time on air of the preamble and sync word,
// (Preamble + 4.25)·SymbolTime, in seconds.
func (p PHY) PreambleTime() float64 {
	return (float64(p.Preamble) + 4.25) * p.symbolTime()
}

// PayloadSymbols returns the number of symbols after the preamble for a PHY
// payload of the given size in bytes (0 … 255):
//
//	n = 8 + max(⌈(8·PL − 4·SF + 28 + 16·CRC − 20·IH) / (4·(SF − 2·DE))⌉ · CR, 0)
//
// with CR the coding-rate denominator (5 … 8), CRC = 1 when the payload CRC
// is on, IH = 1 for an implicit header and DE = 1 with low-data-rate
// optimisation (Augustin, Yi, Clausen and Townsley, "A Study of LoRa",
// Sensors 16(9):1466, 2016, eq. 3–4).
func (p PHY) PayloadSymbols(bytes int) (int, error) {
	if err := p.Validate(); err != nil {
		return 0, fmt.Errorf("lora.PHY.PayloadSymbols: %w", err)
	}
	if bytes < 0 || bytes > MaxPHYPayload {
		return 0, paramErr("PHY.PayloadSymbols", "bytes", bytes, fmt.Sprintf("PHY payload must be 0 … %d bytes", MaxPHYPayload))
	}
	return p.payloadSymbols(bytes), nil
}

func (p PHY) payloadSymbols(bytes int) int {
	num := 8*bytes - 4*p.SF + 28
	if p.CRC {
		num += 16
	}
	if p.ImplicitHeader {
		num -= 20
	}
	de := 0
	if p.LowDataRateOptimised() {
		de = 1
	}
	den := 4 * (p.SF - 2*de)
	blocks := 0
	if num > 0 {
		blocks = (num + den - 1) / den // ceil for num > 0
	}
	return 8 + blocks*p.CodingRate
}

// Airtime returns the time on air of a LoRa frame carrying a PHY payload of
// the given size (0 … 255 bytes), in seconds:
//
//	T = (Preamble + 4.25 + PayloadSymbols) · 2^SF / BW
//
// (Augustin, Yi, Clausen and Townsley, "A Study of LoRa", Sensors
// 16(9):1466, 2016, eq. 3–4). The LoRaWAN documents fix its inputs: the
// LoRaWAN 1.0.3 specification, §3.1–3.2 (explicit header; payload CRC on
// uplinks, none on downlinks; UplinkPHY, DownlinkPHY) and the LoRaWAN
// Regional Parameters RP002-1.0.3 (each data rate's SF and bandwidth, and
// the US902-928 dwell time the airtime is held to). The result is exact up
// to the rounding of one multiplication (relative error below 1e-15).
func (p PHY) Airtime(bytes int) (float64, error) {
	n, err := p.PayloadSymbols(bytes)
	if err != nil {
		return 0, fmt.Errorf("lora.PHY.Airtime: %w", err)
	}
	return (float64(p.Preamble) + 4.25 + float64(n)) * p.symbolTime(), nil
}

// LoRaWAN MAC framing (LoRaWAN 1.0.3 specification, §4).
const (
	// MACOverhead is the LoRaWAN framing around the application payload of a
	// data frame with a port and no FOpts, in bytes: MHDR 1, DevAddr 4,
	// FCtrl 1, FCnt 2, FPort 1, MIC 4.
	MACOverhead = 13
	// MaxFOpts is the largest FOpts field, in bytes.
	MaxFOpts = 15
	// EmptyFrameBytes is the PHY payload of a data frame with neither FPort
	// nor payload (for example a bare acknowledgement), in bytes.
	EmptyFrameBytes = MACOverhead - 1
)

// PHYPayloadBytes returns the PHY payload size of a LoRaWAN data frame, in
// bytes: MACOverhead + fOpts + app, where app is the application payload
// (FRMPayload, bytes ≥ 0) and fOpts the MAC commands piggy-backed in FOpts
// (0 … 15 bytes). An empty application payload still carries an FPort here;
// use EmptyFrameBytes (+ fOpts) for a frame without one. The total must not
// exceed MaxPHYPayload.
func PHYPayloadBytes(app, fOpts int) (int, error) {
	const fn = "PHYPayloadBytes"
	if fOpts < 0 || fOpts > MaxFOpts {
		return 0, paramErr(fn, "fOpts", fOpts, fmt.Sprintf("must be 0 … %d bytes", MaxFOpts))
	}
	if app < 0 {
		return 0, paramErr(fn, "app", app, "must be >= 0 bytes")
	}
	n := MACOverhead + fOpts + app
	if n > MaxPHYPayload {
		return 0, paramErr(fn, "app", app, fmt.Sprintf("frame of %d bytes exceeds the %d-byte PHY payload", n, MaxPHYPayload))
	}
	return n, nil
}
