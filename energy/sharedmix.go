package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/quad"
	"github.com/joulelaw/joulelaw/internal/root"
	"github.com/joulelaw/joulelaw/orderstat"
)

// sharedMixture is the mixture over the shared factors' quadrature nodes of
// laws of times (s): CDF and Survival are the weighted sums, computed
// directly; quantiles are found by bisection between the components'
// quantiles (the mixture's p-quantile lies between the smallest and the
// largest component p-quantile); the moments integrate the survival. It
// implements dist.Law and dist.Estimated.
type sharedMixture struct {
	w    []float64
	laws []dist.Law
	name string
	lz   *mixLazy
	// stated, when set, returns the mixture's stated CDF error (Site's
	// laws: the rule's and the conditional laws'), computed on first use.
	stated func() float64
	method string
	// corners, when set, lists the components whose answers usually
	// bracket the mixture's (a Site's: the rule's corner nodes, where the
	// conditional laws are the earliest and the latest): the quantiles try
	// their bracket first and check it on the mixture.
	corners []int
	// seed, when set, returns a time t0 (s) where a cheap approximation
	// of the mixture's probit reaches target, with the approximation's
	// slope there (1/s), or false: the quantiles start from it (seedSolve)
	// before the corners, and check every step on the mixture itself.
	seed func(target float64) (t0, slope float64, ok bool)
	// cornersFirst, when set, has the quantiles try the corners' bracket
	// before the seed: for a mixture cheap to evaluate (a Site's node
	// laws and groups' first failures: tables, and the minimum of one
	// group's in closed form), whose search between the corners' answers
	// (about eight evaluations of the mixture and the corners' quantiles)
	// costs less than the seed's own search of its approximation.
	cornersFirst bool
	// bothTails, when set, has the searches' probit (probit, probitAbove)
	// read both tails of each component from one evaluation where every
	// component gives them (orderstat.TwoTails): for a mixture whose
	// components cost far more to evaluate than either tail (a Site's
	// k-th failures: a count's convolution), so that a point whose first
	// sum is above 1/2 costs one evaluation of each, not two.
	bothTails bool
	// quick, when set, returns for component i the pieces of its moment
	// quadrature (componentQuad) read from a Site's tables: its survival
	// (the component's law, to rounding, without an order statistic's
	// general path) and its 1e-15, 1/2 and 1 − 1e-15 points, or for the
	// ends points beyond them (its CDF at lo and its survival at hi at
	// most 1e-15: Site.fleetRange), NaN where the component's own are to
	// be asked.
	quick func(i int) (surv func(t float64) float64, lo, med, hi float64)
}

type mixLazy struct {
	once       sync.Once
	mean, vari float64
	meanErr    float64
	varErr     float64
	accOnce    sync.Once
	cdfAbs     float64
	// qmemo, when not nil, keeps the answers of Quantile and
	// UpperQuantile for levels in (0, 1), at most maxQuantMemo of them
	// (a Site's laws, which keep their lazy state from call to call: the
	// same question is answered once, with the same bits it would get
	// afresh).
	qmu   sync.Mutex
	qmemo map[quantKey]float64
}

// quantKey is a memoised quantile's level and side.
type quantKey struct {
	p     float64
	upper bool
}

// maxQuantMemo caps the answers a mixture's memo keeps; later levels are
// computed every time.
const maxQuantMemo = 64

// newMemoLazy returns lazy state that also keeps quantiles.
func newMemoLazy() *mixLazy { return &mixLazy{qmemo: map[quantKey]float64{}} }

// memo returns the kept answer for k, or computes it by f and keeps it
// (while fewer than maxQuantMemo are kept); without a memo, f's answer.
func (lz *mixLazy) memo(k quantKey, f func() float64) float64 {
	if lz == nil || lz.qmemo == nil || !(k.p > 0 && k.p < 1) {
		return f()
	}
	lz.qmu.Lock()
	v, ok := lz.qmemo[k]
	lz.qmu.Unlock()
	if ok {
		return v
	}
	v = f()
	lz.qmu.Lock()
	if len(lz.qmemo) < maxQuantMemo {
		lz.qmemo[k] = v
	}
	lz.qmu.Unlock()
	return v
}

