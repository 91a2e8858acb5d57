package energy

import (
	"fmt"
	"math"
	"slices"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
)

// Caps on replacement policies.
const (
	// MaxScheduledReplacements caps the scheduled replacement dates of one
	// group within a horizon.
	MaxScheduledReplacements = 1000
	// MaxPolicies caps the policies one ComparePolicies call compares.
	MaxPolicies = 64
)

// Policy is how a site's cells are replaced over a horizon: on a schedule
// (every group at dates Every[g], 2·Every[g], … before the horizon, every
// node of the group at once), on failure (each node the moment its cell is
// flat), or both (a group replacement with failures replaced in between).
// A scheduled date shared by several groups is one visit.
type Policy struct {
	Name string // free text, used in reports
	// Every holds the scheduled replacement period (s) of each group, or
	// one period for all groups; 0 means no scheduled replacement. Each is
	// finite and >= 0, and a group has at most MaxScheduledReplacements
	// dates within the horizon.
	Every []float64
	// OnFailure replaces each node when its cell is flat (one visit and
	// one cell per failure); otherwise a flat node stays flat until the
	// group's next scheduled date.
	OnFailure bool
}

// ReplaceAll is the policy that replaces every node of the site every
// period (s) and nothing in between.
func ReplaceAll(period float64) Policy {
	return Policy{Name: fmt.Sprintf("replace all every %.3g years", period/Year), Every: []float64{period}}
}

// ReplaceOnFailure is the policy that replaces each node when it fails.
//
// The counts take each new cell's life afresh from the group's node law
// given the shared factors (Renewals): the node's setting, floor and
// active factors are drawn afresh with it. A node that keeps its place,
// and so its data rate and board, fails again sooner where its first life
// was short: the counts here are those of a node moved at random within
// its group at each replacement, and over a horizon of several lives they
// understate the replacements of a group whose settings' lives differ
// widely (the long-run rate is the group's mean of 1/E[L | setting], at
// least 1/E[L]).
func ReplaceOnFailure() Policy {
	return Policy{Name: "replace each node when it fails", OnFailure: true}
}

// ReplaceGroups is the policy that replaces each group every periods[g]
// (s) and nothing in between.
func ReplaceGroups(periods []float64) Policy {
	return Policy{Name: "replace each group at its own dates", Every: append([]float64(nil), periods...)}
}

// ReplaceGroupsAndFailures is ReplaceGroups with failures replaced in
// between.
func ReplaceGroupsAndFailures(periods []float64) Policy {
	return Policy{Name: "replace each group at its own dates, failures in between", Every: append([]float64(nil), periods...), OnFailure: true}
}

// Costs are what a replacement costs, in the planner's currency.
type Costs struct {
	Visit float64 // per visit (a crew's trip: one per scheduled date, one per failure replaced), >= 0
	Cell  float64 // per cell fitted (with the labour to fit it), >= 0
}

// Band is a count's or cost's mean and central 90 % interval
// (equal-tailed: 5 % and 95 % points), in the unit of the field holding it.
type Band struct {
	Mean float64
	Low  float64
	High float64
}

// PolicyOutcome is what a policy does over a horizon.
type PolicyOutcome struct {
	Policy  Policy
	Horizon float64 // s
	// Visits, Cells and Failures are the laws of the counts over the
	// horizon (finite discrete laws: mixtures over the shared factors of
	// the conditionally independent nodes' counts). Failures counts the
	// cells that went flat (replaced at once with OnFailure; otherwise a
	// node counts once per scheduled block in which it is flat).
	Visits, Cells, Failures dist.Law
	// Per year of the horizon: Visits, Cells and Failures divided by the
	// horizon in years.
	VisitsPerYear, CellsPerYear, FailuresPerYear Band
	// AnyFlat is the probability that some node is flat at some time
	// within the horizon (that any cell fails), computed directly from the
	// nodes' survivals: Σ_e w_e·(1 − Π_g S_g(τ_g)^(n_g·B_g)·S_g(r_g)^n_g)
	// with B_g scheduled blocks of τ_g and a last one of r_g. AnyFlatError
	// is its stated error: the node laws' CDF errors at τ_g and r_g, summed
	// over the nodes and blocks (the product of numbers in [0, 1] moves by
	// at most the sum of their moves), plus RuleError, the Site's estimate
	// of its shared rule's error for this mixture (the Site's probe of a
	// fleet's first failure, on the nodes' probabilities of a flat cell
	// within their blocks, 1 − S_g(τ_g)^B_g·S_g(r_g): see Site).
	AnyFlat, AnyFlatError, RuleError float64
	// CountError is the stated CDF error of the count laws (the renewal
	// counts' lattice error, plus Max renewals times the conditional node
	// laws' stated CDF error, which moves P(S_n <= t) by at most n times
	// itself; the exact node laws' error for the scheduled blocks).
	CountError float64
	// Cost is the cost over the horizon: Visit·Visits + Cell·Cells.
	Cost Band
}

