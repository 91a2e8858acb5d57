package energy

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
)

// NodeLifetime is the law of the time (s, from deployment) until a node of
// a group is at the end of its life, in one Environment (a climate and one
// realisation of the shared factors): the mixture over the node's setting
// and its per-node factors (NodeSpread) of the time its energy runs out,
// capped at the cell's calendar limit CalendarLife − StorageTime.
//
// Tiers: the per-cycle noise is that of the settings' cycles (the active
// energy over t of them, exact mean and variance); the per-node factors are
// mixed over exactly (normal capacity and active factors in closed form, the
// lognormal floor factor by a fixed Gauss–Legendre rule on pieces cut at
// the integrand's turn, its error estimated against the same rule on the
// pieces halved); the setting is a finite
// mixture. The environment is fixed: for a fleet, Site mixes over it.
//
// The cell over the calendar: month by month from StartMonth, the floor
// power follows Thermal.FloorFactor and self-discharge
// Thermal.SelfDischargeFactor at the month's temperature (with the climate's
// daily swing and the shared offset); the usable capacity is derated by the
// year's mean of Thermal.CapacityFactor; the supply path scales the node's
// energy and adds its quiescent draw. Active currents are taken as
// independent of temperature (common practice for planning: they move a few
// per cent over a cell's range, from memory).
//
// Time is continuous: by t the node has run t/E[T] cycles, counted by their
// cumulants, so the law has a density below the calendar limit; with no
// per-node spread it is the exact k-fold law of the cycles begun by t and
// moves in steps of one period. The lifetime is then known to within one
// period, as for Lifetime.
//
// If the calendar limit binds for some nodes, the law has an atom there
// (Atoms). NodeLifetime implements dist.Law, dist.Atomic and dist.Estimated;
// it is an immutable value, safe for concurrent use. A zero NodeLifetime is
// not valid: its methods return NaN.
type NodeLifetime struct {
	n  *node
	lz *nodeLazy
}

type nodeLazy struct {
	once       sync.Once
	mean, vari float64
	momErr     float64
	accOnce    sync.Once
	acc        dist.Accuracy
	// The law at the calendar limit (energyAt), computed on first use:
	// EnergyBinds, survivalAtCalendar and the tables all read it, each
	// reading once cost an evaluation of every setting (the demo's 96
	// laws 1,344 evaluations of the node model more).
	calOnce           sync.Once
	calAlive, calDead float64
}

// NewNodeLifetime returns the lifetime law of spec's nodes in env. Errors
// name the field, its value and the rule (wrapping ErrParam).
func NewNodeLifetime(spec NodeSpec, env Environment) (NodeLifetime, error) {
	const fn = "NewNodeLifetime"
	n, err := newNode(fn, spec, env)
	if err != nil {
		return NodeLifetime{}, err
	}
	return NodeLifetime{n: n, lz: &nodeLazy{}}, nil
}

// energyAt returns P(energy left at t), P(run out by t) and the summed
// error estimate, without the calendar limit.
func (l NodeLifetime) energyAt(t float64) (alive, dead, errEst float64) {
	return l.energyAtProbits(t, nil)
}

// energyAtProbits is energyAt, with each setting's probit (probitOf its
// two probabilities) written into z where z is not nil (len(z) settings).
func (l NodeLifetime) energyAtProbits(t float64, z []float64) (alive, dead, errEst float64) {
	for j := range l.n.settings {
		a, d, e := l.n.settingAt(j, t)
		w := l.n.settings[j].w
		alive += w * a
		dead += w * d
		errEst += w * e
		if z != nil {
			z[j] = probitOf(a, d)
		}
	}
	return alive, dead, errEst
}

// accSkipZ is the probit beyond which accuracyAt counts a setting's terms
// as negligible.
const accSkipZ = 8.5

// accStackItems is how many settings accuracyAtZKnown keeps its per-time
// work for on the stack (the demo's nodes have 14; more take one
// allocation a call).
const accStackItems = 16

