package scenario_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// oneGroup returns the demo reduced to its first group with n nodes.
func oneGroup(t *testing.T, n int) scenario.Scenario {
	t.Helper()
	s, err := scenario.Demo().WithCounts([]int{n, 1, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[:1]
	return s
}

func TestBuildSettingsAndReach(t *testing.T) {
	m, err := scenario.Build(scenario.Demo(), nil)
	require.NoError(t, err)
	require.Len(t, m.Groups, 4)
	for _, g := range m.Groups {
		sum, drSum := 0.0, 0.0
		for _, s := range g.Settings {
			assert.Greater(t, s.Prob, 0.0)
			sum += s.Prob
		}
		for _, d := range g.PerDR {
			drSum += d.Share
			assert.Greater(t, d.UplinkSuccess, 0.9, "demo loads are light")
			assert.LessOrEqual(t, d.UplinkSuccess, 1.0)
		}
		assert.InDelta(t, 1, sum, 1e-12)
		assert.InDelta(t, 1, drSum, 1e-12)
		assert.InDelta(t, g.Settled.OutOfReach(), g.OutOfReach, 0)
	}
	// Confirmed uplinks retransmit: more than one frame per report on average.
	assert.Greater(t, m.Groups[2].PerDR[0].Frames, 1.0)
	assert.Equal(t, 1.0, m.Groups[0].PerDR[0].Frames)
}

// With one group of identical frames, the assembled load is lora's own
// pure-ALOHA load of the other n−1 nodes (UplinkCollisions, which implements
// G = n·airtime/(T·channels) per data rate, Abramson 1970).
func TestCollisionsMatchLoraForOneGroup(t *testing.T) {
	s := oneGroup(t, 400)
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	g := m.Groups[0]
	// Only the heard nodes load the channels: their settings scaled by
	// Heard (UplinkCollisions leaves the rest of the nodes out).
	heard := append([]lora.Setting(nil), g.Settings...)
	for i := range heard {
		heard[i].Prob *= g.Heard()
	}
	want, err := lora.UplinkCollisions(s.Region, heard, lora.Traffic{
		Nodes: float64(s.Groups[0].Nodes - 1), Interval: s.Groups[0].Interval,
		Channels: len(s.Region.UplinkChannels()), App: s.Groups[0].Payload,
	})
	require.NoError(t, err)
	require.Len(t, want, len(g.PerDR))
	for i, w := range want {
		d := g.PerDR[i]
		assert.Equal(t, w.DR, d.DR)
		assert.InDelta(t, w.Load, d.Vulnerable, 1e-15*math.Max(1, w.Load))
		assert.InDelta(t, w.Success, d.UplinkSuccess, 1e-14)
		// All nodes' load is n/(n−1) times the others' load.
		assert.InDelta(t, w.Load*400/399, d.Load, 1e-14)
	}
}

// Two groups of different frame lengths on one gateway: a frame of length a
// is safe when no frame of length b starts in the a + b before its end, so
// the success is exp(−Σ λ(a + b)) for Poisson arrivals (pure ALOHA with
// unequal lengths; the equal-length case is Abramson 1970). Checked by hand
// at one data rate with both groups forced onto it.
func TestCollisionsMixedLengths(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{50, 70, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[:2]
	s.Environment.InstallationMargin = 0
	s.Groups[0].InnerRadius, s.Groups[0].OuterRadius = 10, 11 // all at DR5 and low power
	s.Groups[1].InnerRadius, s.Groups[1].OuterRadius = 10, 11
	s.Environment.ShadowingSD = 0
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	require.Len(t, m.Groups[0].PerDR, 1)
	require.Len(t, m.Groups[1].PerDR, 1)
	a := m.Groups[0].PerDR[0].Airtime
	b := m.Groups[1].PerDR[0].Airtime
	c := float64(len(s.Region.UplinkChannels()))
	la := 1 / (s.Groups[0].Interval * c) // per node, per channel
	lb := 1 / (s.Groups[1].Interval * c)
	wantA := math.Exp(-(49*la*(a+a) + 70*lb*(a+b)))
	wantB := math.Exp(-(50*la*(b+a) + 69*lb*(b+b)))
	assert.InDelta(t, wantA, m.Groups[0].PerDR[0].UplinkSuccess, 1e-14)
	assert.InDelta(t, wantB, m.Groups[1].PerDR[0].UplinkSuccess, 1e-14)
}

// The mixture of per-setting cycles is the group's cycle: its mean and
// variance, and the breakdown by the law of total covariance, agree with the
// class A cycle that draws the setting once per cycle (energy.Configured).
func TestMixtureOfSettingsIsTheGroupCycle(t *testing.T) {
	m, err := scenario.Build(oneGroup(t, 60), nil)
	require.NoError(t, err)
	g := m.Groups[0]
	cycles, err := m.SettingCycles(2)
	require.NoError(t, err)
	mix, err := g.MixEnergy(cycles[0])
	require.NoError(t, err)
	whole, err := g.Cycle()
	require.NoError(t, err)
	assert.InDelta(t, whole.MeanEnergy(), mix.Mean(), 1e-12*whole.MeanEnergy())
	assert.InDelta(t, whole.EnergyVariance(), mix.Variance(), 1e-9*whole.EnergyVariance())
	got := scenario.MixBreakdown(g.Weights(), cycles[0])
	want := whole.Breakdown()
	require.Len(t, got, len(want))
	for i := range want {
		assert.Equal(t, want[i].Name, got[i].Name)
		assert.Equal(t, want[i].Floor, got[i].Floor)
		assert.InDelta(t, want[i].Runs, got[i].Runs, 1e-12)
		assert.InDelta(t, want[i].MeanEnergy, got[i].MeanEnergy, 1e-12*whole.MeanEnergy())
		assert.InDelta(t, want[i].MeanShare, got[i].MeanShare, 1e-10)
		assert.InDelta(t, want[i].VarianceShare, got[i].VarianceShare, 1e-8, want[i].Name)
	}
	for _, x := range []float64{0.036, 0.04, 0.06, 0.2, 0.5} {
		assert.InDelta(t, whole.Energy().CDF(x), mix.CDF(x), 1e-6, "CDF at %g J", x)
	}
	_, err = g.SettingCycle(len(g.Settings))
	require.ErrorIs(t, err, scenario.ErrInvalid)
}

// loraAirtimeSF12 is the LoRa time on air at SF12, 125 kHz, coding rate 4/5,
// 8 preamble symbols, explicit header, payload CRC on and low-data-rate
// optimisation on, for a PHY payload of n bytes, by the published formula
// (Augustin et al., Sensors 16(9):1466,
// 2016), written out here by hand:
//
//	n_payload = 8 + max(ceil((8n − 4·SF + 28 + 16)/(4·(SF − 2)))·5, 0)
//	T = (8 + 4.25 + n_payload)·2^SF/BW
func loraAirtimeSF12(n int) float64 {
	const sf, bw = 12, 125e3
	sym := math.Exp2(sf) / bw
	np := 8 + math.Max(math.Ceil(float64(8*n-4*sf+28+16)/float64(4*(sf-2)))*5, 0)
	return (8 + 4.25 + np) * sym
}

// Out-of-reach nodes are planned at the ADR back-off setting (LoRaWAN L2
// 1.0.4 §4.3.1.1: the slowest data rate, full power; from memory), with a
// share equal to SettleADR's, every uplink lost and no downlink. Their cycle
// is checked against a hand sum E = V·[I_sleep·T + Σ (I − I_sleep)·t] over the
// work, NbTrans uplinks at DR0 and 16 dBm (EU863-870's TXPower 0, RP002-1.0.3)
// and two empty windows per attempt of margin + 8 symbols each.
func TestUnheardNodesPlannedAtBackOff(t *testing.T) {
	m, err := scenario.Build(scenario.Demo(), nil)
	require.NoError(t, err)
	sym := math.Exp2(12) / 125e3
	for gi, g := range m.Groups {
		gr := g.Group
		require.Greater(t, g.OutOfReach, scenario.UnheardFloor, "every demo group has some placements out of reach")
		assert.Equal(t, lora.Setting{DR: 0, TXPower: 0, EIRP: 16, Prob: g.OutOfReach}, g.Unheard)
		all := g.AllSettings()
		require.Len(t, all, len(g.Settings)+1)
		w := g.AllWeights()
		sum := 0.0
		for i, x := range w {
			sum += x
			assert.Equal(t, i == len(w)-1, g.IsUnheard(i))
		}
		assert.InDelta(t, 1, sum, 1e-12)
		assert.Equal(t, g.OutOfReach, w[len(w)-1])

		c, err := g.AllSettingCycle(len(w) - 1)
		require.NoError(t, err)
		n := m.Scenario.NodeOf(gr)
		tx, ok := n.TransmitCurrent(16)
		require.True(t, ok)
		phy := gr.Payload + 13 // LoRaWAN 1.0.3 MAC framing, no FOpts
		listen := n.WindowMargin + 8*sym
		attempt := (tx-n.Sleep)*loraAirtimeSF12(phy) + 2*(n.Receive-n.Sleep)*listen
		work := 0.0
		for _, st := range gr.Work {
			work += (st.Current - n.Sleep) * st.Duration
		}
		want := n.Voltage * (n.Sleep*gr.Interval + work + float64(gr.MaxTransmissions)*attempt)
		assert.InDelta(t, want, c.MeanEnergy(), 1e-12*want, "group %d", gi)
		assert.InDelta(t, 0, c.EnergyVariance(), 1e-12*want*want, "fixed schedule, fixed work, no downlink: one value")
	}
}

// A group whose every placement misses the margin is still planned: all its
// nodes at the back-off setting.
func TestGroupWhollyOutOfReach(t *testing.T) {
	s := oneGroup(t, 30)
	s.Groups[0].InnerRadius, s.Groups[0].OuterRadius = 40000, 50000
	s.Environment.ShadowingSD = 0 // exactly out of reach beyond the margin's distance
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	g := m.Groups[0]
	assert.Greater(t, g.OutOfReach, 1-scenario.UnheardFloor)
	assert.Empty(t, g.Settings)
	assert.Empty(t, g.PerDR)
	assert.Equal(t, []float64{1}, g.AllWeights())
	assert.Zero(t, g.Heard())
	c, err := g.AllSettingCycle(0)
	require.NoError(t, err)
	assert.Positive(t, c.MeanEnergy())
	_, err = g.SettingCycle(0)
	require.ErrorIs(t, err, scenario.ErrInvalid)

	// And a group wholly in reach plans no unheard nodes.
	s.Groups[0].InnerRadius, s.Groups[0].OuterRadius = 10, 11
	m, err = scenario.Build(s, nil)
	require.NoError(t, err)
	g = m.Groups[0]
	assert.Zero(t, g.Unheard.Prob)
	assert.Equal(t, 1.0, g.Heard())
	assert.Len(t, g.AllSettings(), len(g.Settings))
	_, err = g.UnheardCycle()
	require.ErrorIs(t, err, scenario.ErrInvalid)
}

// The US902-928 test site: 15 TXPower levels from 30 dBm down (RP002-1.0.3
// §2.5, from memory), 64 uplink channels of 125 kHz for DR0 … DR3 and 8 of
// 500 kHz for DR4 (same source), and EU863-870's 3 default channels for
// DR0 … DR5. With one unconfirmed group the load its frames meet is the
// other nodes' Σ share·airtime/(T·channels) per data rate, and the success
// exp(−2G') (Abramson 1970), worked by hand here.
func TestUS902928Site(t *testing.T) {
	s, err := scenario.Load("testdata/us902-928.json")
	require.NoError(t, err)
	assert.Equal(t, "US902-928", s.Region.Name())
	require.Len(t, s.Nodes[0].Transmit, 15)
	for i, lv := range s.Nodes[0].Transmit {
		assert.Equal(t, 30-2*float64(i), lv.EIRP)
	}
	for dr, want := range map[int]int{0: 64, 1: 64, 2: 64, 3: 64, 4: 8} {
		assert.Equal(t, want, scenario.Channels(s.Region, dr), "US902-928 DR%d", dr)
	}
	for dr := range 6 {
		assert.Equal(t, 3, scenario.Channels(lora.EU868(), dr), "EU863-870 DR%d", dr)
	}

	s.Groups = s.Groups[:1]
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	g := m.Groups[0]
	assert.Equal(t, lora.Setting{DR: 0, TXPower: 0, EIRP: 30, Prob: g.OutOfReach}, g.Unheard)
	n, T := float64(s.Groups[0].Nodes), s.Groups[0].Interval
	require.Len(t, g.PerDR, 5)
	for _, d := range g.PerDR {
		ch := map[bool]float64{true: 8, false: 64}[d.DR == 4]
		want := (n - 1) * g.Heard() * d.Share * d.Airtime / (T * ch) // heard nodes only
		assert.InDelta(t, want, d.Vulnerable, 1e-15, "DR%d", d.DR)
		assert.InDelta(t, math.Exp(-2*want), d.UplinkSuccess, 1e-15, "DR%d", d.DR)
	}
	c, err := g.UnheardCycle()
	require.NoError(t, err)
	assert.Positive(t, c.MeanEnergy())
}
