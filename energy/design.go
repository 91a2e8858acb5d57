package energy

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/internal/workers"
	"github.com/joulelaw/joulelaw/orderstat"
)

// Caps on a design search.
const (
	// MaxDesignChoices caps the discrete choices of a DesignSpace (the
	// product of its list lengths).
	MaxDesignChoices = 4096
	// MaxDesignEvaluations caps the candidates built for one discrete
	// choice: a geometric bisection to DefaultDesignTolerance over six
	// decades of intervals takes about 15.
	MaxDesignEvaluations = 200
	// DefaultDesignTolerance is the relative width to which the interval
	// is bracketed when DesignSpace.Tolerance is 0.
	DefaultDesignTolerance = 1e-3
	// MinDesignTolerance is the smallest DesignSpace.Tolerance accepted.
	MinDesignTolerance = 1e-9
)

// Link is how a node sends an uplink: confirmed (the network acknowledges
// it and the node retransmits until it does) or not, and the most
// transmissions of one uplink (LoRaWAN's NbTrans for unconfirmed uplinks,
// the retransmission limit for confirmed ones).
type Link struct {
	Confirmed     bool
	Transmissions int // >= 1
}

// String reads like "confirmed, up to 4 transmissions".
func (l Link) String() string {
	kind := "unconfirmed"
	if l.Confirmed {
		kind = "confirmed"
	}
	if l.Transmissions == 1 {
		return kind + ", 1 transmission"
	}
	return fmt.Sprintf("%s, up to %d transmissions", kind, l.Transmissions)
}

// DesignSpace is what a design search may choose: the reading interval, a
// continuous variable searched in [MinInterval, MaxInterval], and one
// entry of each list. The lists name the alternatives; the Builder gives
// them their meaning. Every list needs at least one entry, and the number
// of combinations (the product of the lengths) is at most
// MaxDesignChoices.
type DesignSpace struct {
	MinInterval float64 // s, the shortest reading interval considered, > 0
	MaxInterval float64 // s, the longest, >= MinInterval and finite

	Cells   []string // the cells to choose among (names)
	Links   []Link   // confirmed or not, and the transmissions per uplink
	Batches []int    // readings sent per uplink (the payload grows with them), each >= 1
	Windows []string // receive-window settings to choose among (names)

	// Tolerance is the relative width to which the shortest feasible
	// interval is bracketed, in [MinDesignTolerance, 0.5]; 0 means
	// DefaultDesignTolerance.
	Tolerance float64
}

// DesignChoice is one point of a DesignSpace.
type DesignChoice struct {
	Interval float64 // s between readings; an uplink every Batch·Interval s
	Cell     int     // index into DesignSpace.Cells
	Link     Link
	Batch    int // readings per uplink
	Window   int // index into DesignSpace.Windows
}

// UplinkPeriod returns the time (s) between uplinks: Batch·Interval.
func (c DesignChoice) UplinkPeriod() float64 { return float64(c.Batch) * c.Interval }

// Candidate is what a Builder makes of a DesignChoice.
type Candidate struct {
	Node NodeSpec // the nodes' description at the choice
	// MinInterval is the shortest reading interval (s) the radio's rules
	// allow for this choice (a duty-cycle limit, divided by Batch); 0 for
	// none, +Inf when no interval is allowed (an uplink that breaks a
	// dwell time, say). It may depend on everything but the interval.
	MinInterval float64
}

// Builder makes the model of a choice. It must be safe to call from
// several goroutines at once, and a longer interval must not shorten a
// node's life (the search bisects on that).
type Builder func(DesignChoice) (Candidate, error)

// DesignProblem is a design search: the space, the target, the group and
// the site's climate and shared factors, and the model builder.
type DesignProblem struct {
	Space   DesignSpace
	Target  Target
	Count   int64        // the group's nodes, for GroupFlat; in [1, orderstat.MaxCount] (ignored by the node targets)
	Climate *Climate     // the site's year of temperature; nil for the reference temperature
	Shared  SharedSpread // the shared factors
	// Rule is the rule over the shared factors that each candidate's node
	// law is mixed over; the zero value means FixedSharedRule(Shared).
	// Given a Site's (Site.SharedRule), the search evaluates a candidate
	// as that Site evaluates its groups (fleetplan passes its plan's), and
	// Shared is then only checked.
	Rule  SharedRule
	Build Builder
}

