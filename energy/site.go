package energy

import (
	"fmt"
	"math"
	"sync"

	"gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

// Caps on a Site.
const (
	MaxSiteGroups = 256 // groups in one SiteSpec
	// sharedNodesBatch and sharedNodesTemperature are the Gauss–Hermite
	// nodes over the shared batch factor and temperature offset.
	sharedNodesBatch       = 7
	sharedNodesTemperature = 3
)

// SiteGroup is one group of a site: how many nodes of which description.
type SiteGroup struct {
	Name  string   // distinct within the site
	Node  NodeSpec // the nodes' description
	Count int64    // how many nodes, >= 1
}

// SiteSpec describes a fleet with the three tiers of randomness: per cycle
// (the groups' cycles), per node (each NodeSpec's Spread and settings) and
// shared (Shared, one draw for the whole fleet), with the climate of the
// site.
type SiteSpec struct {
	Climate *Climate     // the year of temperature; nil for the reference temperature
	Shared  SharedSpread // the shared factors' spreads
	Groups  []SiteGroup  // 1 to MaxSiteGroups groups
}

// Site is a fleet whose nodes are independent given the shared factors: its
// laws (a node's lifetime, the first failure, the failed count by a date,
// the date by which a fraction has failed) are mixtures over the shared
// factors of the conditionally independent laws. The mixture is a
// Gauss–Hermite rule over the batch factor (7 nodes) and the temperature
// offset (3 nodes) — one node for a factor without spread. The rule is
// accurate while a shared factor moves lifetimes by no more than about the
// conditional laws' own width: against an independent quadrature over the
// batch factor (σb = 3 %, σc = 5 %, 100 nodes) a node's CDF agrees to
// 2e-4 and the first failure's to 2e-3 (TestSiteSharedBatchAgainstQuadrature);
// Accuracy does not include this part. Each conditional node law is
// tabulated once on an adaptive grid of times (see Accuracy).
//
// A Site is an immutable value, safe for concurrent use.
type Site struct {
	spec  SiteSpec
	envs  []siteEnv
	names []string
}

type siteEnv struct {
	w     float64
	cond  Conditions
	laws  []tabulated    // per group, the conditional node law tabulated
	exact []NodeLifetime // per group, the conditional node law
	fleet Fleet
}

// NewSite validates spec and builds the conditional laws. Errors name the
// group and field (wrapping ErrParam).
func NewSite(spec SiteSpec) (Site, error) {
	const fn = "NewSite"
	if len(spec.Groups) == 0 || len(spec.Groups) > MaxSiteGroups {
		return Site{}, paramErr(fn, "spec.Groups", len(spec.Groups), fmt.Sprintf("must hold 1 to %d groups", MaxSiteGroups))
	}
	if err := spec.Shared.check(fn); err != nil {
		return Site{}, err
	}
	s := Site{spec: spec}
	seen := map[string]bool{}
	for i, g := range spec.Groups {
		name := g.Name
		if name == "" {
			name = fmt.Sprintf("group %d", i)
		}
		if seen[name] {
			return Site{}, paramErr(fn, fmt.Sprintf("spec.Groups[%d].Name", i), name, "must be distinct")
		}
		seen[name] = true
		if g.Count < 1 || g.Count > orderstat.MaxCount {
			return Site{}, paramErr(fn, fmt.Sprintf("group %q: Count", name), g.Count, fmt.Sprintf("must be in [1, %d]", orderstat.MaxCount))
		}
		s.names = append(s.names, name)
	}
	bz, bw := hermiteNodes(spec.Shared.Batch, sharedNodesBatch)
	tz, tw := hermiteNodes(spec.Shared.Temperature, sharedNodesTemperature)
	for i := range bz {
		for j := range tz {
			cond := Conditions{BatchFactor: 1 + spec.Shared.Batch*bz[i], TemperatureOffset: spec.Shared.Temperature * tz[j]}
			s.envs = append(s.envs, siteEnv{w: bw[i] * tw[j], cond: cond})
		}
	}
	// Conditional laws, environment by environment (in parallel; each
	// result lands in its own slot, so the outcome does not depend on the
	// schedule).
	type job struct{ e, g int }
	jobs := make(chan job)
	errs := make([]error, len(s.envs)*len(spec.Groups))
	for e := range s.envs {
		s.envs[e].laws = make([]tabulated, len(spec.Groups))
		s.envs[e].exact = make([]NodeLifetime, len(spec.Groups))
	}
	var wg sync.WaitGroup
	for range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for jb := range jobs {
				g := spec.Groups[jb.g]
				env := Environment{Climate: spec.Climate, Conditions: s.envs[jb.e].cond}
				l, err := NewNodeLifetime(g.Node, env)
				if err != nil {
					errs[jb.e*len(spec.Groups)+jb.g] = causeErr(fn, fmt.Sprintf("group %q: Node", s.names[jb.g]), g.Node.Name, "lifetime law", err)
					continue
				}
				s.envs[jb.e].exact[jb.g] = l
				s.envs[jb.e].laws[jb.g] = tabulate(l)
			}
		}()
	}
	for e := range s.envs {
		for g := range spec.Groups {
			jobs <- job{e, g}
		}
	}
	close(jobs)
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return Site{}, err
		}
	}
	for e := range s.envs {
		groups := make([]FleetLawGroup, len(spec.Groups))
		for g := range spec.Groups {
			groups[g] = FleetLawGroup{Name: s.names[g], Lifetime: s.envs[e].laws[g], Count: spec.Groups[g].Count}
		}
		f, err := NewFleetOfLaws(groups)
		if err != nil {
			return Site{}, err
		}
		s.envs[e].fleet = f
	}
	return s, nil
}