// Replacement returns what policy p does over horizon (s) on the site,
// with the costs c. Errors name the field, value and rule (wrapping
// ErrParam).
//
// Given the shared factors, nodes are independent and each node's cells
// fail as a renewal process (Renewals) restarted at each scheduled date;
// without OnFailure a node fails at most once per block, with probability
// F(τ). The counts are the exact sums (dist.SumIID, dist.SumDiscrete) of the
// nodes' counts, mixed over the shared factors' Gauss–Hermite nodes as
// Site's other laws are. With OnFailure the renewal counts of the
// tabulated conditional node laws come from NewLatticeRenewals (their
// k-fold sums on a lattice of 1024 points over the horizon, with the
// stated error of a lattice of twice the step: a few milliseconds to a few
// tens per law, where dist.SumIID's exact sums took 0.14–1.5 s each; one
// lattice per shared node and group serves every block and, in
// ComparePolicies, every policy), two workers over the shared nodes and
// groups; without it only survivals are needed. The node laws' stated
// CDF errors at the block lengths are kept by the Serviced (see
// Site.Serviced), so ComparePolicies and Schedule ask for each once.
func (s Site) Replacement(p Policy, horizon float64, c Costs) (PolicyOutcome, error) {
	v, err := s.Serviced(nil)
	if err != nil {
		return PolicyOutcome{}, err
	}
	return v.Replacement(p, horizon, c)
}

// Replacement is Site.Replacement for the nodes v serves.
func (s Serviced) Replacement(p Policy, horizon float64, c Costs) (PolicyOutcome, error) {
	return s.replacement("Serviced.Replacement", p, horizon, c, newRenewalCache(len(s.envs)*len(s.names)))
}

// renewalCache holds the renewal counts of one call (ComparePolicies'
// policies share them): per shared node and group, the lattice over the
// call's horizon, built once (sync.Once), so at most one lattice per
// shared node and group, dropped with the call. A lattice is a function
// of its key alone, so sharing it never changes an answer.
type renewalCache struct {
	slots []renewalSlot
}

type renewalSlot struct {
	once sync.Once
	r    Renewals
	err  error
}

func newRenewalCache(n int) *renewalCache { return &renewalCache{slots: make([]renewalSlot, n)} }

