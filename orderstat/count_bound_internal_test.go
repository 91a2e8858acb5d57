package orderstat

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestMarchStatedError: the transform path's stated relative error
// (march: each kept value's bound from the lattice inversion's absolute
// bound over its tilted probability, and the rounding of the tilt's
// exponent) bounds the measured error of every probability above 1e-280
// against the direct convolution of the terms' binomial probabilities
// (convolve: positive terms only, its own stated error convRel, checked
// against exact rational arithmetic in TestBinomRunExact and
// TestSplitConvTwoGroupsClosedForm), for counts of 300 to 1.3·10^5 nodes
// in two or three groups. The stated figure follows the count: the
// inversion's worst case grows with it (about 1e-11 at 300 nodes, 1e-10
// at 1.3·10^5), where a fixed 1e-11 was stated before.
func TestMarchStatedError(t *testing.T) {
	if testing.Short() {
		t.Skip("a sweep of counts up to 1.3·10^5 nodes: some seconds")
	}
	t.Parallel()
	for _, tc := range []struct {
		n  float64
		ps []float64
	}{
		{300, []float64{0.1, 0.3}}, {300, []float64{0.01, 0.5, 0.9}}, {5000, []float64{0.1, 0.3}},
		{5000, []float64{0.01, 0.9}}, {130000, []float64{0.1, 0.3}}, {130000, []float64{0.01, 0.5, 0.9}},
	} {
		var terms []binom
		for _, p := range tc.ps {
			terms = append(terms, binom{n: math.Round(tc.n / float64(len(tc.ps))), p: p, q: 1 - p})
		}
		cm := newCountModel(terms)
		lo, pmf, rel := cm.march()
		clo, cpmf, crel := cm.convolve()
		require.Less(t, crel, 1e-11, "the oracle's own bound")
		worst, n := 0.0, 0
		for i, want := range cpmf {
			if want < 1e-280 {
				continue
			}
			j := int(clo) + i - int(lo)
			require.True(t, j >= 0 && j < len(pmf), "n=%g: mass at %g missing", tc.n, clo+float64(i))
			e := math.Abs(pmf[j]-want) / want
			worst = math.Max(worst, e)
			n++
		}
		assert.LessOrEqual(t, worst, rel+crel, "n=%g p=%v", tc.n, tc.ps)
		assert.Greater(t, n, 100)
		t.Logf("n=%g p=%v: measured %.2g, stated %.2g (%d values; oracle's bound %.2g)", tc.n, tc.ps, worst, rel, n, crel)
	}
}
