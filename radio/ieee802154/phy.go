package ieee802154

import (
	"fmt"
	"math"
)

// PHY constants and timing attributes common to the O-QPSK and BPSK PHYs of
// this package, in symbol periods (IEEE Std 802.15.4-2020, PHY constants
// and the MAC constants aUnitBackoffPeriod and CCA duration; the same values
// as IEEE Std 802.15.4-2006 Tables 22 and 85 and §6.9.9, from memory).
const (
	// MaxPHYPacketSize is aMaxPhyPacketSize, the largest PSDU (MPDU), in
	// octets.
	MaxPHYPacketSize = 127
	// TurnaroundSymbols is aTurnaroundTime, the longest RX-to-TX or
	// TX-to-RX turnaround, in symbol periods.
	TurnaroundSymbols = 12
	// UnitBackoffSymbols is aUnitBackoffPeriod, the unit of the CSMA-CA
	// backoff, in symbol periods.
	UnitBackoffSymbols = 20
	// CCASymbols is the CCA detection time, in symbol periods.
	CCASymbols = 8
	// AckFrameOctets is the MPDU of an immediate acknowledgement frame, in
	// octets: frame control 2, sequence number 1, FCS 2.
	AckFrameOctets = 5
	// FCSOctets is the frame check sequence (the 16-bit ITU-T CRC), in
	// octets.
	FCSOctets = 2
)

// MaxSymbolRate caps PHY.SymbolRate, in symbols per second (10^9, far above
// any PHY of the standard), so that every time in this package stays a
// normal float64.
const MaxSymbolRate = 1e9

// PHY is the timing of an IEEE 802.15.4 PHY whose symbols carry a whole
// number of bits: the O-QPSK and BPSK PHYs. A PPDU is the synchronisation
// header (SHR: preamble and SFD), the PHY header (PHR: the frame length) and
// the PSDU (the MAC frame). The zero value is not valid: use OQPSK2450 (or
// another constructor) or fill every field.
type PHY struct {
	Name          string  // for messages, e.g. "O-QPSK 2450 MHz"
	SymbolRate    float64 // symbols per second, (0, MaxSymbolRate]
	BitsPerSymbol int     // 1, 2, 4 or 8
	SHROctets     int     // synchronisation header, octets, 1 … 16
	PHROctets     int     // PHY header, octets, 1 … 2
}

// OQPSK2450 returns the 2.4 GHz O-QPSK PHY (IEEE Std 802.15.4-2020,
// O-QPSK PHY clause): 2000 kchip/s, 32 chips per symbol, 62.5 ksymbol/s,
// 4 bits per symbol, 250 kb/s; SHR 5 octets (preamble 4, SFD 1), PHR 1
// octet. A symbol lasts 16 µs, an octet 32 µs. The channels are 11 … 26
// (2405 + 5·(k − 11) MHz); check local regulations for the channels and
// transmit power allowed where the nodes are installed.
func OQPSK2450() PHY {
	return PHY{Name: "O-QPSK 2450 MHz", SymbolRate: 62.5e3, BitsPerSymbol: 4, SHROctets: 5, PHROctets: 1}
}

// OQPSK915 returns the 915 MHz O-QPSK PHY: 62.5 ksymbol/s, 4 bits per
// symbol, 250 kb/s, SHR 5 octets, PHR 1 octet (IEEE Std 802.15.4-2006,
// Table 1, values from memory). The 902–928 MHz band is not open
// everywhere: check local regulations.
func OQPSK915() PHY {
	return PHY{Name: "O-QPSK 915 MHz", SymbolRate: 62.5e3, BitsPerSymbol: 4, SHROctets: 5, PHROctets: 1}
}

// OQPSK868 returns the 868 MHz O-QPSK PHY: 25 ksymbol/s, 4 bits per
// symbol, 100 kb/s, SHR 5 octets, PHR 1 octet (IEEE Std 802.15.4-2006,
// Table 1, values from memory). The 868–868.6 MHz band carries duty-cycle
// limits in Europe: check local regulations.
func OQPSK868() PHY {
	return PHY{Name: "O-QPSK 868 MHz", SymbolRate: 25e3, BitsPerSymbol: 4, SHROctets: 5, PHROctets: 1}
}

// BPSK915 returns the 915 MHz BPSK PHY: 40 ksymbol/s, 1 bit per symbol,
// 40 kb/s, SHR 5 octets (a 32-symbol preamble and an 8-symbol SFD), PHR 1
// octet (IEEE Std 802.15.4-2006, Tables 1 and 19, values from memory).
// Check local regulations.
func BPSK915() PHY {
	return PHY{Name: "BPSK 915 MHz", SymbolRate: 40e3, BitsPerSymbol: 1, SHROctets: 5, PHROctets: 1}
}

