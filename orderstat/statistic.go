package orderstat

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"strings"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
)

// Statistic is the law of an order statistic of independent nodes: the
// maximum, the minimum or the k-th smallest of n values, drawn from one law
// (i.i.d.) or from groups of nodes with different laws. It is an immutable
// value, safe for concurrent use, and implements dist.Law, dist.Atomic and
// dist.Estimated; when every parent law has a density (or is purely
// atomic) the law returned by the constructors also implements
// dist.Densitied.
//
// All probabilities are computed in log space from the parents' CDF and
// Survival, so the order statistic keeps the relative precision of its
// parents in both tails for counts up to MaxCount. Mean and Variance are
// computed on first use (exact sums over atoms, composite Gauss–Legendre
// quadrature of the tails elsewhere) and cached.
//
// Special values follow dist.Law: NaN in gives NaN out; Quantile and
// UpperQuantile return NaN outside [0, 1] and the ends of the support at
// 0 and 1. The zero Statistic is not a valid law (build one with Max, Min,
// Kth or their group forms): its numerical methods return NaN (Support
// NaN, NaN), Rank and Count 0, Atoms and Groups nil; none panics, as for
// the zero values of dist and energy.
type Statistic struct{ c *core }

type kind int

const (
	kindMin kind = iota
	kindMax
	kindKth
)

type core struct {
	fn     string
	kind   kind
	groups []group
	n      int64 // total number of nodes
	k      int64 // rank, 1 = minimum, n = maximum
	beta   betaLaw
	lo, hi float64

	atoms   []dist.Atom
	pure    bool // all the mass is on atoms
	hasDens bool
	costly  bool        // some parent is numerical (dist.Estimated): spare its quantiles
	bounded bool        // some parent is TailBounded: extremeLog may leave groups out
	order   []int       // extremeLog's order of the groups when bounded
	rest    *restBounds // the groups from each position of order on, when bounded

	once sync.Once
	mom  moments

	kthOnce        sync.Once
	kthAbs, kthRel float64 // the count kernel's stated errors (kthError)
}

// Max returns the law of the largest of n independent copies of l:
//
//	P(max <= x) = F(x)^n = exp(n·log1p(-S(x)))
//	P(max > x)  = -expm1(n·log1p(-S(x)))
//
// n must be in [1, MaxCount] and l non-nil with a finite median (not
// asked of a law that implements TwoTails).
// Quantiles come from the parent's: Quantile(p) = l.UpperQuantile(-expm1(log(p)/n)).
func Max(l dist.Law, n int64) (dist.Law, error) {
	return build("Max", []Group{{Law: l, Count: n}}, kindMax, n, false)
}

// Min returns the law of the smallest of n independent copies of l:
//
//	P(min > x)  = S(x)^n = exp(n·log1p(-F(x)))
//	P(min <= x) = -expm1(n·log1p(-F(x)))
//
// n must be in [1, MaxCount] and l non-nil with a finite median (not
// asked of a law that implements TwoTails).
func Min(l dist.Law, n int64) (dist.Law, error) {
	return build("Min", []Group{{Law: l, Count: n}}, kindMin, 1, false)
}

// Kth returns the law of the k-th smallest of n independent copies of l
// (k = 1 is the minimum, k = n the maximum). With U ~ Beta(k, n-k+1) the
// k-th smallest of n uniforms (David & Nagaraja, Order Statistics, 3rd ed.,
// §2.2),
//
//	P(X_(k) <= x) = P(U <= F(x))
//
// where the Beta law is evaluated by quadrature of its density (Loader's
// binomial form), accurate for n up to MaxCount, and its quantiles map
// through the parent's: Quantile(p) = l.Quantile(u_p). 1 <= k <= n <= MaxCount.
func Kth(l dist.Law, k, n int64) (dist.Law, error) {
	if n < 1 || n > MaxCount {
		return nil, paramErr("Kth", "n", n, fmt.Sprintf("must be in [1, %d]", MaxCount))
	}
	if k < 1 || k > n {
		return nil, paramErr("Kth", "k", k, fmt.Sprintf("must be in [1, n = %d]", n))
	}
	return build("Kth", []Group{{Law: l, Count: n}}, kindKth, k, true)
}

// MaxOfGroups returns the law of the largest value over groups of
// independent nodes, group i holding groups[i].Count copies of
// groups[i].Law:
//
//	P(max <= x) = Π F_i(x)^{n_i} = exp(Σ n_i·log F_i(x))
//
// Each log F_i is log1p(-S_i) above the group's median and log F_i below
// it, one parent call per group and point; a parent that implements
// TwoTails gives both from one call, and its median is asked only when a
// quantile is solved for. Quantiles are found between
// brackets taken from the parents' quantiles (the quantile of the largest
// of n_i copies of the dominant group and of Σ n_i copies of every group)
// by Illinois regula falsi.
func MaxOfGroups(groups []Group) (dist.Law, error) {
	return build("MaxOfGroups", groups, kindMax, 0, false)
}