func newSharedMixture(name string, w []float64, laws []dist.Law) sharedMixture {
	return sharedMixture{w: w, laws: laws, name: name, lz: &mixLazy{}}
}

// newStatedMixture is newSharedMixture with the stated CDF error from
// stated (called once, on first use) and a method text.
func newStatedMixture(name string, w []float64, laws []dist.Law, method string, stated func() float64) sharedMixture {
	m := newSharedMixture(name, w, laws)
	m.stated, m.method = stated, method
	return m
}

func (m sharedMixture) CDF(t float64) float64 {
	if math.IsNaN(t) {
		return t
	}
	s := 0.0
	for i, l := range m.laws {
		s += m.w[i] * l.CDF(t)
	}
	return min(1, s)
}

func (m sharedMixture) Survival(t float64) float64 {
	if math.IsNaN(t) {
		return t
	}
	s := 0.0
	for i, l := range m.laws {
		s += m.w[i] * l.Survival(t)
	}
	return min(1, s)
}

// tails returns the mixture's CDF and survival at t, each the same bits
// as CDF and Survival, from one evaluation of each component, and true;
// false where a component does not give both (orderstat.TwoTails) or
// bothTails is not set.
func (m sharedMixture) tails(t float64) (cdf, sf float64, ok bool) {
	if !m.bothTails {
		return 0, 0, false
	}
	if math.IsNaN(t) {
		return t, t, true
	}
	for _, l := range m.laws {
		if _, ok := l.(orderstat.TwoTails); !ok {
			return 0, 0, false
		}
	}
	for i, l := range m.laws {
		f, s := l.(orderstat.TwoTails).Tails(t)
		cdf += m.w[i] * f
		sf += m.w[i] * s
	}
	return min(1, cdf), min(1, sf), true
}

// probit returns the probit of the mixture's CDF at t, from the smaller
// tail (each side summed directly).
func (m sharedMixture) probit(t float64) float64 {
	std := dist.MustNormal(0, 1)
	if c, s, ok := m.tails(t); ok {
		if c <= 0.5 {
			return std.Quantile(c)
		}
		return std.UpperQuantile(s)
	}
	c := m.CDF(t)
	if c <= 0.5 {
		return std.Quantile(c)
	}
	return std.UpperQuantile(m.Survival(t))
}

// probitAbove is probit for a search whose answer lies where the
// survival is below 1/2: the survival first (one sum where it is below
// 1/2, as it is near that answer), the CDF only where it is not.
func (m sharedMixture) probitAbove(t float64) float64 {
	std := dist.MustNormal(0, 1)
	if c, s, ok := m.tails(t); ok {
		if s < 0.5 {
			return std.UpperQuantile(s)
		}
		return std.Quantile(c)
	}
	if s := m.Survival(t); s < 0.5 {
		return std.UpperQuantile(s)
	}
	return std.Quantile(m.CDF(t))
}

// probitFor returns the probit the search for target evaluates: probit,
// or probitAbove for a target above 0 (where each evaluation near the
// answer then sums one side instead of two).
func (m sharedMixture) probitFor(target float64) func(float64) float64 {
	if target > 0 {
		return m.probitAbove
	}
	return m.probit
}