// accuracyAt probes the law at the times ts and compares, setting by
// setting, the normal stand-in for the per-cycle sum with a three-node
// Gaussian rule built from its first five cumulants; the largest
// difference plus the quadrature estimates is the stated CDF error.
func (l NodeLifetime) accuracyAt(ts []float64) dist.Accuracy {
	return l.accuracyAtZ(ts, nil)
}

// accuracyAtZ is accuracyAt given, when zOf is not nil, each setting's
// probit zOf(j, t) from a table within 0.01 of the model's (NaN where
// unknown): a setting whose probit is beyond ±accSkipZ by more than 0.01
// plus the rule's largest shift of the mean over the normal part's
// smallest sd (the probit moves by at most δ/sd for a shift δ of the mean:
// ∂z/∂mean = E[φ(g)]/(sd·φ(z)) <= 1/sd, φ∘Φ⁻¹ being concave) counts
// 2·Φ̄(accSkipZ) without being evaluated.
//
// With zOf the settings are also measured from the one nearest its median
// (the smallest such |z|) out, and a setting is passed over when its
// terms cannot raise what is measured already: its difference is at most
// 3.001·Φ̄(zb) + 1e-16, zb = |z| − 0.01 − shift/sd as above (every
// probability it compares has its smaller side below Φ̄(zb), so the
// normal stand-in's difference is at most Φ̄(zb) and the floor rule's
// estimate, twice a difference of two such values plus 1e-10 of the side
// and rounding, at most 2.0001·Φ̄(zb), or 1e-16 where it is not run), so
// it is passed over when
// its weight times that is at most the largest weighted difference so
// far, and its relative survival difference cannot exceed the largest so
// far either (for z < −0.01 the survival is above 1/2, so it is below
// twice that bound; for z > 0.01 it is not counted when the survival, below
// Φ̄(|z| − 0.01), is below the tail floor). The largest values, and so the
// stated error, are those of measuring every setting.
func (l NodeLifetime) accuracyAtZ(ts []float64, zOf func(j int, t float64) float64) dist.Accuracy {
	acc, _ := l.accuracyAtZPruned(ts, zOf, true)
	return acc
}

// accuracyAtZPruned is accuracyAtZ, passing settings over only when prune
// is set (the tests compare the two), with the number passed over.
func (l NodeLifetime) accuracyAtZPruned(ts []float64, zOf func(j int, t float64) float64, prune bool) (dist.Accuracy, int) {
	return l.accuracyAtZKnown(ts, zOf, prune, nil, false)
}

// calPart is part's output for one setting at the calendar limit, where
// ok.
type calPart struct {
	p  partOut
	ok bool
}

