package energy

import (
	"fmt"
	"math"
	"reflect"
	"slices"

	"gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/workers"
	"github.com/joulelaw/joulelaw/orderstat"
)

// Caps on a Site.
const (
	MaxSiteGroups = 256 // groups in one SiteSpec
	// sharedNodesBatch and sharedNodesTemperature are the fixed
	// Gauss–Hermite nodes over the shared batch factor and temperature
	// offset of the design search's target (design_target.go); Site's own
	// rule adapts (site_rule.go).
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
// factors of the conditionally independent laws.
//
// The mixture is a product rule over the batch factor and the temperature
// offset (one node for a factor without spread): Gauss–Hermite over the
// line, or, where a cell's voltage curve puts a kink in the lifetime
// against the temperature offset, Gauss–Legendre in the normal
// probability on each piece between kinks (see site_rule.go). Its order
// rises, factor by factor, until its estimated error for every group's
// node law and first failure and for the fleet's first failure is below
// 0.01 (or 31 nodes a factor, 400 in all): a shared factor that moves
// lifetimes by more than the width of the conditional fleet laws (a first
// failure among many nodes is then a near step of the shared factor)
// gets more nodes. Each conditional node law is tabulated once on an
// adaptive grid of times; groups whose node models are the same number
// for number (copies that differ only in their names, counts or periods'
// spread, a period entering a lifetime through its mean) share one table
// at each node, and groups of one count with the same tables share their
// stated errors too.
//
// Every law's Accuracy states, at the worst of a ladder of its quantiles
// and of the nodes' conditional 5–95 % points, the conditional node laws'
// error where the law reads them (a first failure among n nodes moves by
// at most n·(1 − F)^(n−1)·δ for a node error δ at F, with F and δ taken
// where they are) plus the rule's estimated error; internal/lifesim's
// validation and closed forms test it (TestSiteSharedDominatedClosedForm).
// The failed counts (FailedBy) state their Poisson-binomial error only;
// Accuracy, the node laws' largest, is the rule's bound to read beside
// them.
//
// A Site is an immutable value, safe for concurrent use.
type Site struct {
	spec   SiteSpec
	envs   []siteEnv
	names  []string
	counts []int64
	fac    [2]sharedFactor // the rule over the batch factor and the temperature offset
	trunc  float64         // the normal mass beyond the fine grid's range
	tLo    float64         // the earliest table start (s)
	tHi    float64         // the latest table end (s)
	// Stated CDF errors of the node laws, the groups' first failures and
	// the fleet's first failure.
	nodeAcc, firstAcc []float64
	fleetAcc          float64
	// slope[g] bounds the slope of a first failure among group g's nodes
	// against their probit, cell by cell (slopeBound), slope1 a node
	// law's.
	slope  []slopeBound
	slope1 slopeBound
	// sure[g] is the probit from which a first failure among group g's
	// nodes is certain to double precision (firstSure).
	sure []float64
	// twin[g] is the first group whose conditional tables are group g's
	// at every node of the rule and whose count is g's (g itself when no
	// earlier group's are): such groups' laws are the same law, their
	// stated errors computed once.
	twin []int
	// same[g] is the first group whose conditional tables are group g's
	// at every node of the rule, whatever its count (g itself when no
	// earlier group's are): the fleet's laws read such groups' probits
	// once.
	same []int
	// lazy holds the moments, stated errors and asked quantiles of the
	// node laws, the groups' first failures and the fleet's, computed on
	// first use and kept for every later call (twins share theirs).
	lazy *siteLazy
}

// siteLazy holds a Site's laws' lazily computed state: node[g] and
// first[g] for group g's node law and first failure (the same pointer for
// twins), fleet for the fleet's first failure.
type siteLazy struct {
	node, first []*mixLazy
	fleet       *mixLazy
}

type siteEnv struct {
	w      float64
	cond   Conditions
	iu, iv int            // the node's indices in the factors' rules
	laws   []tabulated    // per group, the conditional node law tabulated
	exact  []NodeLifetime // per group, the conditional node law
	fleet  Fleet
}

// NewSite validates spec and builds the conditional laws. Errors name the
// group and field (wrapping ErrParam).
func NewSite(spec SiteSpec) (Site, error) {
	return buildSite(spec, [2]int{len(sharedOrders) - 1, len(sharedOrders) - 1}, sharedTol)
}

// buildSite is NewSite with the rule's highest level per factor (an
// index into sharedOrders) and the target of its estimated error.
func buildSite(spec SiteSpec, top [2]int, tol float64) (Site, error) {
	return buildSiteFrom(spec, [2]int{}, top, tol)
}

// buildSiteFrom is buildSite with the rule's first level per factor
// (start, at most top; a test's reference rule).
func buildSiteFrom(spec SiteSpec, start, top [2]int, tol float64) (Site, error) {
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
		s.counts = append(s.counts, g.Count)
		if j := slices.Index(s.counts, g.Count); j < i {
			s.slope = append(s.slope, s.slope[j]) // the same count: the same bounds
			s.sure = append(s.sure, s.sure[j])
		} else {
			s.slope = append(s.slope, newSlopeBound(g.Count))
			s.sure = append(s.sure, firstSure(g.Count))
		}
	}
	s.slope1 = newSlopeBound(1)
	sds := [2]float64{spec.Shared.Batch, spec.Shared.Temperature}
	var kinks [2][]float64
	if sds[1] > 0 {
		for _, k := range siteKinks(spec) {
			kinks[1] = append(kinks[1], k/sds[1])
		}
	}
	for d := range 2 {
		if sds[d] > 0 {
			s.trunc += 2 * normSurv(sharedFineZ)
		}
	}
	type key struct {
		g    int
		u, v float64
	}
	type built struct {
		l  NodeLifetime
		tb *tabulated // in the environment's laws where it was built
	}
	cache := map[key]*built{} // into the levels' out, which the map keeps
	// leaders holds, per group and temperature offset, the first node
	// built there (nil where it failed): its settings serve the others.
	type groupOffset struct {
		g int
		v float64
	}
	leaders := map[groupOffset]*node{}
	months := &monthCache{}
	rules := newGLRules() // read by every node built here
	level := start
	for {
		for d := range 2 {
			s.fac[d] = newSharedFactor(sds[d] > 0, kinks[d], sharedOrders[level[d]])
		}
		// The conditional laws at the rule's nodes not built before (in
		// parallel; each result lands in its own slot, so the outcome does
		// not depend on the schedule).
		// Each job's table is built in its environment's laws (todoEnv:
		// the environment's index).
		G := len(spec.Groups)
		s.envs = make([]siteEnv, 0, len(s.fac[0].z)*len(s.fac[1].z))
		var todo []key
		var todoEnv []int
		for iu, u := range s.fac[0].z {
			for iv, v := range s.fac[1].z {
				cond := Conditions{BatchFactor: 1 + sds[0]*u, TemperatureOffset: sds[1] * v}
				s.envs = append(s.envs, siteEnv{w: s.fac[0].w[iu] * s.fac[1].w[iv], cond: cond, iu: iu, iv: iv,
					laws: make([]tabulated, G), exact: make([]NodeLifetime, G)})
				for g := range spec.Groups {
					if _, ok := cache[key{g, u, v}]; !ok {
						todo = append(todo, key{g, u, v})
						todoEnv = append(todoEnv, len(s.envs)-1)
					}
				}
			}
		}
		// The node models first (cheap), then one table for each model
		// that no other group has at the same shared point (the costly
		// part): groups whose models are the same number for number
		// (sameNodeModel) share their table, a law read the same way.
		//
		// A group's settings do not depend on the batch factor: the first
		// job of each group and temperature offset (its leader) is built
		// first, and the others read its settings (Environment.settings),
		// built again only where it failed. Each job's error is its own,
		// the lowest job's returned, as in one pass.
		out := make([]built, len(todo))
		errs := make([]error, len(todo))
		build := func(i int, settings []nodeSetting) {
			k := todo[i]
			g := spec.Groups[k.g]
			cond := Conditions{BatchFactor: 1 + sds[0]*k.u, TemperatureOffset: sds[1] * k.v}
			env := Environment{Climate: spec.Climate, Conditions: cond, rules: rules, settings: settings}
			// The month table depends on the cell's Thermal, the start
			// month and the shifted climate alone: the batch factors and
			// the groups with the same cell share it (the same table as
			// built afresh; where it fails, NewNodeLifetime reports it).
			if mt, err := months.get(fn, g.Node, env); err == nil {
				env.months = mt
			}
			l, err := NewNodeLifetime(g.Node, env)
			if err != nil {
				errs[i] = causeErr(fn, fmt.Sprintf("group %q: Node", s.names[k.g]), g.Node.Name,
					fmt.Sprintf("lifetime law at batch factor %.4g and temperature offset %+.3g °C", cond.batch(), cond.TemperatureOffset), err)
				return
			}
			out[i].l = l
		}
		var first, rest []int
		for i, k := range todo {
			if _, ok := leaders[groupOffset{k.g, k.v}]; ok {
				rest = append(rest, i)
				continue
			}
			leaders[groupOffset{k.g, k.v}] = nil // this level's job i leads
			first = append(first, i)
		}
		_ = forEachOnTwo(len(first), func(j int) error { build(first[j], nil); return nil })
		for _, i := range first {
			if k := todo[i]; errs[i] == nil {
				leaders[groupOffset{k.g, k.v}] = out[i].l.n
			}
		}
		_ = forEachOnTwo(len(rest), func(j int) error {
			var settings []nodeSetting
			k := todo[rest[j]]
			if n := leaders[groupOffset{k.g, k.v}]; n != nil {
				settings = n.settings
			}
			build(rest[j], settings)
			return nil
		})
		for _, err := range errs {
			if err != nil {
				return Site{}, err
			}
		}
		// same[i] is the earlier job (in todo) whose model job i's is,
		// or i: todo lists a shared point's groups in order, so the first
		// of a kind is built and the others wait for it.
		same := make([]int, len(todo))
		for i, k := range todo {
			same[i] = i
			for j := i - 1; j >= 0 && todo[j].u == k.u && todo[j].v == k.v; j-- {
				if same[j] == j && sameNodeModel(out[j].l.n, out[i].l.n) {
					same[i] = j
				}
			}
		}
		var own []int
		for i := range todo {
			if same[i] == i {
				own = append(own, i)
			}
		}
		// Each worker's tables' working memory serves every law it
		// builds in turn (tabulateWith).
		_ = workers.RunEach(len(own), 2, func() *tableScratch { return &tableScratch{} }, func(sc *tableScratch, i int) error {
			j := own[i]
			dst := &s.envs[todoEnv[j]].laws[todo[j].g]
			*dst = tabulateWith(sc, out[j].l)
			out[j].tb = dst
			return nil
		}, nil)
		for i, k := range todo {
			if j := same[i]; j != i {
				out[i].tb = out[j].tb
			}
			cache[k] = &out[i]
		}
		s.tLo, s.tHi = math.Inf(1), 0
		for e := range s.envs {
			env := &s.envs[e]
			u, v := s.fac[0].z[env.iu], s.fac[1].z[env.iv]
			for g := range spec.Groups {
				b := cache[key{g, u, v}]
				if b.tb != &env.laws[g] {
					env.laws[g] = *b.tb // another group's, or an earlier level's
				}
				env.exact[g] = b.l
				s.tLo = min(s.tLo, env.laws[g].t[0])
				s.tHi = max(s.tHi, env.laws[g].t[len(env.laws[g].t)-1])
			}
		}
		s.same, s.twin = s.twins()
		// The rule's estimated error for the node laws and the first
		// failures; refine the factor whose part is the larger.
		s.fitFine()
		parts, worst := s.probeRule(tol)
		if worst <= tol {
			break
		}
		d := 0
		if parts[1] > parts[0] {
			d = 1
		}
		if sds[d] == 0 || level[d] >= top[d] {
			d = 1 - d
		}
		if sds[d] == 0 || level[d] >= top[d] {
			break
		}
		// The next order that adds nodes (a piece keeps at least
		// sharedPieceMin or sharedSmallMin).
		next := level[d] + 1
		for next < top[d] && len(newSharedFactor(true, kinks[d], sharedOrders[next]).z) == len(s.fac[d].z) {
			next++
		}
		if len(newSharedFactor(true, kinks[d], sharedOrders[next]).z)*len(s.fac[1-d].z) > sharedMaxEnvs {
			break
		}
		level[d] = next
	}
	s.lazy = &siteLazy{node: make([]*mixLazy, len(s.names)), first: make([]*mixLazy, len(s.names)), fleet: newMemoLazy()}
	for g, tw := range s.twin {
		if tw == g {
			s.lazy.node[g], s.lazy.first[g] = newMemoLazy(), newMemoLazy()
		} else {
			s.lazy.node[g], s.lazy.first[g] = s.lazy.node[tw], s.lazy.first[tw]
		}
	}
	for e := range s.envs {
		groups := make([]FleetLawGroup, len(spec.Groups))
		for g := range spec.Groups {
			groups[g] = FleetLawGroup{Name: s.names[g], Lifetime: &s.envs[e].laws[g], Count: spec.Groups[g].Count}
		}
		f, err := NewFleetOfLaws(groups)
		if err != nil {
			return Site{}, err
		}
		s.envs[e].fleet = f
	}
	return s, nil
}

