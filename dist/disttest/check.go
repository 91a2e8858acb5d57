package disttest

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"

	"github.com/joulelaw/joulelaw/dist"
)

// Names of the checks, as they appear in Failure.Check.
const (
	CheckOptions     = "options"        // the options given to Check are valid
	CheckSupport     = "support"        // Support, Mean and Variance are coherent
	CheckSpecial     = "special"        // ±Inf, NaN and out-of-range arguments
	CheckRange       = "range"          // CDF and Survival lie in [0, 1], and are 0 or 1 off the support
	CheckMonotone    = "monotone"       // CDF non-decreasing, Survival non-increasing
	CheckComplement  = "complement"     // CDF + Survival = 1
	CheckReference   = "reference"      // Survival and CDF against given reference values
	CheckQuantile    = "quantile"       // Quantile inverts CDF
	CheckUpper       = "upper-quantile" // UpperQuantile inverts Survival
	CheckAtoms       = "atoms"          // Atoms are sorted, exact jumps of the CDF, hit by the quantiles
	CheckMass        = "mass"           // atoms plus the integral of Density sum to 1
	CheckDensity     = "density"        // Density matches the CDF's increments and derivative
	CheckMoments     = "moments"        // Mean and Variance match integrals of CDF and Survival
	CheckCF          = "cf"             // CF is a characteristic function, and the law's
	CheckRand        = "rand"           // Rand: support, reproducibility, binned counts, KS distance
	CheckConcurrency = "concurrency"    // concurrent calls give the serial results
)

// maxPerCheck is how many failures one check reports before it summarises
// the rest.
const maxPerCheck = 8

// Failure is one failed expectation. Check returns the failures joined with
// errors.Join; errors.As finds each one.
type Failure struct {
	Check string // which check, one of the Check... names
	At    string // where, e.g. "x = 1.5" or "p = 1e-12"
	Want  string // what was expected
	Got   string // what the law gave
}

// Error implements error: "disttest: <check>: at <where>: want <want>, got <got>".
func (f *Failure) Error() string {
	return fmt.Sprintf("disttest: %s: at %s: want %s, got %s", f.Check, f.At, f.Want, f.Got)
}

// Check runs every check of this package on l and returns an error joining
// all failures (each a *Failure), or nil when l passes. It uses only the
// methods of dist.Law and of the optional interfaces dist.Atomic,
// dist.Densitied, dist.CharFunc and dist.Estimated; no law is treated
// specially. A method that panics is reported as a failure of the check
// that called it. See the package documentation for the checks.
func Check(l dist.Law, opts ...Option) error {
	cfg := defaultConfig()
	for _, o := range opts {
		o(&cfg)
	}
	c := &checker{law: l, cfg: cfg, qCache: map[float64]float64{}, uqCache: map[float64]float64{}}
	for _, b := range cfg.bad {
		c.fail(CheckOptions, "options", "valid options", b)
	}
	if l == nil {
		c.fail(CheckOptions, "law", "a law", "nil")
		return c.result()
	}
	if len(cfg.bad) > 0 {
		return c.result()
	}
	if est, ok := l.(dist.Estimated); ok {
		c.guard(CheckSupport, func() {
			a := est.Accuracy()
			if !validTol(a.CDFAbs) || !validTol(a.SurvivalRel) || !validTol(a.TailFloor) {
				c.fail(CheckSupport, "Accuracy()", "finite bounds >= 0", fmt.Sprintf("%+v", a))
				return
			}
			c.cfg.cdfAbs = max(c.cfg.cdfAbs, min(a.CDFAbs, 0.01))
			if a.SurvivalRel > c.cfg.survivalRel {
				c.cfg.survivalRel = min(a.SurvivalRel, 0.5)
				c.cfg.tailFloor = max(c.cfg.tailFloor, a.TailFloor)
			}
		})
	}
	if !c.prepare() {
		return c.result()
	}
	for _, run := range []struct {
		name string
		fn   func()
	}{
		{CheckSupport, c.checkSupport},
		{CheckSpecial, c.checkSpecial},
		{CheckRange, c.checkRange},
		{CheckMonotone, c.checkMonotone},
		{CheckComplement, c.checkComplement},
		{CheckReference, c.checkReference},
		{CheckQuantile, c.checkQuantile},
		{CheckUpper, c.checkUpperQuantile},
		{CheckAtoms, c.checkAtoms},
		{CheckMass, c.checkMass},
		{CheckDensity, c.checkDensity},
		{CheckMoments, c.checkMoments},
		{CheckCF, c.checkCF},
		{CheckRand, c.checkRand},
		{CheckConcurrency, c.checkConcurrency},
	} {
		c.guard(run.name, run.fn)
	}
	return c.result()
}

