package lora_test

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// The AU915-928 and IN865-867 tables are LoRaWAN Regional Parameters
// RP002-1.0.3 (LoRa Alliance), recalled from memory; the checks below tie
// them to facts that do not depend on that recollection where they can (the
// bands' edges, the airtime formula, the RX1 rule written as a formula).

func TestAU915Tables(t *testing.T) {
	au := lora.AU915()
	assert.Equal(t, "AU915-928", au.Name())
	tests := []struct {
		dr, sf   int
		bw       float64
		up, down bool
		n        int // N = M − 8
	}{
		{0, 12, 125e3, true, false, 51},
		{1, 11, 125e3, true, false, 51},
		{2, 10, 125e3, true, false, 51},
		{3, 9, 125e3, true, false, 115},
		{4, 8, 125e3, true, false, 242},
		{5, 7, 125e3, true, false, 242},
		{6, 8, 500e3, true, false, 242},
		{8, 12, 500e3, false, true, 53},
		{9, 11, 500e3, false, true, 129},
		{13, 7, 500e3, false, true, 242},
	}
	for _, tc := range tests {
		d, err := au.DataRate(tc.dr)
		require.NoError(t, err)
		assert.Equal(t, tc.sf, d.SF, "DR%d", tc.dr)
		assert.Equal(t, tc.bw, d.Bandwidth, "DR%d", tc.dr)
		assert.Equal(t, tc.up, d.Uplink, "DR%d", tc.dr)
		assert.Equal(t, tc.down, d.Downlink, "DR%d", tc.dr)
		assert.Equal(t, tc.n, d.MaxAppPayload, "DR%d", tc.dr)
	}
	_, err := au.DataRate(7)
	assert.ErrorIs(t, err, lora.ErrParam)
	assert.Len(t, au.TXPowers(), 15)
	assert.Equal(t, 30.0, au.MaxEIRP())
	f, dr := au.RX2()
	assert.Equal(t, 923.3e6, f)
	assert.Equal(t, 8, dr)
	// RX1: a 500 kHz downlink rate DR8 + (up − offset) clamped to DR8 …
	// DR13, the DR6 row one step above DR5's (the table as a formula).
	for up := 0; up <= 6; up++ {
		for off := 0; off <= 5; off++ {
			eff := up
			if up == 6 {
				eff = 6
			}
			want := min(13, max(8, 8+eff-off))
			got, err := au.RX1DataRate(up, off)
			require.NoError(t, err)
			assert.Equal(t, want, got, "DR%d offset %d", up, off)
		}
	}
	assert.True(t, au.DwellTime() > 1e300, "no dwell limit by default (UplinkDwellTime = 0)")
	assert.Empty(t, au.SubBands())
	// The plan lies inside the 915–928 MHz band (channel edges ± half a
	// bandwidth).
	for _, c := range au.UplinkChannels() {
		assert.GreaterOrEqual(t, c.Frequency-c.Bandwidth/2, 915e6)
		assert.LessOrEqual(t, c.Frequency+c.Bandwidth/2, 928e6)
	}
	for ch := 0; ch < 72; ch++ {
		f, err := au.RX1Frequency(ch)
		require.NoError(t, err)
		assert.InDelta(t, 923.3e6+600e3*float64(ch%8), f, 1e-3)
		assert.LessOrEqual(t, f+250e3, 928e6)
	}
}

