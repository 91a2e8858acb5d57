package fleet

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/workers"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// DesignPlan is the "what it takes" section: for each group the choice of
// the scenario's design section that meets its target with the shortest
// reading interval, and the replacement policies compared. Nil when the
// scenario has no design section.
type DesignPlan struct {
	Target      string        `json:"target"` // in words
	TargetKind  string        `json:"target_kind"`
	TargetYears float64       `json:"target_years"`
	TargetLevel float64       `json:"target_level"`
	Groups      []GroupDesign `json:"groups"`
	Policies    PolicyPlan    `json:"replacement_policies"`
	QuantileQ   [2]float64    `json:"quantile_levels"` // the levels of QuantileRow's columns
	Notes       []string      `json:"notes"`
}

// GroupDesign is one group's answer.
type GroupDesign struct {
	Name              string  `json:"name"`
	Feasible          bool    `json:"feasible"`
	Cell              string  `json:"cell"`
	Confirmed         bool    `json:"confirmed"`
	MaxTransmissions  int     `json:"max_transmissions"`
	ReadingsPerUplink int     `json:"readings_per_uplink"`
	Window            string  `json:"receive_window"`
	ReadingIntervalS  float64 `json:"reading_interval_s"`
	// IntervalLowS: the shortest feasible interval lies in
	// (interval_low_s, reading_interval_s] whatever the stated error.
	IntervalLowS    float64 `json:"interval_low_s"`
	UplinkIntervalS float64 `json:"uplink_interval_s"`
	// Achieved is the probability (the flat-by targets) or the quantile in
	// years (lifetime_quantile) at the interval; Margin is how far inside
	// the target it is (negative when infeasible), in the same unit.
	Achieved    float64 `json:"achieved"`
	Margin      float64 `json:"margin"`
	Probability float64 `json:"probability_flat_by_date"`
	// ProbError is the probability's stated error: the node laws' and the
	// shared rule's (RuleError, a part of it).
	ProbError float64 `json:"probability_error"`
	RuleError float64 `json:"probability_rule_error"`
	Binds     string  `json:"binds"`
	// CurrentIntervalS is the group's reporting interval in the scenario.
	CurrentIntervalS float64         `json:"scenario_interval_s"`
	Choices          []ChoiceSummary `json:"choices"`
	Quantiles        []QuantileRow   `json:"lifetime_quantiles_by_interval"`
}

// ChoiceSummary is one discrete choice's answer.
type ChoiceSummary struct {
	Choice           string  `json:"choice"`
	Feasible         bool    `json:"feasible"`
	ReadingIntervalS float64 `json:"reading_interval_s"`
	Probability      float64 `json:"probability_flat_by_date"`
	Binds            string  `json:"binds"`
}

// QuantileRow is a node's lifetime quantiles (years) at one reading
// interval of the group's best choice (the levels in DesignPlan.QuantileQ).
type QuantileRow struct {
	IntervalS float64    `json:"reading_interval_s"`
	Years     [2]float64 `json:"years"`
	Meets     bool       `json:"meets_target"`
}

// PolicyPlan is the replacement policies compared over the horizon.
type PolicyPlan struct {
	// OutOfReach is, per group, the share of its nodes expected out of
	// reach and how many that is: the plan leaves them to commissioning
	// (found unheard, moved or given a gateway) and serves every node as
	// in reach.
	OutOfReach   []OutOfReachRow `json:"out_of_reach"`
	HorizonYears float64         `json:"horizon_years"`
	Risk         float64         `json:"acceptable_risk"`
	CostVisit    float64         `json:"cost_per_visit"`
	CostCell     float64         `json:"cost_per_cell"`
	Rows         []PolicyRow     `json:"policies"`
	Cheapest     int             `json:"cheapest"` // index into Rows
	Feasible     bool            `json:"cheapest_meets_risk"`
}

// OutOfReachRow is a group's expected out-of-reach nodes.
type OutOfReachRow struct {
	Group         string  `json:"group"`
	Nodes         int     `json:"nodes"`
	Share         float64 `json:"share"`
	ExpectedNodes float64 `json:"expected_nodes"`
}

