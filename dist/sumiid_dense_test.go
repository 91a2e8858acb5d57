package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// binomialPMFs returns the binomial masses C(n, j)·p^j·(1−p)^(n−j), j =
// 0 … n, from (1−p)^n by the ratio (n−j)/(j+1)·p/(1−p) (closed form; the
// products lose about j·1e-16 relative).
func binomialPMFs(n int, p float64) []float64 {
	out := make([]float64, n+1)
	out[0] = math.Exp(float64(n) * math.Log1p(-p))
	for j := 0; j < n; j++ {
		out[j+1] = out[j] * float64(n-j) / float64(j+1) * p / (1 - p)
	}
	return out
}

// TestSumIIDDenseLattice: the k-fold sum of a Bernoulli law is the
// binomial law (closed form), each mass within 1e-12 relative where it is
// above 1e-250 (the oracle's products keep j·1e-16); a law on {0, …, 10} (a renewal count) summed 180 times
// keeps its exact mean and variance (k·μ, k·σ²) and lives on 0 … 1800.
func TestSumIIDDenseLattice(t *testing.T) {
	for _, c := range []struct {
		n int
		p float64
	}{{2520, 0.01}, {500, 0.3}, {4000, 1e-4}} {
		b := dist.MustDiscrete([]float64{0, 1}, []float64{1 - c.p, c.p})
		s, err := dist.SumIID(b, c.n)
		require.NoError(t, err)
		d, ok := s.(dist.Discrete)
		require.True(t, ok, "%T", s)
		pmf := binomialPMFs(c.n, c.p)
		for _, a := range d.Atoms() {
			j := int(math.Round(a.Value))
			assert.InDelta(t, float64(j), a.Value, 1e-9)
			want := pmf[j]
			if want > 1e-250 {
				assert.InDelta(t, 1, a.Mass/want, 1e-12, "n = %d, j = %d", c.n, j)
			}
		}
	}
	v := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	p := []float64{0.3, 0.2, 0.15, 0.1, 0.08, 0.06, 0.04, 0.03, 0.02, 0.01, 0.01}
	d := dist.MustDiscrete(v, p)
	s, err := dist.SumIID(d, 180)
	require.NoError(t, err)
	atoms := s.(dist.Atomic).Atoms()
	assert.LessOrEqual(t, len(atoms), 1801)
	assert.InDelta(t, 1, s.Mean()/(180*d.Mean()), 1e-12)
	assert.InDelta(t, 1, s.Variance()/(180*d.Variance()), 1e-12)
}

// BenchmarkSumIIDDenseLattice: a renewal count law on 0 … 10 summed over
// 180 nodes, and a Bernoulli law 2520 times (the exact lattice path).
func BenchmarkSumIIDDenseLattice(b *testing.B) {
	v := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	p := []float64{0.3, 0.2, 0.15, 0.1, 0.08, 0.06, 0.04, 0.03, 0.02, 0.01, 0.01}
	d := dist.MustDiscrete(v, p)
	bern := dist.MustDiscrete([]float64{0, 1}, []float64{0.99, 0.01})
	b.Run("counts×180", func(b *testing.B) {
		for b.Loop() {
			dist.MustSumIID(d, 180)
		}
	})
	b.Run("bernoulli×2520", func(b *testing.B) {
		for b.Loop() {
			dist.MustSumIID(bern, 2520)
		}
	})
}
