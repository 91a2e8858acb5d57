package energy

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/internal/fexp"
	"github.com/joulelaw/joulelaw/internal/mills"
	"github.com/joulelaw/joulelaw/orderstat"
)

// TestFirstSure: firstSure(n) is where n·log Φ̄(z) = sureLog, with Φ̄ =
// erfc(z/√2)/2 from the standard library's erfc (or log1p of −Φ(z) for
// z < 0), to 1e-9 relative; from it on (a sweep of 2 sd above it, and the
// next float64) condAt's formula for a first failure,
// 1 − e^{n·log Φ̄(z)} (fexp.OneMinusExp), is 1 exactly, so that condAt's
// shortcut returns its bits; and the shortcut is not far from where the
// formula first gives 1 (at n·log Φ̄ = −35, below the threshold, it is
// still below 1).
func TestFirstSure(t *testing.T) {
	formula := func(n int64, z float64) float64 { return fexp.OneMinusExp(float64(n) * mills.LogUpper(z)) }
	for _, n := range []int64{1, 2, 7, 80, 1000, 8000, 100000, orderstat.MaxCount} {
		z0 := firstSure(n)
		require.False(t, math.IsNaN(z0) || math.IsInf(z0, 0), "n = %d", n)
		l := float64(n) * math.Log(0.5*math.Erfc(z0/math.Sqrt2))
		if z0 < 0 {
			l = float64(n) * math.Log1p(-0.5*math.Erfc(-z0/math.Sqrt2))
		}
		assert.InDelta(t, 1, l/sureLog, 1e-9, "n = %d: n·log Φ̄ at firstSure", n)
		zs := []float64{z0, math.Nextafter(z0, math.Inf(1)), math.Inf(1)}
		for i := 1; i <= 2000; i++ {
			zs = append(zs, z0+float64(i)*1e-3)
		}
		for _, z := range zs {
			require.Equal(t, 1.0, formula(n, z), "n = %d, z = %v", n, z)
		}
		// The point where n·log Φ̄ = −35, from gonum's normal quantile (a
		// reference library, distuv.UnitNormal).
		below := distuv.UnitNormal.Quantile(-math.Expm1(-35 / float64(n)))
		if n == 1 {
			below = -distuv.UnitNormal.Quantile(math.Exp(-35)) // Φ̄ = e^-35 from the lower side
		}
		assert.Less(t, below, z0, "n = %d", n)
		assert.Less(t, formula(n, below), 1.0, "n = %d, z = %v", n, below)
	}
}

// TestCondAtSure: condAt of a group's first failure and of the fleet's
// first failure on the invented two-factor site gives the bits of its
// formula, 1 − e^{Σ n_h·log Φ̄(z_h)} (fexp.OneMinusExp), on a grid of
// probits across the certain-failure thresholds (firstSure), shortcut or
// not.
func TestCondAtSure(t *testing.T) {
	s, err := NewSite(TwoFactorSiteSpec(t))
	require.NoError(t, err)
	G := len(s.names)
	zs, probs := make([]float64, G), make([]float64, G)
	for i := -600; i <= 600; i++ {
		for g := range G {
			// Each group a different offset from its threshold.
			zs[g] = s.sure[g] + float64(i)*1e-2 + 0.37*float64(g)
		}
		l := 0.0
		for h, z := range zs {
			l += float64(s.counts[h]) * mills.LogUpper(z)
		}
		assert.Equal(t, math.Float64bits(fexp.OneMinusExp(l)), math.Float64bits(s.condAt(kindFleet, 0, 0, zs, probs, nil)), "fleet at %v", zs)
		for g := range G {
			want := fexp.OneMinusExp(float64(s.counts[g]) * mills.LogUpper(zs[g]))
			assert.Equal(t, math.Float64bits(want), math.Float64bits(s.condAt(kindFirst, g, 0, zs, probs, nil)), "group %d at %v", g, zs[g])
		}
	}
}
