package energy

import (
	"fmt"
	"math"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
)

// TargetKind says what a design target constrains.
type TargetKind int

// The targets a design can be asked to meet. Each is a statement about
// the probability p that a node (or any of a group's nodes) is flat by
// the date T, so each is checked on the same figure:
//
//	NodeFlat:     p = P(a node's life ends by T)          <= Level
//	NodeQuantile: the Level-quantile of a node's life     >= T,
//	              i.e. P(a node's life ends by T)          <= Level
//	              (T below the calendar limit, where the law is continuous)
//	GroupFlat:    p = P(any of Count nodes ends by T)      <= Level
//	              = Σ_e w_e·(1 − (1 − F_e(T))^Count)
//
// with F_e the node law given the shared factors' quadrature node e (the
// nodes are independent given them, see Site).
const (
	NodeFlat     TargetKind = iota + 1 // P(a node is flat by Date) <= Level
	NodeQuantile                       // the Level-quantile of a node's lifetime >= Date
	GroupFlat                          // P(any node of the group is flat by Date) <= Level
)

// String names the kind.
func (k TargetKind) String() string {
	switch k {
	case NodeFlat:
		return "node flat by the date"
	case NodeQuantile:
		return "lifetime quantile at least the date"
	case GroupFlat:
		return "any node of the group flat by the date"
	}
	return fmt.Sprintf("TargetKind(%d)", int(k))
}

// Target is what a design must meet: a date and a probability level (see
// TargetKind for what each kind asks).
type Target struct {
	Kind  TargetKind
	Date  float64 // T (s after deployment), finite and > 0
	Level float64 // the accepted risk r (NodeFlat, GroupFlat) or the quantile level q (NodeQuantile), in (0, 1)
}

func (t Target) check(fn, pre string) error {
	switch {
	case t.Kind != NodeFlat && t.Kind != NodeQuantile && t.Kind != GroupFlat:
		return paramErr(fn, pre+"Kind", int(t.Kind), "must be NodeFlat, NodeQuantile or GroupFlat")
	case !(t.Date > 0) || math.IsInf(t.Date, 0):
		return paramErr(fn, pre+"Date", t.Date, "must be finite and > 0 (s after deployment)")
	case !(t.Level > 0 && t.Level < 1):
		return paramErr(fn, pre+"Level", t.Level, "must be in (0, 1)")
	}
	return nil
}

// targetLaws is a candidate's node law at each node of the shared rule,
// each built when first needed, with its CDF at the target's date. The
// search decides most candidates from a few of them (decide); the stated
// error, the figure and the quantiles take them all (all). Not safe for
// concurrent use: each belongs to one search goroutine.
type targetLaws struct {
	fn       string
	spec     NodeSpec
	clim     *Climate
	months   *monthCache
	conds    []Conditions
	w        []float64
	rule     SharedRule     // the rule whose nodes conds and w are (its Site, if any, estimates its error)
	date     float64        // s: the date of cdf
	laws     []NodeLifetime // laws[e].n is nil until built
	cdf      []float64      // F_e(date); NaN until built
	probits  [][]float64    // node e's settings' probits at the date (settingProbits; nil where not evaluated)
	calendar float64        // s; +Inf for none
	binds    float64        // the mixture's share of lives the energy ends (NaN until asked: quantile)
	// lower and higher are, per node, the node of the same temperature
	// offset with the next lower and next higher batch factor (−1: none).
	lower, higher []int
	// longer and shorter are the laws of the same choice at longer and
	// shorter intervals, for bounds (nil: none). Their nodes' CDFs at the
	// date bound this candidate's: a longer interval does not shorten a
	// node's life (Builder).
	longer, shorter []*targetLaws
}