// checker holds the state of one Check.
type checker struct {
	law   dist.Law
	cfg   config
	errs  []error
	count map[string]int

	lo, hi  float64     // support
	median  float64     // Quantile(0.5)
	spread  float64     // a positive length scale of the law
	atoms   []dist.Atom // nil unless the law is Atomic
	atomic  bool
	density func(float64) float64 // nil unless Densitied
	grid    []float64             // sorted, finite evaluation points
	gridF   []float64             // CDF on grid
	gridS   []float64             // Survival on grid
	sampled []dist.Atom           // atoms examined one by one (at most maxAtoms)

	// Quantiles already computed, by level: a numerically computed law may
	// take milliseconds for one, and several checks use the same levels.
	qCache, uqCache map[float64]float64
}

// quantile returns l.Quantile(p), computed once per level.
func (c *checker) quantile(p float64) float64 { return cached(c.qCache, p, c.law.Quantile) }

// upperQuantile returns l.UpperQuantile(q), computed once per level.
func (c *checker) upperQuantile(q float64) float64 { return cached(c.uqCache, q, c.law.UpperQuantile) }

// cached returns f(p), from m when it has been computed before.
func cached(m map[float64]float64, p float64, f func(float64) float64) float64 {
	if x, ok := m[p]; ok {
		return x
	}
	x := f(p)
	m[p] = x
	return x
}

// maxAtoms caps the atoms examined one at a time; beyond it an evenly
// spaced subset (with the first, the last and the heaviest) is examined.
const maxAtoms = 512

func (c *checker) fail(check, at, want, got string) {
	if c.count == nil {
		c.count = map[string]int{}
	}
	c.count[check]++
	if c.count[check] <= maxPerCheck {
		c.errs = append(c.errs, &Failure{Check: check, At: at, Want: want, Got: got})
	}
}

func (c *checker) result() error {
	for _, name := range slices.Sorted(func(yield func(string) bool) {
		for k := range c.count {
			if !yield(k) {
				return
			}
		}
	}) {
		if n := c.count[name]; n > maxPerCheck {
			c.errs = append(c.errs, &Failure{Check: name, At: "further points", Want: "no more failures",
				Got: fmt.Sprintf("%d more failures not shown", n-maxPerCheck)})
		}
	}
	return errors.Join(c.errs...)
}

// guard runs fn, reporting a panic as a failure of check.
func (c *checker) guard(check string, fn func()) {
	defer func() {
		if r := recover(); r != nil {
			c.fail(check, "a call into the law", "no panic", fmt.Sprintf("panic: %v", r))
		}
	}()
	fn()
}

// prepare reads the support, atoms and density and builds the grid. It
// reports false when the support is unusable.
func (c *checker) prepare() (ok bool) {
	c.guard(CheckSupport, func() {
		l := c.law
		c.lo, c.hi = l.Support()
		if math.IsNaN(c.lo) || math.IsNaN(c.hi) || c.lo > c.hi || math.IsInf(c.lo, 1) || math.IsInf(c.hi, -1) {
			c.fail(CheckSupport, "Support()", "lo <= hi, lo < +Inf, hi > -Inf", fmt.Sprintf("(%s, %s)", g(c.lo), g(c.hi)))
			return
		}
		if a, isA := l.(dist.Atomic); isA {
			c.atomic = true
			c.atoms = a.Atoms()
		}
		if d, isD := l.(dist.Densitied); isD {
			c.density = d.Density
		}
		c.median = c.quantile(0.5)
		c.spread = c.positiveScale()
		c.sampled = sampleAtoms(c.atoms)
		c.grid = c.buildGrid()
		c.gridF = make([]float64, len(c.grid))
		c.gridS = make([]float64, len(c.grid))
		for i, x := range c.grid {
			c.gridF[i], c.gridS[i] = l.CDF(x), l.Survival(x)
		}
		ok = true
	})
	return ok
}

// positiveScale returns a positive, finite length scale of the law: its
// interquartile range, else its standard deviation, else max(|median|, 1).
func (c *checker) positiveScale() float64 {
	if s := c.upperQuantile(0.25) - c.quantile(0.25); s > 0 && finite(s) {
		return s
	}
	if s := math.Sqrt(c.law.Variance()); s > 0 && finite(s) {
		return s
	}
	if finite(c.median) {
		return max(math.Abs(c.median), 1)
	}
	return 1
}

// sampleAtoms returns the atoms to examine one by one: all of them when few,
// else an evenly spaced subset with the ends and the heaviest atom.
func sampleAtoms(atoms []dist.Atom) []dist.Atom {
	if len(atoms) <= maxAtoms {
		return atoms
	}
	heaviest := 0
	for i, a := range atoms {
		if a.Mass > atoms[heaviest].Mass {
			heaviest = i
		}
	}
	out := make([]dist.Atom, 0, maxAtoms+1)
	for k := 0; k < maxAtoms; k++ {
		i := k * (len(atoms) - 1) / (maxAtoms - 1)
		if i > heaviest && (len(out) == 0 || out[len(out)-1].Value < atoms[heaviest].Value) {
			out = append(out, atoms[heaviest])
		}
		if len(out) == 0 || atoms[i].Value > out[len(out)-1].Value {
			out = append(out, atoms[i])
		}
	}
	return out
}

