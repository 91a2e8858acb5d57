package dist

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestPointTailsExponentialIsErlang forces the shared-panel path on an
// exponential term (IIDSums itself takes the gamma closed form there): the
// k-fold sum of Exp(1) is Gamma(k, 1), so P(S_k <= x) = P(Poisson(x) >= k)
// (any probability text). Oracle: testref.ErlangTails, the smaller tail
// summed outward from Loader's Poisson masses (independent of this
// package's transforms). Over k from 8 renewal standard deviations below
// the point's mean crossing to 8 above, every value is within 1e-12 of the
// oracle relative to the smaller tail and within its own error estimate
// (measured: at most 0.3 of it; 4.8e-13 at 10^6 terms), and from a panel
// for all but a few k.
func TestPointTailsExponentialIsErlang(t *testing.T) {
	p := IIDSums{l: MustExponential(1), tr: gammaTransform(1, 1), mu: 1, v: 1, ok: true, lo: 0, hi: math.Inf(1)}
	for _, tc := range []struct {
		x        float64
		maxWorst float64
	}{
		{1000.5, 1e-12},
		{20000.25, 1e-12},
		{150000.75, 1e-12},
		{1e6 + 0.5, 1e-12},
	} {
		q, err := p.AtPoint(tc.x)
		require.NoError(t, err)
		require.True(t, q.Shared())
		sd := math.Sqrt(tc.x)
		var worst, ratio float64
		single := 0
		n := 0
		for z := -8.0; z <= 8; z += 0.04 {
			k := int(math.Round(tc.x + z*sd))
			f, s, rel, err := q.Evaluate(k)
			require.NoError(t, err)
			wf, ws := testref.ErlangTails(k, tc.x)
			small, got := wf, f
			if ws < wf {
				small, got = ws, s
			}
			e := math.Abs(got-small) / small
			worst = math.Max(worst, e)
			ratio = math.Max(ratio, e/rel)
			assert.LessOrEqual(t, e, rel+1e-15, "x=%g k=%d: %g against %g (estimate %g)", tc.x, k, got, small, rel)
			assert.InDelta(t, 1, f+s, 1e-15)
			if _, _, _, ok := q.st.shared1(k); !ok {
				single++
			}
			n++
		}
		assert.LessOrEqual(t, worst, tc.maxWorst, "x=%g", tc.x)
		assert.LessOrEqual(t, single, n/20, "x=%g: values left to the single inversion", tc.x)
		t.Logf("x=%g: block %d, %d panels, worst relative error %.2e (error/estimate at most %.2f), %d of %d values by the single inversion", tc.x, q.st.block, len(q.st.panels), worst, ratio, single, n)
	}
}

// TestPointTailsSidesSumToOne: the upper tail from an upper panel and the
// lower tail from a lower panel, at the same k, sum to 1 (a law's two
// tails; the oracle is that identity) within 2e-13, at the k within 300 of
// the mean crossing of a law with atoms beside a uniform term at 1.5·10^5
// terms. The law's six masses sum to 1 + 2.2e-16 in floating point; before
// the transform was normalised (massDefect) the tails summed to
// 1 + 3.3e-11 here.
func TestPointTailsSidesSumToOne(t *testing.T) {
	d := MustDiscrete([]float64{2.5, 2.61, 20, 20.88, 80, 83.52}, []float64{0.06, 0.54, 0.03, 0.27, 0.01, 0.09})
	l, err := Sum(d, MustUniform(0.35, 0.52))
	require.NoError(t, err)
	p, err := NewIIDSums(l)
	require.NoError(t, err)
	require.NotZero(t, p.massDefect(), "the test law should carry a mass defect")
	x := 1.5e5 * p.mu
	q, err := p.AtPoint(x)
	require.NoError(t, err)
	st := q.st
	var worst float64
	for _, b := range []int64{-1, 0} {
		up, low := st.newPanel(b, 1), st.newPanel(b, -1)
		lo, hi := st.blockRange(b)
		// the k within 300 (about half a renewal standard deviation) of
		// the crossing, where both sides' panels' sums meet PointTailsRel
		lo, hi = math.Max(lo, float64(st.cross-300)), math.Min(hi, float64(st.cross+300))
		for k := lo; k <= hi; k += 7 {
			y := x - k*p.mu
			vu, _, ok1 := up.value(k, y, st.supTop(k, 1))
			vl, _, ok2 := low.value(k, -y, st.supTop(k, -1))
			require.True(t, ok1 && ok2, "k=%g", k)
			worst = math.Max(worst, math.Abs(vu+vl-1))
			assert.InDelta(t, 1, vu+vl, 2e-13, "k=%g: upper %g + lower %g", k, vu, vl)
		}
	}
	t.Logf("largest |upper + lower − 1| %.2e", worst)
}