// accuracyAtZKnown is accuracyAtZPruned with the model at the calendar
// limit given for the settings with cal[j].ok (cal may be nil): part's
// output there, with the gradient, for the arguments evaluated here (the
// same bits, read instead of evaluated again: settingTables has it).
//
// With tab it measures the error of the model that the settings' tables
// are built from: the floor integral by the tables' rule (tabGLNodes),
// except at the calendar limit where cal is given (the tables' knots
// there are the node's rule's), its error measured as the node's
// (floorRuleError, the same rule on pieces halved), and the margin for
// the rule's error between the times measured the tables' rule's,
// min(tabRuleRel of the smaller side, tabRuleAbs), instead of 1e-10 of
// the side.
func (l NodeLifetime) accuracyAtZKnown(ts []float64, zOf func(j int, t float64) float64, prune bool, cal []calPart, tab bool) (dist.Accuracy, int) {
	n := l.n
	acc := dist.Accuracy{TailFloor: 1e-14, Method: "mixture over settings and per-node factors (closed form in the normal factors, a fixed Gauss–Legendre rule on pieces in the floor factor); per-cycle sum by its exact mean and variance"}
	if n.spread.IsZero() {
		acc.Method = "mixture over settings of exact k-fold laws of the active energy"
		for j := range n.settings {
			if law, err := n.settings[j].sums.Law(2); err == nil {
				if e, ok := law.(dist.Estimated); ok {
					acc.CDFAbs = max(acc.CDFAbs, e.Accuracy().CDFAbs)
				}
			}
		}
		acc.SurvivalRel = acc.CDFAbs / acc.TailFloor
		return acc, 0
	}
	// One setting at one time: what its terms need, and the probit zb of
	// the bound on its difference (NaN where it is not known).
	type item struct {
		j                      int
		k, capLeft, floorE, h  float64
		rule                   momentRule
		shift, least, zTab, zb float64
	}
	// Room on the stack for accStackItems settings, an allocation of
	// their count beyond.
	var room [accStackItems]item
	items := room[:0]
	if len(n.settings) > len(room) {
		items = make([]item, 0, len(n.settings))
	}
	var fs floorShare // the law's floor pieces, shared with its moment rule's nodes
	worst, rel, passed := 0.0, 0.0, 0
	for _, t := range ts {
		if !(t > 0) || math.IsInf(t, 0) {
			continue
		}
		items = items[:0]
		sdClock, floorClock := n.cum(&n.months.sdCum, &n.months.sdFactor, t), n.cum(&n.months.floorCum, &n.months.floorRate, t)
		for j := range n.settings {
			s := &n.settings[j]
			k := t * s.rate
			capLeft := n.batch*s.usable - n.nominal*(n.storage+n.sdRate*sdClock)
			if !(capLeft > 0) {
				continue
			}
			it := item{j: j, k: k, capLeft: capLeft, floorE: s.floorP * floorClock, h: n.quiescent * t, zTab: math.NaN(), zb: math.NaN()}
			// Standardized cumulants of the k-cycle sum: l_r / k^{r/2−1}.
			kmu, kk2, l3, l4, l5 := k*s.mu, k*s.k2, s.l3/math.Sqrt(k), s.l4/k, s.l5/math.Pow(k, 1.5)
			sc, sa := n.spread.Capacity, n.spread.Active
			if zOf != nil {
				it.zTab = zOf(j, t)
				// A setting passed over by its probit even with the rule's
				// shift bounded from above (momentShiftBound) and its least
				// node from below is passed over by the rule's own (zb
				// below is at least this): the rule is not built. Its zb
				// is this lower bound, above accSkipZ as the rule's is, so
				// it sorts after the settings measured, as before.
				if ub, ok := momentShiftBound(kmu, kk2, l3, l4, l5); ok {
					least := min(kmu, max(kmu-ub, 0))
					sdMin := math.Sqrt(sc*sc*capLeft*capLeft + sa*sa*least*least)
					if zb := math.Abs(it.zTab) - 0.01 - ub/sdMin; zb > accSkipZ {
						it.zb = zb
						items = append(items, it)
						continue
					}
				}
			}
			it.rule = newMomentRule(3, kmu, kk2, l3, l4, l5)
			it.shift, it.least = 0.0, kmu
			for i := range it.rule.n {
				it.shift = max(it.shift, math.Abs(it.rule.x[i]-kmu))
				it.least = min(it.least, max(it.rule.x[i], 0))
			}
			if zOf != nil {
				sdMin := math.Sqrt(sc*sc*capLeft*capLeft + sa*sa*it.least*it.least)
				it.zb = math.Abs(it.zTab) - 0.01 - it.shift/sdMin
			}
			items = append(items, it)
		}
		// The settings nearest their medians first (unknown ones before
		// all), so that the largest differences are measured early.
		// (cmp.Compare puts NaN first and orders the rest ascending.)
		slices.SortStableFunc(items, func(a, b item) int { return cmp.Compare(a.zb, b.zb) })
		for i := range items {
			it := &items[i]
			s := &n.settings[it.j]
			if zb := it.zb; !math.IsNaN(zb) {
				if zb > accSkipZ {
					worst = max(worst, s.w*2*normSurv(accSkipZ))
					continue
				}
				b := 3.001*normSurv(zb) + 1e-16
				relOK := (it.zTab < -0.01 && 2*b <= rel) || (it.zTab > 0.01 && normSurv(it.zTab-0.01) < acc.TailFloor)
				if prune && s.w*b <= worst && relOK {
					passed++
					continue
				}
			}
			k, capLeft, floorE, h, rule := it.k, it.capLeft, it.floorE, it.h, &it.rule
			kk2 := k * s.k2
			// settingAt's value, with the probit's slope against the mean
			// active energy: where the law is beyond ±accSkipZ in probit
			// even at the rule's nodes (to first order, with a margin of
			// two), every term below is below Φ̄(accSkipZ) = 9.5e-18, and
			// 2·Φ̄(accSkipZ) is counted instead.
			//
			// The gradient is asked for only where the law is within
			// 1e-15 of 0 or 1 (Φ̄(7.9)): the test below needs |z| > accSkipZ,
			// a smaller side below Φ̄(8.5) = 9.5e-18, and elsewhere z and
			// its slope are not read. part's probabilities are the same
			// bits with the gradient or without (fixedPieces), so the
			// evaluation without serves all that follows (the gradient
			// takes a Gaussian density and three sums at every node of
			// the floor rule).
			var p partOut
			pTab := tab // whether p is by the tables' floor rule
			calKnown := t == n.calendar && cal != nil && cal[it.j].ok
			if calKnown {
				pTab = false
			}
			n.shareFloor(&fs, capLeft, k*s.mu, kk2, floorE, h, pTab)
			if calKnown {
				p = cal[it.j].p
			} else if p = n.partRuleShared(capLeft, k*s.mu, kk2, floorE, h, 0, false, false, pTab, &fs); min(p.alive, p.dead) < 1e-15 {
				p = n.partRuleShared(capLeft, k*s.mu, kk2, floorE, h, 0, true, false, pTab, &fs)
			}
			a0, e0 := p.alive, 0.0
			if math.Abs(p.z)-2*math.Abs(p.dz[dMean])*it.shift > accSkipZ {
				worst = max(worst, s.w*2*normSurv(accSkipZ))
				continue
			}
			// The rule's nodes are integrated on p's floor pieces (fs),
			// sharing the factors that depend on the pieces alone with
			// p's and each other's: the nodes' means lie within shift of
			// p's, where the probit is within a few hundredths of p's
			// (zb above), so the pieces cut for p fit their turns too, and
			// a3 − a0 compares the two rules on the same floor nodes
			// (on their own pieces, before, the demo's stated errors
			// differed by at most 4e-11 of themselves).
			a3 := 0.0
			for i := range rule.n {
				// With no per-cycle variance the rule is the one node at
				// the mean, part's own arguments: its value is p's.
				ai, ei := p.alive, 0.0
				if !(kk2 == 0 && rule.x[i] == k*s.mu) {
					ai = n.partRuleShared(capLeft, rule.x[i], 0, floorE, h, 0, false, false, pTab, &fs).alive
				}
				a3 += rule.w[i] * ai
				e0 += rule.w[i] * ei
			}
			// The fixed floor rule's error in a0, against the same rule on
			// the pieces halved (floorRuleError), plus 1e-10 of the smaller
			// side for the rule's error at times between those measured,
			// which moves with where the integrand's turn falls among the
			// rule's nodes (measured against gonum's 2000-point rule by
			// TestNodeLifetimeAllSpreadsAgainstGonumQuadrature: 3.4e-11 of
			// the side at 10 years, three times the largest estimate at the
			// law's probe times). Where the rule puts the setting's law
			// within 1e-16 of 0 or 1 the check is skipped and 1e-16 counted
			// instead (it would measure a difference below that unless the
			// rule were wrong by orders of magnitude, which the checks
			// elsewhere rule out). The tables' rule (tab) takes its own
			// margin (tabRuleRel, tabRuleAbs), at the calendar limit too,
			// where p is the node's rule's: the tables' knots before it are
			// the tables' rule's.
			eq := 1e-16
			if a0 > 1e-16 && p.dead > 1e-16 {
				side := min(a0, p.dead)
				margin := 1e-10 * side
				if tab {
					margin = min(tabRuleRel*side, tabRuleAbs)
				}
				eq = n.floorRuleError(capLeft, k*s.mu, kk2, floorE, h, p, pTab) + margin
			}
			diff := math.Abs(a3-a0) + eq + e0
			worst = max(worst, s.w*diff)
			if a0 >= acc.TailFloor {
				rel = max(rel, diff/a0)
			}
		}
	}
	acc.CDFAbs = worst * float64(len(n.settings))
	acc.SurvivalRel = rel
	return acc, passed
}

