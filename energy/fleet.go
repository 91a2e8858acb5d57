package energy

import (
	"fmt"
	"math"
	"strconv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

// FleetGroup is a number of nodes that share a cycle description and a
// battery, all deployed at time 0 with fresh cells.
type FleetGroup struct {
	Name    string  // the group's name, e.g. "basement meters, SF12"
	Cycle   Cycle   // what each node does
	Battery Battery // the cell each node runs on
	Count   int64   // how many nodes, >= 1
}

// FleetLawGroup is a number of nodes given by the law of their battery
// lifetime directly: a law of the time (s) until the battery is flat, on
// [0, ∞). Use it when one Cycle does not describe the group — nodes that
// settle on different data rates and powers have a lifetime law that is the
// mixture of the per-setting lifetimes (dist.Mixture of NewLifetime laws),
// or a back-end has estimated the law from what it observes.
type FleetLawGroup struct {
	Name     string   // the group's name
	Lifetime dist.Law // time (s) to a flat battery, support in [0, ∞)
	Count    int64    // how many nodes, >= 1
}

// Fleet is a set of groups of independent nodes; dates are times (s) since
// deployment. A Fleet is an immutable value, safe for concurrent use.
type Fleet struct {
	names     []string
	lifetimes []Lifetime // per group; the zero Lifetime for law groups
	laws      []dist.Law // the lifetime law of every group
	counts    []int64
	total     int64
	groups    []orderstat.Group
}

// NewFleet builds the lifetime law of every group (NewLifetime) and returns
// the fleet. groups must not be empty; every Count must be >= 1 and the
// total at most orderstat.MaxCount; names must be distinct (empty names are
// replaced by "group i").
func NewFleet(groups []FleetGroup) (Fleet, error) {
	const fn = "NewFleet"
	if len(groups) == 0 {
		return Fleet{}, paramErr(fn, "groups", "[]", "must not be empty")
	}
	lg := make([]FleetLawGroup, len(groups))
	lts := make([]Lifetime, len(groups))
	for i, g := range groups {
		name := g.Name
		if name == "" {
			name = groupName(i)
		}
		l, err := NewLifetime(g.Cycle, g.Battery)
		if err != nil {
			return Fleet{}, causeErr(fn, fmt.Sprintf("group %q", name), name, "lifetime", err)
		}
		// A Lifetime is one pointer: the law and the slice share its
		// state. newFleet names the unnamed groups as above.
		lg[i], lts[i] = FleetLawGroup{Name: g.Name, Lifetime: l, Count: g.Count}, l
	}
	f, err := newFleet(fn, lg)
	if err != nil {
		return Fleet{}, err
	}
	f.lifetimes = lts
	return f, nil
}

// NewFleetOfLaws returns the fleet of groups given by their lifetime laws.
// groups must not be empty; every law must be non-nil with support in
// [0, ∞); every Count must be >= 1 and the total at most
// orderstat.MaxCount; names must be distinct (empty names are replaced by
// "group i"). Fleet.Lifetime reports ok = false for such groups; Fleet.Law
// returns their laws.
func NewFleetOfLaws(groups []FleetLawGroup) (Fleet, error) {
	const fn = "NewFleetOfLaws"
	if len(groups) == 0 {
		return Fleet{}, paramErr(fn, "groups", "[]", "must not be empty")
	}
	f, err := newFleet(fn, groups)
	if err != nil {
		return Fleet{}, err
	}
	f.lifetimes = make([]Lifetime, len(groups))
	return f, nil
}

// newFleet validates the groups and builds the fleet.
func newFleet(fn string, groups []FleetLawGroup) (Fleet, error) {
	f := Fleet{
		names: make([]string, 0, len(groups)), laws: make([]dist.Law, 0, len(groups)),
		counts: make([]int64, 0, len(groups)), groups: make([]orderstat.Group, 0, len(groups)),
	}
	// Names given as "" become "group i", distinct among themselves: only
	// a fleet with a name given needs the map that finds repeats.
	var seen map[string]bool
	for _, g := range groups {
		if g.Name != "" {
			seen = make(map[string]bool, len(groups))
			break
		}
	}
	for i, g := range groups {
		name := g.Name
		if name == "" {
			name = groupName(i)
		}
		if seen != nil {
			if seen[name] {
				return Fleet{}, paramErr(fn, fmt.Sprintf("groups[%d].Name", i), name, "must be distinct")
			}
			seen[name] = true
		}
		if g.Count < 1 || g.Count > orderstat.MaxCount-f.total {
			return Fleet{}, paramErr(fn, fmt.Sprintf("group %q: Count", name), g.Count, fmt.Sprintf("must be >= 1, the total at most %d", orderstat.MaxCount))
		}
		if g.Lifetime == nil {
			return Fleet{}, paramErr(fn, fmt.Sprintf("group %q: Lifetime", name), nil, "must not be nil")
		}
		if lo, _ := g.Lifetime.Support(); !(lo >= 0) {
			return Fleet{}, paramErr(fn, fmt.Sprintf("group %q: Lifetime", name), g.Lifetime, "must be a law of a time: support in [0, ∞)")
		}
		f.names = append(f.names, name)
		f.laws = append(f.laws, g.Lifetime)
		f.counts = append(f.counts, g.Count)
		f.groups = append(f.groups, orderstat.Group{Law: g.Lifetime, Count: g.Count})
		f.total += g.Count
	}
	return f, nil
}

// groupName is the name of an unnamed group i: "group i".
func groupName(i int) string { return "group " + strconv.Itoa(i) }

// Size returns the number of nodes.
func (f Fleet) Size() int64 { return f.total }

// Lifetime returns the lifetime law of group i (in the order given to
// NewFleet) and its name; ok is false when i is not in [0, Groups()) or the
// fleet was built by NewFleetOfLaws (use Law).
func (f Fleet) Lifetime(i int) (l Lifetime, name string, ok bool) {
	if i < 0 || i >= len(f.lifetimes) || f.lifetimes[i].lifeState == nil {
		return Lifetime{}, "", false
	}
	return f.lifetimes[i], f.names[i], true
}

// Law returns the lifetime law (time in s) of group i and its name, for
// fleets built either way; ok is false when i is not in [0, Groups()).
func (f Fleet) Law(i int) (l dist.Law, name string, ok bool) {
	if i < 0 || i >= len(f.laws) {
		return nil, "", false
	}
	return f.laws[i], f.names[i], true
}

// Groups returns the number of groups.
func (f Fleet) Groups() int { return len(f.laws) }

// FirstFailure returns the law of the time (s) to the first flat battery in
// the fleet, the minimum over non-identical lifetimes (orderstat.MinOfGroups):
//
//	P(first failure > t) = Π_g S_g(t)^{n_g}
func (f Fleet) FirstFailure() (dist.Law, error) {
	l, err := orderstat.MinOfGroups(f.groups)
	if err != nil {
		return nil, causeErr("Fleet.FirstFailure", "groups", len(f.groups), "minimum over groups", err)
	}
	return l, nil
}

// FractionFailed returns the law of the time (s) by which a fraction q of
// the fleet has failed: the k-th smallest lifetime with k = ceil(q·n), at
// least 1 (orderstat.KthOfGroups). q must be in (0, 1].
func (f Fleet) FractionFailed(q float64) (dist.Law, error) {
	const fn = "Fleet.FractionFailed"
	if !(q > 0 && q <= 1) {
		return nil, paramErr(fn, "q", q, "must be in (0, 1]")
	}
	k := int64(math.Ceil(q * float64(f.total)))
	if k < 1 {
		k = 1
	}
	l, err := orderstat.KthOfGroups(f.groups, k)
	if err != nil {
		return nil, causeErr(fn, "q", q, fmt.Sprintf("%d-th smallest lifetime", k), err)
	}
	return l, nil
}

// NoFailureBefore returns the probability that no battery in the fleet is
// flat by the date t (s): P(every lifetime > t) = exp(Σ_g n_g·log S_g(t)),
// each log taken as log1p(−F_g) where F_g is small so that it keeps its
// precision. 1 for t < 0; NaN for NaN t.
func (f Fleet) NoFailureBefore(t float64) float64 {
	if math.IsNaN(t) {
		return t
	}
	s := 0.0
	for i, l := range f.laws {
		var ls float64
		if c := l.CDF(t); c < 0.5 {
			ls = math.Log1p(-c)
		} else {
			ls = math.Log(l.Survival(t))
		}
		s += float64(f.counts[i]) * ls
	}
	return math.Exp(s)
}

// FailedBy returns the law of the number of flat batteries at the date t
// (s): a Poisson-binomial count with group probabilities F_g(t)
// (orderstat.AtOrBelow).
func (f Fleet) FailedBy(t float64) (orderstat.Count, error) {
	c, err := orderstat.AtOrBelow(f.laws, f.counts, t)
	if err != nil {
		return orderstat.Count{}, causeErr("Fleet.FailedBy", "t", t, "count of failed nodes", err)
	}
	return c, nil
}

// GroupPlan is the replacement date of one group.
type GroupPlan struct {
	Name  string
	Count int64
	// ReplaceBy is the earliest date (s) by which the probability that at
	// least one of the group's batteries is flat reaches the risk:
	// the Quantile(1 − (1 − risk)^{1/n}) of its lifetime law.
	ReplaceBy float64
	// ExpectedFailed is n·F(ReplaceBy), the expected number of flat
	// batteries in the group by then.
	ExpectedFailed float64
	// MedianLifetime is the group's median lifetime (s).
	MedianLifetime float64
}

// Plan is a replacement plan at a given risk.
type Plan struct {
	Risk   float64     // the accepted probability of any failure before replacement
	Groups []GroupPlan // one per group, in the fleet's order
	// FleetReplaceBy is the date (s) by which the probability that any
	// battery in the whole fleet is flat reaches Risk (the Risk-quantile of
	// FirstFailure): replacing everything then keeps the whole fleet within
	// the risk.
	FleetReplaceBy float64
}

// ReplacementPlan returns, for each group and for the fleet, the date by
// which the probability of any failure reaches risk. risk must be in
// (0, 1). The dates are planning figures from the model; a safety-critical
// deployment needs its own margin and the maintenance rules that apply
// locally.
func (f Fleet) ReplacementPlan(risk float64) (Plan, error) {
	const fn = "Fleet.ReplacementPlan"
	if !(risk > 0 && risk < 1) {
		return Plan{}, paramErr(fn, "risk", risk, "must be in (0, 1)")
	}
	p := Plan{Risk: risk}
	for i, l := range f.laws {
		n := float64(f.counts[i])
		pg := -math.Expm1(math.Log1p(-risk) / n) // 1 − (1 − risk)^{1/n}
		t := l.Quantile(pg)
		p.Groups = append(p.Groups, GroupPlan{
			Name: f.names[i], Count: f.counts[i], ReplaceBy: t,
			ExpectedFailed: n * l.CDF(t), MedianLifetime: l.Quantile(0.5),
		})
	}
	ff, err := f.FirstFailure()
	if err != nil {
		return Plan{}, err
	}
	p.FleetReplaceBy = ff.Quantile(risk)
	return p, nil
}
