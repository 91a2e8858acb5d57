package dist

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/internal/lattice"
)

// SumDiscrete returns the exact law of X_1 + … + X_n for independent
// finite discrete laws (in one unit), as Sum gives it for such terms (Sum
// uses this engine), as a Discrete and by SumIID's dense lattice
// convolution wherever it applies and costs less than merging atom pairs:
// when every law's atoms lie on one common lattice (values v0_i + m·δ,
// integers m; counts are the usual case), the sum spans at most
// MaxSumAtoms lattice points and the laws fill enough of it
// (denseCheaper), the masses are arrays indexed by the
// lattice offset and two laws of a and b points cost a·b multiply-adds
// (internal/lattice.Convolve, the one direct convolution), not a·b atom pairs to sort and merge. The values are
// Σ v0_i + m·δ (exact for integers: when Σ v0_i is itself a multiple of δ,
// each value is one product (r + m)·δ); masses that underflow to 0 are
// dropped, as Sum drops them. Laws not on a common lattice are summed as
// Sum sums them (atom pairs merged within AtomMergeTolerance). Either way
// the result is exact up to rounding: about 1e-16 relative per
// multiply-add, the masses summed from both ends as every Discrete is.
//
// Errors (wrapping ErrParam): no laws, a zero Discrete, or more than
// MaxSumAtoms atoms in the result.
func SumDiscrete(laws ...Discrete) (Discrete, error) {
	const fn = "SumDiscrete"
	if len(laws) == 0 {
		return Discrete{}, paramErr(fn, "laws", "[]", "must not be empty")
	}
	for i, d := range laws {
		if d.Len() == 0 {
			return Discrete{}, paramErr(fn, fmt.Sprintf("laws[%d]", i), "zero Discrete", "must be built by NewDiscrete")
		}
	}
	return sumDiscrete(fn, laws)
}

// sumDiscrete is the one exact sum of finite discrete laws, Sum's and
// SumDiscrete's: the dense lattice convolution (denseSum) where the atoms
// share a lattice and it costs no more (denseCheaper), atom pairs merged
// otherwise; fn names the caller in
// errors (more than MaxSumAtoms atoms).
func sumDiscrete(fn string, laws []Discrete) (Discrete, error) {
	if len(laws) == 1 {
		return laws[0], nil
	}
	if d, ok := denseSum(laws); ok {
		return d, nil
	}
	atoms := laws[0].Atoms()
	for _, x := range laws[1:] {
		var err error
		if atoms, err = convolveAtoms(fn, atoms, x.Atoms()); err != nil {
			return Discrete{}, err
		}
	}
	return discreteFromAtoms(atoms), nil
}

// denseSum is SumDiscrete's lattice path: ok is false when the laws'
// atoms are not on one common lattice (latticeOf of every law's offsets
// from its least value, taken together), the sum would span more than
// MaxSumAtoms lattice points, or merging atom pairs costs less
// (denseCheaper).
func denseSum(laws []Discrete) (Discrete, bool) {
	shift, points := 0.0, true
	for _, d := range laws {
		shift += d.values()[0]
		points = points && d.Len() == 1
	}
	if points { // every law a point mass
		return discreteFromAtoms([]Atom{{Value: shift, Mass: 1}}), true
	}
	delta, ok := commonStep(laws)
	if !ok {
		return Discrete{}, false
	}
	if !denseCheaper(laws, delta) {
		return Discrete{}, false
	}
	span := 0.0
	bases := make([][]float64, len(laws))
	for i, d := range laws {
		vs, ps := d.values(), d.probs()
		top := math.Round((vs[len(vs)-1] - vs[0]) / delta)
		span += top
		if span+1 > MaxSumAtoms {
			return Discrete{}, false
		}
		b := make([]float64, int(top)+1)
		for j, v := range vs {
			q := (v - vs[0]) / delta
			m := math.Round(q)
			if math.Abs(q-m)*delta > latticeTol*max(delta, v-vs[0]) {
				return Discrete{}, false // (latticeOf checked the offsets against its own step)
			}
			b[int(m)] += ps[j]
		}
		bases[i] = b
	}
	result := bases[0]
	for _, b := range bases[1:] {
		result = lattice.Convolve(result, b)
	}
	// As latticeList: a shift on the lattice gives each value as one product.
	r := math.Round(shift / delta)
	onGrid := math.Abs(shift/delta-r) <= latticeTol*max(1, math.Abs(r))
	atoms := make([]Atom, 0, len(result))
	for m, p := range result {
		if p > 0 {
			v := shift + float64(m)*delta
			if onGrid {
				v = (r + float64(m)) * delta
			}
			atoms = append(atoms, Atom{Value: v, Mass: p})
		}
	}
	return discreteFromAtoms(atoms), true
}

// denseCheaper reports whether the dense convolution on the lattice of
// step delta costs no more than merging atom pairs, by counting the work
// of each: a dense step from a partial sum of A atoms spanning S+1 points
// by a law spanning t+1 points costs A·(t+1) multiply-adds and S+t+1
// cleared and scanned points; an atom-pair step costs A·n pairs (n the
// law's atoms) and their sort, A·n·log₂(A·n); the partial sum then holds
// at most min(A·n, S+t+1) atoms. Counts and other laws that fill their
// lattice take the dense path; a few atoms far apart on a fine lattice
// (energies whose values happen to share a small step, say) do not, where
// the dense arrays would be mostly zeros.
func denseCheaper(laws []Discrete, delta float64) bool {
	d0 := laws[0]
	a := float64(d0.Len())
	v0 := d0.values()
	span := math.Round((v0[len(v0)-1] - v0[0]) / delta)
	var dense, pairs float64
	for _, d := range laws[1:] {
		vs := d.values()
		t := math.Round((vs[len(vs)-1] - vs[0]) / delta)
		n := float64(d.Len())
		dense += a*(t+1) + span + t + 1
		pairs += a * n * (1 + math.Log2(a*n))
		span += t
		a = min(a*n, span+1)
	}
	return dense <= pairs
}

// commonStep returns the step δ of the lattice (latticeOfValues) that 0
// and every law's offsets from its least value lie on, taken together
// (sorted and merged as atoms of equal mass are); ok is false when they
// lie on none.
func commonStep(laws []Discrete) (delta float64, ok bool) {
	n := 1
	for _, d := range laws {
		n += d.Len() - 1
	}
	offs := make([]Atom, 1, n)
	offs[0] = Atom{Value: 0, Mass: 1}
	for _, d := range laws {
		vs := d.values()
		for _, v := range vs[1:] {
			offs = append(offs, Atom{Value: v - vs[0], Mass: 1})
		}
	}
	merged := mergeAtoms(offs)
	vs := make([]float64, len(merged))
	for i, a := range merged {
		vs[i] = a.Value
	}
	_, delta, _, ok = latticeOfValues(vs)
	return delta, ok
}
