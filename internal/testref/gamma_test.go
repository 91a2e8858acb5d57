package testref

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestGammaClosedForms(t *testing.T) {
	tests := []struct {
		k          int
		rate, x    float64
		wantUpper  float64
		wantSource string
	}{
		// Exponential survival e^{-λx} (common practice).
		{k: 1, rate: 2, x: 1.5, wantUpper: math.Exp(-3), wantSource: "exp(-λx)"},
		// Erlang-2 survival e^{-y}(1+y) (common practice).
		{k: 2, rate: 1, x: 3, wantUpper: math.Exp(-3) * 4, wantSource: "e^{-y}(1+y)"},
		// Far tail of the Erlang-3 law: e^{-40}(1+40+800).
		{k: 3, rate: 4, x: 10, wantUpper: math.Exp(-40) * 841, wantSource: "e^{-y}(1+y+y²/2)"},
	}
	for _, tc := range tests {
		got := GammaUpper(float64(tc.k), tc.rate, tc.x)
		assert.LessOrEqual(t, RelErr(got, tc.wantUpper), 1e-13, "%s", tc.wantSource)
		assert.LessOrEqual(t, RelErr(ErlangUpper(tc.k, tc.rate, tc.x), tc.wantUpper), 1e-14, "%s", tc.wantSource)
	}
}

func TestGammaAgainstErlang(t *testing.T) {
	for k := 1; k <= 6; k++ {
		for _, x := range []float64{0.01, 0.3, 1, 2.5, 7, 15} {
			up := GammaUpper(float64(k), 1.5, x)
			assert.LessOrEqual(t, RelErr(up, ErlangUpper(k, 1.5, x)), 1e-12, "k=%d x=%v", k, x)
			assert.InDelta(t, 1, up+GammaLower(float64(k), 1.5, x), 1e-15, "k=%d x=%v", k, x)
		}
	}
}

func TestGammaDensityIsDerivative(t *testing.T) {
	for _, shape := range []float64{0.5, 1, 2.5, 7} {
		for _, x := range []float64{0.2, 1, 3} {
			h := 1e-5 * x
			fd := (GammaLower(shape, 2, x+h) - GammaLower(shape, 2, x-h)) / (2 * h)
			assert.LessOrEqual(t, RelErr(GammaDensity(shape, 2, x), fd), 1e-8, "shape=%v x=%v", shape, x)
		}
	}
}

func TestGammaQuantileRoundTrip(t *testing.T) {
	for _, shape := range []float64{0.5, 1, 3} {
		for _, p := range []float64{1e-6, 0.1, 0.5, 0.9} {
			x := GammaQuantile(shape, 3, p)
			assert.LessOrEqual(t, RelErr(GammaLower(shape, 3, x), p), 1e-10, "shape=%v p=%v", shape, p)
		}
	}
}

func TestGammaSpecialValues(t *testing.T) {
	assert.True(t, math.IsNaN(GammaUpper(0, 1, 1)))
	assert.True(t, math.IsNaN(GammaLower(1, -1, 1)))
	assert.True(t, math.IsNaN(GammaUpper(1, 1, math.NaN())))
	assert.Equal(t, 1.0, GammaUpper(2, 1, -1))
	assert.Equal(t, 0.0, GammaLower(2, 1, 0))
	assert.Equal(t, 3.0, GammaDensity(1, 3, 0))
	assert.True(t, math.IsInf(GammaDensity(0.5, 3, 0), 1))
	assert.Equal(t, math.Exp(-2.0), ExponentialSurvival(2, 1))
	assert.InDelta(t, -math.Expm1(-2.0), ExponentialCDF(2, 1), 1e-16)
}
