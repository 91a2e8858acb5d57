package lora_test

import (
	"errors"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// TestAirtime checks PHY.Airtime against values hand-computed from the
// published formula (Augustin, Yi, Clausen and Townsley, "A Study of LoRa:
// Long Range & Low Power Networks for the Internet of Things", Sensors
// 16(9):1466, 2016, eq. 3–4):
//
//	T = (n_preamble + 4.25 + 8 + max(⌈(8PL − 4SF + 28 + 16CRC − 20IH)/(4(SF − 2DE))⌉·CR, 0)) · 2^SF/BW
//
// The first four rows are the check values of issue 6 (hand-computed from
// that formula); the others were worked by hand for this test, the
// arithmetic shown beside each.
func TestAirtime(t *testing.T) {
	lora125 := func(sf int) lora.PHY { return lora.UplinkPHY(sf, 125e3) }
	tests := []struct {
		name  string
		phy   lora.PHY
		bytes int
		want  float64 // s
	}{
		// (8·13−28+28+16)/28 = 4.29 → 5; 8+5·5 = 33; (12.25+33)·1.024 ms.
		{"SF7/125 13 B", lora125(7), 13, 46.336e-3},
		// (512−48+44)/40 = 12.7 → 13; 8+65 = 73; (12.25+73)·32.768 ms.
		{"SF12/125 64 B", lora125(12), 64, 2793.472e-3},
		// (184−48+44)/40 = 4.5 → 5; 33 symbols; 45.25·32.768 ms.
		{"SF12/125 23 B LDRO auto", lora125(12), 23, 1482.752e-3},
		// without the optimisation: 180/48 = 3.75 → 4; 28; 40.25·32.768 ms.
		{"SF12/125 23 B LDRO off", func() lora.PHY { p := lora125(12); p.LowDataRate = lora.LowDataRateOff; return p }(), 23, 1318.912e-3},
		// (160−36+44)/36 = 4.67 → 5; 33; 45.25·4.096 ms.
		{"SF9/125 20 B", lora125(9), 20, 185.344e-3},
		// SF7/500, CR 4/8, 12-symbol preamble, implicit header, no CRC:
		// (80−28+28−20)/28 = 2.14 → 3; 8+3·8 = 32; (16.25+32)·0.256 ms.
		{"SF7/500 implicit CR4/8", lora.PHY{SF: 7, Bandwidth: 500e3, CodingRate: 8, Preamble: 12, ImplicitHeader: true}, 10, 12.352e-3},
		// SF12/125 implicit, no CRC, 0 bytes: numerator −40 → 0 blocks; 8
		// symbols; (8+4.25+8)·32.768 ms.
		{"SF12/125 empty implicit", lora.PHY{SF: 12, Bandwidth: 125e3, CodingRate: 5, Preamble: 8, ImplicitHeader: true}, 0, 663.552e-3},
		// SF11/125 (16.384 ms symbols, optimisation on): (104−44+44)/36 =
		// 2.89 → 3; 23; 35.25·16.384 ms.
		{"SF11/125 13 B", lora125(11), 13, 577.536e-3},
		// SF10/125 CR 4/6: (408−40+44)/40 = 10.3 → 11; 8+66 = 74; 86.25·8.192 ms.
		{"SF10/125 CR4/6 51 B", func() lora.PHY { p := lora125(10); p.CodingRate = 6; return p }(), 51, 706.56e-3},
		// Forced optimisation at SF7/125: (104−28+44)/20 = 6 → 6; 38; 50.25·1.024 ms.
		{"SF7/125 LDRO on", func() lora.PHY { p := lora125(7); p.LowDataRate = lora.LowDataRateOn; return p }(), 13, 51.456e-3},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := tc.phy.Airtime(tc.bytes)
			require.NoError(t, err)
			assert.InEpsilon(t, tc.want, got, 1e-14)
		})
	}
}

