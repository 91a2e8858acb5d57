package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"strings"
)

// AtomMergeTolerance is the relative distance within which two atoms are
// treated as one point: values a and b merge when
// |a-b| <= AtomMergeTolerance·max(|a|, |b|). The merged atom sits at the
// mass-weighted mean of the two.
const AtomMergeTolerance = 1e-12

// ProbSumTolerance is how far from 1 the probabilities given to NewDiscrete
// may sum; they are then renormalised exactly.
const ProbSumTolerance = 1e-12

// Discrete is a finite discrete law: P(X = v_i) = p_i. The point mass is the
// case of one atom. CDF and Survival are both computed from partial sums
// taken from their own end, so the survival is accurate in the upper tail.
// The zero Discrete is not a valid law (build one with NewDiscrete): it has
// no atoms, its numerical methods (Support included) return NaN and CF
// NaN + NaN·i; none panics.
type Discrete struct {
	// cells holds the four tables of n entries each, one after the
	// other (read through values, probs, below and above): one slice
	// header, not four, so that a Discrete held in a Law interface
	// takes 32 bytes, not 112.
	cells []float64
	total float64 // the compensated Σ p_i (1 to rounding): weighted divides by it
}

// values returns the atoms' values: sorted, distinct beyond
// AtomMergeTolerance.
func (d Discrete) values() []float64 {
	n := len(d.cells) / 4
	return d.cells[:n:n]
}

// probs returns the atoms' probabilities (> 0).
func (d Discrete) probs() []float64 {
	n := len(d.cells) / 4
	return d.cells[n : 2*n : 2*n]
}

// below returns the partial sums below[i] = Σ_{j<=i} p_j.
func (d Discrete) below() []float64 {
	n := len(d.cells) / 4
	return d.cells[2*n : 3*n : 3*n]
}

// above returns the partial sums above[i] = Σ_{j>i} p_j.
func (d Discrete) above() []float64 {
	n := len(d.cells) / 4
	return d.cells[3*n : 4*n : 4*n]
}

// MaxDiscreteAtoms is the largest number of values NewDiscrete takes
// (about 130 MB of tables at the cap); beyond it the error wraps ErrParam.
const MaxDiscreteAtoms = 1 << 22

// NewDiscrete returns the finite discrete law with the given values (in the
// unit of the variable) and probabilities. The slices must have the same,
// non-zero length, at most MaxDiscreteAtoms; values must be finite;
// probabilities finite, >= 0 and summing to 1 within ProbSumTolerance (the
// sum is compensated, so 10^6 probabilities of 1/10^6 pass). Values closer
// than AtomMergeTolerance merge; zero-probability values are dropped. The
// inputs are copied.
func NewDiscrete(values, probs []float64) (Discrete, error) {
	const fn = "NewDiscrete"
	if len(values) == 0 {
		return Discrete{}, paramErr(fn, "values", "[]", "must not be empty")
	}
	if len(values) > MaxDiscreteAtoms {
		return Discrete{}, paramErr(fn, "values", fmt.Sprintf("len %d", len(values)), fmt.Sprintf("must have at most MaxDiscreteAtoms = %d entries", MaxDiscreteAtoms))
	}
	if len(probs) != len(values) {
		return Discrete{}, paramErr(fn, "probs", fmt.Sprintf("len %d", len(probs)), fmt.Sprintf("must have the length of values (%d)", len(values)))
	}
	for i, v := range values {
		if !finite(v) {
			return Discrete{}, paramErr(fn, fmt.Sprintf("values[%d]", i), v, "must be finite")
		}
	}
	if _, err := probSum(fn, "probs", probs); err != nil {
		return Discrete{}, err
	}
	if n, ok := apart(values, probs); ok {
		// already sorted and apart: the tables straight from the inputs
		d := Discrete{cells: make([]float64, 4*n)}
		vs, ps := d.values(), d.probs()
		k := 0
		for i, v := range values {
			if p := probs[i]; p > 0 {
				vs[k], ps[k] = v, p
				k++
			}
		}
		return d.normalise(), nil
	}
	atoms := make([]Atom, 0, len(values))
	for i, v := range values {
		if p := probs[i]; p > 0 {
			atoms = append(atoms, Atom{Value: v, Mass: p})
		}
	}
	return discreteFromAtoms(atoms), nil
}