// Accuracy reports the stated error: CDFAbs bounds |CDF error| as measured
// at the law's 1e-6, 0.5 and 1 − 1e-6 quantiles (the per-cycle sum's
// normal stand-in against a five-cumulant Gaussian rule, plus the
// quadrature's estimates).
func (l NodeLifetime) Accuracy() dist.Accuracy {
	if l.n == nil {
		return dist.Accuracy{CDFAbs: math.NaN(), SurvivalRel: math.NaN(), TailFloor: math.NaN()}
	}
	l.lz.accOnce.Do(func() {
		var ts []float64
		for _, p := range []float64{1e-6, 0.5, 1 - 1e-6} {
			ts = append(ts, l.energyQuantile(p, false))
		}
		l.lz.acc = l.accuracyAt(ts)
	})
	return l.lz.acc
}

// Calendar returns the calendar limit (s after deployment): CalendarLife −
// StorageTime, +Inf when none was given.
func (l NodeLifetime) Calendar() float64 {
	if l.n == nil {
		return math.NaN()
	}
	return l.n.calendar
}

// EnergyBinds returns the probability that the node's energy runs out
// before its calendar limit (1 without a limit): the share of nodes whose
// life the energy, not the calendar, ends.
func (l NodeLifetime) EnergyBinds() float64 {
	if l.n == nil {
		return math.NaN()
	}
	if math.IsInf(l.n.calendar, 1) {
		return 1
	}
	_, d := l.atCalendar()
	return d
}

