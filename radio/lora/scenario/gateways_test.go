package scenario_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// A US902-928 gateway on channel block 1 (8 channels of 125 kHz and one of
// 500 kHz, common practice) spreads its nodes' frames over 8 channels at
// DR0 … DR3 and 1 at DR4: the load a frame meets is the heard others'
// Σ share·airtime/(T·channels), by hand, and the success exp(−2G')
// (Abramson 1970).
func TestGatewayChannelBlock(t *testing.T) {
	s, err := scenario.Load("testdata/us902-928.json")
	require.NoError(t, err)
	s.Groups = s.Groups[:1]
	b1, err := s.Region.ChannelBlock(1)
	require.NoError(t, err)
	s.Gateways[s.Groups[0].Gateway].Channels = b1
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	g := m.Groups[0]
	n, T := float64(s.Groups[0].Nodes), s.Groups[0].Interval
	for _, d := range g.PerDR {
		ch := map[bool]float64{true: 1, false: 8}[d.DR == 4]
		want := (n - 1) * g.Heard() * d.Share * d.Airtime / (T * ch)
		assert.InDelta(t, want, d.Vulnerable, 1e-15*math.Max(1, want), "DR%d", d.DR)
		assert.InDelta(t, math.Exp(-2*want), d.UplinkSuccess, 1e-14, "DR%d", d.DR)
	}
	assert.Equal(t, b1, g.ClassA.Mask)
}