// apart reports whether the values with positive probability increase
// strictly, each pair of neighbours beyond AtomMergeTolerance (so that
// mergeAtoms would neither move nor merge them), and counts them.
func apart(values, probs []float64) (n int, ok bool) {
	prev := 0.0
	for i, v := range values {
		if !(probs[i] > 0) {
			continue
		}
		if n > 0 && !(v > prev && v-prev > AtomMergeTolerance*max(math.Abs(v), math.Abs(prev))) {
			return 0, false
		}
		prev = v
		n++
	}
	return n, true
}

// MustDiscrete is NewDiscrete that panics on bad input; for examples and tests.
func MustDiscrete(values, probs []float64) Discrete {
	d, err := NewDiscrete(values, probs)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return d
}

// NewPointMass returns the law of the constant v: P(X = v) = 1. v must be finite.
func NewPointMass(v float64) (Discrete, error) {
	if !finite(v) {
		return Discrete{}, paramErr("NewPointMass", "v", v, "must be finite")
	}
	d := Discrete{cells: make([]float64, 4)}
	d.values()[0], d.probs()[0] = v, 1
	return d.normalise(), nil
}

// MustPointMass is NewPointMass that panics on bad input; for examples and tests.
func MustPointMass(v float64) Discrete {
	d, err := NewPointMass(v)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return d
}

// discreteFromAtoms sorts, merges within AtomMergeTolerance and normalises
// atoms with positive, finite masses and finite values. It owns atoms.
func discreteFromAtoms(atoms []Atom) Discrete {
	merged := mergeAtoms(atoms)
	d := Discrete{cells: make([]float64, 4*len(merged))} // the four tables' one backing array
	values, probs := d.values(), d.probs()
	for i, a := range merged {
		values[i], probs[i] = a.Value, a.Mass
	}
	return d.normalise()
}

// normalise divides the masses in d's probs table by their compensated
// sum and fills its below and above tables; d's values table is set,
// sorted and apart, and its masses are positive and finite.
func (d Discrete) normalise() Discrete {
	n := d.Len()
	probs, below, above := d.probs(), d.below(), d.above()
	var total compSum
	for _, m := range probs {
		total.add(m)
	}
	for i, m := range probs {
		probs[i] = m / total.value()
	}
	var s compSum
	for i := 0; i < n; i++ {
		s.add(probs[i])
		below[i] = min(s.value(), 1)
	}
	d.total = s.value()
	if n > 0 {
		below[n-1] = 1 // the masses are normalised: no rounding short of 1 at the top
	}
	s = compSum{}
	for i := n - 1; i >= 0; i-- {
		above[i] = min(s.value(), 1)
		s.add(probs[i])
	}
	return d
}

// weighted returns Σ p_i·g(v_i), compensated, divided by the compensated
// Σ p_i and capped at 1: exactly 1 where every g(v_i) is 1. A law built on
// the atoms (D + C as Σ p_i·F_C(x - v_i), say) so reaches CDF 1 at +Inf
// and Survival 1 at -Inf even where the normalised probabilities, each
// rounded, add to 1 - 2 ulp (ten atoms of 0.1, say; issue 13). The zero
// Discrete gives NaN.
func (d Discrete) weighted(g func(v float64) float64) float64 {
	vs, ps := d.values(), d.probs()
	if len(vs) == 0 {
		return math.NaN()
	}
	var s compSum
	for i, v := range vs {
		s.add(ps[i] * g(v))
	}
	return min(1, s.value()/d.total)
}

// Len returns the number of atoms.
func (d Discrete) Len() int { return len(d.cells) / 4 }

// Atoms lists the atoms, sorted by value.
func (d Discrete) Atoms() []Atom {
	vs, ps := d.values(), d.probs()
	out := make([]Atom, len(vs))
	for i, v := range vs {
		out[i] = Atom{Value: v, Mass: ps[i]}
	}
	return out
}

// atomIndex returns the number of the sorted values vs that are <= x.
func atomIndex(vs []float64, x float64) int {
	return sort.Search(len(vs), func(i int) bool { return vs[i] > x })
}

// CDF returns Σ_{v_i <= x} p_i.
func (d Discrete) CDF(x float64) float64 {
	vs := d.values()
	if math.IsNaN(x) || len(vs) == 0 {
		return math.NaN()
	}
	i := atomIndex(vs, x)
	if i == 0 {
		return 0
	}
	return d.below()[i-1]
}

// Survival returns Σ_{v_i > x} p_i, summed from the top.
func (d Discrete) Survival(x float64) float64 {
	vs := d.values()
	if math.IsNaN(x) || len(vs) == 0 {
		return math.NaN()
	}
	i := atomIndex(vs, x)
	if i == 0 {
		return 1
	}
	return d.above()[i-1]
}

