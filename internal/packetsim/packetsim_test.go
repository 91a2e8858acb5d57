package packetsim_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/packetsim"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// A lone node with no answers: every cycle costs exactly the timeline of
// its setting, V·Σ I·t with the sleep current filling the period. The hand sum
// uses the durations lora.ClassA.Timelines reports for the same setting.
func TestLoneNodeEnergyIsTheTimeline(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{1, 1, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[:1]
	s.Groups[0].AnswerShare = 0
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(1, 2))
	for range 20 {
		out, err := packetsim.Play(s, packetsim.Options{Start: 10}, r)
		require.NoError(t, err)
		require.Len(t, out.Nodes, 1)
		nd := out.Nodes[0]
		ca := m.Groups[0].ClassA
		ca.Settings = []lora.Setting{{DR: nd.DR, TXPower: nd.TXPower, EIRP: nd.EIRP, Prob: 1}}
		tls, err := ca.Timelines()
		require.NoError(t, err)
		tl := tls[0]
		n := s.Nodes[0]
		tx, ok := n.TransmitCurrent(nd.EIRP)
		require.True(t, ok)
		w := s.Groups[0].Work[0]
		charge := w.Current*w.Duration + tx*tl.Uplink + n.Wait*tl.WaitRX1 + n.Receive*tl.RX1Listen + n.Wait*tl.WaitRX2 + n.Receive*tl.RX2Listen
		active := w.Duration + tl.Uplink + tl.WaitRX1 + tl.RX1Listen + tl.WaitRX2 + tl.RX2Listen
		want := n.Voltage * (charge + n.Sleep*(s.Groups[0].Interval-active))
		assert.InDelta(t, want, out.Energy[0], 1e-12*want)
		require.Len(t, out.Frames, 1)
		assert.Zero(t, out.Frames[0].Collided, "a lone node never collides")
	}
}

