package dist_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestIIDSumsEvaluateErrors: issue 13. Where IIDSums has no value to give
// it said so only by NaN (a SumIID failure was dropped). Evaluate returns
// the reason, wrapping ErrParam, and CDF, Survival and Tails return NaN
// exactly there.
func TestIIDSumsEvaluateErrors(t *testing.T) {
	weib, err := dist.FromDistuv(distuv.Weibull{K: 0.5, Lambda: 1})
	require.NoError(t, err)
	ws, err := dist.NewIIDSums(weib)
	require.NoError(t, err)
	big, err := dist.Affine(dist.MustGamma(1e6, 1), 2, 1)
	require.NoError(t, err)
	bs, err := dist.NewIIDSums(big)
	require.NoError(t, err)
	gs, err := dist.NewIIDSums(dist.MustGamma(2, 1))
	require.NoError(t, err)
	for _, tc := range []struct {
		name string
		s    dist.IIDSums
		k    int
		x    float64
	}{
		{"zero IIDSums", dist.IIDSums{}, 3, 1},
		{"k = 0", gs, 0, 1},
		{"k above MaxSumIIDTerms", gs, dist.MaxSumIIDTerms + 1, 1},
		// the k-fold shape 2^30·10^6 exceeds MaxGammaShape
		{"gamma shape beyond MaxGammaShape", bs, 1 << 30, 3e15},
		// SumIID refuses this 20-fold sum (the lattice step is too coarse
		// and the transform by quadrature decays too slowly)
		{"SumIID error", ws, 20, 40},
	} {
		t.Run(tc.name, func(t *testing.T) {
			b, a, err := tc.s.Evaluate(tc.k, tc.x)
			require.Error(t, err)
			assert.True(t, errors.Is(err, dist.ErrParam), "%v", err)
			assert.True(t, math.IsNaN(b) && math.IsNaN(a))
			assert.True(t, math.IsNaN(tc.s.CDF(tc.k, tc.x)))
			assert.True(t, math.IsNaN(tc.s.Survival(tc.k, tc.x)))
		})
	}
	b, a, err := gs.Evaluate(4, math.NaN())
	assert.NoError(t, err, "NaN x is NaN out, not an error")
	assert.True(t, math.IsNaN(b) && math.IsNaN(a))
	b, a, err = ws.Evaluate(5, 10)
	require.NoError(t, err)
	assert.InDelta(t, 1, b+a, 1e-9)
}

// TestIIDSumsShiftedGamma: the k-fold sums of a fixed floor plus a gamma
// burst (c + Gamma(2, 1)) are c·k + Gamma(2k, 1): IIDSums now evaluates that
// closed form (Temme's expansion at shapes of 1000 and more) instead of an
// inversion. Oracle: the Poisson–gamma relation for integer shapes
// (testref.ErlangTails: P(Gamma(n, 1) <= x) = P(Poisson(x) >= n), any
// probability text), each tail relative to its value; a negative scale
// swaps the tails.
func TestIIDSumsShiftedGamma(t *testing.T) {
	const floor = 0.06
	up, err := dist.Affine(dist.MustGamma(2, 1), 1, floor)
	require.NoError(t, err)
	down, err := dist.Affine(dist.MustGamma(2, 1), -1, floor)
	require.NoError(t, err)
	su, err := dist.NewIIDSums(up)
	require.NoError(t, err)
	sd, err := dist.NewIIDSums(down)
	require.NoError(t, err)
	for _, k := range []int{3, 400, 600, 5000, 1000000} {
		n := 2 * k
		for _, z := range []float64{-30, -8, -2, -0.1, 0, 0.5, 3, 8, 30} {
			g := float64(n) + z*math.Sqrt(float64(n))
			if g <= 0 {
				continue
			}
			wantB, wantA := testref.ErlangTails(n, g)
			if wantB < 1e-300 || wantA < 1e-300 {
				continue
			}
			x := g + float64(k)*floor
			b, a := su.Tails(k, x)
			// the reference keeps about 1e-14 relative; Temme's stated error
			// at 30 standard deviations is 8e-16·(8 + 450); and the rounding
			// of x and of x − k·floor (a few ulps of x) moves a tail by its
			// log-derivative, about (|z|+1)/√n, times that
			tol := 4e-13 + (math.Abs(z)+1)/math.Sqrt(float64(n))*4e-16*x
			assert.InDelta(t, 1, b/wantB, tol, "k=%d z=%v below", k, z)
			assert.InDelta(t, 1, a/wantA, tol, "k=%d z=%v above", k, z)
			// −Gamma + floor: P(S_k <= k·floor − g) = P(Gamma(2k) >= g)
			b, a = sd.Tails(k, float64(k)*floor-g)
			assert.InDelta(t, 1, b/wantA, tol, "k=%d z=%v, negative scale", k, z)
			assert.InDelta(t, 1, a/wantB, tol, "k=%d z=%v, negative scale", k, z)
		}
	}
}
