package ieee802154_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// TestBusyFromTrafficFixedPoint checks that the busy probability solves
// the model's equation b = 1 − exp(−(n − 1)·E[T](b)·X/Interval), with
// E[T] the mean of CSMA.Frame's Transmissions law and X written out by
// hand from the 2.4 GHz timing (a 31-octet frame: 37 octets on air,
// 1.184 ms; a CCA 128 µs; the acknowledgement's 11 octets, 352 µs, and
// a CCA), and that it grows with the number of nodes.
func TestBusyFromTrafficFixedPoint(t *testing.T) {
	nd := testNode()
	prev := -1.0
	for _, nodes := range []int{1, 2, 10, 100, 1000, 10000} {
		traffic := ieee802154.Traffic{Nodes: nodes, Interval: 10}
		b, err := nd.BusyFromTraffic(traffic)
		require.NoError(t, err)
		o, err := nd.CSMA.Frame(b, nd.AckLoss, true)
		require.NoError(t, err)
		x := 1.184e-3 + 128e-6 + 352e-6 + 128e-6
		g := -math.Expm1(-float64(nodes-1) * o.Transmissions.Mean() * x / traffic.Interval)
		assert.InDelta(t, g, b, 1e-12, "nodes %d", nodes)
		assert.Greater(t, b, prev, "nodes %d", nodes)
		prev = b
		t.Logf("%d nodes every 10 s: busy %.6f", nodes, b)
	}
	b, err := nd.BusyFromTraffic(ieee802154.Traffic{Nodes: 1, Interval: 1})
	require.NoError(t, err)
	assert.Zero(t, b)
	for _, tr := range []ieee802154.Traffic{{Nodes: 0, Interval: 1}, {Nodes: ieee802154.MaxNodes + 1, Interval: 1},
		{Nodes: 3, Interval: 0}, {Nodes: 3, Interval: math.Inf(1)}, {Nodes: 3, Interval: math.NaN()}} {
		_, err := nd.BusyFromTraffic(tr)
		assert.ErrorIs(t, err, ieee802154.ErrParam, "%+v", tr)
	}
	nd.Payload = 500
	_, err = nd.BusyFromTraffic(ieee802154.Traffic{Nodes: 3, Interval: 1})
	assert.ErrorIs(t, err, ieee802154.ErrParam)
}

// TestBusyExposure checks the model's exposure by simulation under its
// own assumptions: transmissions start as a Poisson process of rate λ,
// each occupies the channel with a data PPDU of length Tf and, Ta later
// by aTurnaroundTime, an acknowledgement; a CCA window of length c at an
// independent instant is busy when it overlaps either. The share of busy
// windows must match 1 − exp(−λ·(Tf + c + Ta + c)) within the exact
// binomial bound at level 1e-6 (fixed seed).
func TestBusyExposure(t *testing.T) {
	const (
		tf, ta, ack, c = 1.184e-3, 192e-6, 352e-6, 128e-6
		lambda         = 150.0 // transmissions per second
		horizon        = 2000.0
		windows        = 200000
	)
	r := rand.New(rand.NewPCG(15, 4))
	var starts []float64
	for s := r.ExpFloat64() / lambda; s < horizon; s += r.ExpFloat64() / lambda {
		starts = append(starts, s)
	}
	busy := 0
	for range windows {
		w := 1 + r.Float64()*(horizon-2)
		i := sort.SearchFloat64s(starts, w-(tf+ta+ack))
		for ; i < len(starts) && starts[i] < w+c; i++ {
			s := starts[i]
			data := s < w+c && s+tf > w
			ackOn := s+tf+ta < w+c && s+tf+ta+ack > w
			if data || ackOn {
				busy++
				break
			}
		}
	}
	p := -math.Expm1(-lambda * (tf + c + ack + c))
	lo, hi := testref.BinomialInterval(windows, p, 1e-6)
	assert.True(t, busy >= lo && busy <= hi, "busy %d not in [%d, %d] (p = %.5f)", busy, lo, hi, p)
}