// MinOfGroups returns the law of the smallest value over groups of
// independent nodes:
//
//	P(min > x) = Π S_i(x)^{n_i} = exp(Σ n_i·log S_i(x))
//
// With lifetime laws this is the time to the first failure in the fleet.
// Groups whose laws implement TailBounded (a battery lifetime does) are
// left out at the points where their bounds put their share below 1e-16
// of the answer (see TailBounded); the same holds for MaxOfGroups.
func MinOfGroups(groups []Group) (dist.Law, error) {
	return build("MinOfGroups", groups, kindMin, 1, false)
}

// KthOfGroups returns the law of the k-th smallest value over groups of
// independent nodes, 1 <= k <= Σ Count. With C(x) = Σ_i Bin(n_i, F_i(x))
// the number of nodes at or below x,
//
//	P(X_(k) <= x) = P(C(x) >= k)
//
// and the tail of the count is computed by direct convolution of the
// groups' binomial probabilities over the counts from the nearer end of the
// count up to k (and, where the tail on the far side is the small one, on
// until its log-concave remainder is below 1e-16 of it), where that is
// cheaper than the exact path and the bound it derives (the binomial
// walks' bounds plus one rounding per product and addition) is at most
// 1e-11; by the discrete Fourier transform of the count's characteristic
// function (Hong 2013), exponentially tilted so that both tails keep their
// relative precision, otherwise (see PoissonBinomial), with a bound from
// the inversion's own, the tilt's rounding and the mass beyond its window.
// Accuracy states the largest of these bounds at the law's quantiles (see
// there). Each evaluation costs one
// parent call per group and at most a transform of size about 20·sd(C) (so
// min(k, n-k+1) is limited to 10^8; ErrRange beyond).
// With lifetime laws, KthOfGroups(groups, k) is the time by which k
// batteries are flat.
func KthOfGroups(groups []Group, k int64) (dist.Law, error) {
	return build("KthOfGroups", groups, kindKth, k, true)
}

// maxCountWindow bounds min(k, n-k+1) for KthOfGroups.
const maxCountWindow = 1e8

func build(fn string, in []Group, kd kind, k int64, checkK bool) (dist.Law, error) {
	if len(in) == 1 && fn != "Kth" && !strings.HasSuffix(fn, "Groups") {
		// Single-law forms name their parameters l and n.
		if in[0].Law == nil {
			return nil, paramErr(fn, "l", nil, "must not be nil")
		}
		if in[0].Count < 1 || in[0].Count > MaxCount {
			return nil, paramErr(fn, "n", in[0].Count, fmt.Sprintf("must be in [1, %d]", MaxCount))
		}
	}
	gs, total, err := newGroups(fn, in)
	if err != nil {
		return nil, err
	}
	if kd == kindMax {
		k = total
	}
	if checkK && (k < 1 || k > total) {
		return nil, paramErr(fn, "k", k, fmt.Sprintf("must be in [1, %d]", total))
	}
	if kd == kindKth {
		switch {
		case k == 1:
			kd = kindMin
		case k == total:
			kd = kindMax
		case len(gs) > 1 && float64(min(k, total-k+1)) > maxCountWindow:
			return nil, rangeErr(fn, fmt.Sprintf("min(k, n-k+1) = %d exceeds %g", min(k, total-k+1), maxCountWindow))
		}
	}
	c := &core{fn: fn, kind: kd, groups: gs, n: total, k: k}
	if kd == kindKth && len(gs) == 1 {
		c.beta = newBeta(float64(k), float64(total-k+1))
	}
	c.support()
	c.setBounds()
	c.findAtoms()
	c.hasDens = true
	for _, g := range gs {
		if _, ok := g.law.(dist.Estimated); ok {
			c.costly = true
		}
		if g.dens == nil && !g.pureAtomic {
			c.hasDens = false
		}
	}
	if kd == kindKth && len(gs) > 1 {
		c.hasDens = false
	}
	s := Statistic{c: c}
	if c.hasDens && !c.pure {
		return statisticDensity{s}, nil
	}
	return s, nil
}

// support sets lo and hi: the k-th smallest of the groups' lower and upper
// ends, counted with multiplicity.
func (c *core) support() {
	kthEnd := func(end func(g group) float64) float64 {
		if c.k == 1 || c.k == c.n {
			// the smallest or the largest end: no sort
			x := end(c.groups[0])
			for _, g := range c.groups[1:] {
				if e := end(g); (c.k == 1 && e < x) || (c.k == c.n && c.k != 1 && e > x) {
					x = e
				}
			}
			return x
		}
		var buf [stackTerms]int // (the ends are not NaN: initGroup)
		idx := buf[:0]
		for i := range c.groups {
			idx = append(idx, i)
		}
		slices.SortFunc(idx, func(a, b int) int { return cmp.Compare(end(c.groups[a]), end(c.groups[b])) })
		var acc int64
		for _, i := range idx {
			acc += c.groups[i].n
			if acc >= c.k {
				return end(c.groups[i])
			}
		}
		return end(c.groups[idx[len(idx)-1]])
	}
	c.lo = kthEnd(func(g group) float64 { return g.lo })
	c.hi = kthEnd(func(g group) float64 { return g.hi })
}