// BPSK868 returns the 868 MHz BPSK PHY: 20 ksymbol/s, 1 bit per symbol,
// 20 kb/s, SHR 5 octets, PHR 1 octet (IEEE Std 802.15.4-2006, Tables 1
// and 19, values from memory). The 868–868.6 MHz band carries duty-cycle
// limits in Europe: check local regulations.
func BPSK868() PHY {
	return PHY{Name: "BPSK 868 MHz", SymbolRate: 20e3, BitsPerSymbol: 1, SHROctets: 5, PHROctets: 1}
}

// Validate returns an error wrapping ErrParam naming the first field out of
// range, or nil.
func (p PHY) Validate() error {
	const fn = "PHY.Validate"
	if !(p.SymbolRate > 0 && p.SymbolRate <= MaxSymbolRate) {
		return paramErr(fn, "SymbolRate", p.SymbolRate, fmt.Sprintf("must be in (0, %g] symbols/s", float64(MaxSymbolRate)))
	}
	switch p.BitsPerSymbol {
	case 1, 2, 4, 8:
	default:
		return paramErr(fn, "BitsPerSymbol", p.BitsPerSymbol, "must be 1, 2, 4 or 8")
	}
	if p.SHROctets < 1 || p.SHROctets > 16 {
		return paramErr(fn, "SHROctets", p.SHROctets, "must be 1 … 16 octets")
	}
	if p.PHROctets < 1 || p.PHROctets > 2 {
		return paramErr(fn, "PHROctets", p.PHROctets, "must be 1 … 2 octets")
	}
	return nil
}

// SymbolTime returns the symbol period 1/SymbolRate, in seconds.
func (p PHY) SymbolTime() float64 { return 1 / p.SymbolRate }

// SymbolsPerOctet returns phySymbolsPerOctet, 8/BitsPerSymbol.
func (p PHY) SymbolsPerOctet() int { return 8 / p.BitsPerSymbol }

// OctetTime returns the time on air of one octet, SymbolsPerOctet symbol
// periods, in seconds (32 µs for OQPSK2450).
func (p PHY) OctetTime() float64 { return p.symbols(p.SymbolsPerOctet()) }

// symbols returns n symbol periods in seconds.
func (p PHY) symbols(n int) float64 { return float64(n) / p.SymbolRate }

// SHRSymbols returns phySHRDuration, the synchronisation header in symbol
// periods (10 for OQPSK2450, 40 for the BPSK PHYs).
func (p PHY) SHRSymbols() int { return p.SHROctets * p.SymbolsPerOctet() }

// PPDUTime returns the time on air of a PPDU carrying a PSDU (MAC frame) of
// psdu octets, 1 … MaxPHYPacketSize, in seconds:
//
//	T = (SHROctets + PHROctets + psdu) · OctetTime
//
// (4.256 ms for a 127-octet PSDU on OQPSK2450). Exact up to the rounding
// of two operations.
func (p PHY) PPDUTime(psdu int) (float64, error) {
	if err := p.Validate(); err != nil {
		return 0, fmt.Errorf("ieee802154.PHY.PPDUTime: %w", err)
	}
	if psdu < 1 || psdu > MaxPHYPacketSize {
		return 0, paramErr("PHY.PPDUTime", "psdu", psdu, fmt.Sprintf("must be 1 … %d octets (aMaxPhyPacketSize)", MaxPHYPacketSize))
	}
	return p.ppduTime(psdu), nil
}

func (p PHY) ppduTime(psdu int) float64 {
	return p.symbols((p.SHROctets + p.PHROctets + psdu) * p.SymbolsPerOctet())
}

// UnitBackoffPeriod returns aUnitBackoffPeriod, 20 symbol periods, in
// seconds (320 µs for OQPSK2450).
func (p PHY) UnitBackoffPeriod() float64 { return p.symbols(UnitBackoffSymbols) }

// CCATime returns the CCA detection time, 8 symbol periods, in seconds
// (128 µs for OQPSK2450).
func (p PHY) CCATime() float64 { return p.symbols(CCASymbols) }

// TurnaroundTime returns aTurnaroundTime, 12 symbol periods, in seconds
// (192 µs for OQPSK2450).
func (p PHY) TurnaroundTime() float64 { return p.symbols(TurnaroundSymbols) }

// AckTime returns the time on air of an immediate acknowledgement (a PSDU
// of AckFrameOctets), in seconds (352 µs for OQPSK2450).
func (p PHY) AckTime() float64 { return p.ppduTime(AckFrameOctets) }

