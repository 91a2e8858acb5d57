package lora_test

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// TestOffTime checks the off-time rule airtime·(1/d − 1) (common practice
// for ETSI EN 300 220 duty cycles) on the hand-computed 64-byte SF12 frame
// of TestAirtime (2.793472 s): 99 × 2.793472 s = 276.553728 s at 1 %.
func TestOffTime(t *testing.T) {
	eu := lora.EU868()
	sb, err := eu.SubBandAt(868.1e6)
	require.NoError(t, err)
	// ERC Recommendation 70-03 Annex 1: 868.0–868.6 MHz, 1 %.
	assert.Equal(t, 868.0e6, sb.Low)
	assert.Equal(t, 868.6e6, sb.High)
	assert.Equal(t, 0.01, sb.DutyCycle)
	ta, err := eu.UplinkAirtime(0, 51, 0) // 64-byte PHY payload at DR0
	require.NoError(t, err)
	assert.InEpsilon(t, 2.793472, ta, 1e-14)
	off, err := sb.OffTime(ta)
	require.NoError(t, err)
	assert.InEpsilon(t, 276.553728, off, 1e-12)
	// 869.4–869.65 MHz, 10 %: 9 × airtime.
	sb10, err := eu.SubBandAt(869.525e6)
	require.NoError(t, err)
	off, err = sb10.OffTime(ta)
	require.NoError(t, err)
	assert.InEpsilon(t, 9*2.793472, off, 1e-12)
	_, err = sb.OffTime(-1)
	assert.ErrorIs(t, err, lora.ErrParam)
}

func TestCheckInterval(t *testing.T) {
	eu := lora.EU868()
	// 51 bytes every 300 s with 2 attempts: DR0 needs 2 × 2.793472 s / 1 %
	// = 558.69 s (infeasible); DR5 needs far less.
	rows, err := eu.CheckInterval(868.1e6, 51, 0, 2, 300)
	require.NoError(t, err)
	require.Len(t, rows, 7)
	for _, c := range rows {
		require.True(t, c.Fits)
		assert.InEpsilon(t, 2*c.Airtime/0.01, c.MinInterval, 1e-12)
		assert.Equal(t, c.MinInterval <= 300, c.Feasible, "DR%d", c.DR)
		assert.Equal(t, c.Feasible, c.Warning == "", "DR%d", c.DR)
	}
	assert.False(t, rows[0].Feasible)
	assert.Contains(t, rows[0].Warning, "1 % limit")
	assert.True(t, rows[5].Feasible)

	// 100 bytes: DR0 … DR2 carry at most 51, DR3 at most 115.
	rows, err = eu.CheckInterval(868.1e6, 100, 0, 1, 3600)
	require.NoError(t, err)
	for _, c := range rows {
		assert.Equal(t, c.DR >= 3, c.Fits, "DR%d", c.DR)
		if !c.Fits {
			assert.Contains(t, c.Warning, "at most 51")
			assert.False(t, c.Feasible)
		}
	}

	_, err = eu.CheckInterval(868.65e6, 10, 0, 1, 600)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.US915().CheckInterval(903e6, 10, 0, 1, 600)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = eu.CheckInterval(868.1e6, 10, 0, 0, 600)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = eu.CheckInterval(868.1e6, 10, 0, 1, 0)
	assert.ErrorIs(t, err, lora.ErrParam)
}