// logs returns Σ n_i·log F_i(x) and Σ n_i·log S_i(x), at x or just below it.
func (c *core) logs(x float64, left bool) (lf, ls float64) {
	for i := range c.groups {
		g := &c.groups[i]
		var p point
		if left {
			p = g.evalLeft(x)
		} else {
			p = g.eval(x)
		}
		lf += g.nf * p.logF()
		ls += g.nf * p.logS()
	}
	return lf, ls
}

// eval returns P(X <= x) and P(X > x) (or, with left, P(X < x) and
// P(X >= x)), each accurate relative to its value.
func (c *core) eval(x float64, left bool) (cdf, sf float64) {
	if math.IsNaN(x) {
		return x, x
	}
	switch c.kind {
	case kindMax:
		l := c.extremeLog(x, left, true)
		return math.Exp(l), -math.Expm1(l)
	case kindMin:
		l := c.extremeLog(x, left, false)
		return -math.Expm1(l), math.Exp(l)
	}
	if len(c.groups) == 1 {
		g := &c.groups[0]
		p := g.eval(x)
		if left {
			p = g.evalLeft(x)
		}
		return c.beta.split(p.f, p.s)
	}
	var buf [stackTerms]binom
	le, gt, _, _ := c.countModel(buf[:0], x, left).splitErr(float64(c.k-1), false)
	return gt, le
}

// stackTerms is the number of groups whose count's terms the callers of
// countModel keep in an array of their own (on the stack, where it does
// not escape): one allocation fewer a call for up to that many groups.
const stackTerms = 8

// countModel returns the count of nodes at or below x (below x with left)
// over the groups: C(x) = Σ_i Bin(n_i, F_i(x)), its terms appended to
// dst[:0] (the count holds them).
func (c *core) countModel(dst []binom, x float64, left bool) countModel {
	terms := dst[:0]
	for i := range c.groups {
		g := &c.groups[i]
		p := g.eval(x)
		if left {
			p = g.evalLeft(x)
		}
		terms = append(terms, binom{n: g.nf, p: p.f, q: p.s})
	}
	return takeCountModel(terms)
}

// untiltedEnd returns a bracket [lo, hi] (within [a, b], a and b finite,
// else NaN) of the point where (E[C(x)] − (k − ½))/sd(C(x)) crosses z, by
// bisection: one parent call per group a step.
func (c *core) untiltedEnd(a, b, z float64) (lo, hi float64) {
	if !finite(a) || !finite(b) || !(a < b) {
		return math.NaN(), math.NaN()
	}
	var buf [stackTerms]binom
	d := func(x float64) float64 {
		cm := c.countModel(buf[:0], x, false)
		return (cm.mean - (float64(c.k) - 0.5)) - z*math.Sqrt(cm.variance)
	}
	if !(d(a) < 0 && d(b) >= 0) {
		return math.NaN(), math.NaN()
	}
	for range 200 {
		m := a + (b-a)/2
		if !(m > a && m < b) {
			break
		}
		if d(m) < 0 {
			a = m
		} else {
			b = m
		}
	}
	return a, b
}

// kthProbeLevels are the levels at whose quantiles (of the CDF and of the
// survival) kthError reads the count kernel's bounds, kthProbeSlack the
// factor it carries for the points between them.
var kthProbeLevels = [...]float64{0.5, 1e-3, 1e-10, 1e-30, 1e-100, 1e-300}

const kthProbeSlack = 2

