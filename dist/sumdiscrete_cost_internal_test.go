package dist

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// denseCheaper: counts that fill their lattice take the dense path; a few
// atoms far apart on a fine common step are merged as pairs, where the
// dense arrays would be mostly zeros. Either way the sum is the same law
// (checked against the atom-pair merge, the definition).
func TestDenseCheaperChoice(t *testing.T) {
	counts := MustDiscrete([]float64{0, 1, 2, 3, 4}, []float64{0.1, 0.2, 0.4, 0.2, 0.1})
	sparse := MustDiscrete([]float64{1, 2001, 5003}, []float64{0.5, 0.3, 0.2})
	for _, c := range []struct {
		name  string
		laws  []Discrete
		dense bool
	}{
		{"five counts", []Discrete{counts, counts, counts, counts, counts}, true},
		{"three sparse energies on a step of 1 (spans of 5002)", []Discrete{sparse, sparse, sparse}, false},
	} {
		delta, ok := commonStep(c.laws)
		require.True(t, ok, c.name)
		assert.Equal(t, c.dense, denseCheaper(c.laws, delta), "%s (step %g)", c.name, delta)
		got, err := sumDiscrete("test", c.laws)
		require.NoError(t, err, c.name)
		atoms := c.laws[0].Atoms()
		for _, x := range c.laws[1:] {
			atoms, err = convolveAtoms("test", atoms, x.Atoms())
			require.NoError(t, err, c.name)
		}
		want := discreteFromAtoms(atoms)
		require.Equal(t, want.Len(), got.Len(), c.name)
		for i, a := range want.Atoms() {
			g := got.Atoms()[i]
			assert.InDelta(t, a.Value, g.Value, 1e-12*max(1, a.Value), c.name)
			assert.InDelta(t, a.Mass, g.Mass, 1e-15, c.name)
		}
	}
}
