package energy_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestContinuousProduct: a state whose power and duration are both
// log-normal has a log-normal energy, LogNormal(μ1+μ2, √(σ1²+σ2²)) (the
// product of independent log-normals; any probability text), so the
// energy law is checked against that closed form: CDF within the reported
// Accuracy (the closed form is used, so rounding), survival to 1e-6 relative
// down to 1e-12, moments, and the conformance checker.
func TestContinuousProduct(t *testing.T) {
	p := dist.MustLogNormal(math.Log(0.1), 0.2)  // W
	d := dist.MustLogNormal(math.Log(0.05), 0.5) // s
	ref := dist.MustLogNormal(math.Log(0.005), math.Sqrt(0.2*0.2+0.5*0.5))
	st, err := energy.NewPowerState("tx", p, d)
	require.NoError(t, err)
	e, err := st.Energy()
	require.NoError(t, err)
	// dist.Product knows the closed form: the energy law is the log-normal
	// itself, exact to rounding
	acc := dist.Accuracy{CDFAbs: 1e-14}
	if est, ok := e.(dist.Estimated); ok {
		acc = est.Accuracy()
	}
	assert.Less(t, acc.CDFAbs, 1e-8)
	worst := 0.0
	for _, q := range []float64{1e-12, 1e-9, 1e-6, 1e-3, 0.05, 0.3, 0.5, 0.7, 0.95, 0.999} {
		for _, x := range []float64{ref.Quantile(q), ref.UpperQuantile(q)} {
			assert.InDelta(t, ref.CDF(x), e.CDF(x), acc.CDFAbs+1e-15, "x=%g", x)
			worst = math.Max(worst, math.Abs(ref.CDF(x)-e.CDF(x)))
			if s := ref.Survival(x); s >= 1e-12 {
				assert.InDelta(t, s, e.Survival(x), 1e-6*s, "x=%g", x)
			}
		}
	}
	t.Logf("largest CDF error %.2g, reported bound %.2g", worst, acc.CDFAbs)
	assert.InDelta(t, ref.Mean(), e.Mean(), 1e-12*ref.Mean())
	assert.InDelta(t, ref.Variance(), e.Variance(), 1e-10*ref.Variance())
	require.NoError(t, disttest.Check(e, disttest.WithSeed(9)))
}

// TestCycleWithContinuousProduct: a cycle holding a state whose current and
// duration are both continuous, against sampling from its structure (KS at
// level 1e-6 on 300 sample quantiles) and its exact moments.
func TestCycleWithContinuousProduct(t *testing.T) {
	sense := energy.MustState("sense", dist.MustUniform(1*energy.MilliAmp, 2*energy.MilliAmp), 3.3, dist.MustExponential(1/(20*energy.Millisecond)))
	tx := energy.MustFixedState("tx", 40*energy.MilliAmp, 3.3, 0.06)
	rx := energy.MustFixedState("rx", 11*energy.MilliAmp, 3.3, 0.03)
	st := energy.MustSequence(sense, tx, energy.MustChoice([]float64{0.4, 0.6}, []energy.Stage{rx, energy.Nothing()}))
	c, err := energy.NewCycle(st, dist.MustPointMass(300), 2*energy.MicroAmp*3.3)
	require.NoError(t, err)
	e := c.Energy()
	assert.InDelta(t, c.MeanEnergy(), e.Mean(), 1e-9*c.MeanEnergy())
	assert.InDelta(t, c.EnergyVariance(), e.Variance(), 1e-9*c.EnergyVariance())
	r := rand.New(rand.NewPCG(41, 42))
	const n = 50_000
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = c.Rand(r)
	}
	assert.Less(t, gridKS(xs, e.CDF, 300), testref.KSCritical(n, 1e-6))
}
