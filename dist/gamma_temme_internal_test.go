package dist

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// temmeTol is the relative error Temme's expansion states for a tail at
// (a, y): 8e-16·(8 + ½aη²), the rounding of the exponent ½aη² and of erfc's
// (each a few ulps of it) plus a few ulps of the value; see gammaTemme.
func temmeTol(a, y float64) float64 {
	half := -log1pmx(y/a - 1)
	return 8e-16 * (8 + a*half)
}

// TestGammaTemmeAgainstTable: Gamma's CDF and Survival at shapes 1000 to
// 1e14 against P and Q computed with mpmath at 30 digits
// (testref.GammaTailTable), each tail relative to its own value down to
// 1e-300, and both from gammaTemme directly.
func TestGammaTemmeAgainstTable(t *testing.T) {
	worst := 0.0
	for _, r := range testref.GammaTailTable() {
		g := MustGamma(r.Shape, 1)
		tol := temmeTol(r.Shape, r.Y)
		p, q := gammaTemme(r.Shape, r.Y)
		for _, c := range []struct {
			name      string
			got, want float64
		}{{"CDF", g.CDF(r.Y), r.P}, {"Survival", g.Survival(r.Y), r.Q}, {"P", p, r.P}, {"Q", q, r.Q}} {
			if c.want == 0 {
				assert.Less(t, c.got, 1e-299, "%s(a=%v, y=%v)", c.name, r.Shape, r.Y)
				continue
			}
			e := math.Abs(c.got/c.want - 1)
			worst = math.Max(worst, e/tol)
			assert.LessOrEqual(t, e, tol, "%s(a=%v, y=%v) = %v, want %v", c.name, r.Shape, r.Y, c.got, c.want)
		}
	}
	t.Logf("largest error / stated: %.3g", worst)
}