// kthError returns, for the k-th of several groups, the stated errors of
// the count kernel (countModel.splitErr): the largest absolute error of
// either tail and the largest relative error of the survival where it is
// at least floor, read at the law's quantiles of kthProbeLevels (those at
// least floor) on both sides and at the ends of the untilted stretch
// (untiltedEnd), times kthProbeSlack. The kernel's relative bound is
// largest on the untilted stretch near the median, towards its ends (a
// tail summed untilted carries the inversion's bound over half the
// window), and beyond it grows with the tilt, so with the distance from
// the median (the probes reach the ends of the range it is stated over);
// TestKthErrorCoversRange checks the envelope against the bounds at 400
// points. Computed once.
func (c *core) kthError(floor float64) (abs, rel float64) {
	c.kthOnce.Do(func() {
		var xs []float64
		for _, lv := range kthProbeLevels {
			if lv < floor {
				continue
			}
			xs = append(xs, c.quantile(lv, 1-lv, false), c.quantile(1-lv, lv, true))
		}
		// The ends of the stretch the transform takes untilted (where
		// |k − ½ − E[C(x)]| <= untiltedSD·sd(C(x)), see tiltFor): a tail
		// summed untilted carries the inversion's bound over half the
		// window, against a value that is smallest at the ends.
		a, b := c.quantile(1e-10, 1-1e-10, false), c.quantile(1-1e-10, 1e-10, true)
		for _, z := range []float64{-untiltedSD, untiltedSD} {
			lo, hi := c.untiltedEnd(a, b, z)
			xs = append(xs, lo, hi)
		}
		for _, x := range xs {
			if finite(x) {
				var buf [stackTerms]binom
				le, gt, rle, rgt := c.countModel(buf[:0], x, false).splitErr(float64(c.k-1), true)
				// P(X_(k) <= x) = P(C > k-1) = gt, P(X_(k) > x) = le
				if gt > 0 {
					c.kthAbs = max(c.kthAbs, rgt*gt)
				}
				if le > 0 {
					c.kthAbs = max(c.kthAbs, rle*le)
				}
				if le > 0 {
					// the outermost probes lie just beyond the floor
					// (S <= floor there), where the bound is at least
					// what it is inside
					c.kthRel = max(c.kthRel, rle)
				}
			}
		}
		c.kthAbs *= kthProbeSlack
		c.kthRel *= kthProbeSlack
	})
	return c.kthAbs, c.kthRel
}

// findAtoms lists the atoms of the order statistic: at each atom v of a
// parent, the mass P(X <= v) - P(X < v), computed without cancellation.
func (c *core) findAtoms() {
	vals := unionAtoms(c.groups)
	if len(vals) > 0 {
		c.atoms = make([]dist.Atom, 0, len(vals)) // room for every one: most are kept
	}
	total := 0.0
	for _, v := range vals {
		if v < c.lo || v > c.hi {
			continue
		}
		var m float64
		switch c.kind {
		case kindMax:
			l, _ := c.logs(v, false)
			lm, _ := c.logs(v, true)
			m = math.Exp(l) * -math.Expm1(lm-l)
		case kindMin:
			_, l := c.logs(v, false)
			_, lm := c.logs(v, true)
			m = math.Exp(lm) * -math.Expm1(l-lm)
		default:
			if len(c.groups) == 1 {
				g := &c.groups[0]
				p, pl := g.eval(v), g.evalLeft(v)
				m = c.beta.mass(pl.f, pl.s, p.f, p.s)
			} else {
				cdf, sf := c.eval(v, false)
				cdfL, sfL := c.eval(v, true)
				if cdf <= 0.5 {
					m = cdf - cdfL
				} else {
					m = sfL - sf
				}
			}
		}
		if m > 0 && !math.IsNaN(m) {
			c.atoms = append(c.atoms, dist.Atom{Value: v, Mass: min(m, 1)})
			total += m
		}
	}
	pure := true
	for _, g := range c.groups {
		if !g.pureAtomic {
			pure = false
		}
	}
	c.pure = pure && len(c.atoms) > 0 && math.Abs(total-1) <= 1e-9
}

// CDF returns P(X <= x).
func (s Statistic) CDF(x float64) float64 {
	if s.c == nil {
		return math.NaN()
	}
	cdf, _ := s.c.eval(x, false)
	return cdf
}

// Survival returns P(X > x), computed directly (never as 1 - CDF).
func (s Statistic) Survival(x float64) float64 {
	if s.c == nil {
		return math.NaN()
	}
	_, sf := s.c.eval(x, false)
	return sf
}

// Tails returns P(X <= x) and P(X > x) from one evaluation, the same bits
// as CDF and Survival, which take one each (a count's convolution or
// transform, or the extreme's sum of logarithms, gives both sides): a
// Statistic is a TwoTails law.
func (s Statistic) Tails(x float64) (cdf, survival float64) {
	if s.c == nil {
		return math.NaN(), math.NaN()
	}
	return s.c.eval(x, false)
}

// Quantile returns inf{x : CDF(x) >= p}; NaN for p outside [0, 1].
func (s Statistic) Quantile(p float64) float64 {
	switch {
	case !(p >= 0 && p <= 1) || s.c == nil:
		return math.NaN()
	case p == 0:
		return s.c.lo
	case p == 1:
		return s.c.hi
	}
	return s.c.quantile(p, 1-p, false)
}

// UpperQuantile returns inf{x : Survival(x) <= q}, accurate for tiny q;
// NaN for q outside [0, 1].
func (s Statistic) UpperQuantile(q float64) float64 {
	switch {
	case !(q >= 0 && q <= 1) || s.c == nil:
		return math.NaN()
	case q == 1:
		return s.c.lo
	case q == 0:
		return s.c.hi
	}
	return s.c.quantile(1-q, q, true)
}

// Support returns the smallest closed interval holding all the mass: for
// the k-th smallest, the k-th smallest of the parents' lower (upper) ends
// counted with multiplicity.
func (s Statistic) Support() (lo, hi float64) {
	if s.c == nil {
		return math.NaN(), math.NaN()
	}
	return s.c.lo, s.c.hi
}

