package energy_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestLifetimeMomentsPoisson: with exponential cycle energies of rate λ the
// number of complete cycles M is Poisson(λC) (the Poisson process on the
// energy axis; any probability text, e.g. Ross, Stochastic Processes,
// §2.2, section from memory), so E[M] = Var M = λC exactly. The adaptive
// rule's mean must lie within its reported MomentError (plus the 1e-12
// absolute error of each P(M >= k), summed over the some 17·√(λC) terms),
// and its variance within 1e-9 relative, for λC from 300 (a curve about
// 300 cycles wide) to 10^6.
func TestLifetimeMomentsPoisson(t *testing.T) {
	for _, m := range []float64{300, 3000, 1e5, 1e6} {
		l := exponentialLifetime(t, 2, m/2)
		mean, v := l.Mean()/60, l.Variance()/3600
		e := l.MomentError() / 60
		width := 17 * math.Sqrt(m)
		t.Logf("λC = %g: mean error %.3g (reported %.3g), variance relative error %.3g", m, mean-m, e, v/m-1)
		assert.InDelta(t, m, mean, e+1e-12*width+1e-12*m, "λC=%g", m)
		assert.InDelta(t, m, v, 1e-9*m, "λC=%g", m)
		assert.Less(t, e, 1e-6*math.Sqrt(m), "the rule stops at its stated error")
	}
}

// TestLifetimeMomentsCommensurate: a two-energy cycle whose energies are
// commensurate (0.06 J and 0.09 J, so S_k = 0.06·k + 0.03·N with N ~
// Binomial(k, p)) makes P(M >= k) a sequence with fine structure (each k
// moves the binomial count's bound by two atoms), which a coarse
// trapezoidal rule would alias. The mean and variance must match the plain
// sums Σ P(S_k <= C) and Σ (2k−1)·P(S_k <= C) of testref.BinomialTails
// (Loader 2000 masses) over every k, within the reported error plus the
// oracle's rounding.
func TestLifetimeMomentsCommensurate(t *testing.T) {
	up := energy.MustFixedState("uplink", 1, 1, 0.06)
	down := energy.MustFixedState("rx", 1, 1, 0.03)
	const p = 0.3
	c := energy.MustCycle(energy.MustSequence(up, energy.MustChoice([]float64{p, 1 - p}, []energy.Stage{down, energy.Nothing()})),
		dist.MustPointMass(60), 0)
	at := c.Energy().(dist.Atomic).Atoms()
	require.Len(t, at, 2)
	const capacity = 2000 * 0.069
	cell := energy.MustBattery(energy.BatterySpec{Energy: capacity, NominalVoltage: 1, UsableFraction: 1})
	l := energy.MustLifetime(c, cell)
	// oracle: P(S_k <= C) = P(N <= floor((C − 0.06k)/0.03)), summed over k
	var s0, s1 float64
	for k := 1; k <= 3000; k++ {
		y := math.Floor((capacity - at[0].Value*float64(k)) / (at[1].Value - at[0].Value) * (1 + 1e-12))
		if y < 0 {
			break
		}
		g, _ := testref.BinomialTails(k, int(y), p)
		s0 += g
		s1 += float64(2*k-1) * g
	}
	wantVar := s1 - s0*s0
	mean, v := l.Mean()/60, l.Variance()/3600
	t.Logf("mean %.12g (oracle %.12g, reported error %.3g), variance %.10g (oracle %.10g)", mean, s0, l.MomentError()/60, v, wantVar)
	assert.InDelta(t, s0, mean, l.MomentError()/60+1e-9)
	assert.InDelta(t, wantVar, v, 1e-7*wantVar)
}
