package ble_test

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/ble"
)

// TestAirtime checks PHY.Airtime against the packet formats of the
// Bluetooth Core Specification v5.3, Vol 6, Part B, §2.1 (uncoded:
// preamble 1 octet on LE 1M, 2 on LE 2M, access address 4, header 2,
// payload, CRC 3, at 1 or 2 Mb/s) and §2.2 (coded: 80 µs preamble, FEC block
// 1 of 37 bits at S = 8, FEC block 2 of PDU + CRC + 3 TERM2 bits at S; from
// memory), worked by hand. The 1M and 2M maxima (2120 µs and 1064 µs) and
// the coded maxima (4542 µs at S = 2, 17040 µs at S = 8) are also the
// figures commonly quoted for a 255-octet PDU payload (common practice).
func TestAirtime(t *testing.T) {
	for _, tc := range []struct {
		phy     ble.PHY
		payload int
		want    float64 // µs
	}{
		{ble.LE1M, 0, 80},           // empty data PDU: (1+4+2+3)·8
		{ble.LE1M, 6, 128},          // ADV_NONCONN_IND without AdvData
		{ble.LE1M, 37, 376},         // ADV_NONCONN_IND with 31 octets of AdvData
		{ble.LE1M, 12, 176},         // SCAN_REQ
		{ble.LE1M, 34, 352},         // CONNECT_IND
		{ble.LE1M, 255, 2120},       // (1+4+2+255+3)·8
		{ble.LE2M, 0, 44},           // (2+4+2+3)·4
		{ble.LE2M, 27, 152},         // (2+4+2+27+3)·4
		{ble.LE2M, 255, 1064},       // (2+4+2+255+3)·4
		{ble.LECodedS8, 0, 720},     // 80 + 296 + (16+24+3)·8
		{ble.LECodedS8, 31, 2704},   // 27 octets + MIC
		{ble.LECodedS8, 255, 17040}, // 720 + 64·255
		{ble.LECodedS2, 0, 462},     // 80 + 296 + (16+24+3)·2
		{ble.LECodedS2, 255, 4542},  // 462 + 16·255
	} {
		got, err := tc.phy.Airtime(tc.payload)
		require.NoError(t, err)
		assert.InEpsilon(t, tc.want*1e-6, got, 1e-14, "%v, %d octets", tc.phy, tc.payload)
	}
}

func TestAirtimeBadInput(t *testing.T) {
	for _, tc := range []struct {
		phy     ble.PHY
		payload int
		param   string
	}{
		{ble.LE1M, -1, "payload"},
		{ble.LE1M, 256, "payload"},
		{ble.PHY(4), 10, "PHY"},
		{ble.PHY(-1), 10, "PHY"},
	} {
		_, err := tc.phy.Airtime(tc.payload)
		require.ErrorIs(t, err, ble.ErrParam)
		assert.Contains(t, err.Error(), tc.param)
	}
	assert.Equal(t, "LE Coded S=8", ble.LECodedS8.String())
	assert.Equal(t, "PHY(7)", ble.PHY(7).String())
}