// seedSolve returns the smallest t (to 1e-12 relative) whose probit
// reaches target, starting from the seed's t0 and slope (+Inf at a jump,
// such as a calendar limit's atom): a step along the seed's slope (at
// least half the tolerance), then secant steps, 25 % longer, until the
// mixture's probit changes sign (at most 8 steps), and the library's root
// finder in that bracket. False where the seed fails or no bracket is
// found.
func (m sharedMixture) seedSolve(target float64) (float64, bool) {
	if m.seed == nil {
		return 0, false
	}
	t0, slope, ok := m.seed(target)
	if !ok || !finite(t0) || !(slope > 0) {
		return 0, false
	}
	pr := m.probitFor(target)
	g := func(t float64) float64 { return pr(t) - target }
	tol := max(1e-12*math.Abs(t0), 0x1p-1022)
	x, gx := t0, g(t0)
	if math.IsNaN(gx) {
		return 0, false
	}
	step := -gx / slope
	if math.IsInf(gx, 0) || math.IsNaN(step) {
		step = 0
	}
	if gx >= 0 {
		step = min(step, -tol/2)
	} else {
		step = max(step, tol/2)
	}
	for range 8 {
		y := x + step
		gy := g(y)
		if math.IsNaN(gy) {
			return 0, false
		}
		if (gy >= 0) != (gx >= 0) {
			a, ga, b, gb := x, gx, y, gy
			if y < x {
				a, ga, b, gb = y, gy, x, gx
			}
			return root.Illinois(g, a, b, ga, gb, 1e-12*math.Abs(b)), true
		}
		// The same side: the secant's step from y, 25 % longer, at
		// least the last step doubled where the secant is of no use.
		next := 2 * step
		if d := gy - gx; d != 0 && finite(d) && finite(gy) {
			if s := -1.25 * gy * (y - x) / d; s*step > 0 {
				next = s
			}
		}
		x, gx, step = y, gy, next
	}
	return 0, false
}

// solve returns the smallest t (to 1e-12 relative) in [lo, hi] whose
// probit reaches target, the bracket being the components' answers: the
// library's one root finder (internal/root: regula falsi with the
// Illinois modification on the probit, which is nearly linear in t,
// bisecting where the probit is infinite, at a calendar limit).
func (m sharedMixture) solve(lo, hi, target float64) float64 {
	pr := m.probitFor(target)
	zlo := pr(lo)
	if zlo >= target {
		return lo
	}
	g := func(t float64) float64 { return pr(t) - target }
	return root.Illinois(g, lo, hi, zlo-target, pr(hi)-target, 1e-12*math.Abs(hi))
}

// span returns the smallest and largest of the components' answers q(l).
func (m sharedMixture) span(q func(dist.Law) float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, l := range m.laws {
		x := q(l)
		lo, hi = min(lo, x), max(hi, x)
	}
	return lo, hi
}

// cornerSolve returns the mixture's answer where the corners' answers
// q(l) bracket it (the mixture's probit below target just below the
// lowest and at least target at the highest, so that the answer lies in
// between), and false otherwise: a few component quantiles instead of all
// of them. The first and the last corner are tried first (in a Site's
// rule, where both factors are at one end and where both are at the
// other: they bracket every quantile of the demo's and the 5,000-node
// site's laws), then all of them.
func (m sharedMixture) cornerSolve(q func(dist.Law) float64, target float64) (float64, bool) {
	if len(m.corners) < 2 {
		return 0, false
	}
	// The first and the last corner first (a diagonal of the rule's
	// product: where both factors are at one end, and at the other), then
	// all of them where those two do not bracket the answer.
	lo, hi := math.Inf(1), math.Inf(-1)
	add := func(c int) {
		x := q(m.laws[c])
		lo, hi = min(lo, x), max(hi, x)
	}
	try := func() (float64, bool) {
		if !finite(lo) || !finite(hi) {
			return 0, false
		}
		// One unit below the lowest, so that an answer at it (an atom there,
		// such as a calendar limit that every corner reaches) is inside.
		a := math.Nextafter(lo, math.Inf(-1))
		pr := m.probitFor(target)
		za, zb := pr(a), pr(hi)
		if !(za < target && zb >= target) {
			return 0, false
		}
		g := func(t float64) float64 { return pr(t) - target }
		return root.Illinois(g, a, hi, za-target, zb-target, 1e-12*math.Abs(hi)), true
	}
	n := len(m.corners)
	add(m.corners[0])
	add(m.corners[n-1])
	if t, ok := try(); ok || n == 2 {
		return t, ok
	}
	for _, c := range m.corners[1 : n-1] {
		add(c)
	}
	return try()
}