func (s Serviced) replacement(fn string, p Policy, horizon float64, c Costs, rc *renewalCache) (PolicyOutcome, error) {
	if len(s.envs) == 0 {
		return PolicyOutcome{}, paramErr(fn, "s", "zero Serviced", "must be built by Site.Serviced")
	}
	if err := checkCosts(fn, c); err != nil {
		return PolicyOutcome{}, err
	}
	if !(horizon > 0) || math.IsInf(horizon, 0) {
		return PolicyOutcome{}, paramErr(fn, "horizon", horizon, "must be finite and > 0 (s)")
	}
	every, err := s.periods(fn, p, horizon)
	if err != nil {
		return PolicyOutcome{}, err
	}
	G := len(s.names)
	blocks := make([]int64, G)
	rest := make([]float64, G)
	for g, tau := range every {
		if tau == 0 || tau >= horizon {
			every[g], blocks[g], rest[g] = horizon, 0, horizon
			continue
		}
		b := int64(math.Ceil(horizon/tau)) - 1
		blocks[g], rest[g] = b, horizon-float64(b)*tau
	}
	out := PolicyOutcome{Policy: p, Horizon: horizon}
	// Scheduled visits: the distinct dates (within a second) of all groups.
	var dates []float64
	schedCells := 0.0
	for g := range G {
		for k := int64(1); k <= blocks[g]; k++ {
			dates = append(dates, float64(k)*every[g])
		}
		schedCells += float64(blocks[g]) * float64(s.counts[g])
	}
	slices.Sort(dates)
	schedVisits := 0.0
	for i, d := range dates {
		if i == 0 || d-dates[i-1] > 1 {
			schedVisits++
		}
	}

	// Any flat node, directly from the exact conditional laws; their stated
	// errors at the blocks' lengths serve the failure counts too. Z holds
	// the probits of a node's flat cell within its blocks, for the rule's
	// error.
	accAt := make([]float64, len(s.envs)*G)
	E := len(s.envs)
	Z := make([]float64, G*E)
	for ei, e := range s.envs {
		logNo, errE := 0.0, 0.0
		for g := range G {
			n := float64(s.counts[g])
			Z[g*E+ei] = -probitClamp
			if n == 0 {
				continue
			}
			acc := max(s.errAt(ei, g, every[g]), s.errAt(ei, g, rest[g]))
			accAt[ei*G+g] = acc
			logS := math.Log(s.survivalAt(ei, g, rest[g])) // a node's log P(no flat cell within its blocks)
			if blocks[g] > 0 {
				logS += float64(blocks[g]) * math.Log(s.survivalAt(ei, g, every[g]))
			}
			Z[g*E+ei] = clampedProbit(math.Exp(logS), -math.Expm1(logS))
			logNo += n * logS
			errE += n * float64(blocks[g]+1) * acc
		}
		out.AnyFlat += e.w * -math.Expm1(logNo)
		out.AnyFlatError += e.w * min(1, errE)
	}
	out.AnyFlat = min(1, max(0, out.AnyFlat))
	out.RuleError = s.ruleError(Z, kindFleet, 0)
	out.AnyFlatError += out.RuleError

	// Failure counts, environment by environment (two workers; each result
	// lands in its own slot).
	perEG := make([]dist.Law, len(s.envs)*G)
	accEG := make([]float64, len(s.envs)*G)
	err = forEachOnTwo(len(s.envs)*G, func(i int) (err error) {
		e, g := i/G, i%G
		perEG[i], accEG[i], err = s.groupFailures(fn, e, g, p.OnFailure, horizon, every[g], blocks[g], rest[g], accAt[i], &rc.slots[i])
		return err
	})
	if err != nil {
		return PolicyOutcome{}, err
	}
	w := make([]float64, len(s.envs))
	laws := make([]dist.Law, len(s.envs))
	for e := range s.envs {
		tot, err := sumCounts(perEG[e*G : (e+1)*G])
		if err != nil {
			return PolicyOutcome{}, causeErr(fn, "failure counts", G, "sum over the groups", err)
		}
		w[e], laws[e] = s.envs[e].w, tot
		for g := range G {
			out.CountError = max(out.CountError, accEG[e*G+g])
		}
	}
	if out.Failures, err = dist.Mixture(w, laws); err != nil {
		return PolicyOutcome{}, causeErr(fn, "failure counts", len(laws), "mixture over the shared factors", err)
	}
	// Visits, cells and cost are affine in the failures.
	fv, fc := 0.0, 0.0
	if p.OnFailure {
		fv, fc = 1, 1
	}
	years := horizon / Year
	if out.Visits, err = affineCount(fn, out.Failures, fv, schedVisits); err != nil {
		return PolicyOutcome{}, err
	}
	if out.Cells, err = affineCount(fn, out.Failures, fc, schedCells); err != nil {
		return PolicyOutcome{}, err
	}
	cost, err := affineCount(fn, out.Failures, c.Visit*fv+c.Cell*fc, c.Visit*schedVisits+c.Cell*schedCells)
	if err != nil {
		return PolicyOutcome{}, err
	}
	for _, b := range []struct {
		dst   *Band
		law   dist.Law
		scale float64
	}{{&out.VisitsPerYear, out.Visits, years}, {&out.CellsPerYear, out.Cells, years}, {&out.FailuresPerYear, out.Failures, years}, {&out.Cost, cost, 1}} {
		if *b.dst, err = band(fn, b.law, b.scale); err != nil {
			return PolicyOutcome{}, err
		}
	}
	return out, nil
}

