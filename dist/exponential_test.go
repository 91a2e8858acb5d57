package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestExponentialAgainstGamma: CDF and Survival against gonum's regularised
// incomplete gamma functions of shape 1 (testref.ExponentialCDF and
// ExponentialSurvival), from 1e-12 of the mean (where the CDF must keep its
// relative precision) to 700 means (Survival ≈ 1e-304).
func TestExponentialAgainstGamma(t *testing.T) {
	for _, rate := range []float64{1, 2, 1e-3, 250} {
		e := dist.MustExponential(rate)
		for _, y := range []float64{1e-12, 1e-6, 0.01, 0.5, 1, 3, 10, 50, 200, 700} {
			x := y / rate
			assert.LessOrEqual(t, testref.RelErr(e.CDF(x), testref.ExponentialCDF(rate, x)), 1e-13, "rate %v CDF(%v)", rate, x)
			assert.LessOrEqual(t, testref.RelErr(e.Survival(x), testref.ExponentialSurvival(rate, x)), 1e-13, "rate %v Survival(%v)", rate, x)
			assert.LessOrEqual(t, testref.RelErr(e.Density(x), testref.GammaDensity(1, rate, x)), 1e-13, "rate %v Density(%v)", rate, x)
		}
	}
}

// TestExponentialClosedForms checks quantiles, moments, CF and CGF against
// the textbook formulas (common practice), evaluated by hand.
func TestExponentialClosedForms(t *testing.T) {
	e := dist.MustExponential(2)
	tests := []struct {
		name      string
		got, want float64
	}{
		{"mean 1/λ", e.Mean(), 0.5},
		{"variance 1/λ²", e.Variance(), 0.25},
		{"median ln2/λ", e.Quantile(0.5), math.Ln2 / 2},
		{"UpperQuantile(e^-30) = 30/λ", e.UpperQuantile(math.Exp(-30)), 15},
		{"UpperQuantile(1e-300) = 300·ln10/λ", e.UpperQuantile(1e-300), 300 * math.Ln10 / 2},
		{"Quantile(1e-15) ≈ 1e-15/λ", e.Quantile(1e-15), 5e-16 * (1 + 5e-16)},
		{"CGF(λ/2) = ln 2", e.CGF(1), math.Ln2},
		{"Rate", e.Rate(), 2},
	}
	for _, tc := range tests {
		assert.LessOrEqual(t, testref.RelErr(tc.got, tc.want), 4e-16, tc.name)
	}
	assert.True(t, math.IsInf(e.CGF(2), 1), "CGF at s = λ")
	assert.True(t, math.IsInf(e.CGF(3), 1), "CGF beyond λ")
	// φ(λ) = λ/(λ - iλ) = 1/(1-i) = (1+i)/2.
	z := e.CF(2)
	assert.InDelta(t, 0.5, real(z), 1e-16)
	assert.InDelta(t, 0.5, imag(z), 1e-16)
	assert.Equal(t, "Exponential(λ=2)", e.String())
}

// TestExponentialMemoryless: S(s + t) = S(s)·S(t) (common practice), to
// rounding.
func TestExponentialMemoryless(t *testing.T) {
	e := dist.MustExponential(0.7)
	for _, s := range []float64{0.1, 2, 40} {
		for _, u := range []float64{0.3, 5, 300} {
			assert.LessOrEqual(t, testref.RelErr(e.Survival(s+u), e.Survival(s)*e.Survival(u)), 1e-13, "s=%v t=%v", s, u)
		}
	}
}

func TestNewExponentialBadInput(t *testing.T) {
	for _, rate := range []float64{0, -1, math.NaN(), math.Inf(1), math.Inf(-1)} {
		_, err := dist.NewExponential(rate)
		assertParamError(t, err, "NewExponential", "rate")
		assert.Panics(t, func() { dist.MustExponential(rate) })
	}
}