// seededOrCorners returns the answer whose probit reaches target from
// the seed (seedSolve) or the corners' answers q(l) (cornerSolve), the
// corners first where cornersFirst is set, and false where neither holds.
func (m sharedMixture) seededOrCorners(q func(dist.Law) float64, target float64) (float64, bool) {
	if m.cornersFirst {
		if t, ok := m.cornerSolve(q, target); ok {
			return t, true
		}
	}
	if t, ok := m.seedSolve(target); ok {
		return t, true
	}
	if !m.cornersFirst {
		return m.cornerSolve(q, target)
	}
	return 0, false
}

// Quantile returns inf{t : CDF(t) >= p} (s) to 1e-12 relative: from the
// seed or between the corners' quantiles where they bracket it
// (seededOrCorners), otherwise between the smallest and the largest of
// the components'.
func (m sharedMixture) Quantile(p float64) float64 {
	return m.lz.memo(quantKey{p, false}, func() float64 { return m.quantile(p) })
}

func (m sharedMixture) quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	target := dist.MustNormal(0, 1).Quantile(p)
	if p > 0 && p < 1 {
		if t, ok := m.seededOrCorners(func(l dist.Law) float64 { return l.Quantile(p) }, target); ok {
			return t
		}
	}
	lo, hi := m.span(func(l dist.Law) float64 { return l.Quantile(p) })
	switch {
	case p == 1:
		return hi
	case p == 0 || lo == hi || math.IsInf(hi, 0):
		return lo
	}
	return m.solve(lo, hi, target)
}

// UpperQuantile returns inf{t : Survival(t) <= q} (s) from the survival,
// as Quantile.
func (m sharedMixture) UpperQuantile(q float64) float64 {
	return m.lz.memo(quantKey{q, true}, func() float64 { return m.upperQuantile(q) })
}

func (m sharedMixture) upperQuantile(q float64) float64 {
	if !(q >= 0 && q <= 1) {
		return math.NaN()
	}
	target := dist.MustNormal(0, 1).UpperQuantile(q)
	if q > 0 && q < 1 {
		if t, ok := m.seededOrCorners(func(l dist.Law) float64 { return l.UpperQuantile(q) }, target); ok {
			return t
		}
	}
	lo, hi := m.span(func(l dist.Law) float64 { return l.UpperQuantile(q) })
	switch {
	case q == 0:
		return hi
	case q == 1 || lo == hi || math.IsInf(hi, 0):
		return lo
	}
	return m.solve(lo, hi, target)
}

// componentMomentTol is the relative target of an order statistic's
// moment quadrature (componentQuad: ∫S over its range, about 8 standard
// deviations, so the mean's error is below 1e-5 of a standard deviation);
// the moments are printed to three or four digits and their stated errors
// (MomentError) carry the quadrature's estimate. In a mixture read through
// quick pieces (totalMomentsWith) it is the mixture's target, shared out
// among the components by weight (componentTolShares). mixMomentTol is
// the fallback's over a mixture's survival (mixtures of other laws, as
// before).
const (
	componentMomentTol = 1e-6
	mixMomentTol       = 1e-8
)

// maxTolShare caps a component's share of the mixture's moment tolerance
// (componentTolShares): a component of weight near 0 is still integrated
// to componentMomentTol·maxTolShare relative.
const maxTolShare = 1e4

func (m sharedMixture) moments() {
	m.lz.once.Do(func() {
		if m.quick != nil {
			if m.lz.mean, m.lz.vari, m.lz.meanErr, m.lz.varErr = m.totalMomentsWith(m.quick); !math.IsNaN(m.lz.mean) {
				return
			}
		}
		if m.lz.mean, m.lz.vari, m.lz.meanErr, m.lz.varErr = m.totalMoments(); !math.IsNaN(m.lz.mean) {
			return
		}
		m.lz.mean, m.lz.vari, m.lz.meanErr, m.lz.varErr = m.quadMoments()
	})
}