// The group's RX1DROffset and RX2 setting reach the class A cycle and the
// gateway's answers: RX2 at DR3 (SF9/125 kHz) in EU863-870 listens 6
// symbols of 4.096 ms plus the margin; the RX2 stream's airtime is a
// DR3 downlink of the group's answer (the airtime formula, Augustin et al.
// 2016); the RX1 stream's is at max(DR − 2, 0).
func TestGroupWindowSettings(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{1, 1, 30, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[2:3]
	s.Groups[0].RX1DROffset = 2
	s.Groups[0].RX2 = lora.RX2Window{Frequency: 869.525e6, DR: 3}
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	g := m.Groups[0]
	tls, err := g.ClassA.Timelines()
	require.NoError(t, err)
	node := s.NodeOf(s.Groups[0])
	for _, tl := range tls {
		assert.Equal(t, 3, tl.RX2DR)
		assert.Equal(t, max(tl.Setting.DR-2, 0), tl.RX1DR)
		assert.InDelta(t, node.WindowMargin+float64(node.WindowSymbols)*4.096e-3, tl.RX2Listen, 1e-15)
	}
	gw := m.Gateways[0]
	// The group's answers are bare acknowledgements (EmptyFrameBytes).
	want3, err := lora.DownlinkPHY(9, 125e3).Airtime(lora.EmptyFrameBytes)
	require.NoError(t, err)
	k := 0
	for _, d := range g.PerDR {
		rx1, err := s.Region.RX1DataRate(d.DR, 2)
		require.NoError(t, err)
		dd, err := s.Region.DataRate(rx1)
		require.NoError(t, err)
		a1, err := dd.DownlinkPHY().Airtime(lora.EmptyFrameBytes)
		require.NoError(t, err)
		assert.InDelta(t, a1, gw.Streams[k].Airtime, 1e-15, "RX1 after DR%d", d.DR)
		assert.Equal(t, 1.0, gw.Streams[k].Lead)
		assert.InDelta(t, want3, gw.Streams[k+1].Airtime, 1e-15, "RX2 at DR3")
		assert.Equal(t, 2.0, gw.Streams[k+1].Lead)
		k += 2
	}
}

// An out-of-reach node that sends a Join-request in one report of four
// spends a quarter of the Join-request's cost more per cycle (the cycle's
// mean is linear in the per-report Bernoulli(1/4) draw).
func TestRejoinEvery(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{1, 1, 5, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[2:3]
	s.Groups[0].InnerRadius, s.Groups[0].OuterRadius = 40000, 45000
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	base, err := m.Groups[0].UnheardCycle()
	require.NoError(t, err)
	s.Groups[0].RejoinEvery = 1
	m1, err := scenario.Build(s, nil)
	require.NoError(t, err)
	every, err := m1.Groups[0].UnheardCycle()
	require.NoError(t, err)
	s.Groups[0].RejoinEvery = 4
	m4, err := scenario.Build(s, nil)
	require.NoError(t, err)
	quarter, err := m4.Groups[0].UnheardCycle()
	require.NoError(t, err)
	join := every.MeanEnergy() - base.MeanEnergy()
	assert.Positive(t, join)
	assert.InEpsilon(t, join/4, quarter.MeanEnergy()-base.MeanEnergy(), 1e-12)
}

// The gateway's budget in the model: a confirmed group answered after every
// uplink, 85 % in RX1 (1 % sub-band) and 15 % in RX2 (10 %), loses more
// answers as it grows, and the lost acknowledgements raise the
// transmissions per report (the fixed point); the over-budget flag follows
// the offered airtime share against the limit.
func TestGatewayBudgetFeedsRetransmissions(t *testing.T) {
	prevSent, prevFrames := 1.0, 0.0
	for _, n := range []int{10, 100, 1000} {
		s, err := scenario.Demo().WithCounts([]int{1, 1, n, 1})
		require.NoError(t, err)
		s.Groups = s.Groups[2:3]
		s.Groups[0].Interval = 600
		m, err := scenario.Build(s, nil)
		require.NoError(t, err)
		sent, frames, w := 0.0, 0.0, 0.0
		for _, d := range m.Groups[0].PerDR {
			sent += d.Share * d.RX1Sent
			frames += d.Share * d.Frames
			w += d.Share
		}
		sent /= w
		assert.Less(t, sent, prevSent, "%d nodes", n)
		assert.Greater(t, frames, prevFrames, "%d nodes", n)
		prevSent, prevFrames = sent, frames
		gw := m.Gateways[0]
		over := false
		for _, b := range gw.Budget.Bands {
			assert.LessOrEqual(t, b.Used, b.DutyCycle*(1+1e-12))
			over = over || b.Offered > b.DutyCycle
		}
		assert.Equal(t, over, gw.Over())
		warn := m.GatewayWarnings()
		assert.Equal(t, over, len(warn) > 0, "%d nodes: a warning exactly when over budget", n)
		if n == 1000 {
			assert.True(t, gw.Over())
			require.NotEmpty(t, warn)
			assert.Contains(t, warn[0].Text, "868.0–868.60 MHz (1 %) sub-band")
			assert.Contains(t, warn[0].Text, "defer to the regulator")
			assert.Equal(t, scenario.GatewayBudget, warn[0].Kind)
			assert.Equal(t, -1, warn[0].Group)
		}
	}
}

// The regions added for issue 14 plan end to end: the US902-928 test site
// moved to AU915-928 (the same 15 TXPower levels from 30 dBm; 64 + 8
// channels, DR0 … DR5 on 125 kHz, DR6 on 500 kHz) and to IN865-867 (11
// levels from 30 dBm, three default channels, no duty-cycle sub-bands, so
// the gateway is limited by its transmitter alone): every group builds,
// spreads its frames over the channels that carry each data rate, and its
// cycle has a positive mean.
func TestMoreRegionsPlan(t *testing.T) {
	for _, tc := range []struct {
		region lora.Region
		levels int
		chans  map[int]int
	}{
		{lora.AU915(), 15, map[int]int{0: 64, 5: 64, 6: 8}},
		{lora.IN865(), 11, map[int]int{0: 3, 5: 3}},
	} {
		t.Run(tc.region.Name(), func(t *testing.T) {
			s, err := scenario.Load("testdata/us902-928.json")
			require.NoError(t, err)
			s.Region = tc.region
			for i := range s.Nodes {
				s.Nodes[i].Transmit = s.Nodes[i].Transmit[:tc.levels]
			}
			m, err := scenario.Build(s, nil)
			require.NoError(t, err)
			for dr, n := range tc.chans {
				assert.Equal(t, n, tc.region.ChannelsCarrying(lora.ChannelMask{}, dr), "DR%d", dr)
			}
			for _, g := range m.Groups {
				for _, d := range g.PerDR {
					assert.Contains(t, tc.region.ADRDataRates(), d.DR)
				}
				cy, err := g.Cycle()
				require.NoError(t, err)
				assert.Positive(t, cy.MeanEnergy())
			}
			for _, b := range m.Gateways[0].Budget.Bands {
				assert.Equal(t, 1.0, b.DutyCycle, "no duty-cycle sub-bands: the transmitter alone")
			}
		})
	}
}

// The budget table: per gateway and sub-band, the airtime the answers need
// and use by window against the limit. The limits are ERC Recommendation
// 70-03 Annex 1's (1 % in 868.0–868.6 MHz, 10 % in 869.4–869.65 MHz, as
// the EU863-870 table holds them); a US902-928 gateway has one row, the
// transmitter (no duty-cycle sub-bands: the dwell time limits uplinks
// only, RP002-1.0.3 §2.5, from memory). The used shares never exceed the
// limit (the off-time rule), they add up to what lora.GatewayDownlinks
// reports per band, and the answers lost in an RX1 band are those sent in
// neither window (1 − RX1Sent − RX1Fallback).
func TestGatewayBudgetTable(t *testing.T) {
	for _, n := range []int{10, 400} {
		s, err := scenario.Demo().WithCounts([]int{1, 1, n, 1})
		require.NoError(t, err)
		s.Groups = s.Groups[2:3]
		s.Groups[0].Interval = 600
		m, err := scenario.Build(s, nil)
		require.NoError(t, err)
		rows := m.GatewayBudgets()
		require.NotEmpty(t, rows)
		limits := map[string]float64{}
		for _, r := range rows {
			limits[r.Band] = r.DutyCycle
			assert.LessOrEqual(t, r.Used(), r.DutyCycle*(1+1e-12), "%d nodes, %s", n, r.Band)
			assert.LessOrEqual(t, r.UsedRX1, r.OfferedRX1*(1+1e-12))
			assert.LessOrEqual(t, r.UsedRX2+r.UsedFallback, r.OfferedRX2*(1+1e-12))
			found := false
			for _, b := range m.Gateways[r.Gateway].Budget.Bands {
				if b.DutyCycle == r.DutyCycle && math.Abs(b.Used-r.Used()) <= 1e-12*b.Used+1e-300 {
					found = true
				}
			}
			assert.True(t, found, "%s: the row's use is lora's", r.Band)
		}
		assert.Equal(t, 0.01, limits["868.0–868.60 MHz (1 %)"], "ERC 70-03 Annex 1")
		assert.Equal(t, 0.1, limits["869.4–869.65 MHz (10 %)"], "ERC 70-03 Annex 1")
		rx1 := rows[0]
		require.Positive(t, rx1.OfferedRX1)
		lost, rate := 0.0, 0.0
		for _, d := range m.Groups[0].PerDR {
			w := d.Share * d.Frames * d.UplinkSuccess
			lost += w * (1 - d.RX1Sent - d.RX1Fallback)
			rate += w
		}
		assert.InDelta(t, lost/rate, rx1.Lost, 1e-9, "%d nodes: lost in the RX1 band", n)
		if n == 400 {
			assert.True(t, rx1.Over())
			assert.Positive(t, rows[len(rows)-1].UsedFallback, "answers refused in RX1 go out in RX2")
		}
	}
	s, err := scenario.Load("testdata/us902-928.json")
	require.NoError(t, err)
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	for _, r := range m.GatewayBudgets() {
		assert.Equal(t, "transmitter", r.Band)
		assert.Equal(t, 1.0, r.DutyCycle)
	}
}