// atCalendar returns energyAt's P(energy left) and P(run out) at the
// calendar limit (which must be finite), computed once a law (the same
// bits whoever asks first).
func (l NodeLifetime) atCalendar() (alive, dead float64) {
	if l.lz == nil {
		alive, dead, _ = l.energyAt(l.n.calendar)
		return alive, dead
	}
	l.lz.calOnce.Do(func() {
		l.lz.calAlive, l.lz.calDead, _ = l.energyAt(l.n.calendar)
	})
	return l.lz.calAlive, l.lz.calDead
}

// seedCalendar sets atCalendar's values where they are not computed yet:
// alive and dead must be energyAt's at the calendar limit, bit for bit
// (settingTables sums them from its own evaluations there), so that the
// law's values do not depend on which was first.
func (l NodeLifetime) seedCalendar(alive, dead float64) {
	if l.lz == nil {
		return
	}
	l.lz.calOnce.Do(func() { l.lz.calAlive, l.lz.calDead = alive, dead })
}

// Warnings returns the environment's warnings (temperatures outside the
// cell's rated range), one line each.
func (l NodeLifetime) Warnings() []string {
	if l.n == nil {
		return nil
	}
	return append([]string(nil), l.n.warnings...)
}

// CDF returns P(lifetime <= t), t in s; 0 for t < 0, 1 from the calendar
// limit on; NaN for NaN t.
func (l NodeLifetime) CDF(t float64) float64 {
	switch {
	case l.n == nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 0
	case t >= l.n.calendar:
		return 1
	}
	_, d, _ := l.energyAt(t)
	return min(1, max(0, d))
}

