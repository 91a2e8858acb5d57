package energy

import (
	"fmt"
	"slices"
)

// SharedRule is a quadrature rule over the shared factors (the cell
// batch's capacity factor and the site's temperature offset): the
// conditions at its nodes and their weights, which sum to 1. A Site adapts
// its own to the site (Site.SharedRule); FixedSharedRule is a fixed
// product Gauss–Hermite rule. The zero value has no nodes. A SharedRule is
// an immutable value, safe for concurrent use.
type SharedRule struct {
	conds []Conditions
	w     []float64
	name  string
}

// FixedSharedRule returns the product Gauss–Hermite rule of 7 nodes in
// the batch factor by 3 in the temperature offset over sh (a single node
// for a factor without spread): SearchDesign's rule when
// DesignProblem.Rule is zero, and the rule NewSite used before it adapted
// its own. Errors: a bad SharedSpread (wrapping ErrParam).
func FixedSharedRule(sh SharedSpread) (SharedRule, error) {
	if err := sh.check("FixedSharedRule"); err != nil {
		return SharedRule{}, err
	}
	return fixedSharedRule(sh), nil
}

func fixedSharedRule(sh SharedSpread) SharedRule {
	bz, bw := hermiteNodes(sh.Batch, sharedNodesBatch)
	tz, tw := hermiteNodes(sh.Temperature, sharedNodesTemperature)
	r := SharedRule{name: fmt.Sprintf("%d × %d Gauss–Hermite nodes", len(bz), len(tz))}
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
// plan. The zero Site gives the zero rule.
func (s Site) SharedRule() SharedRule {
	r := SharedRule{name: fmt.Sprintf("the site's rule of %d nodes", len(s.envs))}
	for _, e := range s.envs {
		r.conds = append(r.conds, e.cond)
		r.w = append(r.w, e.w)
	}
	return r
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
