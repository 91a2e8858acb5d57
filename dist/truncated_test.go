package dist_test

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// truncNormalMoments returns the mean and variance of N(μ, σ²) conditioned
// on [lo, ∞) (lo may be -Inf), by the closed form (Johnson, Kotz &
// Balakrishnan, Continuous Univariate Distributions vol. 1, 2nd ed. 1994,
// §13.10.1): with α = (lo-μ)/σ and the inverse Mills ratio
// λ = φ(α)/Q(α), Q(α) = erfc(α/√2)/2,
//
//	mean = μ + σ·λ,  variance = σ²·(1 + α·λ - λ²).
func truncNormalMoments(mu, sigma, lo float64) (mean, variance float64) {
	if math.IsInf(lo, -1) {
		return mu, sigma * sigma
	}
	a := (lo - mu) / sigma
	lam := math.Exp(-a*a/2) / math.Sqrt(2*math.Pi) / (math.Erfc(a/math.Sqrt2) / 2)
	return mu + sigma*lam, sigma * sigma * (1 + a*lam - lam*lam)
}

// TestTruncatedMomentsFarBounds: issue 13. The mean and variance of a
// truncated law were integrated from the lower support end, so a finite end
// far from the mass lost every digit to cancellation: N(0,1) on
// [-1e10, 1e10] had variance 0, N(0.02, 0.002²) on [-1e6, 1e6] a variance
// 183 times too large, N(0,1) on [0, 1e200] a NaN variance. A bound more
// than 1e5 standard deviations from the mass changes the moments by less
// than exp(-5e9), so the oracle is the closed form with that bound removed.
func TestTruncatedMomentsFarBounds(t *testing.T) {
	tests := []struct {
		mu, sigma, lo, hi float64
		near              float64 // the bound that counts (-Inf: none)
		tol               float64 // relative, of mean (or of σ when the mean is 0) and variance
	}{
		{0, 1, -1e10, 1e10, math.Inf(-1), 1e-13},
		{0.02, 0.002, -1e6, 1e6, math.Inf(-1), 1e-13},
		{0, 1, 0, 1e200, 0, 1e-13},
		{0, 1, 0, math.MaxFloat64, 0, 1e-13},
		{0, 1, -1e300, 1e300, math.Inf(-1), 1e-13},
		{5, 1, 0, 1e12, 0, 1e-13},
		{0, 1, 10, 1e10, 10, 1e-9},                // the closed form's 1 + αλ - λ² cancels about 4 digits
		{1e6, 1, -1e12, 1e12, math.Inf(-1), 1e-9}, // points near 1e6 are rounded to 1.2e-10 σ
	}
	for _, tc := range tests {
		t.Run(fmt.Sprintf("N(%g,%g) on [%g,%g]", tc.mu, tc.sigma, tc.lo, tc.hi), func(t *testing.T) {
			l, err := dist.NewTruncated(dist.MustNormal(tc.mu, tc.sigma), tc.lo, tc.hi)
			require.NoError(t, err)
			wantM, wantV := truncNormalMoments(tc.mu, tc.sigma, tc.near)
			scale := math.Max(math.Abs(wantM), tc.sigma)
			assert.InDelta(t, wantM, l.Mean(), tc.tol*scale, "mean")
			assert.InDelta(t, wantV, l.Variance(), tc.tol*wantV, "variance")
		})
	}
}