// PolicyRow is one policy's outcome; the bands are the mean and the
// central 90 % interval.
type PolicyRow struct {
	Policy          string      `json:"policy"`
	PeriodsYears    []float64   `json:"periods_years"` // per group; 0: not scheduled
	OnFailure       bool        `json:"replace_on_failure"`
	VisitsPerYear   energy.Band `json:"visits_per_year"`
	CellsPerYear    energy.Band `json:"cells_per_year"`
	FailuresPerYear energy.Band `json:"failures_per_year"`
	AnyFlat         float64     `json:"probability_any_flat"`
	AnyFlatError    float64     `json:"probability_any_flat_error"` // the node laws' and the shared rule's
	RuleError       float64     `json:"probability_any_flat_rule_error"`
	Cost            energy.Band `json:"cost"`
}

var targetKindNames = map[energy.TargetKind]string{
	energy.NodeFlat: "node_flat_by", energy.NodeQuantile: "lifetime_quantile", energy.GroupFlat: "any_in_group_flat_by",
}

// DesignTolerance is the relative width to which the search brackets each
// interval.
const DesignTolerance = 0.01

// designQuantileRows is how many intervals the quantile table shows.
const designQuantileRows = 7

// WhatItTakes is BuildDesign on the plan's site, or an error when
// the scenario has no design section.
func WhatItTakes(s scenario.Scenario, p *Plan, say Progress) (*DesignPlan, error) {
	if s.Design == nil {
		return nil, fmt.Errorf("-what-it-takes: the scenario has no design section (see radio/lora/scenario/FORMAT.md, \"What it takes\")")
	}
	say("what it takes: the design search per group and the replacement policies")
	return BuildDesign(s, p.Laws.Laws, say)
}

// BuildDesign computes the "what it takes" section of a scenario with a
// design section (nil otherwise): SearchDesign per group and the policy
// comparison on the planned site.
func BuildDesign(s scenario.Scenario, laws scenario.Laws, say Progress) (*DesignPlan, error) {
	d := s.Design
	if d == nil {
		return nil, nil
	}
	dp := &DesignPlan{TargetKind: targetKindNames[d.Target.Kind], TargetYears: d.Target.Date / energy.Year, TargetLevel: d.Target.Level}
	switch d.Target.Kind {
	case energy.NodeFlat:
		dp.Target = fmt.Sprintf("at most %s of a group's nodes flat before %s", Percent(d.Target.Level), Years(dp.TargetYears))
		dp.QuantileQ = [2]float64{d.Target.Level, 0.5}
	case energy.NodeQuantile:
		dp.Target = fmt.Sprintf("the %s point of a node's lifetime at least %s", Percent(d.Target.Level), Years(dp.TargetYears))
		dp.QuantileQ = [2]float64{d.Target.Level, 0.5}
	case energy.GroupFlat:
		dp.Target = fmt.Sprintf("no node of a group flat before %s, with probability at least %s", Years(dp.TargetYears), Percent(1-d.Target.Level))
		dp.QuantileQ = [2]float64{0.01, 0.5}
	}
	space := energy.DesignSpace{MinInterval: d.MinInterval, MaxInterval: d.MaxInterval, Links: d.Links, Batches: d.Batches, Tolerance: DesignTolerance}
	for _, c := range d.Cells {
		space.Cells = append(space.Cells, s.Cells[c].Spec.Name)
	}
	for _, w := range d.Windows {
		space.Windows = append(space.Windows, w.Name)
	}
	// The groups' searches (each over its choices on two goroutines) and
	// the policies, on two goroutines of the library's one pool: each job
	// writes its own slot, so the outcome does not depend on the schedule.
	say("  what it takes: the design search of %d groups, and the replacement policies over %s", len(s.Groups), Years(d.Horizon/energy.Year))
	dp.Groups = make([]GroupDesign, len(s.Groups))
	var pp PolicyPlan
	err := workers.Run(len(s.Groups)+1, 2, func(i int) error {
		if i == 0 {
			var err error
			pp, err = comparePolicies(s, laws)
			return err
		}
		gi := i - 1
		g := s.Groups[gi]
		// The candidates' laws are mixed over the plan's own rule over the
		// shared factors (the Site adapts it to the site), which estimates
		// its error for them: the search's figure at the scenario's design
		// is the plan's.
		rule, err := laws.Site.GroupRule(gi)
		if err != nil {
			return err
		}
		prob := energy.DesignProblem{Space: space, Target: d.Target, Count: int64(g.Nodes), Climate: s.Climate, Shared: s.Shared,
			Rule: rule, Build: groupBuilder(s, laws.Model, gi)}
		res, err := energy.SearchDesign(prob)
		if err != nil {
			return fmt.Errorf("group %q: %w", g.Name, err)
		}
		gd, err := groupDesign(s, gi, prob, res, dp.QuantileQ)
		if err != nil {
			return fmt.Errorf("group %q: %w", g.Name, err)
		}
		dp.Groups[gi] = gd
		return nil
	}, func(i, _ int) {
		if i == 0 {
			say("  what it takes: the replacement policies done")
		} else {
			say("  what it takes: group %q done", s.Groups[i-1].Name)
		}
	})
	if err != nil {
		return nil, err
	}
	dp.Policies = pp
	dp.Notes = []string{
		"A choice meets the target only when the computed probability plus its stated error does; the interval is bracketed to 1 %. A probability's ± is its stated error: the node laws' and the shared rule's (the site's estimate of its rule over the cell batch and the climate, made for the laws shown as for the plan's own).",
		"Readings are batched k to an uplink: the uplink interval is k times the reading interval and the payload k times the group's.",
		"The duty-cycle limit is checked at every data rate the group's nodes use, with every transmission of a report counted.",
		"The policies' probability of a flat node is over the whole horizon; a failure replaced at once still leaves its node flat until the visit.",
		"The policies serve the nodes in reach: a node that no gateway hears is found at commissioning (its uplinks do not arrive) and moved or given a gateway, not replaced on a schedule (left in, a few unheard nodes retransmitting at the slowest data rate would set a group's dates); the expected out-of-reach nodes are listed above the policies. Their share still counts in the lifetime laws and the design search above.",
		"Replacing each node only when it fails counts each node's cells as a renewal process of its group's lifetime law, computed on a lattice with its stated error; a flat node stays flat until its visit. Each new life is drawn afresh from the whole group's law, data rate and board included: a node that keeps its place fails again sooner where its first life was short, so over several lives these counts understate the replacements of a group whose data rates' lives differ widely.",
	}
	return dp, nil
}