// tailLevels are the probabilities at which quantiles are taken to build
// grids: from 1e-300 into the bulk. Mirrored through UpperQuantile.
var tailLevels = [...]float64{1e-300, 1e-100, 1e-30, 1e-16, 1e-12, 1e-9, 1e-6, 1e-4, 1e-3, 0.01, 0.025, 0.05, 0.1, 0.2, 0.25, 0.3, 0.4, 0.5}

// levels returns the tailLevels at or above the law's tail floor (all of
// them unless a floor is set by WithSurvivalTolerance or reported by an
// Estimated law): below its floor a numerically computed law's tail is
// not accurate, so its quantiles there can be checked only trivially, and
// they are often the slowest to compute.
func (c *checker) levels() []float64 {
	out := make([]float64, 0, len(tailLevels))
	for _, p := range tailLevels {
		if p >= c.cfg.tailFloor || p >= 0.5 {
			out = append(out, p)
		}
	}
	return out
}

// buildGrid returns the sorted, distinct, finite points at which CDF and
// Survival are examined: quantiles at tailLevels from both ends, the
// midpoints between them, the finite support ends and their neighbours,
// points outside the support, and every examined atom with its
// neighbours.
func (c *checker) buildGrid() []float64 {
	var pts []float64
	var qs []float64
	for _, p := range c.levels() {
		qs = append(qs, c.quantile(p), c.upperQuantile(p))
	}
	qs = sortedFinite(qs)
	for i, x := range qs {
		pts = append(pts, x)
		if i > 0 {
			pts = append(pts, qs[i-1]+(x-qs[i-1])/2)
		}
	}
	for _, e := range []float64{c.lo, c.hi} {
		if finite(e) {
			pts = append(pts, e, down(e), up(e))
		}
	}
	pts = append(pts, c.lo-c.spread, c.hi+c.spread, c.median)
	for _, a := range c.sampled {
		pts = append(pts, a.Value, down(a.Value), up(a.Value))
	}
	return sortedFinite(pts)
}

// sortedFinite returns the finite values of xs, sorted and distinct.
func sortedFinite(xs []float64) []float64 {
	out := make([]float64, 0, len(xs))
	for _, x := range xs {
		if finite(x) {
			out = append(out, x)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// down and up return the adjacent float64 values.
func down(x float64) float64 { return math.Nextafter(x, math.Inf(-1)) }
func up(x float64) float64   { return math.Nextafter(x, math.Inf(1)) }

// g formats a float64 in the shortest form that reads back exactly.
func g(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// eps is the float64 machine epsilon.
const eps = 0x1p-52

// probSlack returns the slack allowed when comparing a computed
// probability with the target p: the CDF tolerance and a few rounding
// units of p.
func (c *checker) probSlack(p float64) float64 { return c.cfg.cdfAbs + 4*eps*p }

// survSlack returns the slack allowed when comparing a computed survival
// value with the target q, using the relative survival tolerance where q
// is at or above the tail floor.
func (c *checker) survSlack(q float64) float64 {
	s := c.cfg.cdfAbs + 4*eps*q
	if c.cfg.survivalRel > 0 && q >= c.cfg.tailFloor {
		s = max(s, c.cfg.survivalRel*q+4*eps*q)
	}
	return s
}

// massBetween returns P(a < X <= b) for a < b, from the CDF below the
// median and from Survival above it, so that tail differences keep their
// relative accuracy; mag is the magnitude of the values subtracted.
func (c *checker) massBetween(a, b float64) (p, mag float64) {
	l := c.law
	if b <= c.median {
		fa, fb := l.CDF(a), l.CDF(b)
		return fb - fa, max(math.Abs(fa), math.Abs(fb))
	}
	sa, sb := l.Survival(a), l.Survival(b)
	return sa - sb, max(math.Abs(sa), math.Abs(sb))
}

// atomsIn returns the total mass of the atoms in (a, b].
func (c *checker) atomsIn(a, b float64) float64 {
	s := 0.0
	for _, at := range c.atoms {
		if at.Value > a && at.Value <= b {
			s += at.Mass
		}
	}
	return s
}

// cmpAtom orders atoms by value against a target, for binary search.
func cmpAtom(a dist.Atom, t float64) int {
	switch {
	case a.Value < t:
		return -1
	case a.Value > t:
		return 1
	}
	return 0
}

// neighbourAtoms returns the value of the largest atom below x and of the
// smallest atom above x (±Inf when there is none), and whether x is itself
// an atom.
func (c *checker) neighbourAtoms(x float64) (below, above float64, isAtom bool) {
	below, above = math.Inf(-1), math.Inf(1)
	i, found := slices.BinarySearchFunc(c.atoms, x, cmpAtom)
	if i > 0 {
		below = c.atoms[i-1].Value
	}
	j := i
	if found {
		j++
	}
	if j < len(c.atoms) {
		above = c.atoms[j].Value
	}
	return below, above, found
}

// nearAtom reports whether an atom lies within h of x.
func (c *checker) nearAtom(x, h float64) bool {
	b, a, at := c.neighbourAtoms(x)
	return at || x-b <= h || a-x <= h
}