// rule returns the rule over the shared factors the search uses.
func (p DesignProblem) rule() SharedRule {
	if p.Rule.Len() > 0 {
		return p.Rule
	}
	return fixedSharedRule(p.Shared)
}

// Binding says what sets a design's answer.
type Binding string

// What can bind.
const (
	BindEnergy    Binding = "energy"         // the battery: the interval is as short as the energy allows
	BindCalendar  Binding = "calendar"       // the cell's calendar limit comes before the target date
	BindDutyCycle Binding = "duty cycle"     // the radio rules forbid a shorter interval
	BindRange     Binding = "interval range" // the shortest interval searched already meets the target
)

// DesignResult is the answer for one discrete choice.
type DesignResult struct {
	Choice   DesignChoice // with the interval found (or, when infeasible, the one of the best achievable figure)
	Feasible bool
	// Figure is the achieved figure at Choice.Interval: the probability p
	// (NodeFlat, GroupFlat) or the Level-quantile of a node's lifetime in s
	// (NodeQuantile).
	Figure float64
	// Margin is how far the figure is inside the target: Level − p, or
	// the quantile − Date in s; negative when the energy or the calendar
	// binds an infeasible choice (a choice whose every interval the duty
	// cycle forbids may show a positive margin at MaxInterval).
	Margin float64
	// Probability is p = P(flat by Date) (of a node, or of any node for
	// GroupFlat) at Choice.Interval, and ProbabilityError its stated
	// error (see the search).
	Probability      float64
	ProbabilityError float64
	// IntervalLow is the largest interval (s) found where even p −
	// ProbabilityError exceeds the level: the shortest feasible interval
	// lies in (IntervalLow, Choice.Interval] whatever the numerical error
	// within its statement. Equal to Choice.Interval when the range's end
	// or the duty cycle binds; 0 when infeasible.
	IntervalLow float64
	Binds       Binding
	Builds      int // candidates built
}

// Design is the answer of a search: one result per discrete choice, in the
// order cells, links, batches, windows (the last varying fastest), and the
// best of them.
type Design struct {
	Target  Target
	Results []DesignResult
	// Best indexes the feasible result with the shortest interval (ties,
	// within the tolerance, to the larger margin); when none is feasible,
	// the result whose figure comes nearest the target, and Feasible is
	// false.
	Best     int
	Feasible bool
}

// SearchDesign finds, for every discrete choice of p.Space, the shortest
// reading interval that meets p.Target, and the best choice.
//
// The figure p(I) falls as the interval I grows (a node spends less). The
// search builds the candidate at I, its node law at each node of the rule
// over the shared factors (p.Rule: a Site's own, so that the search and
// the Site agree; or the fixed Gauss–Hermite rule over p.Shared) and p
// with its stated error ε (NodeLifetime's CDF error probed at the date,
// propagated for a group; see TargetKind), and takes a choice as meeting
// the target only when p + ε <= Level: the interval returned meets the
// target whenever the stated error holds. While it bisects on p alone it
// builds the nodes' laws one by one, the one that narrows the bounds on p
// most first, and stops as soon as the bounds decide p <= Level (a node's
// life shortens as its batch factor falls, so the laws built bound the
// others of the same temperature offset): most candidates far from the
// answer take a few laws; the decisions, and so the answer, are those of
// the full p. It evaluates the shortest allowed interval (the larger of
// Space.MinInterval and the candidate's MinInterval) and Space.MaxInterval,
// then bisects geometrically (√(lo·hi)) on p alone until hi/lo − 1 <=
// Tolerance, asking for ε only where it decides: at the ends found (going
// on with p + ε from there when ε moves the answer), at the shortest
// interval when p alone meets the level there, and at the longest when the
// choice is infeasible or ε moves the answer. (Regula falsi on the probit
// of p was tried: p is a mixture over the settings, a staircase of smooth
// steps, nearly flat at a level that falls on a step's plateau, and the
// secant saved nothing.) The
// shortest truly feasible interval lies in (IntervalLow, Interval]:
// IntervalLow is bracketed the same way on p − ε > Level, reusing the
// evaluations (usually none more: ε moves the interval far less than the
// tolerance). The calendar limit binds when it comes before the date.
//
// An infeasible choice is not an error: it is reported with the figure at
// MaxInterval (the best achievable) and what binds (energy, calendar, duty
// cycle). Choices are searched on two goroutines; the result does not
// depend on the schedule. Errors: bad space, target or count, a nil
// builder, or a builder's error (wrapping ErrParam).
func SearchDesign(p DesignProblem) (Design, error) {
	const fn = "SearchDesign"
	choices, tol, err := p.check(fn)
	if err != nil {
		return Design{}, err
	}
	d := Design{Target: p.Target, Results: make([]DesignResult, len(choices))}
	months := &monthCache{}
	rule := p.rule()
	err = forEachOnTwo(len(choices), func(i int) (err error) {
		d.Results[i], err = p.searchChoice(fn, choices[i], tol, rule, months)
		return err
	})
	if err != nil {
		return Design{}, err
	}
	d.Best, d.Feasible = bestDesign(d.Results, tol)
	return d, nil
}