// componentMoments returns the mean (s) and variance (s²) of a component
// with their estimated absolute errors (NaN where it has none of its own):
// a tabulated node law's moments are integrated over its table on first
// use (relative tolerance 1e-12), with the quadrature's estimated error,
// the tails left out and rounding (tabulated.momentError); an order
// statistic's (a Site's first failures and flat dates) are integrated here
// over its own range (componentQuad).
func componentMoments(l dist.Law) (mean, vari, meanErr, varErr float64) {
	switch c := l.(type) {
	case *tabulated: // a Site's conditional law, read in place
		meanErr, varErr = c.momentError()
		return c.Mean(), c.Variance(), meanErr, varErr
	case tabulated:
		meanErr, varErr = c.momentError()
		return c.Mean(), c.Variance(), meanErr, varErr
	case orderstat.Statistic:
		nan := math.NaN()
		lo, med, hi := componentRange(c, nan, nan, nan)
		r := componentQuad(c.Survival, lo, med, hi, componentMomentTol)
		return r.mean, r.vari, r.meanErr, r.varErr
	}
	return math.NaN(), math.NaN(), math.NaN(), math.NaN()
}

// componentRange returns lo and hi, each replaced by l's 1e-15 quantile
// and 1e-15 upper quantile (s) where it is NaN, and med, replaced by their
// midpoint where it is NaN: med is only the quadrature's first breakpoint
// (componentQuad), and the midpoint is where the driver's first bisection
// would split [lo, hi], so it costs no evaluation more than the median
// and saves the median's search (an order statistic's own, about 20 µs
// for the demo fleet's first failure at one shared point).
func componentRange(l dist.Law, lo, med, hi float64) (float64, float64, float64) {
	if math.IsNaN(lo) {
		lo = l.Quantile(1e-15)
	}
	if math.IsNaN(hi) {
		hi = l.UpperQuantile(1e-15)
	}
	if math.IsNaN(med) {
		med = lo + (hi-lo)/2
	}
	return lo, med, hi
}

// quadMomentsResult is a component's moments by componentQuad: the mean
// (s) and variance (s²) with their stated errors, and what those errors
// are made of (errorsAt): the quadrature's estimated error quad and its
// scale (the larger of the two integrals, whose componentMomentTol
// relative was the target before the mixture shared it out), the range's
// width span (s) and the mean above lo, m1 (s).
type quadMomentsResult struct {
	mean, vari, meanErr, varErr float64
	quad, scale, span, m1       float64
}

// errorsAt returns the stated errors of the mean (s) and variance (s²)
// that a quadrature error e (of the integrals over [lo, hi], ∫S in s and
// 2∫(t − lo)/span·S in s) gives: the tails beyond the 1e-15 points add at
// most 1e-15 of the range each (bounded by the range itself).
func (r quadMomentsResult) errorsAt(e float64) (meanErr, varErr float64) {
	e1, e2 := e+2e-15*r.span, e*r.span+4e-15*r.span*r.span
	return e1, e2 + 2*r.m1*e1
}

// componentQuad returns a component's mean (s) and variance (s²) with
// their estimated errors by the library's adaptive quadrature
// (internal/quad) of its survival surv (the component's law, or the same
// law read more cheaply) above its 1e-15 quantile lo (or a point below
// it),
//
//	E[T] − lo = ∫ S,  E[(T − lo)²] = 2∫ (t − lo)·S,
//
// up to its 1e-15 upper quantile hi (or a point above it), split at med
// (its median, or the midpoint: componentRange), to relTol relative (of
// the larger integral); the tails beyond add at most 1e-15 of the range
// each (bounded by the range itself). One component's survival
// rises over its own narrow range, where the mixture's is a staircase of
// them: about 400 evaluations a component in the demo's first failures at
// relative 1e-6 (splitting at the tables' knots instead costs 3000 for a
// precision nobody reads). NaN where lo, med or hi is not finite or the
// quadrature fails.
func componentQuad(surv func(float64) float64, lo, med, hi, relTol float64) quadMomentsResult {
	nan := math.NaN()
	if !finite(lo) || !finite(hi) || !finite(med) {
		return quadMomentsResult{mean: nan, vari: nan, meanErr: nan, varErr: nan}
	}
	if !(hi > lo) {
		return quadMomentsResult{mean: lo}
	}
	span := hi - lo
	f := func(t float64, y []float64) {
		s := surv(t)
		y[0], y[1] = s, 2*(t-lo)/span*s
	}
	var pts [3]float64
	pts[0], pts[1], pts[2] = lo, med, hi
	var v [2]float64
	r, err := quad.BreaksVec(v[:], f, sortedUnique(pts[:]), quad.Options{RelTol: relTol, MaxEvals: 1 << 15})
	if err != nil && r.Evals == 0 {
		return quadMomentsResult{mean: nan, vari: nan, meanErr: nan, varErr: nan}
	}
	m1, m2 := v[0], v[1]*span
	res := quadMomentsResult{mean: lo + m1, vari: max(0, m2-m1*m1), quad: r.Error,
		scale: max(math.Abs(v[0]), math.Abs(v[1])), span: span, m1: m1}
	res.meanErr, res.varErr = res.errorsAt(r.Error)
	return res
}

