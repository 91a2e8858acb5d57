package scenario

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// On a sequence that converges geometrically, x_n = x* + rⁿ·v (the
// linear regime of the collision fixed point), the rounds shrink at the
// steady ratio r, and the remaining steps sum to r/(1 − r) of the last
// (the geometric series, closed form): settleHistory must wait for two
// equal ratios, then jump to x* (to rounding), clamped to the values'
// ranges; with ratios that are not steady it must leave the state alone.
func TestSettleHistoryGeometric(t *testing.T) {
	star := []float64{1.7, 0.8, 0.9, 0.05} // Frames, RX1Sent, RX2Sent, RX1Fallback
	v := []float64{0.4, -0.2, 0.05, 0.01}
	model := func() *Model {
		return &Model{Groups: []GroupModel{{Group: Group{MaxTransmissions: 4}, PerDR: []DRModel{{DR: 5}}}}}
	}
	set := func(m *Model, x []float64) {
		d := &m.Groups[0].PerDR[0]
		d.Frames, d.RX1Sent, d.RX2Sent, d.RX1Fallback = x[0], x[1], x[2], x[3]
	}
	at := func(r float64, n int) []float64 {
		x := make([]float64, len(star))
		for i := range x {
			x[i] = star[i] + math.Pow(r, float64(n))*v[i]
		}
		return x
	}
	for _, r := range []float64{0.28, 0.6} {
		m := model()
		var h settleHistory
		for n := range 3 {
			set(m, at(r, n))
			h.next(m, -1)
			require.Equal(t, at(r, n), settleState(m, -1), "r = %g, round %d: no jump before two ratios", r, n)
		}
		set(m, at(r, 3))
		h.next(m, -1)
		got := settleState(m, -1)
		for i := range star {
			assert.InDelta(t, star[i], got[i], 1e-14, "r = %g: value %d lands on the fixed point", r, i)
		}
	}
	// Ratios 0.5 then 0.25: not steady, no jump.
	m := model()
	var h settleHistory
	for _, s := range []float64{1, 0.5, 0.25, 0.0625} {
		x := make([]float64, len(star))
		for i := range x {
			x[i] = star[i] + s*v[i]
		}
		set(m, x)
		h.next(m, -1)
		assert.Equal(t, x, settleState(m, -1))
	}
	// A jump past a range is clamped: RX1Sent's fixed point above 1.
	m = model()
	h = settleHistory{}
	w := []float64{0, 1, 0, 0}
	for n := range 4 {
		x := make([]float64, len(star))
		for i := range x {
			x[i] = star[i] + 0.5*math.Pow(0.5, float64(n))*w[i]
		}
		x[1] = 1.1 - 0.5*math.Pow(0.5, float64(n)) // heads for 1.1
		set(m, x)
		h.next(m, -1)
	}
	assert.Equal(t, 1.0, m.Groups[0].PerDR[0].RX1Sent, "clamped to 1")
}
