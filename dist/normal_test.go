package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestNormalSurvivalTable: Survival and, by symmetry, CDF of normal laws
// against testref.NormalUpperTail (1600-bit math/big values) down to
// 4.6e-308, relative to the value, within the conditioning tolerance
// testref.NormalTailTol(z) (1.25e-12 at z = 37.5, 9e-16 at z = 1).
func TestNormalSurvivalTable(t *testing.T) {
	laws := []struct {
		mu, sigma float64
	}{{0, 1}, {3, 0.5}, {-2, 4}, {10, 0.25}} // dyadic σ: x = μ + σz is exact
	for _, l := range laws {
		n := dist.MustNormal(l.mu, l.sigma)
		for _, pt := range testref.NormalUpperTail {
			tol := testref.NormalTailTol(pt.Z)
			x := l.mu + l.sigma*pt.Z
			assert.LessOrEqual(t, testref.RelErr(n.Survival(x), pt.Q), tol, "Normal(%v, %v).Survival at z = %v", l.mu, l.sigma, pt.Z)
			xm := l.mu - l.sigma*pt.Z
			assert.LessOrEqual(t, testref.RelErr(n.CDF(xm), pt.Q), tol, "Normal(%v, %v).CDF at z = -%v", l.mu, l.sigma, pt.Z)
		}
	}
}

// TestNormalPrintedValues: against printed values (Abramowitz & Stegun
// Table 26.1, from memory) to their 15 digits.
func TestNormalPrintedValues(t *testing.T) {
	n := dist.MustNormal(0, 1)
	for _, pt := range testref.NormalUpperTailAS {
		assert.LessOrEqual(t, testref.RelErr(n.Survival(pt.Z), pt.Q), 5e-15, "Q(%v)", pt.Z)
	}
	// φ(0) = 1/√(2π) (common practice).
	assert.InDelta(t, 0.3989422804014327, n.Density(0), 1e-16)
	// The 97.5 % point 1.959963984540054 (common practice, from memory).
	assert.InDelta(t, 1.959963984540054, n.Quantile(0.975), 1e-14)
	assert.InDelta(t, 1.959963984540054, n.UpperQuantile(0.025), 1e-14)
}

// TestNormalQuantilesInvertTable: UpperQuantile(Q(z)) = z and
// Quantile(Q(z)) = -z for every table entry, to 1e-14 relative in z
// (absolute at z = 0).
func TestNormalQuantilesInvertTable(t *testing.T) {
	n := dist.MustNormal(0, 1)
	for _, pt := range testref.NormalUpperTail {
		tol := 1e-14 * math.Max(pt.Z, 1)
		assert.InDelta(t, pt.Z, n.UpperQuantile(pt.Q), tol, "UpperQuantile(Q(%v))", pt.Z)
		assert.InDelta(t, -pt.Z, n.Quantile(pt.Q), tol, "Quantile(Q(%v))", pt.Z)
	}
	s := dist.MustNormal(5, 2)
	assert.InDelta(t, 5+2*20, s.UpperQuantile(2.7536241186062337e-89), 1e-12)
}

// TestNormalQuantileRoundTrip: over q from 1e-300 to 1/2 (2000 points,
// evenly in log q), Survival(UpperQuantile(q)) = q within the conditioning
// tolerance testref.NormalTailTol(z) plus z·2^-52 per unit of z's rounding
// (Survival is checked against 1600-bit values in
// TestNormalSurvivalTable): the quantile's Halley steps, on Mills' ratio
// beyond z = 0.663 and on erfc nearer 0, stop at the right place.
func TestNormalQuantileRoundTrip(t *testing.T) {
	n := dist.MustNormal(0, 1)
	worst, at := 0.0, 0.0
	for i := 0; i <= 2000; i++ {
		q := math.Pow(10, -300+float64(i)*(300+math.Log10(0.5))/2000)
		z := n.UpperQuantile(q)
		// dQ/Q = −(φ/Q)·dz: z's last-place rounding moves Q by about z²·2^-52.
		tol := testref.NormalTailTol(z) + 2*z*math.Max(z, 1)*0x1p-52
		if e := testref.RelErr(n.Survival(z), q) / tol; e > worst {
			worst, at = e, q
		}
	}
	t.Logf("largest round-trip error %.3g of its tolerance, at q = %.3g", worst, at)
	assert.LessOrEqual(t, worst, 1.0)
}

func TestNormalClosedForms(t *testing.T) {
	n := dist.MustNormal(1, 2)
	assert.Equal(t, 1.0, n.Mean())
	assert.Equal(t, 4.0, n.Variance())
	assert.Equal(t, 1.0, n.Mu())
	assert.Equal(t, 2.0, n.Sigma())
	lo, hi := n.Support()
	assert.True(t, math.IsInf(lo, -1) && math.IsInf(hi, 1))
	// CGF μs + σ²s²/2 and CF exp(iμt - σ²t²/2), by hand at s = t = 0.5.
	assert.InDelta(t, 0.5+0.5, n.CGF(0.5), 1e-15)
	want := complex(math.Exp(-0.5)*math.Cos(0.5), math.Exp(-0.5)*math.Sin(0.5))
	assert.InDelta(t, real(want), real(n.CF(0.5)), 1e-16)
	assert.InDelta(t, imag(want), imag(n.CF(0.5)), 1e-16)
	assert.Equal(t, "Normal(μ=1, σ=2)", n.String())
}

func TestNewNormalBadInput(t *testing.T) {
	tests := []struct {
		mu, sigma float64
		param     string
	}{
		{math.NaN(), 1, "mu"},
		{math.Inf(1), 1, "mu"},
		{0, 0, "sigma"},
		{0, -1, "sigma"},
		{0, math.NaN(), "sigma"},
		{0, math.Inf(1), "sigma"},
	}
	for _, tc := range tests {
		_, err := dist.NewNormal(tc.mu, tc.sigma)
		assertParamError(t, err, "NewNormal", tc.param)
		assert.Panics(t, func() { dist.MustNormal(tc.mu, tc.sigma) })
	}
}

// BenchmarkNormalUpperQuantile: 16 upper quantiles from 0.4 down to 1e-300.
func BenchmarkNormalUpperQuantile(b *testing.B) {
	n := dist.MustNormal(0, 1)
	s := 0.0
	for b.Loop() {
		for q := 0.4; q > 1e-300; q *= 1e-20 {
			s += n.UpperQuantile(q)
		}
	}
	_ = s
}
