package ieee802154_test

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// TestPHYTiming checks the timing of each PHY against the standard's
// figures. Sources: IEEE Std 802.15.4-2020, O-QPSK PHY (2.4 GHz: 62.5
// ksymbol/s, 4 bits per symbol, SHR 5 octets, PHR 1 octet) and the PHY
// constants (aMaxPhyPacketSize 127, aTurnaroundTime 12 symbols); the MAC
// constant aUnitBackoffPeriod (20 symbols) and the CCA detection time (8
// symbols); macAckWaitDuration = aUnitBackoffPeriod + aTurnaroundTime +
// phySHRDuration + ⌈6·phySymbolsPerOctet⌉, whose range IEEE Std
// 802.15.4-2006 Table 86 gives as "54 or 120" symbols (from memory). The
// sub-GHz rates are IEEE Std 802.15.4-2006 Table 1 (from memory). The
// expected times are worked by hand from those figures.
func TestPHYTiming(t *testing.T) {
	for _, tc := range []struct {
		phy                                 ieee802154.PHY
		symbol, octet, maxPPDU, ack         float64 // s
		unit, cca, turnaround, ackWait      float64 // s
		symbolsPerOctet, shrSymbols, ackSym int
	}{
		// 2.4 GHz: 16 µs symbols; 133 octets × 32 µs = 4.256 ms; ack 11 octets = 352 µs.
		{ieee802154.OQPSK2450(), 16e-6, 32e-6, 4.256e-3, 352e-6, 320e-6, 128e-6, 192e-6, 864e-6, 2, 10, 54},
		{ieee802154.OQPSK915(), 16e-6, 32e-6, 4.256e-3, 352e-6, 320e-6, 128e-6, 192e-6, 864e-6, 2, 10, 54},
		// 868 MHz O-QPSK: 25 ksymbol/s, 40 µs symbols, 80 µs octets.
		{ieee802154.OQPSK868(), 40e-6, 80e-6, 10.64e-3, 880e-6, 800e-6, 320e-6, 480e-6, 2.16e-3, 2, 10, 54},
		// BPSK: 1 bit per symbol, 8 symbols an octet; SHR 40 symbols; 120-symbol ack wait.
		{ieee802154.BPSK915(), 25e-6, 200e-6, 26.6e-3, 2.2e-3, 500e-6, 200e-6, 300e-6, 3e-3, 8, 40, 120},
		{ieee802154.BPSK868(), 50e-6, 400e-6, 53.2e-3, 4.4e-3, 1e-3, 400e-6, 600e-6, 6e-3, 8, 40, 120},
	} {
		p := tc.phy
		require.NoError(t, p.Validate(), p.Name)
		assert.InEpsilon(t, tc.symbol, p.SymbolTime(), 1e-15, p.Name)
		assert.InEpsilon(t, tc.octet, p.OctetTime(), 1e-15, p.Name)
		assert.Equal(t, tc.symbolsPerOctet, p.SymbolsPerOctet(), p.Name)
		assert.Equal(t, tc.shrSymbols, p.SHRSymbols(), p.Name)
		got, err := p.PPDUTime(ieee802154.MaxPHYPacketSize)
		require.NoError(t, err)
		assert.InEpsilon(t, tc.maxPPDU, got, 1e-15, p.Name)
		assert.InEpsilon(t, tc.ack, p.AckTime(), 1e-15, p.Name)
		assert.InEpsilon(t, tc.unit, p.UnitBackoffPeriod(), 1e-15, p.Name)
		assert.InEpsilon(t, tc.cca, p.CCATime(), 1e-15, p.Name)
		assert.InEpsilon(t, tc.turnaround, p.TurnaroundTime(), 1e-15, p.Name)
		assert.Equal(t, tc.ackSym, p.AckWaitSymbols(), p.Name)
		assert.InEpsilon(t, tc.ackWait, p.AckWaitDuration(), 1e-15, p.Name)
	}
}

