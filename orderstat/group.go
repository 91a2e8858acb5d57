package orderstat

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
)

// MaxCount is the largest number of copies (in one group or in all groups
// together) that this package accepts: 10^15. Counts are held exactly in
// float64 up to 2^53 ≈ 9·10^15, so sums of counts stay exact.
const MaxCount = int64(1e15)

// Group is a number of independent nodes that share one law: Count
// independent copies of Law. A slice of groups describes a fleet of
// non-identical nodes, for example one group per spreading factor.
type Group struct {
	Law   dist.Law // the law of each node's value, in the value's unit
	Count int64    // how many independent nodes follow Law, >= 1
}

// group is a validated Group with the values this package needs of its law.
type group struct {
	law        dist.Law
	n          int64
	nf         float64
	median     float64 // law.Quantile(0.5): the switch between CDF and Survival (not set for a TwoTails law: see medianValue)
	lazy       *lazyMedian
	tails      TwoTails     // nil when the law has no Tails method
	horizon    *boundPoints // TailBounded laws in a minimum or maximum: bound points at e^{−46m} (setBounds)
	logN2      float64      // log(2·n)
	lo, hi     float64
	atoms      []dist.Atom
	atomMass   float64
	dens       dist.Densitied // nil when the law has no Density method
	pureAtomic bool
}

// point is a law's CDF and survival at one x; the smaller of the two was
// computed directly by the law and the other is its complement.
type point struct {
	f, s   float64
	direct bool // true: f was computed (x below the median); false: s was
}

// logF returns log F(x), accurate relative to F.
func (p point) logF() float64 {
	if p.direct {
		return math.Log(p.f)
	}
	return math.Log1p(-p.s)
}

// logS returns log S(x), accurate relative to S.
func (p point) logS() float64 {
	if p.direct {
		return math.Log1p(-p.f)
	}
	return math.Log(p.s)
}

// lazyMedian holds the median of a TwoTails law, computed on first use
// (the same value whenever that is: the law's Quantile(0.5)).
type lazyMedian struct {
	once sync.Once
	v    float64
}

// medianValue returns the law's median: the one computed when the group
// was built, or for a TwoTails law the one computed on first use.
func (g *group) medianValue() float64 {
	if g.lazy == nil {
		return g.median
	}
	g.lazy.once.Do(func() { g.lazy.v = g.law.Quantile(0.5) })
	return g.lazy.v
}

// eval returns the law's CDF and survival at x with one call to the law.
func (g *group) eval(x float64) point {
	if g.tails != nil {
		f, s := g.tails.Tails(x)
		f, s = clamp01(f), clamp01(s)
		return point{f: f, s: s, direct: f <= s}
	}
	if x < g.median {
		f := clamp01(g.law.CDF(x))
		return point{f: f, s: 1 - f, direct: true}
	}
	s := clamp01(g.law.Survival(x))
	return point{f: 1 - s, s: s}
}

// evalLeft returns P(X < x) and P(X >= x) from the law's atoms: where the
// law has no atom at x they equal the values at x; where it has one of mass
// m, S(x-) = S(x) + m (a sum, exact) or F(x-) = F(x) - m when that keeps at
// least half of F(x). Only where the difference would cancel are the values
// taken just below x (the next float64 down), which is exact for a discrete
// law and off by the continuous mass in one unit in the last place
// otherwise.
func (g *group) evalLeft(x float64) point {
	p := g.eval(x)
	m := g.atomAt(x)
	if m == 0 {
		return p
	}
	if p.direct {
		if fl := p.f - m; fl >= 0.5*p.f {
			return point{f: fl, s: 1 - fl, direct: true}
		}
	} else if sl := p.s + m; sl <= 0.5 {
		return point{f: 1 - sl, s: sl}
	}
	return g.eval(math.Nextafter(x, math.Inf(-1)))
}

// atomAt returns the mass of the law's atom at x (matched within
// dist.AtomMergeTolerance), or 0.
func (g *group) atomAt(x float64) float64 {
	i := sort.Search(len(g.atoms), func(i int) bool { return g.atoms[i].Value >= x*(1-dist.AtomMergeTolerance) || g.atoms[i].Value >= x })
	for ; i < len(g.atoms); i++ {
		v := g.atoms[i].Value
		if math.Abs(v-x) <= dist.AtomMergeTolerance*max(math.Abs(v), math.Abs(x)) {
			return g.atoms[i].Mass
		}
		if v > x {
			break
		}
	}
	return 0
}