// groupBuilder builds group gi's nodes at a choice: the scenario with the
// group's interval (jitter scaled with it), payload, link, cell and receive
// window changed, group gi's model built again from base, the model of s
// (scenario.BuildGroup: the group's own traffic moves the collisions of
// every group, solved again from base's solution), and the duty-cycle
// limit of the uplinks.
//
// The radio side of a candidate (the group's model, its cycles and its
// duty-cycle limit) does not depend on the cell, so it is built once per
// interval, batch, link and window and shared by the cells' candidates
// (the searches of two cells meet at the range's ends and the first
// midpoints, the quantile table at its geometric steps): a memo safe for
// concurrent use, each entry built once; an entry is a function of its
// key alone, so what is shared never changes an answer, whatever the
// schedule. It holds at most one entry per candidate built.
func groupBuilder(s scenario.Scenario, base scenario.Model, gi int) energy.Builder {
	d := s.Design
	type key struct {
		period float64
		batch  int
		link   energy.Link
		window int
	}
	type radio struct {
		once   sync.Once
		gm     scenario.GroupModel
		cycles []energy.Cycle
		minI   float64 // s between uplinks
		err    error
	}
	var mu sync.Mutex
	memo := map[key]*radio{}
	batteries := make([]energy.Battery, len(d.Cells))
	batteryErrs := make([]error, len(d.Cells))
	for i, ci := range d.Cells {
		batteries[i], batteryErrs[i] = energy.NewBattery(s.Cells[ci].Spec)
	}
	// scenarioAt is s with group gi at the choice.
	scenarioAt := func(c energy.DesignChoice) scenario.Scenario {
		s2 := s
		s2.Groups = slices.Clone(s.Groups)
		s2.Nodes = slices.Clone(s.Nodes)
		g := s2.Groups[gi]
		period := c.UplinkPeriod()
		g.Jitter *= period / g.Interval
		g.Interval = period
		g.Payload *= c.Batch
		g.Confirmed, g.MaxTransmissions = c.Link.Confirmed, c.Link.Transmissions
		g.Cell = d.Cells[c.Cell]
		w := d.Windows[c.Window]
		n := s2.Nodes[g.Node]
		n.WindowSymbols, n.WindowMargin = w.Symbols, w.Margin
		n.Name = fmt.Sprintf("%s (%s)", n.Name, w.Name)
		s2.Nodes = append(s2.Nodes, n)
		g.Node = len(s2.Nodes) - 1
		s2.Groups[gi] = g
		return s2
	}
	build := func(r *radio, s2 scenario.Scenario) {
		gm, err := scenario.BuildGroup(base, s2, gi)
		if err != nil {
			r.err = err
			return
		}
		cycles := make([]energy.Cycle, len(gm.AllWeights()))
		for i := range cycles {
			if cycles[i], err = gm.AllSettingCycle(i); err != nil {
				r.err = err
				return
			}
		}
		duty, err := dutyPlan(s2, gm)
		if err != nil {
			r.err = err
			return
		}
		for _, row := range duty.Rows {
			if !row.Used {
				continue
			}
			if duty.SubBand == "" && !row.Feasible {
				r.minI = math.Inf(1) // a dwell time broken at any interval
			}
			r.minI = max(r.minI, row.MinIntervalS)
		}
		r.gm, r.cycles = gm, cycles
	}
	return func(c energy.DesignChoice) (energy.Candidate, error) {
		if c.Cell < 0 || c.Cell >= len(d.Cells) || c.Window < 0 || c.Window >= len(d.Windows) {
			return energy.Candidate{}, fmt.Errorf("design choice %+v: cell or window out of range", c)
		}
		if batteryErrs[c.Cell] != nil {
			return energy.Candidate{}, batteryErrs[c.Cell]
		}
		s2 := scenarioAt(c)
		k := key{c.UplinkPeriod(), c.Batch, c.Link, c.Window}
		mu.Lock()
		r := memo[k]
		if r == nil {
			r = &radio{}
			memo[k] = r
		}
		mu.Unlock()
		r.once.Do(func() { build(r, s2) })
		if r.err != nil {
			return energy.Candidate{}, r.err
		}
		// The cell's side: the group's model with this choice's cell.
		gm := r.gm
		gm.Group.Cell = d.Cells[c.Cell]
		gm.Cell, gm.Battery = s.Cells[d.Cells[c.Cell]], batteries[c.Cell]
		spec, err := gm.NodeSpec(s2, r.cycles)
		if err != nil {
			return energy.Candidate{}, err
		}
		return energy.Candidate{Node: spec, MinInterval: r.minI / float64(c.Batch)}, nil
	}
}