// TestPHYBadInput: every field out of range, and PSDUs outside 1 …
// aMaxPhyPacketSize, are errors wrapping ErrParam that name the field.
func TestPHYBadInput(t *testing.T) {
	good := ieee802154.OQPSK2450()
	for _, tc := range []struct {
		name string
		edit func(*ieee802154.PHY)
	}{
		{"SymbolRate", func(p *ieee802154.PHY) { p.SymbolRate = 0 }},
		{"SymbolRate", func(p *ieee802154.PHY) { p.SymbolRate = 2e9 }},
		{"SymbolRate", func(p *ieee802154.PHY) { p.SymbolRate = nan() }},
		{"BitsPerSymbol", func(p *ieee802154.PHY) { p.BitsPerSymbol = 3 }},
		{"SHROctets", func(p *ieee802154.PHY) { p.SHROctets = 0 }},
		{"PHROctets", func(p *ieee802154.PHY) { p.PHROctets = 3 }},
	} {
		p := good
		tc.edit(&p)
		err := p.Validate()
		require.ErrorIs(t, err, ieee802154.ErrParam, tc.name)
		assert.Contains(t, err.Error(), tc.name)
		_, err = p.PPDUTime(20)
		assert.ErrorIs(t, err, ieee802154.ErrParam, tc.name)
	}
	for _, n := range []int{0, -1, ieee802154.MaxPHYPacketSize + 1} {
		_, err := good.PPDUTime(n)
		require.ErrorIs(t, err, ieee802154.ErrParam, "psdu %d", n)
		assert.Contains(t, err.Error(), "aMaxPhyPacketSize")
	}
}

// TestMACOverhead checks the data-frame overhead against the general MAC
// frame format (IEEE Std 802.15.4-2006 §7.2.1: frame control 2, sequence
// number 1, destination PAN 2 and address 0/2/8, source PAN 2 unless PAN
// ID compression, source address 0/2/8, FCS 2), summed by hand.
func TestMACOverhead(t *testing.T) {
	for _, tc := range []struct {
		a    ieee802154.Addressing
		want int
	}{
		{ieee802154.Addressing{}, 11},               // 2+1+2+2+2+2
		{ieee802154.Addressing{InterPAN: true}, 13}, // + source PAN
		{ieee802154.Addressing{Dst: ieee802154.AddrExtended, Src: ieee802154.AddrExtended}, 23},
		{ieee802154.Addressing{Dst: ieee802154.AddrNone}, 9}, // source PAN and address only
		{ieee802154.Addressing{Src: ieee802154.AddrNone}, 9}, // destination PAN and address only
		{ieee802154.Addressing{Dst: ieee802154.AddrNone, Src: ieee802154.AddrNone}, 5},
		{ieee802154.Addressing{Security: 14}, 25}, // e.g. a 6-octet auxiliary header and an 8-octet MIC
	} {
		got, err := tc.a.MACOverhead()
		require.NoError(t, err)
		assert.Equal(t, tc.want, got, "%+v", tc.a)
		n, err := ieee802154.DataFrameOctets(10, tc.a)
		require.NoError(t, err)
		assert.Equal(t, tc.want+10, n)
	}
	n, err := ieee802154.DataFrameOctets(116, ieee802154.Addressing{})
	require.NoError(t, err)
	assert.Equal(t, ieee802154.MaxPHYPacketSize, n)
	_, err = ieee802154.DataFrameOctets(117, ieee802154.Addressing{})
	require.ErrorIs(t, err, ieee802154.ErrParam)
	assert.Contains(t, err.Error(), "at most 116 octets")
	for _, a := range []ieee802154.Addressing{{Dst: -1}, {Src: 3}, {Security: -1}, {Security: 31}} {
		_, err := a.MACOverhead()
		assert.ErrorIs(t, err, ieee802154.ErrParam, "%+v", a)
	}
	_, err = ieee802154.DataFrameOctets(-1, ieee802154.Addressing{})
	assert.ErrorIs(t, err, ieee802154.ErrParam)
}