// levelQuantile returns inf{x : F(x) >= u} = inf{x : S(x) <= v} for u + v = 1,
// using the law's Quantile or UpperQuantile, whichever level is the smaller
// (and so the one known to full relative precision).
func (g *group) levelQuantile(u, v float64) float64 {
	if u <= 0.5 {
		return g.law.Quantile(u)
	}
	return g.law.UpperQuantile(v)
}

func clamp01(p float64) float64 {
	switch {
	case p < 0:
		return 0
	case p > 1:
		return 1
	}
	return p
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// newGroups validates groups and prepares them. fn names the caller.
func newGroups(fn string, in []Group) ([]group, int64, error) {
	if len(in) == 0 {
		return nil, 0, paramErr(fn, "groups", "[]", "must not be empty")
	}
	out := make([]group, len(in))
	meds := make([]lazyMedian, len(in)) // one allocation for the TwoTails laws' medians
	var total int64
	for i, gr := range in {
		g := &out[i]
		if err := initGroup(g, fn, "groups", i, gr.Law, gr.Count, &meds[i]); err != nil {
			return nil, 0, err
		}
		if total > MaxCount-g.n {
			return nil, 0, paramErr(fn, "groups", fmt.Sprintf("total count > %d", MaxCount), fmt.Sprintf("the counts must sum to at most %d", MaxCount))
		}
		total += g.n
	}
	return out, total, nil
}

// itemName names item i of the list (list[i]), or the list alone for i < 0.
func itemName(list string, i int) string {
	if i < 0 {
		return list
	}
	return list + "[" + strconv.Itoa(i) + "]"
}

// newGroup validates one law and count: item i of the list (see itemName,
// which names it only in an error).
func newGroup(fn, list string, i int, l dist.Law, n int64) (group, error) {
	var g group
	err := initGroup(&g, fn, list, i, l, n, nil)
	return g, err
}

// initGroup is newGroup in place, into the zero group g; lazy, if not nil,
// holds the median of a TwoTails law (else one is allocated).
func initGroup(g *group, fn, list string, i int, l dist.Law, n int64, lazy *lazyMedian) error {
	if l == nil || n < 1 || n > MaxCount {
		return newGroupErr(fn, itemName(list, i), l, n)
	}
	name := func() string { return itemName(list, i) }
	lo, hi := l.Support()
	if math.IsNaN(lo) || math.IsNaN(hi) || !(lo <= hi) {
		return paramErr(fn, name()+".Law", fmt.Sprintf("support [%v, %v]", lo, hi), "must have an ordered, non-NaN support")
	}
	g.law, g.n, g.nf, g.lo, g.hi = l, n, float64(n), lo, hi
	if t, ok := l.(TwoTails); ok {
		// Evaluations need no median; quantiles ask it on first use.
		if lazy == nil {
			lazy = &lazyMedian{}
		}
		g.tails, g.lazy = t, lazy
	} else {
		med := l.Quantile(0.5)
		if !finite(med) {
			return paramErr(fn, name()+".Law", fmt.Sprintf("median %v", med), "must have a finite median")
		}
		g.median = med
	}
	if a, ok := l.(dist.Atomic); ok {
		g.atoms = a.Atoms()
		for _, at := range g.atoms {
			if !finite(at.Value) || !(at.Mass > 0 && at.Mass <= 1) {
				return paramErr(fn, name()+".Law", fmt.Sprintf("atom %v", at), "atoms must have finite values and masses in (0, 1]")
			}
			g.atomMass += at.Mass
		}
		g.pureAtomic = math.Abs(g.atomMass-1) <= 1e-12
	}
	if d, ok := l.(dist.Densitied); ok {
		g.dens = d
	}
	return nil
}

// newGroupErr is newGroup's error for a nil law or a count out of range.
func newGroupErr(fn, name string, l dist.Law, n int64) error {
	if l == nil {
		return paramErr(fn, name+".Law", nil, "must not be nil")
	}
	return paramErr(fn, name+".Count", n, fmt.Sprintf("must be in [1, %d]", MaxCount))
}

// unionAtoms lists the distinct atom values of all groups, sorted; values
// within dist.AtomMergeTolerance (relative) count as one.
func unionAtoms(gs []group) []float64 {
	n := 0
	for _, g := range gs {
		n += len(g.atoms)
	}
	if n == 0 {
		return nil
	}
	vs := make([]float64, 0, n)
	for _, g := range gs {
		for _, a := range g.atoms {
			vs = append(vs, a.Value)
		}
	}
	sort.Float64s(vs)
	out := vs[:0]
	for _, v := range vs {
		if n := len(out); n > 0 && math.Abs(v-out[n-1]) <= dist.AtomMergeTolerance*max(math.Abs(v), math.Abs(out[n-1])) {
			continue
		}
		out = append(out, v)
	}
	return out
}