// newTargetLaws returns the candidate spec's laws at rule's nodes for the
// date (s), building the heaviest node's at once (its errors are the
// candidate's; the others' come from build).
func newTargetLaws(fn string, spec NodeSpec, clim *Climate, rule SharedRule, months *monthCache, date float64) (*targetLaws, error) {
	n := len(rule.w)
	tl := &targetLaws{fn: fn, spec: spec, clim: clim, months: months, conds: rule.conds, w: rule.w, rule: rule, date: date,
		laws: make([]NodeLifetime, n), cdf: make([]float64, n), probits: make([][]float64, n), lower: make([]int, n), higher: make([]int, n), binds: math.NaN()}
	heavy := 0
	for e := range n {
		tl.cdf[e] = math.NaN()
		tl.lower[e], tl.higher[e] = -1, -1
		if rule.w[e] > rule.w[heavy] {
			heavy = e
		}
		b := rule.conds[e].batch()
		for f := range n {
			c := rule.conds[f]
			if f == e || c.TemperatureOffset != rule.conds[e].TemperatureOffset {
				continue
			}
			if c.batch() < b && (tl.lower[e] < 0 || c.batch() > rule.conds[tl.lower[e]].batch()) {
				tl.lower[e] = f
			}
			if c.batch() > b && (tl.higher[e] < 0 || c.batch() < rule.conds[tl.higher[e]].batch()) {
				tl.higher[e] = f
			}
		}
	}
	if err := tl.build(heavy); err != nil {
		return nil, err
	}
	tl.calendar = tl.laws[heavy].Calendar()
	return tl, nil
}

// build builds node e's law (once).
func (tl *targetLaws) build(e int) error {
	if tl.laws[e].n != nil {
		return nil
	}
	env := Environment{Climate: tl.clim, Conditions: tl.conds[e]}
	mt, err := tl.months.get(tl.fn, tl.spec, env)
	if err == nil {
		env.months = mt
		tl.laws[e], err = NewNodeLifetime(tl.spec, env)
	}
	if err != nil {
		return causeErr(tl.fn, "candidate node", tl.spec.Name, fmt.Sprintf("lifetime law at batch factor %.4g and temperature offset %+.3g °C", env.batch(), env.TemperatureOffset), err)
	}
	// The CDF at the date as NodeLifetime.CDF computes it (the same
	// bits), keeping the settings' probits there for nodeError.
	l := tl.laws[e]
	switch d := tl.date; {
	case math.IsNaN(d) || d <= 0 || d >= l.n.calendar:
		tl.cdf[e] = l.CDF(d)
	default:
		z := make([]float64, len(l.n.settings))
		_, dead, _ := l.energyAtProbits(d, z)
		tl.cdf[e] = min(1, max(0, dead))
		tl.probits[e] = z
	}
	return nil
}

// all builds every node's law.
func (tl *targetLaws) all() error {
	for e := range tl.laws {
		if err := tl.build(e); err != nil {
			return err
		}
	}
	return nil
}

// nodeFigure is the target's figure for one node of CDF f at the date:
// f, or for a group of count nodes 1 − (1 − f)^count (from log1p, so a
// small f keeps its digits); non-decreasing in f.
func nodeFigure(t Target, count int64, f float64) float64 {
	if t.Kind == GroupFlat {
		return -math.Expm1(float64(count) * math.Log1p(-f))
	}
	return f
}

// bounds returns bounds on p (see TargetKind) from the laws built so far,
// and the node not yet built whose law would narrow them most (−1 when all
// are built, and lo = hi = p). A node's life shortens as its batch factor
// falls, everything else equal (the factor scales the usable capacity and
// the self-discharge alike, see Conditions; the calendar limit does not
// depend on it), so F_e(date) lies between the CDFs of the nearest built
// nodes of the same temperature offset with a higher and a lower batch
// factor (0 and 1 where there are none); and a node's life does not
// shorten as the interval grows (Builder), so it lies between the CDFs of
// the same nodes built for the choice's longer and shorter intervals
// (tl.longer, tl.shorter): the tightest of these bounds is taken.
func (tl *targetLaws) bounds(t Target, count int64) (lo, hi float64, next int) {
	next = -1
	widest := -1.0
	for e, f := range tl.cdf {
		fl, fh := f, f
		if math.IsNaN(f) {
			fl, fh = tl.below(e), tl.above(e)
			for _, o := range tl.longer {
				fl = max(fl, o.first(e, o.higher, 0))
			}
			for _, o := range tl.shorter {
				fh = min(fh, o.first(e, o.lower, 1))
			}
		}
		a, b := tl.w[e]*nodeFigure(t, count, fl), tl.w[e]*nodeFigure(t, count, fh)
		lo += a
		hi += b
		if math.IsNaN(f) && b-a > widest {
			next, widest = e, b-a
		}
	}
	return lo, hi, next
}

// below returns a lower bound on node e's CDF at the date from tl's
// built nodes of a higher batch factor (0 where none is built); above an
// upper bound from those of a lower one (1 where none is).
func (tl *targetLaws) below(e int) float64 { return tl.first(tl.higher[e], tl.higher, 0) }