// Survival returns P(lifetime > t), computed directly; 1 for t <= 0, 0 from
// the calendar limit on.
func (l NodeLifetime) Survival(t float64) float64 {
	switch {
	case l.n == nil || math.IsNaN(t):
		return math.NaN()
	case t <= 0:
		return 1
	case t >= l.n.calendar:
		return 0
	}
	a, _, _ := l.energyAt(t)
	return min(1, max(0, a))
}

// Quantile returns inf{t : CDF(t) >= p}; the calendar limit when p is
// above the energy's share before it. NaN outside [0, 1].
func (l NodeLifetime) Quantile(p float64) float64 {
	switch {
	case l.n == nil || !(p >= 0 && p <= 1):
		return math.NaN()
	case p == 0:
		return 0
	case p == 1:
		return l.n.calendar
	}
	if !math.IsInf(l.n.calendar, 1) && p > l.CDFBeforeCalendar() {
		return l.n.calendar
	}
	return l.energyQuantile(p, false)
}

// UpperQuantile returns inf{t : Survival(t) <= q}, accurate for tiny q.
func (l NodeLifetime) UpperQuantile(q float64) float64 {
	switch {
	case l.n == nil || !(q >= 0 && q <= 1):
		return math.NaN()
	case q == 1:
		return 0
	case q == 0:
		return l.n.calendar
	}
	if !math.IsInf(l.n.calendar, 1) && q < l.survivalAtCalendar() {
		return l.n.calendar
	}
	return l.energyQuantile(q, true)
}

// CDFBeforeCalendar returns P(the energy runs out before the calendar
// limit), the CDF just below it.
func (l NodeLifetime) CDFBeforeCalendar() float64 { return l.EnergyBinds() }

func (l NodeLifetime) survivalAtCalendar() float64 {
	a, _ := l.atCalendar()
	return a
}

// energyQuantile solves P(run out by t) = p (upper: P(energy left at t) =
// p) for t, ignoring the calendar: bracketing by doubling from the nominal
// lifetime, then bisection with secant steps on the probit of the smaller
// tail, to a relative precision of 1e-12 in t.
func (l NodeLifetime) energyQuantile(p float64, upper bool) float64 {
	return l.energyQuantileTol(p, upper, 1e-12)
}

// energyQuantileTol is energyQuantile to the relative precision tol in t.
func (l NodeLifetime) energyQuantileTol(p float64, upper bool, tol float64) float64 {
	std := dist.MustNormal(0, 1)
	target := std.Quantile(p)
	if upper {
		target = std.UpperQuantile(p)
	}
	// z(t): probit of P(run out by t), from the smaller tail.
	z := func(t float64) float64 {
		a, d, _ := l.energyAt(t)
		if d <= 0.5 {
			return std.Quantile(max(0, d))
		}
		return std.UpperQuantile(max(0, a))
	}
	guess := l.nominalLife()
	if !(guess > 0) || math.IsInf(guess, 0) {
		guess = Year
	}
	lo, hi := guess, guess
	zlo, zhi := z(lo), z(hi)
	for i := 0; zlo > target && i < 200; i++ {
		hi, zhi = lo, zlo
		lo /= 2
		zlo = z(lo)
	}
	for i := 0; zhi < target && i < 200; i++ {
		lo, zlo = hi, zhi
		hi *= 2
		zhi = z(hi)
	}
	if !(zlo <= target && zhi >= target) {
		if zhi < target {
			return math.Inf(1)
		}
		return lo
	}
	for range 200 {
		if hi-lo <= tol*hi {
			break
		}
		mid := 0.5 * (lo + hi)
		if !math.IsInf(zlo, 0) && !math.IsInf(zhi, 0) && zhi > zlo {
			s := lo + (target-zlo)*(hi-lo)/(zhi-zlo)
			// Keep the secant point well inside the bracket.
			if s > lo+0.01*(hi-lo) && s < hi-0.01*(hi-lo) {
				mid = s
			}
		}
		zm := z(mid)
		if zm >= target {
			hi, zhi = mid, zm
		} else {
			lo, zlo = mid, zm
		}
	}
	return hi
}

