package lora_test

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// The expected tables below are LoRaWAN Regional Parameters RP002-1.0.3
// (LoRa Alliance), recalled from memory and cross-checked where possible
// against independent facts (the airtime formula and the 400 ms dwell time
// for US902-928, the ERP/EIRP relation for EU863-870).

func TestEU868Tables(t *testing.T) {
	eu := lora.EU868()
	assert.Equal(t, "EU863-870", eu.Name())
	assert.Contains(t, eu.Version(), "RP002-1.0.3")
	// RP002-1.0.3 EU863-870 data-rate table: DR0 … DR5 = SF12 … SF7 at
	// 125 kHz, DR6 = SF7/250 kHz.
	// RP002-1.0.3 EU863-870 maximum payload (not repeater compatible): N.
	wantSF := []int{12, 11, 10, 9, 8, 7, 7}
	wantBW := []float64{125e3, 125e3, 125e3, 125e3, 125e3, 125e3, 250e3}
	wantN := []int{51, 51, 51, 115, 242, 242, 242}
	for dr := range wantSF {
		d, err := eu.DataRate(dr)
		require.NoError(t, err)
		assert.Equal(t, wantSF[dr], d.SF, "DR%d", dr)
		assert.Equal(t, wantBW[dr], d.Bandwidth, "DR%d", dr)
		assert.Equal(t, wantN[dr], d.MaxAppPayload, "DR%d", dr)
		assert.True(t, d.Uplink && d.Downlink)
	}
	assert.Len(t, eu.DataRates(), 7)
	// TXPower: MaxEIRP (16 dBm) − 2·index, indices 0 … 7 (RP002-1.0.3).
	assert.Equal(t, []float64{16, 14, 12, 10, 8, 6, 4, 2}, eu.TXPowers())
	// 16 dBm EIRP ≈ 14 dBm ERP (+2.15 dB dipole gain), the 25 mW limit of
	// the 868.0–868.6 MHz sub-band (ERC Rec. 70-03 Annex 1).
	sb, err := eu.SubBandAt(868.1e6)
	require.NoError(t, err)
	assert.InDelta(t, eu.MaxEIRP()-2.15, sb.MaxERP, 0.2)
	// RX1: max(DR − offset, 0).
	for _, c := range []struct{ up, off, want int }{{0, 0, 0}, {5, 0, 5}, {5, 5, 0}, {3, 1, 2}, {1, 3, 0}, {6, 2, 4}} {
		got, err := eu.RX1DataRate(c.up, c.off)
		require.NoError(t, err)
		assert.Equal(t, c.want, got, "DR%d offset %d", c.up, c.off)
	}
	assert.Equal(t, 6, eu.RX1DROffsets())
	f, dr := eu.RX2()
	assert.Equal(t, 869.525e6, f)
	assert.Equal(t, 0, dr)
	assert.Equal(t, lora.Timing{ReceiveDelay1: 1, ReceiveDelay2: 2, JoinAcceptDelay1: 5, JoinAcceptDelay2: 6,
		AckTimeoutMin: 1, AckTimeoutMax: 3, ADRAckLimit: 64, ADRAckDelay: 32}, eu.Timing())
	assert.True(t, math.IsInf(eu.DwellTime(), 1))
	ch := eu.UplinkChannels()
	require.Len(t, ch, 3)
	for _, c := range ch {
		s, err := eu.SubBandAt(c.Frequency)
		require.NoError(t, err)
		assert.Equal(t, 0.01, s.DutyCycle, "default channels lie in the 1 %% sub-band")
	}
	s, err := eu.SubBandAt(869.525e6)
	require.NoError(t, err)
	assert.Equal(t, 0.1, s.DutyCycle, "RX2 lies in the 10 %% sub-band")
	s, err = eu.SubBandAt(868.9e6)
	require.NoError(t, err)
	assert.Equal(t, 0.001, s.DutyCycle)
}

