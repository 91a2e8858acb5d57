package dist

import "fmt"

// NewEmpirical returns the empirical law of observed samples: each sample
// carries mass 1/n (equal samples merge into one atom of mass k/n). It is a
// Discrete, so it is exact, lists its atoms, and Rand resamples the
// observations (the bootstrap). Samples must be finite and at least one.
// The input is copied.
func NewEmpirical(samples []float64) (Discrete, error) {
	if len(samples) == 0 {
		return Discrete{}, paramErr("NewEmpirical", "samples", "[]", "must not be empty")
	}
	atoms := make([]Atom, len(samples))
	w := 1 / float64(len(samples))
	for i, x := range samples {
		if !finite(x) {
			return Discrete{}, paramErr("NewEmpirical", fmt.Sprintf("samples[%d]", i), x, "must be finite")
		}
		atoms[i] = Atom{Value: x, Mass: w}
	}
	return discreteFromAtoms(atoms), nil
}