func TestIN865Tables(t *testing.T) {
	in := lora.IN865()
	assert.Equal(t, "IN865-867", in.Name())
	wantN := []int{51, 51, 51, 115, 242, 242}
	for dr := 0; dr <= 5; dr++ {
		d, err := in.DataRate(dr)
		require.NoError(t, err)
		assert.Equal(t, 12-dr, d.SF)
		assert.Equal(t, 125e3, d.Bandwidth)
		assert.Equal(t, wantN[dr], d.MaxAppPayload)
	}
	_, err := in.DataRate(7)
	assert.ErrorIs(t, err, lora.ErrParam)
	assert.Len(t, in.TXPowers(), 11)
	assert.Equal(t, 10.0, in.TXPowers()[10])
	f, dr := in.RX2()
	assert.Equal(t, 866.55e6, f)
	assert.Equal(t, 2, dr)
	assert.Equal(t, 8, in.RX1DROffsets())
	// RX1DROffset 6 and 7 raise the data rate by 1 and 2, capped at DR5.
	for _, c := range []struct{ up, off, want int }{{0, 0, 0}, {3, 2, 1}, {1, 5, 0}, {2, 6, 3}, {2, 7, 4}, {5, 7, 5}, {4, 6, 5}} {
		got, err := in.RX1DataRate(c.up, c.off)
		require.NoError(t, err)
		assert.Equal(t, c.want, got, "DR%d offset %d", c.up, c.off)
	}
	// Inside 865–867 MHz, RX1 on the uplink's frequency.
	for i, c := range in.UplinkChannels() {
		assert.GreaterOrEqual(t, c.Frequency-c.Bandwidth/2, 865e6)
		assert.LessOrEqual(t, c.Frequency+c.Bandwidth/2, 867e6)
		rx1, err := in.RX1Frequency(i)
		require.NoError(t, err)
		assert.Equal(t, c.Frequency, rx1)
	}
	d, err := in.UplinkDutyCycle(lora.ChannelMask{}, 0)
	require.NoError(t, err)
	assert.Equal(t, 1.0, d, "no duty-cycle sub-bands")
}

// A US902-928 gateway of eight receive paths listens on one block of eight
// 125 kHz channels and one 500 kHz channel (common practice): its nodes'
// frames spread over 8 channels at DR0 … DR3 and 1 at DR4, against 64 and 8
// for the whole plan.
func TestChannelMasks(t *testing.T) {
	us := lora.US915()
	all := us.AllChannels()
	assert.Equal(t, 72, all.Len())
	assert.Equal(t, 64, us.ChannelsCarrying(all, 0))
	assert.Equal(t, 8, us.ChannelsCarrying(all, 4))
	assert.Equal(t, 64, us.ChannelsCarrying(lora.ChannelMask{}, 3), "the zero mask is the whole plan")
	b1, err := us.ChannelBlock(1)
	require.NoError(t, err)
	assert.Equal(t, []int{8, 9, 10, 11, 12, 13, 14, 15, 65}, b1.Indices())
	assert.Equal(t, 8, us.ChannelsCarrying(b1, 2))
	assert.Equal(t, 1, us.ChannelsCarrying(b1, 4))
	assert.Equal(t, 0, us.ChannelsCarrying(b1, 8), "DR8 is a downlink rate")
	// RX1 after channel 65 (903.0 + 1.6 MHz) uses downlink channel 65 mod 8 = 1.
	f, err := us.RX1Frequency(65)
	require.NoError(t, err)
	assert.Equal(t, 923.9e6, f)
	d, err := us.UplinkDutyCycle(b1, 0)
	require.NoError(t, err)
	assert.Equal(t, 1.0, d)
	_, err = us.UplinkDutyCycle(b1, 8)
	assert.ErrorIs(t, err, lora.ErrParam)

	eu := lora.EU868()
	assert.Equal(t, 0, eu.ChannelBlocks())
	_, err = eu.ChannelBlock(0)
	assert.ErrorIs(t, err, lora.ErrParam)
	d, err = eu.UplinkDutyCycle(eu.AllChannels(), 5)
	require.NoError(t, err)
	assert.Equal(t, 0.01, d, "the default channels lie in 868.0–868.6 MHz, 1 %% (ERC Rec. 70-03 Annex 1)")
	b2, d, err := eu.DownlinkBand(869.525e6)
	require.NoError(t, err)
	assert.Equal(t, 0.1, d, "RX2 at 869.525 MHz lies in 869.4–869.65 MHz, 10 %%")
	b1x, d, err := eu.DownlinkBand(868.1e6)
	require.NoError(t, err)
	assert.Equal(t, 0.01, d)
	assert.NotEqual(t, b1x, b2)
	_, _, err = eu.DownlinkBand(868.65e6)
	assert.ErrorIs(t, err, lora.ErrParam)
	b, d, err := us.DownlinkBand(923.3e6)
	require.NoError(t, err)
	assert.Equal(t, -1, b)
	assert.Equal(t, 1.0, d)
	_, err = eu.Mask(3)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = eu.Mask()
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = us.ChannelBlock(8)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = us.RX1Frequency(72)
	assert.ErrorIs(t, err, lora.ErrParam)
	m, err := eu.Mask(0, 2)
	require.NoError(t, err)
	assert.True(t, m.Has(2) && !m.Has(1) && !m.Has(-1) && !m.Has(500))
	assert.Equal(t, "channels [0 2]", m.String())
}
