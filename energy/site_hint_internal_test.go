package energy

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestNodeZHints: the probits from the tables' remembered intervals
// (nodeZInto with hints, as the rule's root searches take them) are the
// bits of a fresh search at every time (nodeZ), over times that close in
// on a point (as a root search's do), jump about at random, and reach
// past the tables' ends, time 0 and the calendar limit.
func TestNodeZHints(t *testing.T) {
	s, err := NewSite(TwoFactorSiteSpec(t))
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(12, 1))
	var ts []float64
	mid := 0.5 * (s.tLo + s.tHi)
	for i := range 40 {
		ts = append(ts, mid+(s.tHi-s.tLo)*math.Pow(-0.5, float64(i))) // closing in
	}
	for range 200 {
		ts = append(ts, s.tHi*1.2*r.Float64()) // anywhere, and beyond
	}
	ts = append(ts, 0, -1, s.tLo, s.tHi, math.Inf(1), mid, mid)
	sc := new(ruleScratch)
	first := make([]bool, len(s.names)) // the first group alone
	first[0] = true
	for _, want := range [][]bool{nil, first} {
		for _, tm := range ts {
			got := s.nodeZInto(nil, sc.hints(len(s.names)*len(s.envs)), tm, want)
			exp := s.nodeZ(tm, want)
			require.Equal(t, len(exp), len(got))
			for i := range exp {
				assert.Equal(t, math.Float64bits(exp[i]), math.Float64bits(got[i]), "t = %v, entry %d", tm, i)
			}
		}
	}
}
