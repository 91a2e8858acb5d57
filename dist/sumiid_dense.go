package dist

import (
	"math"

	"github.com/joulelaw/joulelaw/internal/lattice"
)

// latticeList returns the exact k-fold sum of a finite discrete law whose
// atoms lie on the lattice v0 + ns[i]·δ (latticeOf) and whose k-fold sum
// spans at most latticeMinAtoms lattice points: repeated squaring, as
// atomPower, but of dense mass arrays indexed by the lattice offset, so a
// convolution of arrays of lengths a and b costs a·b multiply-adds instead
// of forming and sorting a·b pairs (a renewal count law summed over 180
// nodes: 0.7 s before, milliseconds now). The values are k·v0 + m·δ;
// masses that underflow to 0 are dropped, as mergeAtoms drops them.
func latticeList(d Discrete, v0, delta float64, ns []int64, k int) Discrete {
	base := make([]float64, ns[len(ns)-1]+1)
	ps := d.probs()
	for i, n := range ns {
		base[n] += ps[i]
	}
	kf := float64(k)
	shift := kf * v0
	result := []float64{1}
	for k > 0 {
		if k&1 == 1 {
			result = lattice.Convolve(result, base)
		}
		k >>= 1
		if k > 0 {
			base = lattice.Convolve(base, base)
		}
	}
	// When v0 is itself on the lattice (v0 = r·δ, r a positive integer:
	// energies that are multiples of one quantum), δ is taken as v0/r and a
	// value as the one product (k·r + m)·δ, so that k copies of the least
	// atom give k·v0 rounded once, as a sum of atoms would.
	r := math.Round(v0 / delta)
	onGrid := r >= 1 && math.Abs(v0/delta-r) <= latticeTol*r
	if onGrid {
		delta = v0 / r
	}
	atoms := make([]Atom, 0, len(result))
	for m, p := range result {
		if p > 0 {
			v := shift + float64(m)*delta
			if onGrid {
				v = (kf*r + float64(m)) * delta
			}
			atoms = append(atoms, Atom{Value: v, Mass: p})
		}
	}
	return discreteFromAtoms(atoms)
}