// componentTolShares returns the factors by which the components of
// weights w (summing to 1 or less) may exceed componentMomentTol, the
// mixture's target, so that the mixture's moments, Σ w_e·m_e and the law
// of total variance, are asked no more than that target: component e's
// error enters them times w_e, so the evaluations (about 1/√tolerance for
// the kinked survival a table gives) are fewest, for the same weighted
// sum of tolerances, with tolerances proportional to w_e^(−2/3). p[e]
// (the component's median less its lo, s: at most twice ∫S, so a proxy of
// the scale its relative target is taken of) and k[e] (what its
// quadrature error is multiplied by in the variance's: its span, twice
// p[e] and twice its distance from the weighted mean of the medians, s)
// weight the sums (with med the midpoint, as componentRange may give, p
// is half the span: a proxy still, the same for every component): the
// factors c_e = λ·w_e^(−2/3) take the largest λ with
// Σ w_e·c_e·p_e <= Σ w_e·p_e and Σ w_e·k_e·c_e·p_e <= Σ w_e·k_e·p_e,
// each at most maxTolShare (equal weights get 1). The caller checks the
// stated errors against those of every factor 1 (totalMomentsWith).
func componentTolShares(dst, w, p, k []float64) []float64 {
	var a, b, c, d float64
	for e := range w {
		r := math.Cbrt(w[e])
		a += w[e] * p[e]
		b += r * p[e]
		c += w[e] * k[e] * p[e]
		d += r * k[e] * p[e]
	}
	lam := 0.0
	if b > 0 && d > 0 {
		lam = min(a/b, c/d)
	}
	dst = dst[:0]
	for e := range w {
		f := maxTolShare
		if r := math.Cbrt(w[e]); r > 0 && lam > 0 {
			f = min(f, lam/(r*r))
		}
		if !(f > 0) {
			f = 1
		}
		dst = append(dst, f)
	}
	return dst
}

// totalMoments returns the mixture's mean (s) and variance (s²) from its
// components' by the law of total variance,
//
//	E[T] = Σ w_e·m_e,  Var[T] = Σ w_e·(v_e + (m_e − E[T])²),
//
// exact for the mixture, with the errors the components' carry: the mean's
// Σ w_e·δm_e, the variance's Σ w_e·(δv_e + 2|m_e − E[T]|·(δm_e + δm) +
// (δm_e + δm)²), plus rounding. NaN where a component has no moments of
// its own or they are not finite.
func (m sharedMixture) totalMoments() (mean, vari, meanErr, varErr float64) {
	return m.totalMomentsWith(nil)
}