func choiceText(space energy.DesignSpace, c energy.DesignChoice) string {
	return fmt.Sprintf("%s; %s; %d per uplink; window %s", space.Cells[c.Cell], c.Link, c.Batch, space.Windows[c.Window])
}

// groupDesign summarises a group's search and tabulates the best choice's
// lifetime quantiles against the reading interval.
func groupDesign(s scenario.Scenario, gi int, prob energy.DesignProblem, res energy.Design, qs [2]float64) (GroupDesign, error) {
	space := prob.Space
	b := res.Results[res.Best]
	c := b.Choice
	gd := GroupDesign{Name: s.Groups[gi].Name, Feasible: b.Feasible, Cell: space.Cells[c.Cell], Confirmed: c.Link.Confirmed, MaxTransmissions: c.Link.Transmissions,
		ReadingsPerUplink: c.Batch, Window: space.Windows[c.Window], ReadingIntervalS: c.Interval, IntervalLowS: b.IntervalLow, UplinkIntervalS: c.UplinkPeriod(),
		Achieved: b.Figure, Margin: b.Margin, Probability: b.Probability, ProbError: b.ProbabilityError, RuleError: b.RuleError, Binds: string(b.Binds), CurrentIntervalS: s.Groups[gi].Interval}
	if res.Target.Kind == energy.NodeQuantile {
		gd.Achieved /= energy.Year
		gd.Margin /= energy.Year
	}
	for _, r := range res.Results {
		gd.Choices = append(gd.Choices, ChoiceSummary{Choice: choiceText(space, r.Choice), Feasible: r.Feasible, ReadingIntervalS: r.Choice.Interval,
			Probability: r.Probability, Binds: string(r.Binds)})
	}
	// The quantile table: geometric steps over the searched range, and the
	// interval found.
	var ivs []float64
	for i := range designQuantileRows {
		ivs = append(ivs, space.MinInterval*math.Pow(space.MaxInterval/space.MinInterval, float64(i)/(designQuantileRows-1)))
	}
	if !slices.ContainsFunc(ivs, func(x float64) bool { return x == c.Interval }) {
		ivs = append(ivs, c.Interval)
	}
	slices.Sort(ivs)
	// The rows (energy.DesignProblem.Profile: the candidates evaluated as
	// the search does, on two goroutines).
	prof, err := prob.Profile(c, ivs, qs[:])
	if err != nil {
		return gd, err
	}
	rows := make([]QuantileRow, len(prof))
	for i, r := range prof {
		rows[i] = QuantileRow{IntervalS: r.Interval, Meets: r.Meets}
		for k, x := range r.Quantiles {
			rows[i].Years[k] = x / energy.Year
		}
	}
	gd.Quantiles = rows
	return gd, nil
}