// periods checks p against the site and returns one period per group.
func (s Serviced) periods(fn string, p Policy, horizon float64) ([]float64, error) {
	G := len(s.names)
	if len(p.Every) != 0 && len(p.Every) != 1 && len(p.Every) != G {
		return nil, paramErr(fn, "p.Every", len(p.Every), fmt.Sprintf("must hold 0, 1 or %d (one per group) periods", G))
	}
	if len(p.Every) == 0 && !p.OnFailure {
		return nil, paramErr(fn, "p", p.Name, "must replace on a schedule (Every) or on failure (OnFailure)")
	}
	out := make([]float64, G)
	for g := range out {
		var tau float64
		switch len(p.Every) {
		case 1:
			tau = p.Every[0]
		case G:
			tau = p.Every[g]
		}
		if !(tau >= 0) || math.IsInf(tau, 0) {
			return nil, paramErr(fn, fmt.Sprintf("p.Every[%d]", min(g, len(p.Every)-1)), tau, "must be finite and >= 0 (s; 0 for no schedule)")
		}
		if tau > 0 && horizon/tau > MaxScheduledReplacements {
			return nil, paramErr(fn, fmt.Sprintf("p.Every[%d]", min(g, len(p.Every)-1)), tau, fmt.Sprintf("gives more than %d dates within the horizon %g s", MaxScheduledReplacements, horizon))
		}
		out[g] = tau
	}
	return out, nil
}

// groupFailures is the law of the failures of group g's nodes given the
// shared node e, and its stated CDF error; lifeAcc is the exact node law's
// stated CDF error at τ and the rest. With onFailure the renewal counts
// come from slot's lattice over the horizon (built there once).
func (s Serviced) groupFailures(fn string, e, g int, onFailure bool, horizon, tau float64, blocks int64, rest, lifeAcc float64, slot *renewalSlot) (dist.Law, float64, error) {
	env := &s.envs[e]
	n := s.counts[g]
	if n == 0 {
		return dist.MustPointMass(0), 0, nil // no node of the group served
	}
	name := fmt.Sprintf("group %q", s.names[g])
	var parts []dist.Law
	acc := 0.0
	add := func(per dist.Law, k int64) error {
		if k == 0 {
			return nil
		}
		sum, err := dist.SumIID(per, int(k))
		if err != nil {
			return causeErr(fn, name, k, "the nodes' failure counts", err)
		}
		if es, ok := sum.(dist.Estimated); ok {
			acc = max(acc, es.Accuracy().CDFAbs)
		}
		parts = append(parts, sum)
		return nil
	}
	if onFailure {
		slot.once.Do(func() { slot.r, slot.err = env.tab[g].renewals(fn, horizon) })
		r, err := slot.r, slot.err
		if err != nil {
			return nil, 0, causeErr(fn, name, horizon, "renewal counts", err)
		}
		// The node law's own CDF error moves P(S_n <= t) by at most n
		// times as much (Kolmogorov distance of a convolution).
		acc = max(acc, r.Accuracy().CDFAbs+float64(r.Max())*env.tab[g].cdfAbs)
		for _, b := range blockCounts(tau, rest, n, blocks) {
			c, err := r.Count(b.t)
			if err != nil {
				return nil, 0, causeErr(fn, name, b.t, "renewal count", err)
			}
			if err := add(c, b.k); err != nil {
				return nil, 0, err
			}
		}
	} else {
		l := env.exact[g]
		acc = max(acc, lifeAcc)
		for _, b := range blockCounts(tau, rest, n, blocks) {
			if err := add(bernoulli(l.CDF(b.t)), b.k); err != nil {
				return nil, 0, err
			}
		}
	}
	if len(parts) == 1 {
		return parts[0], acc, nil
	}
	sum, err := sumCounts(parts)
	if err != nil {
		return nil, 0, causeErr(fn, name, len(parts), "sum of the blocks' counts", err)
	}
	return sum, acc, nil
}

// sumCounts is the exact law of the sum of independent counts: by
// dist.SumDiscrete (the dense lattice convolution of integer laws) when
// every law is a finite discrete one, as SumIID makes them up to 65536
// points, otherwise by dist.Sum.
func sumCounts(laws []dist.Law) (dist.Law, error) {
	ds := make([]dist.Discrete, len(laws))
	for i, l := range laws {
		d, ok := l.(dist.Discrete)
		if !ok {
			return dist.Sum(laws...)
		}
		ds[i] = d
	}
	return dist.SumDiscrete(ds...)
}

// blockCount is how many node-blocks of length t a group has.
type blockCount struct {
	t float64 // s
	k int64
}

