package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// The 1000-fold sum of a law on {e, 2e, 3e} lives on the lattice e·{1000,
// …, 3000}. The oracle convolves the probability vector on integer indices
// (no floating-point values involved), an independent path to the same law;
// its masses underflow to 0 far in the tails, as the library's do.
func TestSumIIDLatticeAtomsMerge(t *testing.T) {
	const e, k = 0.0123, 1000
	probs := []float64{0.2, 0.5, 0.3}
	d := dist.MustDiscrete([]float64{e, 2 * e, 3 * e}, probs)
	s, err := dist.SumIID(d, k)
	require.NoError(t, err)
	atoms := s.(dist.Atomic).Atoms()
	assert.LessOrEqual(t, len(atoms), 2*k+1, "atoms must merge onto the lattice")
	assert.InDelta(t, 0, s.Mean()/(k*d.Mean())-1, 1e-12)
	assert.InDelta(t, 0, s.Variance()/(k*d.Variance())-1, 1e-12)

	// Oracle: vector convolution on indices j = 0 … 2k (value e·(k + j)).
	vec := []float64{1}
	for i := 0; i < k; i++ {
		next := make([]float64, len(vec)+2)
		for j, m := range vec {
			for r, p := range probs {
				next[j+r] += m * p
			}
		}
		vec = next
	}
	above := make([]float64, len(vec)) // above[j] = Σ_{i>j} vec[i], summed from the top
	for j := len(vec) - 2; j >= 0; j-- {
		above[j] = above[j+1] + vec[j+1]
	}
	cum := 0.0
	for j, m := range vec {
		cum += m
		if j%50 != 0 || cum < 1e-12 || above[j] < 1e-12 {
			continue
		}
		x := e * float64(k+j)
		assert.InDelta(t, cum, s.CDF(x), 1e-12, "CDF at index %d", j)
		assert.LessOrEqual(t, math.Abs(s.Survival(x)/above[j]-1), 1e-9, "Survival at index %d", j)
	}
}