// nominalLife returns the lifetime of the mean node of the heaviest-weight
// setting, from the mean energy rates (s): a starting point for searches.
func (l NodeLifetime) nominalLife() float64 {
	n := l.n
	best := 0
	for j := range n.settings {
		if n.settings[j].w > n.settings[best].w {
			best = j
		}
	}
	return n.settingLife(best)
}

// Mean returns the mean lifetime (s): ∫ Survival over [0, calendar limit)
// by adaptive quadrature, computed on first use.
func (l NodeLifetime) Mean() float64 {
	if l.n == nil {
		return math.NaN()
	}
	l.moments()
	return l.lz.mean
}

// Variance returns the variance of the lifetime (s²): 2∫ t·Survival(t) dt
// − Mean², computed on first use.
func (l NodeLifetime) Variance() float64 {
	if l.n == nil {
		return math.NaN()
	}
	l.moments()
	return l.lz.vari
}

func (l NodeLifetime) moments() {
	l.lz.once.Do(func() {
		hi := l.n.calendar
		if math.IsInf(hi, 1) {
			hi = l.energyQuantile(1e-17, true)
		}
		lo := l.energyQuantile(1e-17, false)
		if !(lo < hi) {
			lo = 0
		}
		brk := []float64{}
		for _, p := range []float64{1e-6, 0.01, 0.1, 0.5, 0.9, 0.99, 1 - 1e-6} {
			if t := l.Quantile(p); t > lo && t < hi {
				brk = append(brk, t)
			}
		}
		brk = sortedUnique(brk)
		m, em := integratePiecesTol(func(t float64) float64 { return l.Survival(t) }, lo, hi, brk, 1e-11)
		m += lo
		s2, es := integratePiecesTol(func(t float64) float64 { return 2 * t * l.Survival(t) }, lo, hi, brk, 1e-11)
		s2 += lo * lo
		l.lz.mean = m
		l.lz.vari = max(0, s2-m*m)
		l.lz.momErr = em + es/(2*max(m, 1))
	})
}

// Support returns [0, calendar limit] (the upper end +Inf without one).
func (l NodeLifetime) Support() (lo, hi float64) {
	if l.n == nil {
		return math.NaN(), math.NaN()
	}
	return 0, l.n.calendar
}

// Atoms returns the atom at the calendar limit (the share of nodes whose
// energy outlasts it), or none.
func (l NodeLifetime) Atoms() []dist.Atom {
	if l.n == nil || math.IsInf(l.n.calendar, 1) {
		return nil
	}
	if m := l.survivalAtCalendar(); m > 0 {
		return []dist.Atom{{Value: l.n.calendar, Mass: m}}
	}
	return nil
}

// Rand draws a lifetime by inverting a uniform from r.
func (l NodeLifetime) Rand(r *rand.Rand) float64 {
	if l.n == nil {
		return math.NaN()
	}
	u := r.Float64()
	if u < 0.5 {
		return l.Quantile(u)
	}
	return l.UpperQuantile(1 - u)
}

// String summarises the law in years.
func (l NodeLifetime) String() string {
	if l.n == nil {
		return "NodeLifetime(invalid)"
	}
	cal := "none"
	if !math.IsInf(l.n.calendar, 1) {
		cal = fmt.Sprintf("%.4g y", Years(l.n.calendar))
	}
	return fmt.Sprintf("NodeLifetime(median=%.4g y, 5–95%%=[%.4g, %.4g] y, calendar limit %s)",
		Years(l.Quantile(0.5)), Years(l.Quantile(0.05)), Years(l.Quantile(0.95)), cal)
}

// sortedUnique sorts x in place (slices.Sort, O(n log n)) and returns its
// distinct values in ascending order, in x's storage; NaNs are dropped
// (they have no place in an order).
func sortedUnique(x []float64) []float64 {
	out := x[:0]
	for _, v := range x {
		if !math.IsNaN(v) {
			out = append(out, v)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}