func (tl *targetLaws) above(e int) float64 { return tl.first(tl.lower[e], tl.lower, 1) }

// first returns the CDF at the date of the first built node of the chain
// e, step[e], step[step[e]], …, or none when none is built.
func (tl *targetLaws) first(e int, step []int, none float64) float64 {
	for ; e >= 0; e = step[e] {
		if !math.IsNaN(tl.cdf[e]) {
			return tl.cdf[e]
		}
	}
	return none
}

// decide tells whether p <= t.Level, building laws only until the bounds
// decide it with a margin of 1e-3·Level (against rounding in the
// conditional laws' ordering), or all of them. The answer is the one the
// full p gives: the bounds hold for the computed laws up to their errors,
// far below the margin.
func (tl *targetLaws) decide(t Target, count int64) (bool, error) {
	if t.Date >= tl.calendar {
		return false, nil // p = 1
	}
	margin := 1e-3 * t.Level
	for {
		lo, hi, next := tl.bounds(t, count)
		switch {
		case next < 0:
			return min(1, max(0, hi)) <= t.Level, nil
		case hi <= t.Level-margin:
			return true, nil
		case lo > t.Level+margin:
			return false, nil
		}
		if err := tl.build(next); err != nil {
			return false, err
		}
	}
}

// monthCache holds the month tables (newMonthTable) of the candidates of
// one search, by Thermal, deployment month and shifted climate: the
// candidates of a cell share its tables whatever their interval, link or
// batch. A table is a function of its key alone, so what the cache holds
// never changes an answer, whatever the order in which goroutines fill
// it. It keeps at most maxMonthTables tables (a search's cells times the
// rule's temperature offsets, 16 on the demo, unless a builder gives its
// candidates Thermals of their own); beyond, a table is computed for each
// law and not kept. Safe for concurrent use; a nil cache computes every
// table.
type monthCache struct {
	mu      sync.Mutex
	entries []monthEntry
}

// maxMonthTables caps a monthCache's tables (about 1 kB each).
const maxMonthTables = 1024

type monthEntry struct {
	th    Thermal
	start int
	clim  Climate
	mt    *monthTable
}