// totalMomentsWith is totalMoments with the components' moments from
// their quick pieces (componentQuad) where quick is set and the
// component is an order statistic. Those components share the mixture's
// target componentMomentTol by weight (componentTolShares); where the
// stated errors that gives exceed those of every such component at
// componentMomentTol itself (its quadrature error at its target), the
// components given more than componentMomentTol are integrated again at
// it, so the mixture never states more than it did with one tolerance
// for all.
func (m sharedMixture) totalMomentsWith(quick func(i int) (func(float64) float64, float64, float64, float64)) (mean, vari, meanErr, varErr float64) {
	n := len(m.laws)
	buf := make([]float64, 4*n)
	ms, vs, ems, evs := buf[:n], buf[n:2*n], buf[2*n:3*n], buf[3*n:]
	nan := math.NaN()
	// The order statistics read through quick: their pieces first, for
	// the tolerance each gets.
	type piece struct {
		surv         func(float64) float64
		lo, med, hi  float64
		res          quadMomentsResult
		share, quick bool
	}
	ps := make([]piece, n)
	var qw, qp, qk []float64
	for i, l := range m.laws {
		if _, ok := l.(orderstat.Statistic); ok && quick != nil {
			surv, lo, med, hi := quick(i)
			lo, med, hi = componentRange(l, lo, med, hi)
			if !finite(lo) || !finite(med) || !finite(hi) {
				return nan, nan, nan, nan
			}
			ps[i] = piece{surv: surv, lo: lo, med: med, hi: hi, quick: true}
			qw = append(qw, m.w[i])
		}
	}
	var shares []float64
	if len(qw) > 0 {
		sw, smed := 0.0, 0.0
		for i := range ps {
			if ps[i].quick {
				sw += m.w[i]
				smed += m.w[i] * ps[i].med
			}
		}
		if sw > 0 {
			smed /= sw
		}
		for i := range ps {
			if p := &ps[i]; p.quick {
				d := max(0, p.med-p.lo)
				qp = append(qp, d)
				qk = append(qk, (p.hi-p.lo)+2*d+2*math.Abs(p.med-smed))
			}
		}
		shares = componentTolShares(make([]float64, 0, len(qw)), qw, qp, qk)
	}
	j := 0
	for i, l := range m.laws {
		if p := &ps[i]; p.quick {
			p.share = shares[j] > 1
			j++
			p.res = componentQuad(p.surv, p.lo, p.med, p.hi, componentMomentTol*shares[j-1])
			ms[i], vs[i], ems[i], evs[i] = p.res.mean, p.res.vari, p.res.meanErr, p.res.varErr
		} else {
			ms[i], vs[i], ems[i], evs[i] = componentMoments(l)
		}
		if !finite(ms[i]) || !finite(vs[i]) || !finite(ems[i]) || !finite(evs[i]) {
			return nan, nan, nan, nan
		}
	}
	mean, vari, meanErr, varErr = m.combineMoments(ms, vs, ems, evs)
	if len(qw) == 0 {
		return mean, vari, meanErr, varErr
	}
	// The errors every component would state at componentMomentTol.
	aems, aevs := make([]float64, n), make([]float64, n)
	copy(aems, ems)
	copy(aevs, evs)
	for i := range ps {
		if p := &ps[i]; p.quick {
			aems[i], aevs[i] = p.res.errorsAt(componentMomentTol * p.res.scale)
		}
	}
	_, _, am, av := m.combineMoments(ms, vs, aems, aevs)
	if meanErr <= am && varErr <= av {
		return mean, vari, meanErr, varErr
	}
	for i := range ps {
		if p := &ps[i]; p.quick && p.share {
			p.res = componentQuad(p.surv, p.lo, p.med, p.hi, componentMomentTol)
			ms[i], vs[i], ems[i], evs[i] = p.res.mean, p.res.vari, p.res.meanErr, p.res.varErr
			if !finite(ms[i]) || !finite(vs[i]) || !finite(ems[i]) || !finite(evs[i]) {
				return nan, nan, nan, nan
			}
		}
	}
	return m.combineMoments(ms, vs, ems, evs)
}

// combineMoments returns the mixture's mean (s) and variance (s²) and
// their stated errors from the components' means ms, variances vs and
// their errors ems, evs (totalMoments' sums).
func (m sharedMixture) combineMoments(ms, vs, ems, evs []float64) (mean, vari, meanErr, varErr float64) {
	for i := range ms {
		mean += m.w[i] * ms[i]
		meanErr += m.w[i] * ems[i]
	}
	scale := 0.0
	for i := range ms {
		d := ms[i] - mean
		vari += m.w[i] * (vs[i] + d*d)
		e := ems[i] + meanErr
		varErr += m.w[i] * (evs[i] + 2*math.Abs(d)*e + e*e)
		scale = max(scale, math.Abs(ms[i]))
	}
	n := float64(len(ms))
	return mean, vari, meanErr + 2*n*0x1p-52*scale, varErr + 4*n*0x1p-52*(vari+scale*scale)
}

