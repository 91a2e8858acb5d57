package energy

import (
	"cmp"
	"fmt"
	"math"
	"slices"

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
	// as that Site evaluates its groups, and Shared is then only checked;
	// given Site.GroupRule (fleetplan passes its plan's for each group),
	// the stated error includes the rule's estimated error too. The fixed
	// rule and Site.SharedRule state none of their own (RuleError 0).
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
	// error (see the search): the node laws' and, with a rule from
	// Site.GroupRule, the shared rule's (RuleError, a part of it; 0 for a
	// rule without an estimate, such as FixedSharedRule's).
	Probability      float64
	ProbabilityError float64
	RuleError        float64
	// IntervalLow is an interval (s) where even p − ProbabilityError
	// exceeds the level: the shortest feasible interval lies in
	// (IntervalLow, Choice.Interval] whatever the numerical error within
	// its statement. For the best choice (Design.Best) it is bracketed to
	// the tolerance; for the others it is the longest interval their
	// search evaluated where p − ε fails (see SearchDesign). Equal to
	// Choice.Interval when the range's end or the duty cycle binds; 0 when
	// infeasible.
	IntervalLow float64
	lowMeets    float64 // s: the shortest interval the search found to meet p − ε <= Level (refineLow)
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
// with its stated error ε: the node laws' (NodeLifetime's CDF error probed
// at the date, propagated for a group; see TargetKind) plus, with a rule
// from Site.GroupRule, the rule's estimated error for the candidate's own
// laws (the Site's probe on their probits at the rule's nodes: the
// mixture against a finer rule interpolated from them). It takes a choice
// as meeting the target only when p + ε <= Level: the interval returned
// meets the target whenever the stated error holds. While it bisects on p
// alone it builds the nodes' laws one by one, the one that narrows the
// bounds on p most first, and stops as soon as the bounds decide p <=
// Level (a node's life shortens as its batch factor falls, so the laws
// built bound the others of the same temperature offset): most candidates
// far from the answer take a few laws; the decisions, and so the answer,
// are those of the full p. It evaluates the shortest allowed interval (the
// larger of Space.MinInterval and the candidate's MinInterval) and
// Space.MaxInterval, then bisects geometrically (√(lo·hi)) on p alone
// until hi/lo − 1 <= Tolerance. At the end found it asks for ε (the rule's
// part comes with p; the node laws' part, which costs about as much as p,
// only where the rule's alone does not decide): when p + ε meets the level
// there the bracket stands, otherwise the search gallops to the right
// (steps of the tolerance, doubled each time, with ε at each) to the first
// interval that meets p + ε, and bisects back to the tolerance; a choice
// whose longest interval fails p + ε is infeasible. (Regula falsi on the
// probit of p was tried: p is a mixture over the settings, a staircase of
// smooth steps, nearly flat at a level that falls on a step's plateau, and
// the secant saved nothing.) The shortest truly feasible interval lies in
// (IntervalLow, Interval]: IntervalLow is the longest interval evaluated
// where p − ε still exceeds the level, tried among the intervals where p
// alone fails, from the longest down (on the demo 0.5 to 10 % below the
// interval found), and for the best choice alone bracketed on from there
// to the tolerance (each step costs the node laws' error). The calendar
// limit binds when it comes before the date.
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
	// The best choice's optimistic end to the tolerance (the others' are
	// the longest interval their search evaluated where p − ε fails).
	if err := p.refineLow(fn, &d.Results[d.Best], tol, rule, months); err != nil {
		return Design{}, err
	}
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
	case p.Target.Kind == GroupFlat && p.Rule.site != nil && p.Count != p.Rule.groupCount():
		return nil, 0, paramErr(fn, "p.Count", p.Count, fmt.Sprintf("must be the rule's group's count in its Site (%d) for a GroupFlat target: the rule's error is estimated for that count", p.Rule.groupCount()))
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
// level (decided from as few laws as decide needs), p itself and the
// shared rule's estimated error for it once every law is built (NaN
// before), and the node laws' stated error (NaN until asked for: it costs
// about as much as the rest).
type evaluation struct {
	interval float64
	meets    bool
	p, ruleE float64
	nodeE    float64
	laws     *targetLaws
}

// eps returns the stated error of p: the node laws' and the rule's.
func (e *evaluation) eps() float64 { return e.nodeE + e.ruleE }

// What an evaluation is asked for.
const (
	needDecide = iota // whether p <= Level
	needP             // p and the rule's error
	needErr           // and the node laws' error
)

// choiceSearch is the state of one discrete choice's search: its
// candidates' evaluations, by interval. Not safe for concurrent use: each
// belongs to one search goroutine.
type choiceSearch struct {
	p       DesignProblem
	fn      string
	c       DesignChoice
	tol     float64
	rule    SharedRule
	months  *monthCache
	builds  int
	minDuty float64 // s: the first candidate's MinInterval (NaN before)
	evals   []*evaluation
}

func (p DesignProblem) newChoiceSearch(fn string, c DesignChoice, tol float64, rule SharedRule, months *monthCache) *choiceSearch {
	return &choiceSearch{p: p, fn: fn, c: c, tol: tol, rule: rule, months: months, minDuty: math.NaN()}
}

// upgrade computes what need asks of e and e does not hold yet.
func (cs *choiceSearch) upgrade(e *evaluation, need int) error {
	p := cs.p
	if need >= needP && math.IsNaN(e.p) {
		pr, err := e.laws.prob(p.Target, p.Count)
		if err != nil {
			return err
		}
		e.p, e.ruleE = pr, e.laws.ruleError(p.Target)
		e.meets = e.p <= p.Target.Level
	}
	if need >= needErr && math.IsNaN(e.nodeE) {
		e.nodeE = e.laws.nodeError(p.Target, p.Count)
	}
	return nil
}

// eval returns the evaluation at the interval iv (s), building the
// candidate the first time, with what need asks.
func (cs *choiceSearch) eval(iv float64, need int) (*evaluation, error) {
	for _, e := range cs.evals {
		if e.interval == iv {
			return e, cs.upgrade(e, need)
		}
	}
	p, fn := cs.p, cs.fn
	if cs.builds >= MaxDesignEvaluations {
		return nil, paramErr(fn, "p.Space.Tolerance", cs.tol, fmt.Sprintf("needs more than %d candidates for one choice", MaxDesignEvaluations))
	}
	cs.builds++
	ch := cs.c
	ch.Interval = iv
	cand, err := p.Build(ch)
	if err != nil {
		return nil, causeErr(fn, "p.Build", fmt.Sprintf("%+v", ch), "the builder failed", err)
	}
	if !(cand.MinInterval >= 0) {
		return nil, paramErr(fn, "Candidate.MinInterval", cand.MinInterval, "must be >= 0 (s; +Inf for none allowed)")
	}
	if math.IsNaN(cs.minDuty) {
		cs.minDuty = cand.MinInterval
	}
	tl, err := newTargetLaws(fn, cand.Node, p.Climate, cs.rule, cs.months, p.Target.Date)
	if err != nil {
		return nil, err
	}
	e := &evaluation{interval: iv, p: math.NaN(), ruleE: math.NaN(), nodeE: math.NaN(), laws: tl}
	if need == needDecide {
		// The choice's other candidates bound this one's laws (a longer
		// interval does not shorten a node's life).
		for _, o := range cs.evals {
			if o.interval > iv {
				tl.longer = append(tl.longer, o.laws)
			} else {
				tl.shorter = append(tl.shorter, o.laws)
			}
		}
		e.meets, err = tl.decide(p.Target, p.Count)
		tl.longer, tl.shorter = nil, nil
		if err != nil {
			return nil, err
		}
	} else if err := cs.upgrade(e, need); err != nil {
		return nil, err
	}
	cs.evals = append(cs.evals, e)
	return e, nil
}

// conservative tells whether p + ε <= Level, fails whether p − ε > Level
// (the optimistic end); each asks for the node laws' error only where the
// rule's alone does not decide.
func (cs *choiceSearch) conservative(e *evaluation) (bool, error) {
	lev := cs.p.Target.Level
	if err := cs.upgrade(e, needP); err != nil || e.p+e.ruleE > lev {
		return false, err
	}
	err := cs.upgrade(e, needErr)
	return e.p+e.eps() <= lev, err
}

func (cs *choiceSearch) fails(e *evaluation) (bool, error) {
	lev := cs.p.Target.Level
	if err := cs.upgrade(e, needP); err != nil || e.p-e.ruleE <= lev {
		return false, err
	}
	err := cs.upgrade(e, needErr)
	return e.p-e.eps() > lev, err
}

// bisect keeps a failing and b meeting the criterion meets(e), evaluating
// the geometric midpoints as need asks, until b/a − 1 <= the tolerance.
func (cs *choiceSearch) bisect(a, b *evaluation, need int, meets func(*evaluation) (bool, error)) (*evaluation, *evaluation, error) {
	for b.interval/a.interval-1 > cs.tol {
		m, err := cs.eval(math.Sqrt(a.interval*b.interval), need)
		if err != nil {
			return a, b, err
		}
		ok, err := meets(m)
		if err != nil {
			return a, b, err
		}
		if ok {
			b = m
		} else {
			a = m
		}
	}
	return a, b, nil
}

// searchChoice bisects one discrete choice's interval: first on p alone
// (the stated error costs as much as p), then, at the bracket found, with
// the error: when p + ε still meets the level there the bracket stands,
// otherwise the search gallops on to the right with ε at every step. The
// rule's part of ε comes with p; the node laws' part is asked for only
// where the rule's alone does not decide (p + ε_rule > Level fails
// p + ε; p − ε_rule <= Level fails p − ε > Level). The optimistic end
// (p − ε) is the longest interval evaluated where p − ε still fails
// (refineLow brackets it further for the best choice).
func (p DesignProblem) searchChoice(fn string, c DesignChoice, tol float64, rule SharedRule, months *monthCache) (DesignResult, error) {
	cs := p.newChoiceSearch(fn, c, tol, rule, months)
	decided := func(e *evaluation) (bool, error) { return e.meets, nil }
	s := p.Space
	// The stated error at the longest interval only where it decides or is
	// reported: an infeasible choice, or a search whose answer ε moves.
	hiE, err := cs.eval(s.MaxInterval, needDecide)
	if err != nil {
		return DesignResult{}, err
	}
	lo := max(s.MinInterval, cs.minDuty)
	infeasible := func(bind Binding) (DesignResult, error) {
		e, err := cs.eval(s.MaxInterval, needErr)
		if err != nil {
			return DesignResult{}, err
		}
		if bind == BindEnergy && p.Target.Date >= e.laws.calendar {
			bind = BindCalendar
		}
		res, err := p.result(c, e, false, bind)
		res.Builds = cs.builds
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
	loE, err := cs.eval(lo, needDecide)
	if err != nil {
		return DesignResult{}, err
	}
	if loE.meets {
		ok, err := cs.conservative(loE)
		if err != nil {
			return DesignResult{}, err
		}
		if ok {
			bind := BindRange
			if cs.minDuty > s.MinInterval {
				bind = BindDutyCycle
			}
			res, err := p.result(c, loE, true, bind)
			res.IntervalLow = lo
			res.Builds = cs.builds
			return res, err
		}
	}
	// On p alone (p > Level fails p + ε too), then with ε.
	b := loE
	if !loE.meets {
		if _, b, err = cs.bisect(loE, hiE, needDecide, decided); err != nil {
			return DesignResult{}, err
		}
	}
	ok, err := cs.conservative(b)
	if err != nil {
		return DesignResult{}, err
	}
	if !ok {
		// ε moves the answer to the right, usually by less than the
		// tolerance: gallop from b in steps of the tolerance, doubled each
		// time, to the first interval that meets p + ε (infeasible when
		// not even the longest does), then bisect back.
		a, step := b, math.Log1p(tol)
		for {
			m, err := cs.eval(min(s.MaxInterval, a.interval*math.Exp(step)), needP)
			if err != nil {
				return DesignResult{}, err
			}
			if ok, err = cs.conservative(m); err != nil {
				return DesignResult{}, err
			}
			if ok {
				b = m
				break
			}
			if m.interval >= s.MaxInterval {
				return infeasible(BindEnergy)
			}
			a, step = m, 2*step
		}
		if _, b, err = cs.bisect(a, b, needP, cs.conservative); err != nil {
			return DesignResult{}, err
		}
	}
	if err := cs.upgrade(b, needErr); err != nil {
		return DesignResult{}, err
	}
	// The optimistic end: the longest interval evaluated where p − ε still
	// fails, tried from the longest where p alone fails, leftwards; the
	// shortest known to meet p − ε <= Level is kept for refineLow.
	var failing []*evaluation
	lowMeets := b.interval
	for _, e := range cs.evals {
		if e.meets {
			lowMeets = min(lowMeets, e.interval)
		} else {
			failing = append(failing, e)
		}
	}
	slices.SortFunc(failing, func(x, y *evaluation) int { return cmp.Compare(y.interval, x.interval) })
	low := lo // (the range's lower end fails p + ε; p − ε is not known to fail there)
	for _, e := range failing {
		ok, err := cs.fails(e)
		if err != nil {
			return DesignResult{}, err
		}
		if ok {
			low = e.interval
			break
		}
		lowMeets = min(lowMeets, e.interval)
	}
	res, err := p.result(c, b, true, BindEnergy)
	res.IntervalLow, res.lowMeets = low, lowMeets
	res.Builds = cs.builds
	return res, err
}

// refineLow brackets r's IntervalLow to the tolerance: geometric
// bisection between it (where p − ε fails) and r.lowMeets (where it
// meets) on p − ε > Level, with fresh candidates (the search's own are
// gone). Nothing to do for a result whose bracket is within the tolerance
// already, or whose IntervalLow is the range's lower end.
func (p DesignProblem) refineLow(fn string, r *DesignResult, tol float64, rule SharedRule, months *monthCache) error {
	if !r.Feasible || r.Binds != BindEnergy || !(r.IntervalLow > 0) || !(r.lowMeets/r.IntervalLow-1 > tol) {
		return nil
	}
	cs := p.newChoiceSearch(fn, r.Choice, tol, rule, months)
	a, b := &evaluation{interval: r.IntervalLow}, &evaluation{interval: r.lowMeets}
	a, _, err := cs.bisect(a, b, needP, func(e *evaluation) (bool, error) {
		f, err := cs.fails(e)
		return !f, err
	})
	if err != nil {
		return err
	}
	r.IntervalLow = a.interval
	r.Builds += cs.builds
	return nil
}

// result fills the figures of the evaluation e (its errors asked for).
func (p DesignProblem) result(c DesignChoice, e *evaluation, feasible bool, bind Binding) (DesignResult, error) {
	c.Interval = e.interval
	r := DesignResult{Choice: c, Feasible: feasible, Probability: e.p, ProbabilityError: e.eps(), RuleError: e.ruleE, Binds: bind}
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
