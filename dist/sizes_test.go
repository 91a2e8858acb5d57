package dist_test

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// TestNewDiscreteManyAtoms: issue 13. NewDiscrete summed the probabilities
// naively and rejected valid laws of 10^5 to 10^6 atoms (10^6 values of
// 1/10^6 summed to 1 - 8e-11); the sum is now compensated. Oracle: the
// discrete uniform law on 0, …, n-1 (CDF (⌊x⌋+1)/n, survival
// (n-1-⌊x⌋)/n; closed form).
func TestNewDiscreteManyAtoms(t *testing.T) {
	for _, n := range []int{100000, 1000000} {
		vals, probs := make([]float64, n), make([]float64, n)
		for i := range vals {
			vals[i], probs[i] = float64(i), 1/float64(n)
		}
		d, err := dist.NewDiscrete(vals, probs)
		require.NoError(t, err, "n = %d", n)
		require.Equal(t, n, d.Len())
		fn := float64(n)
		for _, x := range []float64{0, 1, fn / 3, fn / 2, fn - 2} {
			k := math.Floor(x)
			assert.InDelta(t, (k+1)/fn, d.CDF(x), 4e-16, "n=%d CDF(%g)", n, x)
			assert.InDelta(t, 1, d.Survival(x)/((fn-1-k)/fn), 1e-15, "n=%d Survival(%g)", n, x)
		}
	}
	// the cap
	_, err := dist.NewDiscrete(make([]float64, dist.MaxDiscreteAtoms+1), make([]float64, dist.MaxDiscreteAtoms+1))
	var pe *dist.ParamError
	require.True(t, errors.As(err, &pe), "%v", err)
	assert.Equal(t, "values", pe.Param)
	assert.Contains(t, err.Error(), "MaxDiscreteAtoms")
}

// TestMixtureWeightsRenormalised: issue 13. Weights off 1 by 5e-14 were
// divided by their naive sum, and the mixture's CDF at +Inf (and at 1e300)
// came out as 1 - 1e-15 for 8 to 39 equal components. Oracle: a probability
// law's CDF is 1 at +Inf (definition); the mixture of N(i, 1), i < n, with
// equal weights has mean (n-1)/2 (closed form).
func TestMixtureWeightsRenormalised(t *testing.T) {
	for _, n := range []int{2, 8, 17, 36, 39, 1000} {
		t.Run(fmt.Sprint(n), func(t *testing.T) {
			w := make([]float64, n)
			ls := make([]dist.Law, n)
			for i := range w {
				w[i], ls[i] = 1/float64(n), dist.MustNormal(float64(i), 1)
			}
			w[0] -= 5e-14
			m, err := dist.Mixture(w, ls)
			require.NoError(t, err)
			for _, x := range []float64{math.Inf(1), 1e300} {
				assert.Equal(t, 1.0, m.CDF(x), "CDF(%g)", x)
				assert.Equal(t, 1.0, m.Survival(-x), "Survival(%g)", -x)
			}
			assert.InDelta(t, float64(n-1)/2, m.Mean(), 1e-12*float64(n))
		})
	}
}

// TestIntervalsTinyLevel: issue 13. HighestDensity at level 1e-300
// returned lo > hi by one ulp, and any point of the support (the widths it
// compares were all zero); it now refuses levels below
// MinHighestDensityLevel, and EqualTailed orders its ends. Oracles: an
// interval has lo <= hi; at a tiny level the equal-tailed interval is the
// median (N(0,1): 0, closed form) and the highest-density one the mode
// (Gamma(3, 1): 2, closed form; at level 1e-9 within about 1e-3, where the
// widths' flatness near the mode meets their rounding).
func TestIntervalsTinyLevel(t *testing.T) {
	laws := []dist.Law{dist.MustNormal(0, 1), dist.MustExponential(1), dist.MustGamma(3, 1), dist.MustNormal(-2.0713024207046, 0.3)}
	for _, l := range laws {
		for _, level := range []float64{1e-300, 1e-200, 1e-17, 1e-12} {
			lo, hi, err := dist.EqualTailed(l, level)
			require.NoError(t, err)
			assert.LessOrEqual(t, lo, hi, "EqualTailed(%v, %g)", l, level)
			assert.InDelta(t, l.Quantile(0.5), lo, 1e-9, "EqualTailed(%v, %g) at the median", l, level)
			_, _, err = dist.HighestDensity(l, level)
			var pe *dist.ParamError
			require.True(t, errors.As(err, &pe), "HighestDensity(%v, %g): %v", l, level, err)
			assert.Equal(t, "level", pe.Param)
		}
	}
	lo, hi, err := dist.HighestDensity(dist.MustGamma(3, 1), dist.MinHighestDensityLevel)
	require.NoError(t, err)
	assert.LessOrEqual(t, lo, hi)
	assert.InDelta(t, 2, lo, 1e-2, "mode of Gamma(3, 1)")
	assert.InDelta(t, 2, hi, 1e-2)
	lo, hi, err = dist.HighestDensity(dist.MustNormal(0, 1), dist.MinHighestDensityLevel)
	require.NoError(t, err)
	assert.LessOrEqual(t, lo, hi)
	assert.InDelta(t, 0, lo/2+hi/2, 1e-2, "mode of N(0, 1)")
}

// TestLogNormalOverflow: issue 13. NewLogNormal accepted μ = ±1e308,
// whose mean exp(μ + σ²/2) and variance overflow or underflow (NaN and 0
// moments downstream); it now requires both finite and > 0, naming mu.
// Oracle: the closed forms of the moments (any probability text).
func TestLogNormalOverflow(t *testing.T) {
	for _, c := range []struct{ mu, sigma float64 }{{1e308, 1}, {-1e308, 1}, {400, 1}, {-800, 1}, {0, 30}} {
		_, err := dist.NewLogNormal(c.mu, c.sigma)
		var pe *dist.ParamError
		require.True(t, errors.As(err, &pe), "NewLogNormal(%g, %g): %v", c.mu, c.sigma, err)
		assert.Equal(t, "mu", pe.Param)
	}
	l, err := dist.NewLogNormal(300, 2)
	require.NoError(t, err)
	assert.InEpsilon(t, math.Exp(302), l.Mean(), 1e-13)
	assert.InEpsilon(t, math.Expm1(4)*math.Exp(604), l.Variance(), 1e-13)
}