// comparePolicies compares, over the design horizon at the plan's
// acceptable risk: the scenario's plan (all replaced at
// replacement_after_years), all replaced at the fewest equal dates that
// meet the risk, each group at its own such dates, the same with failures
// replaced in between, and each node replaced when it fails alone
// (energy.ReplaceOnFailure: renewal counts on a lattice, see
// energy.NewLatticeRenewals).
//
// The nodes out of reach (the unheard setting of each group) are left to
// commissioning (energy.Site.Serviced): a node no gateway hears is found
// when its first uplinks do not arrive and is moved or given a gateway; a
// planner does not replace a whole group every year because a tenth of a
// per mille of its placements would be unheard and short-lived. The
// policies serve every node as in reach; the expected out-of-reach count
// is reported beside them.
func comparePolicies(s scenario.Scenario, laws scenario.Laws) (PolicyPlan, error) {
	d := s.Design
	risk := s.Plan.AcceptableRisk
	pp := PolicyPlan{HorizonYears: d.Horizon / energy.Year, Risk: risk, CostVisit: d.Costs.Visit, CostCell: d.Costs.Cell}
	left := make([][]int, len(laws.Model.Groups))
	for gi, gm := range laws.Model.Groups {
		for i := range gm.AllWeights() {
			if gm.IsUnheard(i) {
				left[gi] = append(left[gi], i)
			}
		}
	}
	site, err := laws.Site.Serviced(left)
	if err != nil {
		return pp, err
	}
	for gi, g := range s.Groups {
		if u := site.Left(gi); u > 0 {
			pp.OutOfReach = append(pp.OutOfReach, OutOfReachRow{Group: g.Name, Nodes: g.Nodes, Share: u, ExpectedNodes: u * float64(g.Nodes)})
		}
	}
	all, err := site.Schedule(risk, d.Horizon, false)
	if err != nil {
		return pp, err
	}
	per, err := site.Schedule(risk, d.Horizon, true)
	if err != nil {
		return pp, err
	}
	plan := energy.ReplaceAll(s.Plan.ReplaceAfter)
	plan.Name = fmt.Sprintf("the scenario's plan: replace all every %s", Years(s.Plan.ReplaceAfter/energy.Year))
	common := energy.ReplaceAll(all[0])
	common.Name = fmt.Sprintf("replace all every %s", Years(all[0]/energy.Year))
	ps := []energy.Policy{plan, common, energy.ReplaceGroups(per), energy.ReplaceGroupsAndFailures(per), energy.ReplaceOnFailure()}
	pc, err := site.ComparePolicies(ps, d.Horizon, risk, d.Costs)
	if err != nil {
		return pp, err
	}
	for _, o := range pc.Outcomes {
		row := PolicyRow{Policy: o.Policy.Name, OnFailure: o.Policy.OnFailure, VisitsPerYear: o.VisitsPerYear, CellsPerYear: o.CellsPerYear,
			FailuresPerYear: o.FailuresPerYear, AnyFlat: o.AnyFlat, AnyFlatError: o.AnyFlatError, RuleError: o.RuleError, Cost: o.Cost}
		for gi := range s.Groups {
			var tau float64
			switch len(o.Policy.Every) {
			case 1:
				tau = o.Policy.Every[0]
			case len(s.Groups):
				tau = o.Policy.Every[gi]
			}
			if tau >= d.Horizon {
				tau = 0
			}
			row.PeriodsYears = append(row.PeriodsYears, tau/energy.Year)
		}
		pp.Rows = append(pp.Rows, row)
	}
	pp.Cheapest, pp.Feasible = pc.Cheapest, pc.Feasible
	return pp, nil
}