// blockCounts lists the group's node-blocks: n·blocks of τ and n of the
// rest, leaving out none-counts.
func blockCounts(tau, rest float64, n, blocks int64) []blockCount {
	var out []blockCount
	if blocks > 0 {
		out = append(out, blockCount{tau, n * blocks})
	}
	return append(out, blockCount{rest, n})
}

// bernoulli is the law of one node's failure in a block: 1 with
// probability f.
func bernoulli(f float64) dist.Discrete {
	switch {
	case !(f > 0):
		return dist.MustPointMass(0)
	case f >= 1:
		return dist.MustPointMass(1)
	}
	return dist.MustDiscrete([]float64{0, 1}, []float64{1 - f, f})
}

// affineCount is a·X + b, a point mass at b when a = 0.
func affineCount(fn string, x dist.Law, a, b float64) (dist.Law, error) {
	if a == 0 {
		return dist.MustPointMass(b), nil
	}
	l, err := dist.Affine(x, a, b)
	if err != nil {
		return nil, causeErr(fn, "count", a, "affine map", err)
	}
	return l, nil
}

// band is the mean and 90 % interval of l, divided by scale.
func band(fn string, l dist.Law, scale float64) (Band, error) {
	lo, hi, err := dist.EqualTailed(l, 0.9)
	if err != nil {
		return Band{}, causeErr(fn, "band", l, "90 % interval", err)
	}
	return Band{Mean: l.Mean() / scale, Low: lo / scale, High: hi / scale}, nil
}

func checkCosts(fn string, c Costs) error {
	switch {
	case !(c.Visit >= 0) || math.IsInf(c.Visit, 0):
		return paramErr(fn, "costs.Visit", c.Visit, "must be finite and >= 0")
	case !(c.Cell >= 0) || math.IsInf(c.Cell, 0):
		return paramErr(fn, "costs.Cell", c.Cell, "must be finite and >= 0")
	}
	return nil
}

// PolicyComparison is the outcome of each policy and the cheapest at the
// accepted risk.
type PolicyComparison struct {
	Risk     float64 // the accepted probability of any flat node within the horizon
	Outcomes []PolicyOutcome
	// Cheapest indexes the policy of least mean cost among those with
	// AnyFlat + AnyFlatError <= Risk (Feasible true); when none is, the
	// one with the least AnyFlat (Feasible false).
	Cheapest int
	Feasible bool
}

// ComparePolicies evaluates each policy (1 to MaxPolicies) over horizon
// (s) and picks the cheapest whose probability of any flat node, its
// stated error included, is at most risk (in (0, 1)). Errors name the
// field, value and rule (wrapping ErrParam).
func (s Site) ComparePolicies(ps []Policy, horizon, risk float64, c Costs) (PolicyComparison, error) {
	v, err := s.Serviced(nil)
	if err != nil {
		return PolicyComparison{}, err
	}
	return v.ComparePolicies(ps, horizon, risk, c)
}

// ComparePolicies is Site.ComparePolicies for the nodes v serves.
func (s Serviced) ComparePolicies(ps []Policy, horizon, risk float64, c Costs) (PolicyComparison, error) {
	const fn = "Serviced.ComparePolicies"
	switch {
	case len(ps) == 0 || len(ps) > MaxPolicies:
		return PolicyComparison{}, paramErr(fn, "policies", len(ps), fmt.Sprintf("must hold 1 to %d policies", MaxPolicies))
	case !(risk > 0 && risk < 1):
		return PolicyComparison{}, paramErr(fn, "risk", risk, "must be in (0, 1)")
	}
	pc := PolicyComparison{Risk: risk, Cheapest: -1}
	// The policies' renewal counts are those of the same lattices (over the
	// horizon): one cache for all of them.
	rc := newRenewalCache(len(s.envs) * len(s.names))
	for i, p := range ps {
		o, err := s.replacement("Serviced.Replacement", p, horizon, c, rc)
		if err != nil {
			return PolicyComparison{}, causeErr(fn, fmt.Sprintf("policies[%d]", i), p.Name, "policy", err)
		}
		pc.Outcomes = append(pc.Outcomes, o)
	}
	for i, o := range pc.Outcomes {
		if o.AnyFlat+o.AnyFlatError <= risk && (pc.Cheapest < 0 || o.Cost.Mean < pc.Outcomes[pc.Cheapest].Cost.Mean) {
			pc.Cheapest = i
		}
	}
	if pc.Cheapest >= 0 {
		pc.Feasible = true
		return pc, nil
	}
	pc.Cheapest = 0
	for i, o := range pc.Outcomes {
		if o.AnyFlat < pc.Outcomes[pc.Cheapest].AnyFlat {
			pc.Cheapest = i
		}
	}
	return pc, nil
}

