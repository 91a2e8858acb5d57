package dist

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestProductNumericLogNormals(t *testing.T) {
	// The numerical path on two log-normals against the closed form (the
	// product is log-normal, μ1+μ2 and √(σ1²+σ2²)); both tails, relative.
	a, b := MustLogNormal(0.2, 0.5), MustLogNormal(-0.3, 0.25)
	p := newProductLaw(a, b)
	want := MustLogNormal(-0.1, math.Hypot(0.5, 0.25))
	acc := p.Accuracy()
	var worst float64
	for _, q := range []float64{1e-10, 1e-6, 1e-3, 0.1, 0.5} {
		for _, z := range []float64{want.Quantile(q), want.UpperQuantile(q)} {
			assert.LessOrEqual(t, math.Abs(p.CDF(z)-want.CDF(z)), acc.CDFAbs, "CDF(%g)", z)
			r := math.Abs(p.Survival(z)-want.Survival(z)) / want.Survival(z)
			worst = math.Max(worst, r)
			assert.LessOrEqual(t, r, acc.SurvivalRel, "Survival(%g)", z)
		}
	}
	t.Logf("numerical log-normal product: worst survival rel %.2e; %+v", worst, acc)
	assert.LessOrEqual(t, worst, 1e-6)
}
