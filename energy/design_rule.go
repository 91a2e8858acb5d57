package energy

import (
	"fmt"
	"math"
	"slices"
)

// SharedRule is a quadrature rule over the shared factors (the cell
// batch's capacity factor and the site's temperature offset): the
// conditions at its nodes and their weights, which sum to 1. A Site adapts
// its own to the site (Site.SharedRule, Site.GroupRule); FixedSharedRule
// is a fixed product Gauss–Hermite rule. A rule from Site.GroupRule also
// estimates its own error for a law of the group (see SearchDesign). The
// zero value has no nodes. A SharedRule is an immutable value, safe for
// concurrent use.
type SharedRule struct {
	conds []Conditions
	w     []float64
	name  string
	site  *Site // the Site whose rule it is (nil: no error estimate)
	group int   // the Site's group whose laws it mixes (GroupRule)
}

// FixedSharedRule returns the product Gauss–Hermite rule of 7 nodes in
// the batch factor by 3 in the temperature offset over sh (a single node
// for a factor without spread): SearchDesign's rule when
// DesignProblem.Rule is zero, and the rule NewSite used before it adapted
// its own. It states no error of its own (on the demo site it differs
// from the Site's adapted rule by up to 5.1e-4 in a node's CDF). Errors: a
// bad SharedSpread (wrapping ErrParam).
func FixedSharedRule(sh SharedSpread) (SharedRule, error) {
	if err := sh.check("FixedSharedRule"); err != nil {
		return SharedRule{}, err
	}
	return fixedSharedRule(sh), nil
}

func fixedSharedRule(sh SharedSpread) SharedRule {
	bz, bw := hermiteNodes(sh.Batch, sharedNodesBatch)
	tz, tw := hermiteNodes(sh.Temperature, sharedNodesTemperature)
	r := SharedRule{name: fmt.Sprintf("%d × %d Gauss–Hermite nodes", len(bz), len(tz)), group: -1}
	for i := range bz {
		for j := range tz {
			r.conds = append(r.conds, Conditions{BatchFactor: 1 + sh.Batch*bz[i], TemperatureOffset: sh.Temperature * tz[j]})
			r.w = append(r.w, bw[i]*tw[j])
		}
	}
	return r
}

// SharedRule returns the rule over the shared factors that s mixes its
// laws over: NewSite raises its orders, and splits the temperature line
// where a cell's voltage curve makes the lifetime kink, until the rule's
// estimated error meets its target (see Site). A design search given it
// (DesignProblem.Rule) evaluates a candidate as the Site evaluates the
// plan; GroupRule is the same rule with its error estimate for a group's
// laws. The zero Site gives the zero rule.
func (s Site) SharedRule() SharedRule {
	r := SharedRule{name: fmt.Sprintf("the site's rule of %d nodes", len(s.envs)), group: -1}
	for _, e := range s.envs {
		r.conds = append(r.conds, e.cond)
		r.w = append(r.w, e.w)
	}
	return r
}

// GroupRule returns SharedRule with the Site's estimate of the rule's
// error for group i's laws: a design search given it (DesignProblem.Rule)
// adds to the stated error of its figure the rule's estimated error for
// the candidate's own laws, as NewSite estimates it for its own (the
// mixture at the rule's nodes against a finer rule interpolated from the
// conditional laws' probits at them, plus the finer rule's own error; see
// Site), at the target's date: for a node's law (NodeFlat, NodeQuantile)
// or for the first failure among the group's Count nodes (GroupFlat).
// Errors: i out of range, a zero Site (wrapping ErrParam).
func (s Site) GroupRule(i int) (SharedRule, error) {
	const fn = "Site.GroupRule"
	switch {
	case len(s.envs) == 0:
		return SharedRule{}, paramErr(fn, "s", "zero Site", "must be built by NewSite")
	case i < 0 || i >= len(s.names):
		return SharedRule{}, paramErr(fn, "i", i, fmt.Sprintf("must be in [0, %d)", len(s.names)))
	}
	r := s.SharedRule()
	site := s
	r.site, r.group = &site, i
	r.name = fmt.Sprintf("the site's rule of %d nodes, its error estimated for group %q", len(s.envs), s.names[i])
	return r, nil
}

// Len returns the number of the rule's nodes.
func (r SharedRule) Len() int { return len(r.w) }

// Nodes returns the conditions at the rule's nodes and their weights
// (copies).
func (r SharedRule) Nodes() ([]Conditions, []float64) {
	return slices.Clone(r.conds), slices.Clone(r.w)
}

// String names the rule ("7 × 3 Gauss–Hermite nodes").
func (r SharedRule) String() string {
	if len(r.w) == 0 {
		return "no nodes"
	}
	return r.name
}

// groupCount returns the count of the rule's group in its Site (0 for a
// rule without one).
func (r SharedRule) groupCount() int64 {
	if r.site == nil {
		return 0
	}
	return r.site.counts[r.group]
}

// probitClamp bounds the probits passed to the Site's rule probe: Φ̄(38)
// underflows float64's normal range, so nothing beyond it is lost, and the
// probe's interpolations meet no infinity.
const probitClamp = 38

// clampedProbit is probitOf(alive, dead) within ±probitClamp.
func clampedProbit(alive, dead float64) float64 {
	return max(-probitClamp, min(probitClamp, probitOf(alive, dead)))
}

// ruleErrorOf returns the Site's estimated error of its rule for kind's
// mixture (kindNode or kindFirst of group g, or kindFleet) of the
// conditional laws whose probits at the rule's nodes are Z (Z[h·E + e],
// E the rule's nodes, as nodeZ): Site's probe (probeZ: probeStart and
// probeFinish) on these probits instead of its own tables'.
func (s *Site) ruleErrorOf(Z []float64, kind lawKind, g int) float64 {
	return s.probeZ(math.NaN(), Z, kind, g, 0).total()
}
