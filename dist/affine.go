package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
)

// Affine returns the law of scale·X + shift, where X has law l. The result
// is exact: a positive scale maps CDF to CDF, a negative scale swaps the
// tails (P(aX+b <= x) = P(X >= (x-b)/a), atoms included), and scale 0 gives
// the point mass at shift. Affine maps of affine maps collapse into one;
// normal, uniform, discrete, exponential and gamma laws map to laws of the
// same family (the last two for positive scale). scale and shift must be
// finite.
//
// The returned law has a Density when l has one, and lists atoms when l does.
func Affine(l Law, scale, shift float64) (Law, error) {
	const fn = "Affine"
	if l == nil {
		return nil, paramErr(fn, "l", nil, "must not be nil")
	}
	if !finite(scale) {
		return nil, paramErr(fn, "scale", scale, "must be finite")
	}
	if !finite(shift) {
		return nil, paramErr(fn, "shift", shift, "must be finite")
	}
	if scale == 0 {
		return NewPointMass(shift)
	}
	if scale == 1 && shift == 0 {
		return l, nil
	}
	switch b := l.(type) {
	case affineDensity:
		return Affine(b.base, b.scale*scale, b.shift*scale+shift)
	case affine:
		return Affine(b.base, b.scale*scale, b.shift*scale+shift)
	case Normal:
		return NewNormal(scale*b.mu+shift, math.Abs(scale)*b.sigma)
	case Uniform:
		lo, hi := scale*b.lo+shift, scale*b.hi+shift
		if lo > hi {
			lo, hi = hi, lo
		}
		if u, err := NewUniform(lo, hi); err == nil {
			return u, nil
		}
	case Discrete:
		return affineDiscrete(b, scale, shift)
	case Exponential:
		if scale > 0 && shift == 0 {
			return NewExponential(b.rate / scale)
		}
	case Gamma:
		if scale > 0 && shift == 0 {
			return NewGamma(b.shape, b.rate/scale)
		}
	}
	a := affine{base: l, scale: scale, shift: shift}
	if al, ok := l.(Atomic); ok {
		a.baseAtoms = al.Atoms()
	}
	if _, ok := l.(Densitied); ok {
		return affineDensity{a}, nil
	}
	return a, nil
}

// affineDiscrete is Affine of a Discrete (scale != 0): the mapped values
// go straight into the new tables, in increasing order (reversed for a
// negative scale), when they stay apart (apart); else the atoms are sorted
// and merged (discreteFromAtoms). The same law either way, bit for bit.
func affineDiscrete(b Discrete, scale, shift float64) (Law, error) {
	vs, ps := b.values(), b.probs()
	n := len(vs)
	d := Discrete{cells: make([]float64, 4*n)}
	nv, np := d.values(), d.probs()
	for i, v := range vs {
		j := i
		if scale < 0 {
			j = n - 1 - i
		}
		nv[j], np[j] = scale*v+shift, ps[i]
		if !finite(nv[j]) {
			return nil, paramErr("Affine", "scale", scale, "maps an atom outside the finite numbers")
		}
	}
	if k, ok := apart(nv, np); ok && k == n {
		return d.normalise(), nil
	}
	atoms := make([]Atom, n) // in b's order, as sorting and merging them expects
	for i, v := range vs {
		atoms[i] = Atom{Value: scale*v + shift, Mass: ps[i]}
	}
	return discreteFromAtoms(atoms), nil
}

// affine is scale·base + shift with scale != 0. Fields are read by the
// characteristic-function and sum code: φ(t) = exp(i·t·shift)·φ_base(scale·t).
type affine struct {
	base         Law
	scale, shift float64
	baseAtoms    []Atom // the base's atoms, sorted; nil when it has none
}

// Parts returns the law X of the map and its scale and shift.
func (a affine) Parts() (base Law, scale, shift float64) { return a.base, a.scale, a.shift }

func (a affine) inv(x float64) float64 { return (x - a.shift) / a.scale }

// near maps x back to the base law's scale, y = (x-shift)/scale. When y lies
// within AtomMergeTolerance of a base atom v, it reports the atom: its value
// v, its mass m, and whether x is at or beyond the mapped atom
// w = scale·v + shift (computed as Atoms reports it), so that CDF and
// Survival jump exactly at w whatever the rounding of y.
func (a affine) near(x float64) (y, v, m float64, atOrAbove, ok bool) {
	y = a.inv(x)
	n := len(a.baseAtoms)
	if n == 0 || !finite(y) {
		return y, 0, 0, false, false
	}
	i := sort.Search(n, func(i int) bool { return a.baseAtoms[i].Value >= y })
	for _, j := range []int{i - 1, i} {
		if j < 0 || j >= n {
			continue
		}
		v = a.baseAtoms[j].Value
		if math.Abs(v-y) <= AtomMergeTolerance*max(math.Abs(v), math.Abs(y)) {
			return y, v, a.baseAtoms[j].Mass, x >= a.scale*v+a.shift, true
		}
	}
	return y, 0, 0, false, false
}