// Atoms lists the point masses, sorted by value: P(X_(k) = v) at each atom v
// of a parent, where it is not zero in float64.
func (s Statistic) Atoms() []dist.Atom {
	if s.c == nil {
		return nil
	}
	return append([]dist.Atom(nil), s.c.atoms...)
}

// Rank returns k: 1 for the minimum, Count() for the maximum.
func (s Statistic) Rank() int64 {
	if s.c == nil {
		return 0
	}
	return s.c.k
}

// Count returns the total number of nodes n.
func (s Statistic) Count() int64 {
	if s.c == nil {
		return 0
	}
	return s.c.n
}

// Groups returns the groups the statistic was built from (one for the
// i.i.d. forms), as a fresh slice.
func (s Statistic) Groups() []Group {
	if s.c == nil {
		return nil
	}
	out := make([]Group, len(s.c.groups))
	for i, g := range s.c.groups {
		out[i] = Group{Law: g.law, Count: g.n}
	}
	return out
}

// quantile returns inf{x : CDF(x) >= p} for p + q = 1, 0 < p < 1, or with
// upper inf{x : Survival(x) <= q}: the same point, but the condition is
// tested on the probability the caller gave exactly.
func (c *core) quantile(p, q float64, upper bool) float64 {
	h := func(x float64) float64 {
		cdf, sf := c.eval(x, false)
		if !upper {
			return math.Log(cdf) - math.Log(p)
		}
		return math.Log(q) - math.Log(sf)
	}
	if len(c.groups) == 1 {
		g := &c.groups[0]
		var x float64
		switch c.kind {
		case kindMax:
			l := log1mp(q, p) / g.nf // log of the parent's CDF level
			x = g.levelQuantile(math.Exp(l), -math.Expm1(l))
		case kindMin:
			l := log1mp(p, q) / g.nf // log of the parent's survival level
			x = g.levelQuantile(-math.Expm1(l), math.Exp(l))
		default:
			u, w := c.beta.quantile(p, q)
			x = g.levelQuantile(u, w)
		}
		return c.atomFix(x, h)
	}
	var a, b float64
	if c.costly && c.kind != kindKth {
		a, b = c.cheapBracket(p, q)
	} else {
		a, b = c.bracket(p, q)
	}
	a, b, ha, hb := widen(h, a, b)
	var x float64
	switch {
	case ha >= 0:
		x = a
	case hb < 0:
		x = b
	default:
		x = solve(h, a, b, ha, hb)
	}
	return c.snap(x, h)
}

// atomFix corrects a quantile found through the parent's quantile at a
// transformed level, which rounding can move across an atom: it steps to the
// neighbouring atom when the condition h >= 0 says the answer lies there.
func (c *core) atomFix(x float64, h func(float64) float64) float64 {
	if len(c.atoms) == 0 || !finite(x) {
		return x
	}
	i := sort.Search(len(c.atoms), func(i int) bool { return c.atoms[i].Value >= x })
	if h(x) < 0 {
		// Too low: the answer is the next atom up if no mass lies between
		// (otherwise x is within rounding of the answer).
		if i < len(c.atoms) && c.atoms[i].Value == x {
			i++
		}
		if i < len(c.atoms) {
			v := c.atoms[i].Value
			cdf, _ := c.eval(x, false)
			cdfL, _ := c.eval(v, true)
			if cdfL-cdf <= 1e-14*cdf && h(v) >= 0 {
				return v
			}
		}
		return x
	}
	for j := i - 1; j >= 0; j-- {
		v := c.atoms[j].Value
		if h(v) < 0 {
			break
		}
		x = v
	}
	return x
}

// snap returns the atom just at or below x if the condition holds there
// (the root finder stops a few units in the last place above a jump).
func (c *core) snap(x float64, h func(float64) float64) float64 {
	i := sort.Search(len(c.atoms), func(i int) bool { return c.atoms[i].Value > x })
	if i == 0 {
		return x
	}
	v := c.atoms[i-1].Value
	if v < x && x-v <= 16*epsilon*math.Abs(x)+1e-300 && h(v) >= 0 {
		return v
	}
	return x
}