// Schedule returns replacement periods (s) that keep the probability of
// any flat node within horizon (s) at most risk (in (0, 1)), the stated
// error included (the node laws' and the shared rule's, as
// PolicyOutcome.AnyFlatError; a group's own first failure for its rule's
// part when held to its share), with as few replacements as it can: one common period
// horizon/k for the whole site (perGroup false; k = 1, 2, … the first that
// meets the risk), or one per group (perGroup true), each group held to
// risk·n_g/n (the fleet's probability is at most the sum of the groups').
// A period equal to the horizon means no replacement within it. An error
// (wrapping ErrParam) when even MaxScheduledReplacements dates do not meet
// the risk.
func (s Site) Schedule(risk, horizon float64, perGroup bool) ([]float64, error) {
	v, err := s.Serviced(nil)
	if err != nil {
		return nil, err
	}
	return v.Schedule(risk, horizon, perGroup)
}

// Schedule is Site.Schedule for the nodes v serves.
func (s Serviced) Schedule(risk, horizon float64, perGroup bool) ([]float64, error) {
	const fn = "Serviced.Schedule"
	switch {
	case len(s.envs) == 0:
		return nil, paramErr(fn, "s", "zero Serviced", "must be built by Site.Serviced")
	case !(risk > 0 && risk < 1):
		return nil, paramErr(fn, "risk", risk, "must be in (0, 1)")
	case !(horizon > 0) || math.IsInf(horizon, 0):
		return nil, paramErr(fn, "horizon", horizon, "must be finite and > 0 (s)")
	}
	G := len(s.names)
	// anyFlat returns P(any node of the groups in gs flat) for k equal
	// blocks of horizon/k, plus, when withErr is set, its stated error
	// (the node laws' and the rule's, as Replacement's).
	E := len(s.envs)
	anyFlat := func(gs []int, k int, withErr bool) float64 {
		tau := horizon / float64(k)
		p, perr := 0.0, 0.0
		var Z []float64
		if withErr {
			Z = make([]float64, G*E)
			for i := range Z {
				Z[i] = -probitClamp
			}
		}
		for ei, e := range s.envs {
			logNo, errE := 0.0, 0.0
			for _, g := range gs {
				n := float64(s.counts[g])
				if n == 0 {
					continue
				}
				logS := float64(k) * math.Log(s.survivalAt(ei, g, tau))
				logNo += n * logS
				if withErr {
					errE += n * float64(k) * s.errAt(ei, g, tau)
					Z[g*E+ei] = clampedProbit(math.Exp(logS), -math.Expm1(logS))
				}
			}
			p += e.w * -math.Expm1(logNo)
			perr += e.w * min(1, errE)
		}
		if withErr {
			if len(gs) == 1 {
				perr += s.ruleError(Z, kindFirst, gs[0])
			} else {
				perr += s.ruleError(Z, kindFleet, 0)
			}
		}
		return p + perr
	}
	// The first k whose probability alone meets the risk, then the first
	// from there whose probability plus its error does: the same k as
	// asking for the error at every k (p + ε > r wherever p > r), with
	// the error (the costly part) asked for only where it decides.
	find := func(gs []int, r float64) (float64, error) {
		k := 1
		for k <= MaxScheduledReplacements && anyFlat(gs, k, false) > r {
			k++
		}
		for ; k <= MaxScheduledReplacements; k++ {
			if anyFlat(gs, k, true) <= r {
				return horizon / float64(k), nil
			}
		}
		return 0, paramErr(fn, "risk", r, fmt.Sprintf("is not met even with %d replacements within the horizon", MaxScheduledReplacements))
	}
	if !perGroup {
		all := make([]int, G)
		for g := range all {
			all[g] = g
		}
		tau, err := find(all, risk)
		if err != nil {
			return nil, err
		}
		return []float64{tau}, nil
	}
	out := make([]float64, G)
	total := 0.0
	for _, n := range s.counts {
		total += float64(n)
	}
	for g := range G {
		tau, err := find([]int{g}, risk*float64(s.counts[g])/total)
		if err != nil {
			return nil, err
		}
		out[g] = tau
	}
	return out, nil
}
