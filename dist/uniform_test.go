package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/dist"
)

// TestUniformValues: CDF, Survival, Density, quantiles at and between the
// ends of Uniform(-1, 3), from (x-a)/(b-a) and (b-x)/(b-a) (common
// practice).
func TestUniformValues(t *testing.T) {
	u := dist.MustUniform(-1, 3)
	tests := []struct {
		x, cdf, surv, dens float64
	}{
		{-2, 0, 1, 0},
		{-1, 0, 1, 0.25},
		{0, 0.25, 0.75, 0.25},
		{2, 0.75, 0.25, 0.25},
		{3, 1, 0, 0.25},
		{4, 1, 0, 0},
		{math.Nextafter(3, 0), 1 - 0x1p-53, 0x1p-53, 0.25}, // survival exact just below the end
	}
	for _, tc := range tests {
		assert.InDelta(t, tc.cdf, u.CDF(tc.x), 1e-16, "CDF(%v)", tc.x)
		assert.Equal(t, tc.surv, u.Survival(tc.x), "Survival(%v)", tc.x)
		assert.Equal(t, tc.dens, u.Density(tc.x), "Density(%v)", tc.x)
	}
	assert.Equal(t, -1.0, u.Quantile(0))
	assert.Equal(t, 3.0, u.Quantile(1))
	assert.Equal(t, 1.0, u.Quantile(0.5))
	assert.Equal(t, 2.0, u.UpperQuantile(0.25))
	assert.Equal(t, 3-4*0x1p-60, u.UpperQuantile(0x1p-60))
	assert.Equal(t, 1.0, u.Mean())
	assert.InDelta(t, 16.0/12, u.Variance(), 1e-15)
	assert.Equal(t, "Uniform[-1, 3]", u.String())
}

// TestUniformTransforms: CF sin(th)/(th)·e^{itm} and CGF log((e^{sb}-e^{sa})/(s(b-a)))
// (common practice), evaluated from the plain formulas.
func TestUniformTransforms(t *testing.T) {
	sym := dist.MustUniform(-1, 1)
	assert.InDelta(t, 0, real(sym.CF(math.Pi)), 1e-16)
	assert.InDelta(t, 2/math.Pi, real(sym.CF(math.Pi/2)), 1e-16)
	assert.InDelta(t, 0, imag(sym.CF(math.Pi/2)), 1e-16)

	u := dist.MustUniform(0, 1)
	for _, s := range []float64{-3, -0.5, 1e-3, 1, 4, 50} {
		want := math.Log((math.Exp(s) - 1) / s)
		assert.InDelta(t, want, u.CGF(s), 1e-13*math.Max(1, math.Abs(want)), "CGF(%v)", s)
	}
	// For small s, log((e^s-1)/s) = s/2 + s²/24 + O(s⁴) (Taylor series).
	assert.InDelta(t, 5e-9+1e-16/24, u.CGF(1e-8), 1e-24, "CGF(s) ≈ s/2 + s²/24 for small s")
	// e^{it·m}·sin(th)/(th) for Uniform(2, 4): m = 3, h = 1, t = 0.7.
	w := dist.MustUniform(2, 4).CF(0.7)
	sinc := math.Sin(0.7) / 0.7
	assert.InDelta(t, sinc*math.Cos(2.1), real(w), 1e-15)
	assert.InDelta(t, sinc*math.Sin(2.1), imag(w), 1e-15)
}

func TestNewUniformBadInput(t *testing.T) {
	tests := []struct {
		lo, hi float64
		param  string
	}{
		{math.NaN(), 1, "lo"},
		{math.Inf(-1), 1, "lo"},
		{0, math.NaN(), "hi"},
		{0, math.Inf(1), "hi"},
		{1, 1, "hi"},
		{2, 1, "hi"},
		{-1e308, 1e308, "hi"}, // width overflows
	}
	for _, tc := range tests {
		_, err := dist.NewUniform(tc.lo, tc.hi)
		assertParamError(t, err, "NewUniform", tc.param)
		assert.Panics(t, func() { dist.MustUniform(tc.lo, tc.hi) })
	}
}
