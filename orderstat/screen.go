package orderstat

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// Flag is one node flagged by Screen.
type Flag struct {
	Node      int     // index of the node in the values given
	Value     float64 // its observed value, in the laws' unit
	High      bool    // true: above the maximum's threshold; false: below the minimum's
	Threshold float64 // the threshold it crossed, in the laws' unit
	// FleetProb is the probability, under the laws, that some node of the
	// fleet is at least as extreme on its own law's scale: with one law for
	// all, P(max > Value) when High, else P(min <= Value). It is below p
	// for every flag.
	FleetProb float64
	// NodeProb is the same probability for this node alone:
	// P(X_i > Value) or P(X_i <= Value).
	NodeProb float64
}

// Screen flags the nodes whose observed values are unlikely under their
// laws, all n nodes taken together. Each value is first put on its own
// law's probability scale, U_i = F_i(x_i), uniform under the laws; a node
// is flagged high when U_i exceeds the upper p-quantile of the largest of n
// uniforms, i.e. when
//
//	P(max over the fleet of the U's > U_i) = -expm1(n·log1p(-S_i(x_i))) < p
//
// and low when it is below the lower p-quantile of the smallest. With one
// law for every node this is exactly "above Max(law, n).UpperQuantile(p)"
// (or below Min(law, n).Quantile(p)). Under the laws, with probability at
// least 1 - 2p no node is flagged at all.
//
// laws holds one law per value, or a single law for every node. values
// must be non-empty and finite, p in (0, 1). The flags are returned in node
// order, each with the probability behind it and the node's threshold (the
// value of its own law at that level).
func Screen(values []float64, laws []dist.Law, p float64) ([]Flag, error) {
	const fn = "Screen"
	if len(values) == 0 {
		return nil, paramErr(fn, "values", "[]", "must not be empty")
	}
	if len(laws) != 1 && len(laws) != len(values) {
		return nil, paramErr(fn, "laws", fmt.Sprintf("len %d", len(laws)), fmt.Sprintf("must have length 1 or the length of values (%d)", len(values)))
	}
	if !(p > 0 && p < 1) {
		return nil, paramErr(fn, "p", p, "must be in (0, 1)")
	}
	for i, v := range values {
		if !finite(v) {
			return nil, paramErr(fn, fmt.Sprintf("values[%d]", i), v, "must be finite")
		}
	}
	gs := make([]group, len(laws))
	for i, l := range laws {
		g, err := newGroup(fn, "laws", i, l, 1)
		if err != nil {
			return nil, err
		}
		gs[i] = g
	}
	n := float64(len(values))
	// The per-node tail level at which the fleet-wide probability is p.
	lv := math.Log1p(-p) / n
	level := -math.Expm1(lv)
	var flags []Flag
	for i, v := range values {
		g := &gs[0]
		if len(gs) > 1 {
			g = &gs[i]
		}
		pt := g.eval(v)
		if fleet := -math.Expm1(n * pt.logF()); pt.s < level && fleet < p {
			flags = append(flags, Flag{Node: i, Value: v, High: true, Threshold: g.levelQuantile(math.Exp(lv), level), FleetProb: fleet, NodeProb: pt.s})
			continue
		}
		// Low: P(min over the fleet of the U's <= U_i) = 1 - (1 - F_i)^n.
		if fleet := -math.Expm1(n * pt.logS()); pt.f < level && fleet < p {
			flags = append(flags, Flag{Node: i, Value: v, Threshold: g.levelQuantile(level, math.Exp(lv)), FleetProb: fleet, NodeProb: pt.f})
		}
	}
	return flags, nil
}

// String prints a flag compactly.
func (f Flag) String() string {
	dir := "low"
	if f.High {
		dir = "high"
	}
	return fmt.Sprintf("node %d %s: %.6g vs %.6g (fleet p=%.3g, node p=%.3g)", f.Node, dir, f.Value, f.Threshold, f.FleetProb, f.NodeProb)
}
