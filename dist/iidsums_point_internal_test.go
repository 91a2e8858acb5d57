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
// oracle relative to the smaller tail, within 10 times its own estimate
// (plus 1e-13 for the oracle's own sums), and from a panel for all but a
// few k.
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
		var worst float64
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
			assert.LessOrEqual(t, e, 10*rel+1e-13, "x=%g k=%d: %g against %g (estimate %g)", tc.x, k, got, small, rel)
			assert.InDelta(t, 1, f+s, 1e-15)
			if _, _, _, ok := q.st.shared1(k); !ok {
				single++
			}
			n++
		}
		assert.LessOrEqual(t, worst, tc.maxWorst, "x=%g", tc.x)
		assert.LessOrEqual(t, single, n/20, "x=%g: values left to the single inversion", tc.x)
		t.Logf("x=%g: block %d, %d panels, worst relative error %.2e, %d of %d values by the single inversion", tc.x, q.st.block, len(q.st.panels), worst, single, n)
	}
}