func TestUS915Tables(t *testing.T) {
	us := lora.US915()
	assert.Equal(t, "US902-928", us.Name())
	// RP002-1.0.3 US902-928 data-rate and maximum payload tables.
	tests := []struct {
		dr, sf   int
		bw       float64
		up, down bool
		n        int
	}{
		{0, 10, 125e3, true, false, 11},
		{1, 9, 125e3, true, false, 53},
		{2, 8, 125e3, true, false, 125},
		{3, 7, 125e3, true, false, 242},
		{4, 8, 500e3, true, false, 242},
		{8, 12, 500e3, false, true, 53},
		{9, 11, 500e3, false, true, 129},
		{10, 10, 500e3, false, true, 242},
		{13, 7, 500e3, false, true, 242},
	}
	for _, tc := range tests {
		d, err := us.DataRate(tc.dr)
		require.NoError(t, err)
		assert.Equal(t, tc.sf, d.SF, "DR%d", tc.dr)
		assert.Equal(t, tc.bw, d.Bandwidth, "DR%d", tc.dr)
		assert.Equal(t, tc.up, d.Uplink, "DR%d", tc.dr)
		assert.Equal(t, tc.down, d.Downlink, "DR%d", tc.dr)
		assert.Equal(t, tc.n, d.MaxAppPayload, "DR%d", tc.dr)
	}
	p := us.TXPowers()
	require.Len(t, p, 15)
	assert.Equal(t, 30.0, p[0])
	assert.Equal(t, 2.0, p[14])
	// RP002-1.0.3 US902-928 RX1 mapping, upstream DR0 … DR4 × offset 0 … 3.
	want := [][]int{{10, 9, 8, 8}, {11, 10, 9, 8}, {12, 11, 10, 9}, {13, 12, 11, 10}, {13, 13, 12, 11}}
	for up, row := range want {
		for off, w := range row {
			got, err := us.RX1DataRate(up, off)
			require.NoError(t, err)
			assert.Equal(t, w, got, "DR%d offset %d", up, off)
		}
	}
	f, dr := us.RX2()
	assert.Equal(t, 923.3e6, f)
	assert.Equal(t, 8, dr)
	assert.Equal(t, 0.4, us.DwellTime())
	assert.Len(t, us.UplinkChannels(), 72)
	assert.Empty(t, us.SubBands())
}

// TestUS915DwellTime checks the region's payload table against the 400 ms
// dwell time on each channel (FCC 47 CFR 15.247 for frequency-hopping
// systems, as adopted by RP002-1.0.3 US902-928): the largest payload of each
// uplink data rate fits in 400 ms, and at DR0 … DR2 one byte more would not
// (so the table is the dwell limit, not some looser bound). Airtimes by the
// formula of TestAirtime; DR0 at 11 bytes: 45.25·8.192 ms = 370.688 ms,
// at 12 bytes 50.25·8.192 ms = 411.648 ms.
func TestUS915DwellTime(t *testing.T) {
	us := lora.US915()
	for dr := 0; dr <= 4; dr++ {
		n, err := us.MaxAppPayload(dr, 0)
		require.NoError(t, err)
		require.NoError(t, us.CheckDwellTime(dr, n, 0), "DR%d at %d bytes", dr, n)
		if dr > 2 {
			continue
		}
		d, err := us.DataRate(dr)
		require.NoError(t, err)
		over, err := d.UplinkPHY().Airtime(lora.MACOverhead + n + 1)
		require.NoError(t, err)
		assert.Greater(t, over, 0.4, "DR%d at %d bytes", dr, n+1)
	}
	t0, err := us.UplinkAirtime(0, 11, 0)
	require.NoError(t, err)
	assert.InEpsilon(t, 370.688e-3, t0, 1e-14)
	// With 4 bytes of FOpts the DR0 limit drops to 11 − 4 = 7 bytes (the
	// same 24-byte PHY payload); 8 bytes break the payload table.
	require.NoError(t, us.CheckDwellTime(0, 7, 4))
	err = us.CheckDwellTime(0, 8, 4)
	assert.ErrorIs(t, err, lora.ErrParam)
}