// bracket returns a <= b with the p-quantile in [a, b], from the parents'
// quantiles: for the maximum, the quantile of the largest of n_i copies of
// each group (a lower bound, maximised over groups) and of n copies of each
// (an upper bound); for the minimum symmetrically; for the k-th, the
// minimum's lower and the maximum's upper bound.
func (c *core) bracket(p, q float64) (a, b float64) {
	N := float64(c.n)
	lp := log1mp(q, p) // log p
	lq := log1mp(p, q) // log q
	maxAt := func(nn float64) float64 {
		x := math.Inf(-1)
		for i := range c.groups {
			g := &c.groups[i]
			l := lp / nn
			if nn == 0 {
				l = lp / g.nf
			}
			x = max(x, g.levelQuantile(math.Exp(l), -math.Expm1(l)))
		}
		return x
	}
	minAt := func(nn float64) float64 {
		x := math.Inf(1)
		for i := range c.groups {
			g := &c.groups[i]
			l := lq / nn
			if nn == 0 {
				l = lq / g.nf
			}
			x = min(x, g.levelQuantile(-math.Expm1(l), math.Exp(l)))
		}
		return x
	}
	switch c.kind {
	case kindMax:
		return maxAt(0), maxAt(N)
	case kindMin:
		return minAt(N), minAt(0)
	}
	return minAt(N), maxAt(N)
}

// cheapBracket returns a starting interval from one parent quantile: the
// quantile of the extreme of its own n_i copies for the group whose median
// is most extreme — a bound on the answer (lower for the maximum, upper for
// the minimum) — and a step of the distance to that group's median. widen
// then grows it with evaluations of the law (one parent CDF call per group
// each) instead of one parent quantile per group, which is cheaper when the
// parents' quantiles are themselves numerical inversions.
func (c *core) cheapBracket(p, q float64) (a, b float64) {
	best := 0
	for i := range c.groups {
		m, mb := c.groups[i].medianValue(), c.groups[best].medianValue()
		if (c.kind == kindMax && m > mb) || (c.kind == kindMin && m < mb) {
			best = i
		}
	}
	g := &c.groups[best]
	var x float64
	if c.kind == kindMax {
		l := log1mp(q, p) / g.nf
		x = g.levelQuantile(math.Exp(l), -math.Expm1(l))
	} else {
		l := log1mp(p, q) / g.nf
		x = g.levelQuantile(-math.Expm1(l), math.Exp(l))
	}
	step := max(math.Abs(x-g.medianValue()), 1e-6*math.Abs(x)+1e-300)
	if !finite(x) {
		return x, x
	}
	if c.kind == kindMax {
		return x, x + step
	}
	return x - step, x
}

// widen makes [a, b] finite and checks it, stepping outwards from a finite
// end while h says the bracket does not yet hold.
func widen(h func(float64) float64, a, b float64) (float64, float64, float64, float64) {
	if a > b {
		a, b = b, a
	}
	if !finite(a) && !finite(b) {
		a, b = -1, 1
	}
	if !finite(a) {
		a = b - max(1, math.Abs(b))
	}
	if !finite(b) {
		b = a + max(1, math.Abs(a))
	}
	ha, hb := h(a), h(b)
	step := max(b-a, 1e-300+math.Abs(a)*1e-8)
	for i := 0; ha >= 0 && i < 2100; i++ {
		b, hb = a, ha
		a -= step
		step *= 2
		ha = h(a)
		if math.IsInf(a, 0) {
			break
		}
	}
	step = max(b-a, 1e-300+math.Abs(b)*1e-8)
	for i := 0; hb < 0 && i < 2100; i++ {
		a, ha = b, hb
		b += step
		step *= 2
		hb = h(b)
		if math.IsInf(b, 0) {
			break
		}
	}
	return a, b, ha, hb
}

// Rand draws a value using r. The i.i.d. forms map one uniform order
// statistic through the parent's quantile (max: U^(1/n); min: 1 - U^(1/n);
// k-th: Beta(k, n-k+1) from two gamma draws), exact in law for any n. The
// group forms draw each group's extreme, or for the k-th merge the groups'
// smallest (or largest) values generated in order by uniform spacings, at a
// cost of min(k, n-k+1) + #groups parent quantile calls.
func (s Statistic) Rand(r *rand.Rand) float64 {
	c := s.c
	if c == nil {
		return math.NaN()
	}
	switch c.kind {
	case kindMax:
		x := math.Inf(-1)
		for i := range c.groups {
			g := &c.groups[i]
			l := math.Log(openUniform(r)) / g.nf
			x = max(x, g.levelQuantile(math.Exp(l), -math.Expm1(l)))
		}
		return x
	case kindMin:
		x := math.Inf(1)
		for i := range c.groups {
			g := &c.groups[i]
			l := math.Log(openUniform(r)) / g.nf
			x = min(x, g.levelQuantile(-math.Expm1(l), math.Exp(l)))
		}
		return x
	}
	if len(c.groups) == 1 {
		u, w := c.beta.rand(r)
		return c.groups[0].levelQuantile(u, w)
	}
	return c.randMerge(r)
}

// maxMergeDraws bounds the per-draw work of the group k-th sampler; beyond
// it Rand inverts the law's own CDF at a uniform.
const maxMergeDraws = 1 << 20