// Placement follows the scenario: distances uniform over the annulus
// (F(r) = (r² − a²)/(R² − a²), lora.Annulus), the out-of-reach share and the
// data-rate mix as lora.SettleADR computes them by quadrature.
func TestPlacementMatchesTheLinkLaws(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{1, 20000, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[1:2]
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	g := m.Groups[0]
	nodes, unheard, err := packetsim.Place(s, rand.New(rand.NewPCG(3, 4)))
	require.NoError(t, err)
	require.Len(t, nodes, 20000)

	// Out-of-reach share: the unheard count is binomial over the nodes.
	lo, hi := testref.BinomialInterval(len(nodes), g.OutOfReach, testref.BinLevel)
	assert.GreaterOrEqual(t, unheard[0], lo)
	assert.LessOrEqual(t, unheard[0], hi)

	// Data-rate mix of the nodes in reach, one binomial check per data rate
	// (Bonferroni over the six).
	count := map[int]int{}
	heard := 0
	for _, n := range nodes {
		if n.Unheard {
			assert.Equal(t, 0, n.DR, "the ADR back-off: slowest data rate")
			assert.Equal(t, 0, n.TXPower, "the ADR back-off: full power")
			continue
		}
		count[n.DR]++
		heard++
	}
	assert.Equal(t, len(nodes)-unheard[0], heard)
	for _, d := range g.PerDR {
		lo, hi := testref.BinomialInterval(heard, d.Share, testref.BinLevel/6)
		assert.GreaterOrEqual(t, count[d.DR], lo, "DR%d", d.DR)
		assert.LessOrEqual(t, count[d.DR], hi, "DR%d", d.DR)
	}

	// Distances of the nodes in reach follow the annulus law conditioned on
	// reach; at zero shadowing and a margin every node meets, exactly the annulus.
	s.Environment.ShadowingSD = 0
	s.Environment.InstallationMargin = 0
	s.Groups[0].OuterRadius = 1500
	nodes, unheard, err = packetsim.Place(s, rand.New(rand.NewPCG(5, 6)))
	require.NoError(t, err)
	assert.Zero(t, unheard[0])
	ann, err := lora.NewAnnulus(s.Groups[0].InnerRadius, s.Groups[0].OuterRadius)
	require.NoError(t, err)
	var dists []float64
	for _, n := range nodes {
		dists = append(dists, n.Distance)
	}
	d := testref.KSStatistic(dists, ann.CDF)
	assert.LessOrEqual(t, d, testref.KSCritical(len(dists), testref.KSLevel))
}

func TestPlayRejectsBadOptions(t *testing.T) {
	s := scenario.Demo()
	r := rand.New(rand.NewPCG(1, 1))
	for _, start := range []float64{-1, math.NaN(), math.Inf(1)} {
		_, err := packetsim.Play(s, packetsim.Options{Start: start}, r)
		require.ErrorIs(t, err, packetsim.ErrParam)
	}
	// issue 13: a start of 1e12 s ran without end, a nil source panicked;
	// both are refused before anything is played.
	for _, start := range []float64{1e12, 1e300, math.MaxFloat64} {
		_, err := packetsim.Play(s, packetsim.Options{Start: start}, r)
		require.ErrorIs(t, err, packetsim.ErrParam)
		assert.Contains(t, err.Error(), "MaxPlayedCycles")
	}
	_, err := packetsim.Play(s, packetsim.Options{Start: 10}, nil)
	require.ErrorIs(t, err, packetsim.ErrParam)
	_, _, err = packetsim.Place(s, nil)
	require.ErrorIs(t, err, packetsim.ErrParam)
}

// issue 13: a group wholly out of reach was drawn again and again (Place
// looped, later gave up with an error). Its nodes are now kept at the ADR
// back-off like the site model plans them (LoRaWAN L2 1.0.4 §4.3.1.1, from
// memory): slowest data rate, full power, every uplink lost, no answer, so a
// confirmed node spends all its transmissions; the play ends and its energy
// is the unheard cycle's, V·Σ I·t by hand over the timeline of
// lora.ClassA for that setting with both windows empty.
func TestWhollyOutOfReachGroup(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{1, 1, 5, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[2:3] // the confirmed group, 4 transmissions
	s.Groups[0].InnerRadius, s.Groups[0].OuterRadius = 40000, 45000
	s.Environment.ShadowingSD = 0
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	require.Equal(t, 1.0, m.Groups[0].Unheard.Prob)
	out, err := packetsim.Play(s, packetsim.Options{Start: 10}, rand.New(rand.NewPCG(9, 9)))
	require.NoError(t, err)
	assert.Equal(t, []int{5}, out.Unheard)
	assert.Empty(t, out.Frames, "unheard frames meet no one and are not counted")
	assert.Empty(t, out.Answers)
	ca := m.Groups[0].ClassA
	ca.Settings = []lora.Setting{m.Groups[0].Unheard}
	ca.Settings[0].Prob = 1
	ca.DownlinkByDR = nil
	tls, err := ca.Timelines()
	require.NoError(t, err)
	tl := tls[0]
	n := s.Nodes[s.Groups[0].Node]
	tx, ok := n.TransmitCurrent(tl.Setting.EIRP)
	require.True(t, ok)
	w := s.Groups[0].Work[0]
	k := float64(s.Groups[0].MaxTransmissions)
	per := tx*tl.Uplink + n.Wait*tl.WaitRX1 + n.Receive*tl.RX1Listen + n.Wait*tl.WaitRX2 + n.Receive*tl.RX2Listen
	gapMean := tl.OffTimeGap // SF12 at 1 %: the off-time exceeds ACK_TIMEOUT
	require.Greater(t, gapMean, 3.0)
	charge := w.Current*w.Duration + k*per + (k-1)*n.Wait*gapMean
	active := w.Duration + k*(tl.Uplink+tl.WaitRX1+tl.RX1Listen+tl.WaitRX2+tl.RX2Listen) + (k-1)*gapMean
	want := n.Voltage * (charge + n.Sleep*(s.Groups[0].Interval-active))
	for i, e := range out.Energy {
		assert.InDelta(t, want, e, 1e-12*want, "node %d", i)
	}
	law, err := m.Groups[0].UnheardCycle()
	require.NoError(t, err)
	assert.InEpsilon(t, want, law.MeanEnergy(), 1e-12, "the model's unheard cycle")
}

// The group's network settings reach the play: a lone node whose network
// moved RX1 two data rates down and RX2 to DR3 spends exactly the timeline
// lora.ClassA reports for those settings; an unheard node that rejoins at
// every report spends exactly the model's unheard cycle with JoinEvery = 1
// (Join-request and two empty join-accept windows).
func TestPlayUsesNetworkSettings(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{1, 1, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[:1]
	s.Groups[0].AnswerShare = 0
	s.Groups[0].RX1DROffset = 2
	s.Groups[0].RX2 = lora.RX2Window{Frequency: 869.525e6, DR: 3}
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(4, 4))
	n := s.Nodes[0]
	for range 10 {
		out, err := packetsim.Play(s, packetsim.Options{Start: 10}, r)
		require.NoError(t, err)
		nd := out.Nodes[0]
		ca := m.Groups[0].ClassA
		ca.Settings = []lora.Setting{{DR: nd.DR, TXPower: nd.TXPower, EIRP: nd.EIRP, Prob: 1}}
		tls, err := ca.Timelines()
		require.NoError(t, err)
		tl := tls[0]
		require.Equal(t, 3, tl.RX2DR)
		tx, ok := n.TransmitCurrent(nd.EIRP)
		require.True(t, ok)
		w := s.Groups[0].Work[0]
		charge := w.Current*w.Duration + tx*tl.Uplink + n.Wait*tl.WaitRX1 + n.Receive*tl.RX1Listen + n.Wait*tl.WaitRX2 + n.Receive*tl.RX2Listen
		active := w.Duration + tl.Uplink + tl.WaitRX1 + tl.RX1Listen + tl.WaitRX2 + tl.RX2Listen
		want := n.Voltage * (charge + n.Sleep*(s.Groups[0].Interval-active))
		assert.InDelta(t, want, out.Energy[0], 1e-12*want)
	}

	s.Groups[0].InnerRadius, s.Groups[0].OuterRadius = 40000, 45000
	s.Groups[0].RejoinEvery = 1
	m, err = scenario.Build(s, nil)
	require.NoError(t, err)
	cy, err := m.Groups[0].UnheardCycle()
	require.NoError(t, err)
	out, err := packetsim.Play(s, packetsim.Options{Start: 10}, r)
	require.NoError(t, err)
	require.True(t, out.Nodes[0].Unheard)
	assert.InEpsilon(t, cy.MeanEnergy(), out.Energy[0], 1e-12)
	assert.InDelta(t, 0, cy.EnergyVariance(), 1e-18, "a deterministic cycle (variance 0 up to rounding)")
}

// Repetitions of an unconfirmed uplink (NbTrans = 3, no answers): three
// transmissions, each after the previous one's RX2 has closed and the
// sub-band's off-time has passed (airtime/d after its start: EU863-870's
// default channels are in the 1 % sub-band). With the wait current above
// the sleep current the gaps show in the energy, which must equal the hand
// sum over lora.ClassA's timeline with its OffTimeGap.
func TestUnconfirmedRepetitionsTimedByOffTime(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{1, 1, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[:1]
	s.Groups[0].AnswerShare = 0
	s.Groups[0].MaxTransmissions = 3
	s.Nodes[0].Wait = 1e-3
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(5, 5))
	n := s.Nodes[0]
	for range 10 {
		out, err := packetsim.Play(s, packetsim.Options{Start: 10}, r)
		require.NoError(t, err)
		nd := out.Nodes[0]
		ca := m.Groups[0].ClassA
		ca.Settings = []lora.Setting{{DR: nd.DR, TXPower: nd.TXPower, EIRP: nd.EIRP, Prob: 1}}
		tls, err := ca.Timelines()
		require.NoError(t, err)
		tl := tls[0]
		require.Positive(t, tl.OffTimeGap)
		tx, ok := n.TransmitCurrent(nd.EIRP)
		require.True(t, ok)
		w := s.Groups[0].Work[0]
		per := tx*tl.Uplink + n.Wait*tl.WaitRX1 + n.Receive*tl.RX1Listen + n.Wait*tl.WaitRX2 + n.Receive*tl.RX2Listen
		perT := tl.Uplink + tl.WaitRX1 + tl.RX1Listen + tl.WaitRX2 + tl.RX2Listen
		charge := w.Current*w.Duration + 3*per + 2*n.Wait*tl.OffTimeGap
		active := w.Duration + 3*perT + 2*tl.OffTimeGap
		want := n.Voltage * (charge + n.Sleep*(s.Groups[0].Interval-active))
		assert.InDelta(t, want, out.Energy[0], 1e-12*want)
		cy, err := ca.Cycle(m.Groups[0].Period)
		require.NoError(t, err)
		assert.InEpsilon(t, want, cy.MeanEnergy(), 1e-12, "the class A law")
	}
}