func TestRegionErrors(t *testing.T) {
	eu, us := lora.EU868(), lora.US915()
	tests := []struct {
		name  string
		err   error
		param string
		says  string
	}{
		{"EU DR9 is LR-FHSS", func() error { _, err := eu.DataRate(9); return err }(), "dr", "LR-FHSS"},
		{"EU DR7 is FSK", func() error { _, err := eu.DataRate(7); return err }(), "dr", "FSK"},
		{"EU DR16", func() error { _, err := eu.DataRate(16); return err }(), "dr", "no data rate 16"},
		{"US DR7 RFU", func() error { _, err := us.DataRate(7); return err }(), "dr", "reserved"},
		{"US DR8 uplink", func() error { _, err := us.UplinkAirtime(8, 10, 0); return err }(), "dr", "downlinks only"},
		{"US DR0 downlink", func() error { _, err := us.DownlinkAirtime(0, 10, 0); return err }(), "dr", "uplinks only"},
		{"EU DR0 52 bytes", eu.CheckPayload(0, 52, 0), "app", "at most 51"},
		{"EU DR0 airtime 52 bytes", func() error { _, err := eu.UplinkAirtime(0, 52, 0); return err }(), "app", "at most 51"},
		{"EU DR5 243 bytes", eu.CheckPayload(5, 243, 0), "app", "at most 242"},
		{"EU DR3 fOpts", eu.CheckPayload(3, 115, 1), "app", "at most 114"},
		{"fOpts 16", eu.CheckPayload(3, 1, 16), "fOpts", "0 … 15"},
		{"EU 868.65 MHz", func() error { _, err := eu.SubBandAt(868.65e6); return err }(), "freq", "outside every"},
		{"US sub-band", func() error { _, err := us.SubBandAt(903e6); return err }(), "freq", "no duty-cycle"},
		{"TXPower 8 EU", func() error { _, err := eu.TXPower(8); return err }(), "i", "0 … 7"},
		{"RX1 offset 6 EU", func() error { _, err := eu.RX1DataRate(5, 6); return err }(), "offset", "0 … 5"},
		{"RX1 from DR8 US", func() error { _, err := us.RX1DataRate(8, 0); return err }(), "dr", "downlinks only"},
		{"zero region", func() error { _, err := lora.Region{}.DataRate(0); return err }(), "Region", "EU868"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			require.ErrorIs(t, tc.err, lora.ErrParam)
			var pe *lora.ParamError
			require.True(t, errors.As(tc.err, &pe))
			assert.Equal(t, tc.param, pe.Param)
			assert.True(t, strings.Contains(tc.err.Error(), tc.says), "%q lacks %q", tc.err, tc.says)
		})
	}
}

// TestRegionCopies checks that tables handed out are copies.
func TestRegionCopies(t *testing.T) {
	eu := lora.EU868()
	p := eu.TXPowers()
	p[0] = 99
	assert.Equal(t, 16.0, eu.TXPowers()[0])
	s := eu.SubBands()
	s[0].DutyCycle = 1
	assert.Equal(t, 0.001, eu.SubBands()[0].DutyCycle)
	a := eu.ADRDataRates()
	a[0] = 7
	assert.Equal(t, 0, eu.ADRDataRates()[0])
	c := eu.UplinkChannels()
	c[0].Frequency = 0
	assert.Equal(t, 868.1e6, eu.UplinkChannels()[0].Frequency)
}

// Regions lists each modelled region once, by its RP002-1.0.3 name.
func TestRegionsListed(t *testing.T) {
	var names []string
	for _, r := range lora.Regions() {
		names = append(names, r.Name())
	}
	assert.Equal(t, []string{"EU863-870", "US902-928", "AU915-928", "IN865-867"}, names)
}