// randMerge draws the k-th smallest over groups by generating each group's
// order statistics in sequence (from the bottom when k <= n/2, from the top
// otherwise) and merging them.
func (c *core) randMerge(r *rand.Rand) float64 {
	fromTop := c.k > c.n-c.k+1
	need := c.k
	if fromTop {
		need = c.n - c.k + 1
	}
	if need > maxMergeDraws {
		u := openUniform(r)
		return c.quantile(u, 1-u, false)
	}
	type head struct {
		x    float64
		lv   float64 // log of the current uniform's distance to the end
		used int64
	}
	heads := make([]head, len(c.groups))
	next := func(i int) {
		g := &c.groups[i]
		h := &heads[i]
		h.lv += math.Log(openUniform(r)) / float64(g.n-h.used)
		h.used++
		if fromTop {
			h.x = g.levelQuantile(math.Exp(h.lv), -math.Expm1(h.lv))
		} else {
			h.x = g.levelQuantile(-math.Expm1(h.lv), math.Exp(h.lv))
		}
	}
	for i := range heads {
		next(i)
	}
	var x float64
	for j := int64(0); j < need; j++ {
		best := -1
		for i := range heads {
			if heads[i].used > c.groups[i].n {
				continue
			}
			if best < 0 || (!fromTop && heads[i].x < heads[best].x) || (fromTop && heads[i].x > heads[best].x) {
				best = i
			}
		}
		x = heads[best].x
		if heads[best].used < c.groups[best].n {
			next(best)
		} else {
			heads[best].used++ // exhausted
		}
	}
	return x
}

// Mean returns E[X], computed on first use: an exact sum for a purely
// atomic law, otherwise
//
//	E[X] = c + ∫_c^∞ S(x) dx − ∫_{−∞}^c F(x) dx
//
// by adaptive composite Gauss–Legendre quadrature between the quantiles at
// 1e-20 and 1 - 1e-20, split at every atom. It is +Inf, -Inf or NaN when a
// parent's mean is not finite in the direction that matters.
func (s Statistic) Mean() float64 {
	if s.c == nil {
		return math.NaN()
	}
	return s.c.moments().mean
}

// Variance returns Var[X], computed with Mean; +Inf when a parent's
// variance is infinite.
func (s Statistic) Variance() float64 {
	if s.c == nil {
		return math.NaN()
	}
	return s.c.moments().variance
}

// MomentError returns the estimated absolute errors of Mean and Variance
// (the quadrature's own estimate plus a bound on the truncated tails).
func (s Statistic) MomentError() (mean, variance float64) {
	if s.c == nil {
		return math.NaN(), math.NaN()
	}
	m := s.c.moments()
	return m.meanErr, m.varErr
}

// Accuracy reports the error of CDF and Survival. With r the parents'
// relative error (their own Accuracy, or 64 units in the last place for
// closed forms), the log-space formulas carry it as an error of about
// r·|log P| in the logarithm of each probability, which is at most 700·r
// where the probability exceeds 1e-300; the k-th of one law adds the
// quadrature of the Beta law (about 1e-12, growing like √n·1e-15 for large
// n). The k-th of groups adds the count's own bounds (countModel.splitErr:
// the convolution's, or the tilted inversion's from the lattice
// inversion's bound, the rounding of the tilt's exponents and Chernoff's
// bound on the mass beyond the window), read at the law's quantiles of
// levels 0.5, 1e-3, 1e-10, 1e-30, 1e-100 and 1e-300 (those at least the
// tail floor) on both sides and at the two ends of the stretch the
// transform takes untilted (where its bound, a tail summed over half the
// window, peaks), doubled for the points between: the
// largest absolute error of either tail to CDFAbs, the largest relative
// error of the survival to SurvivalRel; computed on the first call (some
// hundreds of evaluations of the law, one parent call per group each; 70
// to 240 ms for 60 groups of battery lifetimes). Over three uniform
// groups of 200 nodes (convolution) it states 3e-13 to 3e-12, measured at
// most 5e-14 relative against 256-bit arithmetic; over 3000 nodes of three
// laws (the transform) 3e-12 to 8e-12 absolute and 4.5e-12 to 2e-11
// relative, the per-value bounds at 400 points between at most half of
// that; for the 10 000 battery lifetimes of energy's
// BenchmarkFirstFailure60 fleet, 2e-12 to 2.3e-11 absolute and 2.2e-12 to
// 5e-11 relative for k = 100, 1000 and 5000. A parent's absolute CDF
// error a is carried as n·a.
func (s Statistic) Accuracy() dist.Accuracy {
	c := s.c
	if c == nil {
		return dist.Accuracy{CDFAbs: math.NaN(), SurvivalRel: math.NaN(), TailFloor: math.NaN(), Method: "zero Statistic"}
	}
	r, abs, floor := 64*epsilon, 0.0, 1e-300
	for _, g := range c.groups {
		if e, ok := g.law.(dist.Estimated); ok {
			acc := e.Accuracy()
			r = max(r, acc.SurvivalRel)
			abs += min(1, g.nf*acc.CDFAbs)
			floor = max(floor, acc.TailFloor)
		}
	}
	cdfAbs := abs + r
	survRel := 700 * r
	method := "exact in log space from the parents' CDF and Survival"
	if c.bounded {
		// groups left out by their tail bounds (pruneRel)
		cdfAbs += pruneRel
		survRel += 745 * pruneRel
		method += "; groups whose proven tail bounds put them below 1e-16 of the answer left out"
	}
	switch {
	case c.kind == kindKth && len(c.groups) == 1:
		cond := 1e-15 * math.Sqrt(float64(c.n))
		cdfAbs += 1e-13 + cond
		survRel += 1e-12 + 40*cond
		method = "Beta(k, n-k+1) of the parent's CDF, by Gauss–Legendre quadrature of Loader's binomial density"
	case c.kind == kindKth:
		a, rl := c.kthError(floor)
		cdfAbs += a
		survRel += rl
		method = "count of nodes below x: direct convolution of the groups' binomial probabilities, or tilted discrete Fourier inversion of its characteristic function (Hong 2013), bounds read at the law's quantiles"
	}
	return dist.Accuracy{CDFAbs: min(cdfAbs, 1), SurvivalRel: survRel, TailFloor: floor, Method: method}
}

