package orderstat

import (
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
)

// Flag is one node flagged by Screen.
type Flag struct {
	Node      int     // index of the node in the values given
	Value     float64 // its observed value, in the laws' unit
	High      bool    // true: above the maximum's threshold; false: below the minimum's
	Threshold float64 // the threshold it crossed, in the laws' unit
	// FleetProb is the probability, under the laws, that some node of the
	// fleet is at least this extreme: P(max > Value) when High, else
	// P(min <= Value). It is below p for every flag.
	FleetProb float64
	// NodeProb is the same probability for this node alone:
	// P(X_i > Value) or P(X_i <= Value).
	NodeProb float64
}

// Screen flags the nodes whose observed values are unlikely under their
// laws, all nodes taken together: a node is flagged high when its value
// exceeds the upper p-quantile of the fleet's maximum, and low when it is
// below the lower p-quantile of the fleet's minimum. So under the laws,
// with probability at least 1 - 2p no node is flagged at all.
//
// laws holds one law per value, or a single law for every node. values
// must be non-empty and finite, p in (0, 1). The flags are returned in node
// order, each with the probability behind it.
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
	var mx, mn dist.Law
	var err error
	if len(laws) == 1 {
		if laws[0] == nil {
			return nil, paramErr(fn, "laws[0]", nil, "must not be nil")
		}
		n := int64(len(values))
		if mx, err = Max(laws[0], n); err != nil {
			return nil, err
		}
		mn, _ = Min(laws[0], n)
	} else {
		gs := make([]Group, len(laws))
		for i, l := range laws {
			if l == nil {
				return nil, paramErr(fn, fmt.Sprintf("laws[%d]", i), nil, "must not be nil")
			}
			gs[i] = Group{Law: l, Count: 1}
		}
		if mx, err = MaxOfGroups(gs); err != nil {
			return nil, err
		}
		mn, _ = MinOfGroups(gs)
	}
	hi, lo := mx.UpperQuantile(p), mn.Quantile(p)
	var flags []Flag
	for i, v := range values {
		l := laws[0]
		if len(laws) > 1 {
			l = laws[i]
		}
		switch {
		case v > hi:
			flags = append(flags, Flag{Node: i, Value: v, High: true, Threshold: hi, FleetProb: mx.Survival(v), NodeProb: l.Survival(v)})
		case v < lo:
			flags = append(flags, Flag{Node: i, Value: v, Threshold: lo, FleetProb: mn.CDF(v), NodeProb: l.CDF(v)})
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