// TestLowDataRateAuto checks the 16 ms rule (common practice; the
// optimisation is the DE term of Augustin et al., Sensors 16(9):1466, 2016,
// eq. 4): on for SF11 and SF12 at 125 kHz and SF12 at 250 kHz only.
func TestLowDataRateAuto(t *testing.T) {
	for _, bw := range []float64{125e3, 250e3, 500e3} {
		for sf := 7; sf <= 12; sf++ {
			want := (bw == 125e3 && sf >= 11) || (bw == 250e3 && sf == 12)
			assert.Equal(t, want, lora.UplinkPHY(sf, bw).LowDataRateOptimised(), "SF%d/%g", sf, bw)
		}
	}
}

func TestSymbolTime(t *testing.T) {
	// 2^SF/BW: SF12/125 kHz is 32.768 ms, SF7/500 kHz 0.256 ms (definition).
	ts, err := lora.SymbolTime(12, 125e3)
	require.NoError(t, err)
	assert.InEpsilon(t, 32.768e-3, ts, 1e-15)
	ts, err = lora.SymbolTime(7, 500e3)
	require.NoError(t, err)
	assert.InEpsilon(t, 0.256e-3, ts, 1e-15)
	_, err = lora.SymbolTime(6, 125e3)
	assert.ErrorIs(t, err, lora.ErrParam)
}

func TestPHYBadInput(t *testing.T) {
	good := lora.UplinkPHY(7, 125e3)
	tests := []struct {
		name  string
		phy   lora.PHY
		bytes int
		param string
	}{
		{"SF 13", lora.UplinkPHY(13, 125e3), 10, "SF"},
		{"BW 200k", lora.UplinkPHY(7, 200e3), 10, "Bandwidth"},
		{"CR 4", func() lora.PHY { p := good; p.CodingRate = 4; return p }(), 10, "CodingRate"},
		{"preamble 0", func() lora.PHY { p := good; p.Preamble = 0; return p }(), 10, "Preamble"},
		{"LDR 7", func() lora.PHY { p := good; p.LowDataRate = 7; return p }(), 10, "LowDataRate"},
		{"256 bytes", good, 256, "bytes"},
		{"negative bytes", good, -1, "bytes"},
		{"zero value", lora.PHY{}, 10, "SF"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := tc.phy.Airtime(tc.bytes)
			require.ErrorIs(t, err, lora.ErrParam)
			var pe *lora.ParamError
			require.True(t, errors.As(err, &pe))
			assert.Equal(t, tc.param, pe.Param)
		})
	}
}

// TestFraming checks the LoRaWAN 1.0.3 framing (§4: MHDR 1, DevAddr 4,
// FCtrl 1, FCnt 2, FOpts 0…15, FPort 1, MIC 4) and the uplink/downlink CRC
// rule (§3.1–3.2).
func TestFraming(t *testing.T) {
	n, err := lora.PHYPayloadBytes(10, 0)
	require.NoError(t, err)
	assert.Equal(t, 23, n)
	n, err = lora.PHYPayloadBytes(0, 15)
	require.NoError(t, err)
	assert.Equal(t, 28, n)
	assert.Equal(t, 12, lora.EmptyFrameBytes)
	_, err = lora.PHYPayloadBytes(10, 16)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.PHYPayloadBytes(243, 0)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.PHYPayloadBytes(-1, 0)
	assert.ErrorIs(t, err, lora.ErrParam)

	assert.True(t, lora.UplinkPHY(9, 125e3).CRC)
	assert.False(t, lora.DownlinkPHY(9, 125e3).CRC)
	// A downlink drops the 16 CRC bits: at SF9/125, 23 bytes, (184−36+28)/36
	// = 4.9 → 5 blocks either way, but at 22 bytes (176−36+28)/36 = 4.67 →
	// 5 against (176−36+44)/36 = 5.11 → 6 with CRC: one block (5 symbols,
	// 20.48 ms) shorter. Hand-computed from the formula above.
	up, err := lora.UplinkPHY(9, 125e3).Airtime(22)
	require.NoError(t, err)
	down, err := lora.DownlinkPHY(9, 125e3).Airtime(22)
	require.NoError(t, err)
	assert.InDelta(t, 5*4.096e-3, up-down, 1e-12)
}