// String prints the law compactly, e.g.
// "Max of 1000 × Normal(μ=0, σ=1): mean=3.24, sd=0.37, 5–95%=[2.7, 3.9]".
func (s Statistic) String() string {
	c := s.c
	if c == nil {
		return "zero Statistic"
	}
	var what string
	switch c.kind {
	case kindMax:
		what = "Max"
	case kindMin:
		what = "Min"
	default:
		what = ordinal(c.k) + " smallest"
	}
	var of string
	if len(c.groups) == 1 {
		of = fmt.Sprintf("%d × %v", c.n, c.groups[0].law)
	} else {
		of = fmt.Sprintf("%d groups (%d nodes)", len(c.groups), c.n)
	}
	return fmt.Sprintf("%s of %s: %s", what, of, summary(s))
}

// summary prints mean, standard deviation and the 5–95 % range of a law.
func summary(l dist.Law) string {
	return fmt.Sprintf("mean=%.6g, sd=%.4g, 5–95%%=[%.6g, %.6g]",
		l.Mean(), math.Sqrt(l.Variance()), l.Quantile(0.05), l.UpperQuantile(0.05))
}

func ordinal(k int64) string {
	suffix := "th"
	if k%100 < 11 || k%100 > 13 {
		switch k % 10 {
		case 1:
			suffix = "st"
		case 2:
			suffix = "nd"
		case 3:
			suffix = "rd"
		}
	}
	return fmt.Sprintf("%d%s", k, suffix)
}

// statisticDensity is a Statistic whose parents all have densities.
type statisticDensity struct{ Statistic }

// Density returns the density of the continuous part at x:
//
//	max: Σ n_i f_i(x)·F_i(x)^{n_i-1}·Π_{j≠i} F_j(x)^{n_j}
//	min: Σ n_i f_i(x)·S_i(x)^{n_i-1}·Π_{j≠i} S_j(x)^{n_j}
//	k-th of one law: f(x)·n·P(Bin(n-1, F(x)) = k-1)
func (s statisticDensity) Density(x float64) float64 {
	c := s.c
	if math.IsNaN(x) {
		return x
	}
	if c.kind == kindKth {
		g := &c.groups[0]
		f := g.dens.Density(x)
		if f == 0 {
			return 0
		}
		p := g.eval(x)
		return f * c.beta.density(p.f, p.s)
	}
	pts := make([]point, len(c.groups))
	sum, zeros := 0.0, 0
	lg := make([]float64, len(c.groups))
	for i := range c.groups {
		pts[i] = c.groups[i].eval(x)
		if c.kind == kindMax {
			lg[i] = pts[i].logF()
		} else {
			lg[i] = pts[i].logS()
		}
		if math.IsInf(lg[i], -1) {
			zeros++
		} else {
			sum += c.groups[i].nf * lg[i]
		}
	}
	d := 0.0
	for i := range c.groups {
		g := &c.groups[i]
		if g.dens == nil {
			continue // purely atomic: no continuous part
		}
		f := g.dens.Density(x)
		if f == 0 {
			continue
		}
		var rest float64
		switch {
		case !math.IsInf(lg[i], -1) && zeros == 0:
			rest = sum - lg[i]
		case math.IsInf(lg[i], -1) && zeros == 1 && g.n == 1:
			rest = sum
		default:
			continue
		}
		d += g.nf * f * math.Exp(rest)
	}
	return d
}

// AsStatistic returns the Statistic behind a law returned by Max, Min, Kth
// or the group forms (whose concrete type may add a Density method), and
// whether l is one.
func AsStatistic(l dist.Law) (Statistic, bool) {
	switch s := l.(type) {
	case Statistic:
		return s, true
	case statisticDensity:
		return s.Statistic, true
	}
	return Statistic{}, false
}
