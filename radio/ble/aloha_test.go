package ble_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/ble"
)

// lengthBiased draws the interval a + Uniform(0, w) that covers a fixed
// time in a stationary renewal process (density ∝ x·f(x), by rejection),
// and where in it that time falls (uniform): renewal theory, independent
// of the package's formulas.
func lengthBiased(r *rand.Rand, a, w float64) (length, at float64) {
	for {
		x := a + w*r.Float64()
		if r.Float64()*(a+w) < x {
			return x, x * r.Float64()
		}
	}
}

// TestPDUSuccess checks the collision formula against (1) hand values, (2)
// its Poisson limit exp(−2G) (Abramson 1970) for many light neighbours and
// (3) a sampler of independent stationary neighbours (each one's last PDU
// start before ours and next after it, from the covering interval), by a
// binomial acceptance interval at level 1e-6, fixed seed.
func TestPDUSuccess(t *testing.T) {
	nb := ble.Neighbours{Count: 1, PDU: 376e-6, Interval: 0.1}
	p, err := ble.PDUSuccess(376e-6, nb)
	require.NoError(t, err)
	assert.InEpsilon(t, 1-752e-6/0.105, p, 1e-14)
	nb.Count = 0
	p, err = ble.PDUSuccess(376e-6, nb)
	require.NoError(t, err)
	assert.Equal(t, 1.0, p)

	// Poisson limit: 10⁵ neighbours at 10.24 s, G = n·(T + T)/2 / E[X]·… the
	// vulnerable time 2T at rate n/E[X] gives exp(−2T·n/E[X]).
	nb = ble.Neighbours{Count: 100000, PDU: 128e-6, Interval: 10.24}
	p, err = ble.PDUSuccess(128e-6, nb)
	require.NoError(t, err)
	pois := math.Exp(-2 * 128e-6 * 100000 / (10.24 + 0.005))
	assert.InEpsilon(t, pois, p, 2e-4, "Poisson limit") // (1−q)^n vs e^(−nq): n·q²/2 ≈ 3e-5 relative

	nb = ble.Neighbours{Count: 25, PDU: 296e-6, Interval: 0.05}
	const own = 376e-6
	p, err = ble.PDUSuccess(own, nb)
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(7, 70))
	const trials = 200000
	ok := 0
	for i := 0; i < trials; i++ {
		hit := false
		for k := 0; k < nb.Count && !hit; k++ {
			x, at := lengthBiased(r, nb.Interval, ble.AdvDelayMax)
			prev, next := -at, x-at // their PDU starts around ours at 0
			hit = prev > -nb.PDU || next < own
		}
		if !hit {
			ok++
		}
	}
	lo, hi := testref.BinomialInterval(trials, p, 1e-6)
	assert.True(t, ok >= lo && ok <= hi, "sampled %d, want %d … %d (p = %.5f)", ok, lo, hi, p)
}

func TestPDUSuccessBadInput(t *testing.T) {
	good := ble.Neighbours{Count: 3, PDU: 376e-6, Interval: 0.1}
	for _, tc := range []struct {
		pdu   float64
		nb    ble.Neighbours
		param string
	}{
		{0, good, "pdu"},
		{math.NaN(), good, "pdu"},
		{376e-6, ble.Neighbours{Count: -1, PDU: 376e-6, Interval: 0.1}, "Neighbours.Count"},
		{376e-6, ble.Neighbours{Count: ble.MaxNeighbours + 1, PDU: 376e-6, Interval: 0.1}, "Neighbours.Count"},
		{376e-6, ble.Neighbours{Count: 3, PDU: 0, Interval: 0.1}, "Neighbours.PDU"},
		{376e-6, ble.Neighbours{Count: 3, PDU: 376e-6, Interval: 0.0199}, "Neighbours.Interval"},
		{0.02, ble.Neighbours{Count: 3, PDU: 376e-6, Interval: 0.02}, "pdu"},
	} {
		_, err := ble.PDUSuccess(tc.pdu, tc.nb)
		require.ErrorIs(t, err, ble.ErrParam, tc.param)
		assert.Contains(t, err.Error(), tc.param)
	}
}