// atomMass returns P(X = y) for a law l that lists atoms (matching within
// AtomMergeTolerance), else 0.
func atomMass(l Law, y float64) float64 {
	al, ok := l.(Atomic)
	if !ok {
		return 0
	}
	for _, at := range al.Atoms() {
		if math.Abs(at.Value-y) <= AtomMergeTolerance*max(math.Abs(at.Value), math.Abs(y)) {
			return at.Mass
		}
	}
	return 0
}

// CDF returns P(scale·X + shift <= x): exactly 0 below the mapped support
// and 1 at or above its top (the map's rounding sends the top back to just
// below the base's top, where an atom-plus-uniform law answered 1 - 3e-14;
// issue 13).
func (a affine) CDF(x float64) float64 {
	lo, hi := a.Support()
	if v, ok := edgeCDF(x, lo, hi); ok {
		return v
	}
	y, v, m, in, ok := a.near(x)
	switch {
	case ok && a.scale > 0 && in: // P(X <= v)
		return a.base.CDF(v)
	case ok && a.scale > 0: // P(X < v)
		return max(0, a.base.CDF(v)-m)
	case ok && in: // P(X >= v)
		return min(1, a.base.Survival(v)+m)
	case ok: // P(X > v)
		return a.base.Survival(v)
	case a.scale > 0:
		return a.base.CDF(y)
	}
	return a.base.Survival(y)
}

// Survival returns P(scale·X + shift > x), computed from the base law's
// own tail: exactly 1 below the mapped support and 0 at or above its top.
func (a affine) Survival(x float64) float64 {
	lo, hi := a.Support()
	if v, ok := edgeSurvival(x, lo, hi); ok {
		return v
	}
	y, v, m, in, ok := a.near(x)
	switch {
	case ok && a.scale > 0 && in: // P(X > v)
		return a.base.Survival(v)
	case ok && a.scale > 0: // P(X >= v)
		return min(1, a.base.Survival(v)+m)
	case ok && in: // P(X < v)
		return max(0, a.base.CDF(v)-m)
	case ok: // P(X <= v)
		return a.base.CDF(v)
	case a.scale > 0:
		return a.base.Survival(y)
	}
	return a.base.CDF(y)
}

func (a affine) Quantile(p float64) float64 {
	if !isProb(p) {
		return math.NaN()
	}
	if a.scale > 0 {
		return a.scale*a.base.Quantile(p) + a.shift
	}
	return a.scale*a.base.UpperQuantile(p) + a.shift
}

func (a affine) UpperQuantile(q float64) float64 {
	if !isProb(q) {
		return math.NaN()
	}
	if a.scale > 0 {
		return a.scale*a.base.UpperQuantile(q) + a.shift
	}
	return a.scale*a.base.Quantile(q) + a.shift
}

func (a affine) Mean() float64     { return a.scale*a.base.Mean() + a.shift }
func (a affine) Variance() float64 { return a.scale * a.scale * a.base.Variance() }

func (a affine) Support() (lo, hi float64) {
	blo, bhi := a.base.Support()
	lo, hi = a.scale*blo+a.shift, a.scale*bhi+a.shift
	if lo > hi {
		lo, hi = hi, lo
	}
	return lo, hi
}

func (a affine) Rand(r *rand.Rand) float64 { return a.scale*a.base.Rand(r) + a.shift }

// Atoms lists the mapped atoms of the base law, if it has any.
func (a affine) Atoms() []Atom {
	if len(a.baseAtoms) == 0 {
		return nil
	}
	atoms := append([]Atom(nil), a.baseAtoms...)
	for i := range atoms {
		atoms[i].Value = a.scale*atoms[i].Value + a.shift
	}
	if a.scale < 0 {
		for i, j := 0, len(atoms)-1; i < j; i, j = i+1, j-1 {
			atoms[i], atoms[j] = atoms[j], atoms[i]
		}
	}
	return atoms
}

func (a affine) String() string {
	return fmt.Sprintf("%.6g·(%v) %+.6g", a.scale, a.base, a.shift)
}

// affineDensity is an affine map of a law with a density.
type affineDensity struct{ affine }

func (a affineDensity) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	return a.base.(Densitied).Density(a.inv(x)) / math.Abs(a.scale)
}