// twins returns, for each group, the first group whose conditional
// tables are the group's own at every environment (one table shared:
// buildSite builds one table for a node model that two groups have), or
// the group itself (same), and the first such group of the same count
// (twin).
func (s *Site) twins() (same, twin []int) {
	same, twin = make([]int, len(s.names)), make([]int, len(s.names))
	for g := range s.names {
		same[g], twin[g] = g, g
		for j := range g {
			if same[j] != j {
				continue
			}
			shared := true
			for e := range s.envs {
				if s.envs[e].laws[j].lz != s.envs[e].laws[g].lz {
					shared = false
					break
				}
			}
			if shared {
				same[g] = j
				break
			}
		}
		for j := range g {
			if twin[j] == j && same[j] == same[g] && s.counts[j] == s.counts[g] {
				twin[g] = j
				break
			}
		}
	}
	return same, twin
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

// siteMethod returns the method text of the Site's laws.
func (s Site) siteMethod() string {
	r := func(d int) string {
		f := s.fac[d]
		switch {
		case len(f.z) == 1:
			return "1 node"
		case len(f.edges) > 2:
			return fmt.Sprintf("%d nodes in %d pieces", len(f.z), len(f.edges)-1)
		}
		return fmt.Sprintf("%d nodes", len(f.z))
	}
	return fmt.Sprintf("mixture over the shared factors (batch %s, temperature %s; error estimated against an interpolated fine rule) of tabulated conditional laws", r(0), r(1))
}

// mixStated is mix with the mixture's stated CDF error from stated, for
// kind's law (group g, rank k: seedFor seeds its quantile searches).
func (s Site) mixStated(fn string, stated func() float64, kind lawKind, g int, k int64, each func(e *siteEnv) (dist.Law, error)) (dist.Law, error) {
	l, err := s.mix(fn, each)
	if err != nil {
		return nil, err
	}
	if m, ok := l.(sharedMixture); ok {
		sm := newStatedMixture(m.name, m.w, m.laws, s.siteMethod(), stated)
		if lz := s.lazyFor(kind, g); lz != nil {
			sm.lz = lz
		}
		sm.corners = s.corners()
		sm.seed = s.seedFor(kind, g, k)
		// A node law and a group's first failure are cheap to evaluate
		// (their tables, and the minimum in closed form: about 3 µs in
		// the demo): their searches between the corners cost less than
		// the seed's (0.3 and 0.6 of their quantile time in the demo).
		// The fleet's first failure (every group's tables) and a k-th
		// failure keep the seed first. The corners' search lands on a
		// calendar limit's atom exactly where the seeded one ended up to
		// 1e-13 above it: both within the searches' 1e-12.
		sm.cornersFirst = kind == kindFirst || kind == kindNode
		// A k-th failure's components are counts' convolutions, each
		// giving both tails at once: its searches read both.
		sm.bothTails = kind == kindKth
		sm.quick = s.quickFor(kind, g)
		if q := sm.quick; q != nil && kind == kindFleet {
			sm.quick = func(i int) (func(float64) float64, float64, float64, float64) {
				surv, lo, med, hi := q(i)
				if math.IsNaN(lo) || math.IsNaN(hi) {
					lo, hi = s.fleetRange(i)
				}
				return surv, lo, med, hi
			}
		}
		return sm, nil
	}
	return l, nil
}

// fleetRange returns, for the fleet's first failure at environment e, a
// time lo (s) where its CDF is at most 1e-15 and a time hi (s) where its
// survival is, from the groups' tables alone (the moment quadrature's
// range, componentQuad, in place of the order statistic's own 1e-15
// quantiles: two table inversions a group instead of two searches of the
// fleet's law). With G groups, each group's first failure among its n_g
// nodes reaches 1e-15/G at its node law's 1 − (1 − 1e-15/G)^(1/n_g) point:
// the earliest of those is lo, the fleet's CDF there at most the sum of
// the groups' (the union bound), 1e-15; the fleet's survival is at most
// any group's first failure's, so the earliest of their 1e-15 upper
// points, each the node law's (1e-15)^(1/n_g) upper point, is hi.
func (s Site) fleetRange(e int) (lo, hi float64) {
	env := &s.envs[e]
	lo, hi = math.Inf(1), math.Inf(1)
	share := 1e-15 / float64(len(s.names))
	for g := range s.names {
		tb, n := &env.laws[g], float64(s.counts[g])
		lo = min(lo, tb.Quantile(-math.Expm1(math.Log1p(-share)/n)))
		hi = min(hi, tb.UpperQuantile(math.Exp(math.Log(1e-15)/n)))
	}
	return lo, hi
}

// lazyFor returns the lazily computed state that kind's law of group g
// keeps from call to call (nil for a k-th failure: each call its own).
func (s Site) lazyFor(kind lawKind, g int) *mixLazy {
	if s.lazy == nil {
		return nil
	}
	switch kind {
	case kindNode:
		return s.lazy.node[g]
	case kindFirst:
		return s.lazy.first[g]
	case kindFleet:
		return s.lazy.fleet
	}
	return nil
}

// corners returns the environments at the corners of the rule's product
// (each factor's first and last node), without repeats: where the
// conditional laws are the earliest and the latest when they move
// monotonically with each factor.
func (s Site) corners() []int {
	nu, nv := len(s.fac[0].z), len(s.fac[1].z)
	var cs []int
	for _, iu := range []int{0, nu - 1} {
		for _, iv := range []int{0, nv - 1} {
			if e := iu*nv + iv; !slices.Contains(cs, e) {
				cs = append(cs, e)
			}
		}
	}
	return cs
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
	return s.mixStated(fn, func() float64 { return s.nodeAcc[i] }, kindNode, i, 0, func(e *siteEnv) (dist.Law, error) { return &e.laws[i], nil })
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
	return s.mixStated("Site.FirstFailure", func() float64 { return s.fleetAcc }, kindFleet, 0, 0, func(e *siteEnv) (dist.Law, error) { return e.fleet.FirstFailure() })
}

// GroupFirstFailure returns the law of the date (s) of the first flat
// battery among group i's nodes.
func (s Site) GroupFirstFailure(i int) (dist.Law, error) {
	const fn = "Site.GroupFirstFailure"
	if i < 0 || i >= len(s.names) {
		return nil, paramErr(fn, "i", i, fmt.Sprintf("must be in [0, %d)", len(s.names)))
	}
	return s.mixStated(fn, func() float64 { return s.firstAcc[i] }, kindFirst, i, 0, func(e *siteEnv) (dist.Law, error) {
		return orderstat.MinOfGroups([]orderstat.Group{{Law: &e.laws[i], Count: s.spec.Groups[i].Count}})
	})
}

// FractionFailed returns the law of the date (s) by which a fraction q of
// the fleet (at least one node) has a flat battery.
func (s Site) FractionFailed(q float64) (dist.Law, error) {
	k := max(1, int64(math.Ceil(q*float64(s.Size()))))
	stated := func() float64 { _, _, st := s.lawError(kindKth, 0, k); return st }
	return s.mixStated("Site.FractionFailed", stated, kindKth, 0, k, func(e *siteEnv) (dist.Law, error) { return e.fleet.FractionFailed(q) })
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
	return min(1, max(0, p)) // the weights sum to 1 within rounding
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
	return min(1, max(0, p)) // the weights sum to 1 within rounding
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

// Accuracy returns the largest stated CDF error of the groups' node laws
// (the conditional laws' and the shared rule's together; see Site) and
// the largest relative tail errors of the conditional node laws.
func (s Site) Accuracy() dist.Accuracy {
	acc := dist.Accuracy{Method: s.siteMethod()}
	for _, e := range s.envs {
		for _, l := range e.laws {
			a := l.Accuracy()
			acc.SurvivalRel = max(acc.SurvivalRel, a.SurvivalRel)
			acc.TailFloor = max(acc.TailFloor, a.TailFloor)
		}
	}
	for _, a := range s.nodeAcc {
		acc.CDFAbs = max(acc.CDFAbs, a)
	}
	return acc
}

// sameNodeModel reports whether the node models a and b hold the same
// numbers in every field that a lifetime law reads (the name and the
// warnings aside), bit for bit: their laws, tables and every answer are
// then the same. Two groups of a site that differ only in what the model
// reduces away (a name; a period's spread, the period entering through
// its mean only) share a table this way. An exact k-fold path (a node
// without spread) also reads the active energy's law itself: that is the
// same only for two finite discrete laws with the same atoms, so any
// other pair counts as different. TestSameNodeModelFields keeps the list
// of fields read here in step with the struct.
func sameNodeModel(a, b *node) bool {
	if a == b {
		return true
	}
	if len(a.settings) != len(b.settings) || len(a.glx) != len(b.glx) || len(a.glw) != len(b.glw) ||
		len(a.tgx) != len(b.tgx) || len(a.tgw) != len(b.tgw) {
		return false
	}
	same := func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) }
	sameAll := func(x, y []float64) bool {
		for i := range x {
			if !same(x[i], y[i]) {
				return false
			}
		}
		return true
	}
	if !same(a.nominal, b.nominal) || !same(a.batch, b.batch) || !same(a.quiescent, b.quiescent) ||
		!same(a.sdRate, b.sdRate) || !same(a.storage, b.storage) || !same(a.calendar, b.calendar) ||
		!same(a.spread.Capacity, b.spread.Capacity) || !same(a.spread.Floor, b.spread.Floor) || !same(a.spread.Active, b.spread.Active) ||
		!sameAll(a.months.floorCum[:], b.months.floorCum[:]) || !sameAll(a.months.sdCum[:], b.months.sdCum[:]) ||
		!sameAll(a.months.floorRate[:], b.months.floorRate[:]) || !sameAll(a.months.sdFactor[:], b.months.sdFactor[:]) ||
		!sameAll(a.glx, b.glx) || !sameAll(a.glw, b.glw) || !sameAll(a.tgx, b.tgx) || !sameAll(a.tgw, b.tgw) {
		return false
	}
	for i := range a.settings {
		s, t := &a.settings[i], &b.settings[i]
		if !sameAll([]float64{s.w, s.rate, s.floorP, s.usable, s.mu, s.k2, s.l3, s.l4, s.l5, s.scale, s.usableF},
			[]float64{t.w, t.rate, t.floorP, t.usable, t.mu, t.k2, t.l3, t.l4, t.l5, t.scale, t.usableF}) {
			return false
		}
		if (s.sums == nil) != (t.sums == nil) {
			return false
		}
		if s.sums != nil {
			// The exact path reads the law (its k-fold sums and support).
			x, ok1 := s.excess.(dist.Discrete)
			y, ok2 := t.excess.(dist.Discrete)
			if !ok1 || !ok2 || !reflect.DeepEqual(x, y) {
				return false
			}
		}
	}
	return true
}