// hermiteNodes returns the Gauss–Hermite nodes (as standard normal values)
// and weights (summing to 1) of an n-point rule, or the single node 0 when
// sd is 0.
func hermiteNodes(sd float64, n int) (z, w []float64) {
	if sd == 0 {
		return []float64{0}, []float64{1}
	}
	x := make([]float64, n)
	w = make([]float64, n)
	quad.Hermite{}.FixedLocations(x, w, math.Inf(-1), math.Inf(1))
	z = make([]float64, n)
	tot := 0.0
	for i := range x {
		z[i] = math.Sqrt2 * x[i]
		tot += w[i]
	}
	for i := range w {
		w[i] /= tot
	}
	return z, w
}

// Groups returns the number of groups.
func (s Site) Groups() int { return len(s.names) }

// Name returns group i's name ("" when i is out of range).
func (s Site) Name(i int) string {
	if i < 0 || i >= len(s.names) {
		return ""
	}
	return s.names[i]
}

// Size returns the number of nodes.
func (s Site) Size() int64 {
	n := int64(0)
	for _, g := range s.spec.Groups {
		n += g.Count
	}
	return n
}

func (s Site) mix(fn string, each func(e *siteEnv) (dist.Law, error)) (dist.Law, error) {
	if len(s.envs) == 0 {
		return nil, paramErr(fn, "s", "zero Site", "must be built by NewSite")
	}
	w := make([]float64, len(s.envs))
	laws := make([]dist.Law, len(s.envs))
	for e := range s.envs {
		l, err := each(&s.envs[e])
		if err != nil {
			return nil, err
		}
		w[e], laws[e] = s.envs[e].w, l
	}
	if len(laws) == 1 {
		return laws[0], nil
	}
	if _, ok := laws[0].(orderstat.Count); ok {
		// Counts: a finite discrete law, mixed exactly.
		l, err := dist.Mixture(w, laws)
		if err != nil {
			return nil, causeErr(fn, "mixture over the shared factors", len(laws), "mixture", err)
		}
		return l, nil
	}
	return newSharedMixture(fn, w, laws), nil
}

// NodeLifetime returns the lifetime law (s) of a node of group i: the
// mixture over the shared factors of its conditional laws.
func (s Site) NodeLifetime(i int) (dist.Law, error) {
	const fn = "Site.NodeLifetime"
	if i < 0 || i >= len(s.names) {
		return nil, paramErr(fn, "i", i, fmt.Sprintf("must be in [0, %d)", len(s.names)))
	}
	return s.mix(fn, func(e *siteEnv) (dist.Law, error) { return e.laws[i], nil })
}

// Conditional returns the lifetime law of a node of group i given the
// shared factors c (computed afresh, not tabulated).
func (s Site) Conditional(i int, c Conditions) (NodeLifetime, error) {
	const fn = "Site.Conditional"
	if i < 0 || i >= len(s.names) {
		return NodeLifetime{}, paramErr(fn, "i", i, fmt.Sprintf("must be in [0, %d)", len(s.names)))
	}
	return NewNodeLifetime(s.spec.Groups[i].Node, Environment{Climate: s.spec.Climate, Conditions: c})
}

// FirstFailure returns the law of the date (s) of the first flat battery in
// the fleet: the mixture over the shared factors of Π_g S_g(t)^{n_g}.
func (s Site) FirstFailure() (dist.Law, error) {
	return s.mix("Site.FirstFailure", func(e *siteEnv) (dist.Law, error) { return e.fleet.FirstFailure() })
}