// AckWaitSymbols returns the default macAckWaitDuration in symbol periods:
//
//	aUnitBackoffPeriod + aTurnaroundTime + phySHRDuration + ⌈6·phySymbolsPerOctet⌉
//
// (IEEE Std 802.15.4-2006, Table 86, from memory; 54 symbols for
// OQPSK2450, 120 for the BPSK PHYs).
func (p PHY) AckWaitSymbols() int {
	return UnitBackoffSymbols + TurnaroundSymbols + p.SHRSymbols() + int(math.Ceil(6*float64(p.SymbolsPerOctet())))
}

// AckWaitDuration returns AckWaitSymbols in seconds (864 µs for
// OQPSK2450).
func (p PHY) AckWaitDuration() float64 { return p.symbols(p.AckWaitSymbols()) }

// AddrMode is the addressing mode of one end of a MAC frame.
type AddrMode int

const (
	// AddrShort is a 16-bit short address (2 octets); the zero value.
	AddrShort AddrMode = iota
	// AddrExtended is a 64-bit extended address (8 octets).
	AddrExtended
	// AddrNone is no address (0 octets).
	AddrNone
)

func (m AddrMode) octets() int {
	switch m {
	case AddrExtended:
		return 8
	case AddrNone:
		return 0
	default:
		return 2
	}
}

// Addressing describes the addressing fields of a data frame's MAC header
// (IEEE Std 802.15.4-2006, §7.2.1, general MAC frame format). The zero
// value is the common case: short destination and source addresses within
// one PAN (PAN ID compression), a 9-octet MAC header.
type Addressing struct {
	Dst, Src AddrMode // destination and source address modes
	// InterPAN sends the source PAN identifier as well (PAN ID compression
	// off) when both addresses are present.
	InterPAN bool
	// Security is the octets the frame's security adds: the auxiliary
	// security header plus the MIC, 0 … 30 (a 14-octet header and a
	// 16-octet MIC at the most).
	Security int
}

// MaxSecurityOctets caps Addressing.Security: a 14-octet auxiliary security
// header plus a 16-octet MIC.
const MaxSecurityOctets = 30

func (a Addressing) validate(fn string) error {
	for _, f := range []struct {
		name string
		m    AddrMode
	}{{"Addressing.Dst", a.Dst}, {"Addressing.Src", a.Src}} {
		if f.m < AddrShort || f.m > AddrNone {
			return paramErr(fn, f.name, int(f.m), "must be AddrShort, AddrExtended or AddrNone")
		}
	}
	if a.Security < 0 || a.Security > MaxSecurityOctets {
		return paramErr(fn, "Addressing.Security", a.Security, fmt.Sprintf("must be 0 … %d octets", MaxSecurityOctets))
	}
	return nil
}

// MACOverhead returns the octets a data frame adds around its MAC payload:
// frame control 2, sequence number 1, destination PAN identifier 2 (with a
// destination address), destination address, source PAN identifier 2 (with
// a source address, unless both addresses are present and the frame stays
// within one PAN), source address, Security, and the FCS 2. The zero
// Addressing gives 11 octets; extended addresses both ends, 23.
func (a Addressing) MACOverhead() (int, error) {
	if err := a.validate("Addressing.MACOverhead"); err != nil {
		return 0, err
	}
	return a.overhead(), nil
}

func (a Addressing) overhead() int {
	n := 2 + 1 + FCSOctets + a.Security
	if a.Dst != AddrNone {
		n += 2 + a.Dst.octets()
	}
	if a.Src != AddrNone {
		n += a.Src.octets()
		if a.Dst == AddrNone || a.InterPAN {
			n += 2
		}
	}
	return n
}

// DataFrameOctets returns the MPDU (PSDU) of a data frame carrying payload
// octets of MAC payload with the addressing a, in octets: payload +
// MACOverhead. payload must be >= 0 and the frame at most
// MaxPHYPacketSize (116 octets of payload with the zero Addressing).
func DataFrameOctets(payload int, a Addressing) (int, error) {
	const fn = "DataFrameOctets"
	if err := a.validate(fn); err != nil {
		return 0, err
	}
	if payload < 0 {
		return 0, paramErr(fn, "payload", payload, "must be >= 0 octets")
	}
	n := payload + a.overhead()
	if n > MaxPHYPacketSize {
		return 0, paramErr(fn, "payload", payload, fmt.Sprintf("a frame of %d octets exceeds aMaxPhyPacketSize (%d): at most %d octets of payload with this addressing",
			n, MaxPHYPacketSize, MaxPHYPacketSize-a.overhead()))
	}
	return n, nil
}
