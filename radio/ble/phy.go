package ble

import "fmt"

// PHY is a Bluetooth LE physical layer: its symbol rate and packet format
// fix the time on air of a PDU.
type PHY int

const (
	// LE1M is the uncoded 1 Msym/s PHY: 1 µs a bit, a 1-octet preamble.
	LE1M PHY = iota
	// LE2M is the uncoded 2 Msym/s PHY: 0.5 µs a bit, a 2-octet preamble.
	LE2M
	// LECodedS2 is the coded PHY with S = 2 (500 kb/s) for the PDU, CRC
	// and TERM2; the access address, CI and TERM1 are always coded S = 8.
	LECodedS2
	// LECodedS8 is the coded PHY with S = 8 (125 kb/s) throughout.
	LECodedS8
)

// TIFS is the inter frame space T_IFS, the time from the end of one packet
// to the start of the next on the same channel in a packet exchange, in
// seconds: 150 µs (Bluetooth Core Specification v5.3, Vol 6, Part B,
// §4.1.1).
const TIFS = 150e-6

// MaxPayload is the largest value of a PDU's Length field, in octets: the
// 8-bit Length of the data channel PDU header (v5.3 Vol 6 Part B §2.4) and
// of the advertising physical channel PDU header (§2.3).
const MaxPayload = 255

// Packet overheads (Bluetooth Core Specification v5.3, Vol 6, Part B, §2.1
// uncoded and §2.2 coded packet format).
const (
	// HeaderOctets is the PDU header (advertising or data channel), octets.
	HeaderOctets = 2
	// AccessAddressOctets is the access address, octets.
	AccessAddressOctets = 4
	// CRCOctets is the CRC, octets.
	CRCOctets = 3
	// MICOctets is the message integrity check an encrypted data channel
	// PDU with a non-empty payload carries, octets (v5.3 Vol 6 Part B
	// §2.4).
	MICOctets = 4
)

// String returns the PHY's name as the specification writes it.
func (p PHY) String() string {
	switch p {
	case LE1M:
		return "LE 1M"
	case LE2M:
		return "LE 2M"
	case LECodedS2:
		return "LE Coded S=2"
	case LECodedS8:
		return "LE Coded S=8"
	}
	return fmt.Sprintf("PHY(%d)", int(p))
}

// Validate returns an error wrapping ErrParam unless p is one of the four
// PHYs.
func (p PHY) Validate() error {
	if p < LE1M || p > LECodedS8 {
		return paramErr("PHY.Validate", "PHY", int(p), "must be LE1M, LE2M, LECodedS2 or LECodedS8")
	}
	return nil
}

// BitTime returns the time of one PDU bit on air, in seconds: 1 µs (LE 1M),
// 0.5 µs (LE 2M), 2 µs (coded S = 2), 8 µs (coded S = 8).
func (p PHY) BitTime() float64 {
	switch p {
	case LE2M:
		return 0.5e-6
	case LECodedS2:
		return 2e-6
	case LECodedS8:
		return 8e-6
	}
	return 1e-6
}

// PreambleAndAddress returns the time on air before the PDU's first bit, in
// seconds: what a receiver must hear to detect a packet. Uncoded PHYs send
// the preamble (1 octet on LE 1M, 2 on LE 2M) and the 4-octet access
// address: 40 µs on LE 1M, 24 µs on LE 2M. The coded PHY sends an 80 µs
// preamble, then FEC block 1 coded S = 8: access address (32 bits), CI (2
// bits) and TERM1 (3 bits), 296 µs: 376 µs (v5.3 Vol 6 Part B §2.2, from
// memory).
func (p PHY) PreambleAndAddress() float64 {
	switch p {
	case LE1M:
		return (1 + AccessAddressOctets) * 8e-6
	case LE2M:
		return (2 + AccessAddressOctets) * 8 * 0.5e-6
	}
	return 80e-6 + (32+2+3)*8e-6
}

// Airtime returns the time on air of a packet whose PDU payload (the PDU's
// Length field, MIC included) is payload octets, 0 … MaxPayload, in
// seconds:
//
//	LE 1M:    (1 + 4 + 2 + L + 3) · 8 µs          = (80 + 8L) µs
//	LE 2M:    (2 + 4 + 2 + L + 3) · 4 µs          = (44 + 4L) µs
//	LE Coded: 80 µs + 37 · 8 µs + (8(2 + L) + 24 + 3) · S µs
//	          = (462 + 16L) µs at S = 2, (720 + 64L) µs at S = 8
//
// (preamble, access address, header, payload, CRC; coded: preamble, FEC
// block 1 with access address, CI and TERM1 at S = 8, FEC block 2 with PDU,
// CRC and TERM2 at S; Bluetooth Core Specification v5.3, Vol 6, Part B,
// §2.1 and §2.2; the coded layout from memory). No constant tone extension.
// The result is exact up to one rounding.
func (p PHY) Airtime(payload int) (float64, error) {
	if err := p.Validate(); err != nil {
		return 0, fmt.Errorf("ble.PHY.Airtime: %w", err)
	}
	if payload < 0 || payload > MaxPayload {
		return 0, paramErr("PHY.Airtime", "payload", payload, fmt.Sprintf("PDU payload must be 0 … %d octets", MaxPayload))
	}
	return p.airtime(payload), nil
}

func (p PHY) airtime(payload int) float64 {
	bits := 8 * (HeaderOctets + payload + CRCOctets)
	switch p {
	case LE1M, LE2M:
		return p.PreambleAndAddress() + float64(bits)*p.BitTime()
	}
	return p.PreambleAndAddress() + float64(bits+3)*p.BitTime() // + TERM2
}