// forEachOnTwo runs job(0) … job(n−1) on two goroutines (the library's one
// pool, internal/workers) and returns the error of the lowest index that
// failed; each job writes only its own slot, so the outcome does not depend
// on the schedule.
func forEachOnTwo(n int, job func(i int) error) error {
	errs := make([]error, n)
	_ = workers.Run(n, 2, func(i int) error { errs[i] = job(i); return nil }, nil)
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

func (p DesignProblem) check(fn string) ([]DesignChoice, float64, error) {
	s := p.Space
	switch {
	case p.Build == nil:
		return nil, 0, paramErr(fn, "p.Build", "nil", "must be a model builder")
	case !(s.MinInterval > 0) || math.IsInf(s.MinInterval, 0):
		return nil, 0, paramErr(fn, "p.Space.MinInterval", s.MinInterval, "must be finite and > 0 (s)")
	case !(s.MaxInterval >= s.MinInterval) || math.IsInf(s.MaxInterval, 0):
		return nil, 0, paramErr(fn, "p.Space.MaxInterval", s.MaxInterval, fmt.Sprintf("must be finite and >= MinInterval %g s", s.MinInterval))
	case len(s.Cells) == 0:
		return nil, 0, paramErr(fn, "p.Space.Cells", len(s.Cells), "must name at least one cell")
	case len(s.Links) == 0:
		return nil, 0, paramErr(fn, "p.Space.Links", len(s.Links), "must hold at least one link choice")
	case len(s.Batches) == 0:
		return nil, 0, paramErr(fn, "p.Space.Batches", len(s.Batches), "must hold at least one batch size")
	case len(s.Windows) == 0:
		return nil, 0, paramErr(fn, "p.Space.Windows", len(s.Windows), "must name at least one receive-window setting")
	case s.Tolerance != 0 && !(s.Tolerance >= MinDesignTolerance && s.Tolerance <= 0.5):
		return nil, 0, paramErr(fn, "p.Space.Tolerance", s.Tolerance, fmt.Sprintf("must be 0 (default %g) or in [%g, 0.5]", DefaultDesignTolerance, MinDesignTolerance))
	case p.Target.Kind == GroupFlat && !(p.Count >= 1 && p.Count <= orderstat.MaxCount):
		return nil, 0, paramErr(fn, "p.Count", p.Count, fmt.Sprintf("must be in [1, %d] for a GroupFlat target", orderstat.MaxCount))
	}
	if err := p.Target.check(fn, "p.Target."); err != nil {
		return nil, 0, err
	}
	if err := p.Shared.check(fn); err != nil {
		return nil, 0, err
	}
	for i, l := range s.Links {
		if l.Transmissions < 1 {
			return nil, 0, paramErr(fn, fmt.Sprintf("p.Space.Links[%d].Transmissions", i), l.Transmissions, "must be >= 1")
		}
	}
	for i, b := range s.Batches {
		if b < 1 {
			return nil, 0, paramErr(fn, fmt.Sprintf("p.Space.Batches[%d]", i), b, "must be >= 1 reading per uplink")
		}
	}
	n := 1
	for _, m := range []int{len(s.Cells), len(s.Links), len(s.Batches), len(s.Windows)} {
		n *= m
		if n > MaxDesignChoices {
			return nil, 0, paramErr(fn, "p.Space", fmt.Sprintf("%d×%d×%d×%d choices", len(s.Cells), len(s.Links), len(s.Batches), len(s.Windows)),
				fmt.Sprintf("must hold at most %d combinations", MaxDesignChoices))
		}
	}
	choices := make([]DesignChoice, 0, n)
	for c := range s.Cells {
		for _, l := range s.Links {
			for _, b := range s.Batches {
				for w := range s.Windows {
					choices = append(choices, DesignChoice{Cell: c, Link: l, Batch: b, Window: w})
				}
			}
		}
	}
	tol := s.Tolerance
	if tol == 0 {
		tol = DefaultDesignTolerance
	}
	return choices, tol, nil
}

// evaluation is the target's figure at one interval: whether p meets the
// level (decided from as few laws as decide needs), p itself once every
// law is built (NaN before), and its stated error eps (NaN until asked
// for).
type evaluation struct {
	interval float64
	meets    bool
	p, eps   float64
	laws     *targetLaws
}

// searchChoice bisects one discrete choice's interval: first on p alone
// (the stated error costs as much as p), then, at the bracket found, with
// the error: when p + ε still meets the level there the bracket stands,
// otherwise the search goes on to the right with ε at every step. The
// optimistic end (p − ε) is bracketed the same way.
func (p DesignProblem) searchChoice(fn string, c DesignChoice, tol float64, rule SharedRule, months *monthCache) (DesignResult, error) {
	builds := 0
	minDuty := math.NaN()
	var evals []evaluation
	full := func(e *evaluation) (err error) {
		e.p, e.eps, err = e.laws.figure(p.Target, p.Count, true)
		e.meets = e.p <= p.Target.Level
		return err
	}
	eval := func(iv float64, withErr bool) (evaluation, error) {
		for i, e := range evals {
			if e.interval == iv {
				if withErr && math.IsNaN(e.eps) {
					if err := full(&e); err != nil {
						return evaluation{}, err
					}
					evals[i] = e
				}
				return e, nil
			}
		}
		if builds >= MaxDesignEvaluations {
			return evaluation{}, paramErr(fn, "p.Space.Tolerance", tol, fmt.Sprintf("needs more than %d candidates for one choice", MaxDesignEvaluations))
		}
		builds++
		ch := c
		ch.Interval = iv
		cand, err := p.Build(ch)
		if err != nil {
			return evaluation{}, causeErr(fn, "p.Build", fmt.Sprintf("%+v", ch), "the builder failed", err)
		}
		if !(cand.MinInterval >= 0) {
			return evaluation{}, paramErr(fn, "Candidate.MinInterval", cand.MinInterval, "must be >= 0 (s; +Inf for none allowed)")
		}
		if math.IsNaN(minDuty) {
			minDuty = cand.MinInterval
		}
		tl, err := newTargetLaws(fn, cand.Node, p.Climate, rule, months, p.Target.Date)
		if err != nil {
			return evaluation{}, err
		}
		e := evaluation{interval: iv, p: math.NaN(), eps: math.NaN(), laws: tl}
		if withErr {
			err = full(&e)
		} else {
			e.meets, err = tl.decide(p.Target, p.Count)
		}
		if err != nil {
			return evaluation{}, err
		}
		evals = append(evals, e)
		return e, nil
	}
	s := p.Space
	lev := p.Target.Level
	// The stated error at the longest interval only where it decides or is
	// reported: an infeasible choice, or a search whose answer ε moves.
	hiE, err := eval(s.MaxInterval, false)
	if err != nil {
		return DesignResult{}, err
	}
	lo := math.Max(s.MinInterval, minDuty)
	res := DesignResult{}
	infeasible := func(bind Binding) (DesignResult, error) {
		e, err := eval(s.MaxInterval, true)
		if err != nil {
			return DesignResult{}, err
		}
		if bind == BindEnergy && p.Target.Date >= e.laws.calendar {
			bind = BindCalendar
		}
		res, err := p.result(c, e, false, bind)
		res.Builds = builds
		return res, err
	}
	switch {
	case lo > s.MaxInterval:
		// The radio rules forbid every interval of the range.
		return infeasible(BindDutyCycle)
	case !hiE.meets:
		return infeasible(BindEnergy)
	}
	// The stated error at the lower end only when p alone meets the level
	// there (p > Level fails p + ε too).
	loE, err := eval(lo, false)
	if err != nil {
		return DesignResult{}, err
	}
	if loE.meets {
		if loE, err = eval(lo, true); err != nil {
			return DesignResult{}, err
		}
	}
	if loE.p+loE.eps <= lev {
		bind := BindRange
		if minDuty > s.MinInterval {
			bind = BindDutyCycle
		}
		res, err = p.result(c, loE, true, bind)
		res.IntervalLow = lo
		res.Builds = builds
		return res, err
	}
	// bisect keeps a failing and b meeting the criterion meets(e).
	bisect := func(a, b evaluation, withErr bool, meets func(evaluation) bool) (evaluation, evaluation, error) {
		for b.interval/a.interval-1 > tol {
			m, err := eval(math.Sqrt(a.interval*b.interval), withErr)
			if err != nil {
				return a, b, err
			}
			if meets(m) {
				b = m
			} else {
				a = m
			}
		}
		return a, b, nil
	}
	conservative := func(e evaluation) bool { return e.p+e.eps <= lev }
	// On p alone (p > lev fails p + ε too), then with ε.
	b := loE
	if !loE.meets {
		if _, b, err = bisect(loE, hiE, false, func(e evaluation) bool { return e.meets }); err != nil {
			return DesignResult{}, err
		}
	}
	if b, err = eval(b.interval, true); err != nil {
		return DesignResult{}, err
	}
	if !conservative(b) {
		if hiE, err = eval(s.MaxInterval, true); err != nil {
			return DesignResult{}, err
		}
		if !conservative(hiE) {
			return infeasible(BindEnergy)
		}
		if _, b, err = bisect(b, hiE, true, conservative); err != nil {
			return DesignResult{}, err
		}
	}
	// The optimistic end: the largest interval where p − ε still fails.
	oa, ob := 0.0, b.interval
	for _, e := range evals {
		if !e.meets && e.interval > oa {
			oa = e.interval
		}
		if e.meets {
			ob = math.Min(ob, e.interval)
		}
	}
	if oa > 0 {
		ea, err := eval(oa, true)
		if err != nil {
			return DesignResult{}, err
		}
		if ea.p-ea.eps <= lev {
			ob, oa = oa, 0 // p − ε meets it here: look further left
			for _, e := range evals {
				if !math.IsNaN(e.eps) && e.p-e.eps > lev && e.interval > oa {
					oa = e.interval
				}
			}
		}
	}
	if oa == 0 {
		oa = lo // (the range's lower end fails p + ε; p − ε is not known to fail there)
	} else {
		for ob/oa-1 > tol {
			m, err := eval(math.Sqrt(oa*ob), true)
			if err != nil {
				return DesignResult{}, err
			}
			if m.p-m.eps > lev {
				oa = m.interval
			} else {
				ob = m.interval
			}
		}
	}
	res, err = p.result(c, b, true, BindEnergy)
	res.IntervalLow = oa
	res.Builds = builds
	return res, err
}

// result fills the figures of the evaluation e.
func (p DesignProblem) result(c DesignChoice, e evaluation, feasible bool, bind Binding) (DesignResult, error) {
	c.Interval = e.interval
	r := DesignResult{Choice: c, Feasible: feasible, Probability: e.p, ProbabilityError: e.eps, Binds: bind}
	t := p.Target
	if t.Kind == NodeQuantile {
		r.Figure = e.laws.nodeLaw("SearchDesign").Quantile(t.Level)
		r.Margin = r.Figure - t.Date
		if math.IsNaN(r.Figure) {
			return r, paramErr("SearchDesign", "quantile", r.Figure, "the lifetime quantile is NaN")
		}
	} else {
		r.Figure = e.p
		r.Margin = t.Level - e.p
	}
	return r, nil
}

// bestDesign picks the feasible result with the shortest interval (within
// tol, the larger margin), or the infeasible one nearest the target.
func bestDesign(rs []DesignResult, tol float64) (int, bool) {
	best, feasible := -1, false
	for i, r := range rs {
		if !r.Feasible {
			continue
		}
		if !feasible {
			best, feasible = i, true
			continue
		}
		b := rs[best]
		switch {
		case r.Choice.Interval < b.Choice.Interval*(1-tol):
			best = i
		case r.Choice.Interval <= b.Choice.Interval*(1+tol) && r.Margin > b.Margin:
			best = i
		}
	}
	if feasible {
		return best, true
	}
	for i, r := range rs {
		// The probability behind every figure: the smaller, the nearer.
		if best < 0 || r.Probability < rs[best].Probability {
			best = i
		}
	}
	return best, false
}
