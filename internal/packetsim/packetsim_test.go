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
	nodes, redraws, err := packetsim.Place(s, rand.New(rand.NewPCG(3, 4)))
	require.NoError(t, err)
	require.Len(t, nodes, 20000)

	// Out-of-reach share: redraws are a negative-binomial count; the share
	// of rejected draws is binomial over all draws.
	draws := len(nodes) + redraws[0]
	lo, hi := testref.BinomialInterval(draws, g.OutOfReach, testref.BinLevel)
	assert.GreaterOrEqual(t, redraws[0], lo)
	assert.LessOrEqual(t, redraws[0], hi)

	// Data-rate mix of the nodes in reach, one binomial check per data rate
	// (Bonferroni over the six).
	count := map[int]int{}
	dists := make([]float64, len(nodes))
	for i, n := range nodes {
		count[n.DR]++
		dists[i] = n.Distance
	}
	for _, d := range g.PerDR {
		lo, hi := testref.BinomialInterval(len(nodes), d.Share, testref.BinLevel/6)
		assert.GreaterOrEqual(t, count[d.DR], lo, "DR%d", d.DR)
		assert.LessOrEqual(t, count[d.DR], hi, "DR%d", d.DR)
	}

	// Distances of the nodes in reach follow the annulus law conditioned on
	// reach; at zero shadowing and a margin every node meets, exactly the annulus.
	s.Environment.ShadowingSD = 0
	s.Environment.InstallationMargin = 0
	s.Groups[0].OuterRadius = 1500
	nodes, redraws, err = packetsim.Place(s, rand.New(rand.NewPCG(5, 6)))
	require.NoError(t, err)
	assert.Zero(t, redraws[0])
	ann, err := lora.NewAnnulus(s.Groups[0].InnerRadius, s.Groups[0].OuterRadius)
	require.NoError(t, err)
	dists = dists[:0]
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
	// A group that cannot be reached at all is reported, not looped on.
	s2, err := s.WithCounts([]int{1, 1, 1, 1})
	require.NoError(t, err)
	s2.Groups[0].InnerRadius, s2.Groups[0].OuterRadius = 40000, 45000
	s2.Environment.ShadowingSD = 0
	_, err = packetsim.Play(s2, packetsim.Options{}, r)
	require.ErrorIs(t, err, packetsim.ErrParam)
}
