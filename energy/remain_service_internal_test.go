package energy

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// TestRefineBatch checks the refined batch grid's stated errors against
// closed forms: a batch score z ~ N(0, 1) a priori and a likelihood
// exp(−(z − μ)²/(2s²)) give the normal posterior N(μ/(1+s²), s²/(1+s²));
// with batch factor 1 + σ·z and an expected count N·Φ(z) at each z, the
// posterior means are 1 + σ·m and N·Φ(m/√(1+v)) (the normal integral of
// Φ; gonum's normal CDF). From a posterior narrower than the nodes'
// spacing (as many devices' readings make it) to one as wide as the
// prior.
func TestRefineBatch(t *testing.T) {
	const sigma, devices = 0.03, 300
	std := distuv.UnitNormal
	for _, c := range []struct{ mu, s float64 }{{-2, 0.2}, {1, 0.05}, {0.3, 0.5}, {-1, 3}, {-5, 0.3}} {
		eval := func(a float64, _ int, lp float64) (sharedNode, error) {
			d := (a - c.mu) / c.s
			return sharedNode{z: a, batch: 1 + sigma*a, prior: 1, logW: lp - 0.5*d*d, expected: devices * std.CDF(a),
				row: make([]dist.Law, devices)}, nil
		}
		zb, wb := hermiteNodes(1, SharedBatchNodes)
		var gh []sharedNode
		for i, a := range zb {
			nd, _ := eval(a, 0, math.Log(wb[i]))
			gh = append(gh, nd)
		}
		nodes, errB, errF, err := refineBatch(gh, zb, 1, eval)
		require.NoError(t, err)
		var lw []float64
		for _, nd := range nodes {
			lw = append(lw, nd.logW)
		}
		b := maxOf(lw)
		tot, batch, flat := 0.0, 0.0, 0.0
		for _, nd := range nodes {
			w := math.Exp(nd.logW - b)
			tot += w
			batch += w * nd.batch
			flat += w * nd.expected
		}
		batch, flat = batch/tot, flat/tot
		v := c.s * c.s / (1 + c.s*c.s)
		m := c.mu / (1 + c.s*c.s)
		wantB, wantF := 1+sigma*m, devices*std.CDF(m/math.Sqrt(1+v))
		t.Logf("μ %g, s %g: %d points; batch %.6f (closed form %.6f, stated %.2g), count %.4f (%.4f, stated %.2g)",
			c.mu, c.s, len(nodes), batch, wantB, errB, flat, wantF, errF)
		require.LessOrEqual(t, math.Abs(batch-wantB), errB)
		require.LessOrEqual(t, math.Abs(flat-wantF), errF)
	}
}