// quadMoments integrates the mixture's survival (adaptive quadrature to
// mixMomentTol relative, between its 1e-15 quantiles split at its 1, 50 and
// 99 % points): the moments of a mixture whose components have none of
// their own, with the quadrature's estimated errors.
func (m sharedMixture) quadMoments() (mean, vari, meanErr, varErr float64) {
	lo := m.Quantile(1e-15)
	hi := m.UpperQuantile(1e-15)
	if !(hi > lo) {
		return lo, 0, 0, 0
	}
	var brk []float64
	for _, p := range []float64{0.01, 0.5, 0.99} {
		brk = append(brk, m.Quantile(p))
	}
	brk = sortedUnique(brk)
	a, ea := integratePiecesTol(m.Survival, lo, hi, brk, mixMomentTol)
	b, eb := integratePiecesTol(func(t float64) float64 { return 2 * t * m.Survival(t) }, lo, hi, brk, mixMomentTol)
	mean = lo + a
	// The tails beyond the 1e-15 quantiles: at most 1e-15 times the
	// support's reach there, bounded by the span hi − lo.
	tail := 2e-15 * (hi - lo)
	return mean, max(0, lo*lo+b-mean*mean), ea + tail, eb + 2*math.Abs(mean)*(ea+tail) + 2*tail*math.Abs(hi)
}

// Mean returns the mixture's mean (s), computed on first use: Σ w_e·m_e
// over its components' means where they have them (tabulated node laws,
// order statistics), otherwise ∫ Survival by quadrature.
func (m sharedMixture) Mean() float64 { m.moments(); return m.lz.mean }

// Variance returns the mixture's variance (s²), computed with Mean: by the
// law of total variance from the components' moments, otherwise
// 2∫ t·Survival − Mean² by quadrature.
func (m sharedMixture) Variance() float64 { m.moments(); return m.lz.vari }

// MomentError returns the estimated absolute errors of Mean (s) and
// Variance (s²): the components' stated moment errors carried through the
// law of total variance, or the quadrature's estimate.
func (m sharedMixture) MomentError() (mean, variance float64) {
	m.moments()
	return m.lz.meanErr, m.lz.varErr
}

func (m sharedMixture) Support() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, l := range m.laws {
		a, b := l.Support()
		lo, hi = min(lo, a), max(hi, b)
	}
	return lo, hi
}

func (m sharedMixture) Rand(r *rand.Rand) float64 {
	u := r.Float64()
	acc := 0.0
	for i, w := range m.w {
		acc += w
		if u < acc || i == len(m.w)-1 {
			return m.laws[i].Rand(r)
		}
	}
	return math.NaN()
}

// Accuracy returns the largest of the components' stated errors, or for a
// Site's law, the stated CDF error of the mixture (see Site).
func (m sharedMixture) Accuracy() dist.Accuracy {
	acc := dist.Accuracy{Method: "mixture over the shared factors (Gauss–Hermite nodes)"}

	for _, l := range m.laws {
		if e, ok := l.(dist.Estimated); ok {
			a := e.Accuracy()
			acc.CDFAbs = max(acc.CDFAbs, a.CDFAbs)
			acc.SurvivalRel = max(acc.SurvivalRel, a.SurvivalRel)
			acc.TailFloor = max(acc.TailFloor, a.TailFloor)
		}
	}
	if m.stated != nil {
		m.lz.accOnce.Do(func() { m.lz.cdfAbs = m.stated() })
		acc.Method, acc.CDFAbs = m.method, m.lz.cdfAbs
	}
	return acc
}

func (m sharedMixture) String() string {
	return fmt.Sprintf("%s(mixture of %d over the shared factors)", m.name, len(m.laws))
}