// GroupFirstFailure returns the law of the date (s) of the first flat
// battery among group i's nodes.
func (s Site) GroupFirstFailure(i int) (dist.Law, error) {
	const fn = "Site.GroupFirstFailure"
	if i < 0 || i >= len(s.names) {
		return nil, paramErr(fn, "i", i, fmt.Sprintf("must be in [0, %d)", len(s.names)))
	}
	return s.mix(fn, func(e *siteEnv) (dist.Law, error) {
		return orderstat.MinOfGroups([]orderstat.Group{{Law: e.laws[i], Count: s.spec.Groups[i].Count}})
	})
}

// FractionFailed returns the law of the date (s) by which a fraction q of
// the fleet (at least one node) has a flat battery.
func (s Site) FractionFailed(q float64) (dist.Law, error) {
	return s.mix("Site.FractionFailed", func(e *siteEnv) (dist.Law, error) { return e.fleet.FractionFailed(q) })
}

// FailedBy returns the law of the number of flat batteries at the date t
// (s): the mixture over the shared factors of Poisson-binomial counts, so
// its spread includes what the fleet shares.
func (s Site) FailedBy(t float64) (dist.Law, error) {
	return s.mix("Site.FailedBy", func(e *siteEnv) (dist.Law, error) { return e.fleet.FailedBy(t) })
}

// NoFailureBefore returns the probability that no battery is flat by t (s).
func (s Site) NoFailureBefore(t float64) float64 {
	p := 0.0
	for _, e := range s.envs {
		p += e.w * e.fleet.NoFailureBefore(t)
	}
	return math.Min(1, math.Max(0, p)) // the weights sum to 1 within rounding
}

// EnergyBinds returns the share of group i's nodes whose life ends by their
// energy running out, not by the calendar limit (1 without a limit).
func (s Site) EnergyBinds(i int) float64 {
	if i < 0 || i >= len(s.names) {
		return math.NaN()
	}
	p := 0.0
	for _, e := range s.envs {
		p += e.w * e.exact[i].EnergyBinds()
	}
	return math.Min(1, math.Max(0, p)) // the weights sum to 1 within rounding
}

// Warnings returns the environments' warnings for group i, without repeats.
func (s Site) Warnings(i int) []string {
	if i < 0 || i >= len(s.names) {
		return nil
	}
	seen := map[string]bool{}
	var out []string
	for _, e := range s.envs {
		for _, w := range e.exact[i].Warnings() {
			if !seen[w] {
				seen[w] = true
				out = append(out, w)
			}
		}
	}
	return out
}

// ReplacementPlan returns, for each group and for the fleet, the date by
// which the probability of any flat battery reaches risk (in (0, 1)), the
// shared factors included. The dates are planning figures; a
// safety-critical deployment needs its own margin and the maintenance
// rules that apply locally.
func (s Site) ReplacementPlan(risk float64) (Plan, error) {
	const fn = "Site.ReplacementPlan"
	if !(risk > 0 && risk < 1) {
		return Plan{}, paramErr(fn, "risk", risk, "must be in (0, 1)")
	}
	p := Plan{Risk: risk}
	for i := range s.names {
		ff, err := s.GroupFirstFailure(i)
		if err != nil {
			return Plan{}, err
		}
		node, err := s.NodeLifetime(i)
		if err != nil {
			return Plan{}, err
		}
		t := ff.Quantile(risk)
		n := float64(s.spec.Groups[i].Count)
		p.Groups = append(p.Groups, GroupPlan{Name: s.names[i], Count: s.spec.Groups[i].Count, ReplaceBy: t,
			ExpectedFailed: n * node.CDF(t), MedianLifetime: node.Quantile(0.5)})
	}
	ff, err := s.FirstFailure()
	if err != nil {
		return Plan{}, err
	}
	p.FleetReplaceBy = ff.Quantile(risk)
	return p, nil
}

// Accuracy returns the largest stated CDF error of the conditional node
// laws (the model's and the tables' together).
func (s Site) Accuracy() dist.Accuracy {
	acc := dist.Accuracy{Method: "mixture over shared factors (Gauss–Hermite) of tabulated conditional node laws"}
	for _, e := range s.envs {
		for _, l := range e.laws {
			a := l.Accuracy()
			acc.CDFAbs = math.Max(acc.CDFAbs, a.CDFAbs)
			acc.SurvivalRel = math.Max(acc.SurvivalRel, a.SurvivalRel)
			acc.TailFloor = math.Max(acc.TailFloor, a.TailFloor)
		}
	}
	return acc
}
