package lora_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// TestAloha checks pure ALOHA against Abramson (1970): success exp(−2G),
// throughput G·exp(−2G) with its maximum 1/(2e) at G = 1/2.
func TestAloha(t *testing.T) {
	s, err := lora.AlohaThroughput(0.5)
	require.NoError(t, err)
	assert.InEpsilon(t, 1/(2*math.E), s, 1e-15)
	for _, g := range []float64{0.3, 0.49, 0.51, 0.8} {
		sg, err := lora.AlohaThroughput(g)
		require.NoError(t, err)
		assert.Less(t, sg, s, "G=%g", g)
	}
	p, err := lora.AlohaSuccess(0)
	require.NoError(t, err)
	assert.Equal(t, 1.0, p)
	p, err = lora.AlohaSuccess(1)
	require.NoError(t, err)
	assert.InEpsilon(t, math.Exp(-2), p, 1e-15)
	_, err = lora.AlohaSuccess(-0.1)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.AlohaSuccess(math.NaN())
	assert.ErrorIs(t, err, lora.ErrParam)
}

// TestAlohaSimulation checks exp(−2G) against a simulation of the
// definition: Poisson frame starts of rate λ with fixed length T; a frame
// survives when no other starts within T of it. At G = λT = 0.25 the
// success share of n frames is binomial around exp(−0.5); bound at level
// 1e-6 (z = 4.9).
func TestAlohaSimulation(t *testing.T) {
	r := rand.New(rand.NewPCG(1970, 6))
	const T, G, n = 1.0, 0.25, 200000
	starts := make([]float64, n)
	x := 0.0
	for i := range starts {
		x += r.ExpFloat64() * T / G
		starts[i] = x
	}
	sort.Float64s(starts)
	ok := 0
	for i := 1; i < n-1; i++ {
		if starts[i]-starts[i-1] > T && starts[i+1]-starts[i] > T {
			ok++
		}
	}
	want, err := lora.AlohaSuccess(G)
	require.NoError(t, err)
	m := float64(n - 2)
	assert.InDelta(t, m*want, float64(ok), 4.9*math.Sqrt(m*want*(1-want)))
}

func TestUplinkCollisions(t *testing.T) {
	eu := lora.EU868()
	set := []lora.Setting{{DR: 0, Prob: 0.2}, {DR: 5, TXPower: 0, Prob: 0.3}, {DR: 5, TXPower: 2, Prob: 0.4}}
	c, err := lora.UplinkCollisions(eu, set, lora.Traffic{Nodes: 1000, Interval: 600, Channels: 3, App: 10})
	require.NoError(t, err)
	require.Len(t, c, 2)
	// DR0, 23-byte PHY payload: 1482.752 ms (hand-computed, TestAirtime):
	// G = 200 · 1.482752 / (600 · 3).
	assert.Equal(t, 0, c[0].DR)
	assert.InEpsilon(t, 200*1.482752/1800, c[0].Load, 1e-12)
	assert.InEpsilon(t, math.Exp(-2*200*1.482752/1800), c[0].Success, 1e-12)
	assert.Equal(t, 5, c[1].DR)
	assert.InDelta(t, 700, c[1].Nodes, 1e-9)
	// More nodes, more collisions.
	c2, err := lora.UplinkCollisions(eu, set, lora.Traffic{Nodes: 4000, Interval: 600, Channels: 3, App: 10})
	require.NoError(t, err)
	assert.Less(t, c2[0].Success, c[0].Success)

	_, err = lora.UplinkCollisions(eu, []lora.Setting{{DR: 0, Prob: 0.7}, {DR: 1, Prob: 0.7}}, lora.Traffic{Nodes: 1, Interval: 1, Channels: 1})
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.UplinkCollisions(eu, set, lora.Traffic{Nodes: 1, Interval: 1, Channels: 0})
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.UplinkCollisions(eu, set, lora.Traffic{Nodes: 1, Interval: 1, Channels: 1, App: 60})
	assert.ErrorIs(t, err, lora.ErrParam, "60 bytes do not fit DR0")
	_, err = lora.UplinkCollisions(eu, set, lora.Traffic{Nodes: 1, Interval: 1, Channels: 1, Frames: 0.5})
	assert.ErrorIs(t, err, lora.ErrParam)
}

func TestDownlinkProbability(t *testing.T) {
	p, err := lora.DownlinkProbability(0.9, 0.5, 0.8)
	require.NoError(t, err)
	assert.InDelta(t, 0.36, p, 1e-15)
	_, err = lora.DownlinkProbability(1.1, 0.5, 0.8)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.DownlinkProbability(0.5, math.NaN(), 0.8)
	assert.ErrorIs(t, err, lora.ErrParam)
}