// get returns the month table of spec in env (nil when spec has no
// Thermal, or when env's conditions are bad: newNode reports those).
func (c *monthCache) get(fn string, spec NodeSpec, env Environment) (*monthTable, error) {
	th := spec.Thermal
	if th == nil || env.Conditions.check(fn) != nil {
		return nil, nil
	}
	// pre prefixes newMonthTable's errors (written out on a miss only).
	pre := func() string {
		if spec.Name != "" {
			return fmt.Sprintf("spec %q: ", spec.Name)
		}
		return "spec."
	}
	if c == nil {
		return newMonthTable(fn, pre(), spec, env)
	}
	clim, err := shiftedClimate(fn, th, env)
	if err != nil {
		return nil, err
	}
	find := func() *monthTable {
		for _, e := range c.entries {
			if e.start == spec.StartMonth && e.clim == clim && sameThermal(&e.th, th) {
				return e.mt
			}
		}
		return nil
	}
	c.mu.Lock()
	mt := find()
	c.mu.Unlock()
	if mt != nil {
		return mt, nil
	}
	if mt, err = newMonthTable(fn, pre(), spec, env); err != nil {
		return nil, err
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	if old := find(); old != nil {
		return old, nil // another goroutine's table, equal to this one
	}
	if len(c.entries) < maxMonthTables {
		c.entries = append(c.entries, monthEntry{th: *th, start: spec.StartMonth, clim: clim, mt: mt})
	}
	return mt, nil
}

// prob returns p, the target's probability (see TargetKind), from every
// node's law (it builds those not built yet); t.Date must be the date tl
// was made for.
func (tl *targetLaws) prob(t Target, count int64) (float64, error) {
	if err := tl.all(); err != nil {
		return 0, err
	}
	if t.Date >= tl.calendar {
		return 1, nil
	}
	p := 0.0
	for e, f := range tl.cdf {
		p += tl.w[e] * nodeFigure(t, count, f)
	}
	return min(1, max(0, p)), nil
}

// nodeError returns the node laws' part of p's stated error: each
// conditional law's CDF error at T (NodeLifetime's five-cumulant check and
// quadrature estimates, probed at T itself), weighted, and for a group
// propagated through 1 − (1 − F)^n, whose slope is n·(1 − F)^(n−1). Each
// law's error is accuracyAtZ's given its settings' own probits at T
// (settingProbits), which passes over the settings whose terms cannot
// raise the error measured: the same stated error as measuring every
// setting, for one more CDF's work. It costs about as much as p, so the
// search asks for it only where it decides. Every law must be built
// (prob).
func (tl *targetLaws) nodeError(t Target, count int64) float64 {
	T := t.Date
	if T >= tl.calendar {
		return 0 // p = 1 exactly
	}
	n := float64(count)
	errEst := 0.0
	for e, l := range tl.laws {
		f := tl.cdf[e]
		zOf := settingProbitsFrom(l, T, tl.date, tl.probits[e])
		eps := l.accuracyAtZ([]float64{T}, zOf).CDFAbs
		if t.Kind == GroupFlat {
			errEst += tl.w[e] * n * math.Exp((n-1)*math.Log1p(-min(1, max(0, f-eps)))) * eps
		} else {
			errEst += tl.w[e] * eps
		}
	}
	return errEst
}

// settingProbitsFrom is settingProbits, read from z where they were
// evaluated at t already (date, with z not nil).
func settingProbitsFrom(l NodeLifetime, t, date float64, z []float64) func(j int, u float64) float64 {
	if z == nil || t != date || l.n.spread.IsZero() {
		return settingProbits(l, t)
	}
	return func(j int, u float64) float64 {
		if u != t {
			return math.NaN()
		}
		return z[j]
	}
}

// settingProbits returns, as accuracyAtZ's zOf for the time t alone, the
// probit at t of each of l's settings (settingAt: the model's own values,
// not a table's; NaN at other times); nil for a law without per-node
// spread (accuracyAtZ does not probe those).
func settingProbits(l NodeLifetime, t float64) func(j int, u float64) float64 {
	if l.n.spread.IsZero() {
		return nil
	}
	z := make([]float64, len(l.n.settings))
	for j := range z {
		alive, dead, _ := l.n.settingAt(j, t)
		z[j] = probitOf(alive, dead)
	}
	return func(j int, u float64) float64 {
		if u != t {
			return math.NaN()
		}
		return z[j]
	}
}

// ruleError returns the shared rule's part of p's stated error: for a
// rule from Site.GroupRule, the Site's estimate of its rule's error for
// these laws at T (its probe on their probits at the rule's nodes,
// ruleErrorOf: a node's law, or for GroupFlat the first failure among the
// Site group's nodes, whose count SearchDesign checks is Count); 0 for a
// rule without an estimate. Every law must be built (prob).
func (tl *targetLaws) ruleError(t Target) float64 {
	if tl.rule.site == nil || t.Date >= tl.calendar {
		return 0
	}
	E := len(tl.laws)
	Z := make([]float64, len(tl.rule.site.names)*E)
	for e, f := range tl.cdf {
		Z[tl.rule.group*E+e] = clampedProbit(1-f, f)
	}
	kind := kindNode
	if t.Kind == GroupFlat {
		kind = kindFirst
	}
	return tl.rule.site.ruleErrorOf(Z, kind, tl.rule.group)
}

// nodeLaw is the mixture over the shared factors of the conditional laws
// (all built: see all).
func (tl *targetLaws) nodeLaw(name string) sharedMixture {
	laws := make([]dist.Law, len(tl.laws))
	for i, l := range tl.laws {
		laws[i] = l
	}
	return newSharedMixture(name, tl.w, laws)
}

// MixedNodeLifetime returns the lifetime law (s) of a node of spec at a
// site of climate clim (nil: the reference temperature) whose shared
// factors spread as shared: the mixture over the shared factors'
// Gauss–Hermite nodes of NewNodeLifetime's laws, evaluated directly (no
// tables, unlike Site): what SearchDesign evaluates at each candidate.
// Quantiles are found by bisection between the conditional laws'
// quantiles, each step one CDF per shared node. Errors as NewNodeLifetime's
// and for a bad SharedSpread (wrapping ErrParam).
func MixedNodeLifetime(spec NodeSpec, clim *Climate, shared SharedSpread) (dist.Law, error) {
	const fn = "MixedNodeLifetime"
	if err := shared.check(fn); err != nil {
		return nil, err
	}
	tl, err := newTargetLaws(fn, spec, clim, fixedSharedRule(shared), &monthCache{}, 0)
	if err == nil {
		err = tl.all()
	}
	if err != nil {
		return nil, err
	}
	return tl.nodeLaw(fn), nil
}