// Quantile returns the smallest v_i with CDF(v_i) >= p, and the largest
// value for p = 1 (even when atoms too light to move the partial sums
// off 1 lie above the first sum that rounds to 1).
func (d Discrete) Quantile(p float64) float64 {
	vs, below := d.values(), d.below()
	if !isProb(p) || len(vs) == 0 {
		return math.NaN()
	}
	if p == 1 {
		return vs[len(vs)-1]
	}
	i := sort.Search(len(vs), func(i int) bool { return below[i] >= p })
	if i == len(vs) {
		i--
	}
	return vs[i]
}

// UpperQuantile returns the smallest v_i with Survival(v_i) <= q.
func (d Discrete) UpperQuantile(q float64) float64 {
	vs, above := d.values(), d.above()
	if !isProb(q) || len(vs) == 0 {
		return math.NaN()
	}
	i := sort.Search(len(vs), func(i int) bool { return above[i] <= q })
	if i == len(vs) {
		i--
	}
	return vs[i]
}

// Mean returns Σ p_i v_i.
func (d Discrete) Mean() float64 {
	vs, ps := d.values(), d.probs()
	if len(vs) == 0 {
		return math.NaN()
	}
	m := 0.0
	for i, v := range vs {
		m += ps[i] * v
	}
	return m
}

// Variance returns Σ p_i (v_i - mean)².
func (d Discrete) Variance() float64 {
	vs, ps := d.values(), d.probs()
	if len(vs) == 0 {
		return math.NaN()
	}
	m := d.Mean()
	s := 0.0
	for i, v := range vs {
		s += ps[i] * (v - m) * (v - m)
	}
	return s
}

// Support returns [min v_i, max v_i].
func (d Discrete) Support() (lo, hi float64) {
	vs := d.values()
	if len(vs) == 0 {
		return math.NaN(), math.NaN()
	}
	return vs[0], vs[len(vs)-1]
}

// Rand draws a value using r by binary search on the cumulative sums
// (O(log n)); for many draws from a large law prepare an AliasSampler.
func (d Discrete) Rand(r *rand.Rand) float64 {
	vs, below := d.values(), d.below()
	switch len(vs) {
	case 0:
		return math.NaN()
	case 1:
		return vs[0]
	}
	u := r.Float64()
	i := sort.Search(len(vs), func(i int) bool { return below[i] > u })
	if i == len(vs) {
		i--
	}
	return vs[i]
}

// CF returns Σ p_k exp(i·t·v_k).
func (d Discrete) CF(t float64) complex128 {
	vs, ps := d.values(), d.probs()
	if len(vs) == 0 {
		return complex(math.NaN(), math.NaN())
	}
	var re, im float64
	for i, v := range vs {
		s, c := math.Sincos(t * v)
		re += ps[i] * c
		im += ps[i] * s
	}
	return complex(re, im)
}

// CGF returns log Σ p_k exp(s·v_k), computed stably.
func (d Discrete) CGF(s float64) float64 {
	vs, ps := d.values(), d.probs()
	if len(vs) == 0 {
		return math.NaN()
	}
	mx := math.Inf(-1)
	for _, v := range vs {
		mx = max(mx, s*v)
	}
	sum := 0.0
	for i, v := range vs {
		sum += ps[i] * math.Exp(s*v-mx)
	}
	return mx + math.Log(sum)
}

// String prints the law compactly: "PointMass(v)" for one atom, the atoms for
// up to four, and the mean, standard deviation and 5–95 % range beyond that.
func (d Discrete) String() string {
	vs, ps := d.values(), d.probs()
	switch n := len(vs); {
	case n == 0:
		return "zero Discrete"
	case n == 1:
		return fmt.Sprintf("PointMass(%.6g)", vs[0])
	case n <= 4:
		parts := make([]string, n)
		for i, v := range vs {
			parts[i] = fmt.Sprintf("%.6g:%.4g", v, ps[i])
		}
		return "Discrete{" + strings.Join(parts, ", ") + "}"
	default:
		return fmt.Sprintf("Discrete(%d atoms, %s)", n, summary(d))
	}
}

// summary prints mean, standard deviation and 5–95 % range of any law.
func summary(l Law) string {
	return fmt.Sprintf("mean=%.6g, sd=%.4g, 5–95%%=[%.6g, %.6g]",
		l.Mean(), math.Sqrt(l.Variance()), l.Quantile(0.05), l.UpperQuantile(0.05))
}
