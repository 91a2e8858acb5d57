package energy

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// TargetKind says what a design target constrains.
type TargetKind int

// The targets a design can be asked to meet. Each is a statement about
// the probability p that a node (or any of a group's nodes) is flat by
// the date T, so each is checked on the same figure:
//
//	NodeFlat:     p = P(a node's life ends by T)          <= Level
//	NodeQuantile: the Level-quantile of a node's life     >= T,
//	              i.e. P(a node's life ends by T)          <= Level
//	              (T below the calendar limit, where the law is continuous)
//	GroupFlat:    p = P(any of Count nodes ends by T)      <= Level
//	              = Σ_e w_e·(1 − (1 − F_e(T))^Count)
//
// with F_e the node law given the shared factors' quadrature node e (the
// nodes are independent given them, see Site).
const (
	NodeFlat     TargetKind = iota + 1 // P(a node is flat by Date) <= Level
	NodeQuantile                       // the Level-quantile of a node's lifetime >= Date
	GroupFlat                          // P(any node of the group is flat by Date) <= Level
)

// String names the kind.
func (k TargetKind) String() string {
	switch k {
	case NodeFlat:
		return "node flat by the date"
	case NodeQuantile:
		return "lifetime quantile at least the date"
	case GroupFlat:
		return "any node of the group flat by the date"
	}
	return fmt.Sprintf("TargetKind(%d)", int(k))
}

// Target is what a design must meet: a date and a probability level (see
// TargetKind for what each kind asks).
type Target struct {
	Kind  TargetKind
	Date  float64 // T (s after deployment), finite and > 0
	Level float64 // the accepted risk r (NodeFlat, GroupFlat) or the quantile level q (NodeQuantile), in (0, 1)
}

func (t Target) check(fn, pre string) error {
	switch {
	case t.Kind != NodeFlat && t.Kind != NodeQuantile && t.Kind != GroupFlat:
		return paramErr(fn, pre+"Kind", int(t.Kind), "must be NodeFlat, NodeQuantile or GroupFlat")
	case !(t.Date > 0) || math.IsInf(t.Date, 0):
		return paramErr(fn, pre+"Date", t.Date, "must be finite and > 0 (s after deployment)")
	case !(t.Level > 0 && t.Level < 1):
		return paramErr(fn, pre+"Level", t.Level, "must be in (0, 1)")
	}
	return nil
}

// sharedRule returns the shared factors' quadrature nodes and weights: the
// Gauss–Hermite rule Site uses (sharedNodesBatch × sharedNodesTemperature
// nodes, one for a factor without spread).
func sharedRule(sh SharedSpread) ([]Conditions, []float64) {
	bz, bw := hermiteNodes(sh.Batch, sharedNodesBatch)
	tz, tw := hermiteNodes(sh.Temperature, sharedNodesTemperature)
	var conds []Conditions
	var w []float64
	for i := range bz {
		for j := range tz {
			conds = append(conds, Conditions{BatchFactor: 1 + sh.Batch*bz[i], TemperatureOffset: sh.Temperature * tz[j]})
			w = append(w, bw[i]*tw[j])
		}
	}
	return conds, w
}

// targetLaws is a candidate's node law at every shared node.
type targetLaws struct {
	w        []float64
	laws     []NodeLifetime
	calendar float64 // s; +Inf for none
}

func newTargetLaws(fn string, spec NodeSpec, clim *Climate, sh SharedSpread) (targetLaws, error) {
	conds, w := sharedRule(sh)
	tl := targetLaws{w: w, laws: make([]NodeLifetime, len(conds))}
	for e, c := range conds {
		l, err := NewNodeLifetime(spec, Environment{Climate: clim, Conditions: c})
		if err != nil {
			return targetLaws{}, causeErr(fn, "candidate node", spec.Name, "lifetime law", err)
		}
		tl.laws[e] = l
	}
	tl.calendar = tl.laws[0].Calendar()
	return tl, nil
}

// figure returns p, the target's probability (see TargetKind), and, when
// withErr is set, its stated error: each conditional law's CDF error at T
// (NodeLifetime's five-cumulant check and quadrature estimates, probed at T
// itself), weighted, and for a group propagated through 1 − (1 − F)^n,
// whose slope is n·(1 − F)^(n−1). The Gauss–Hermite rule over the shared
// factors is not included (see Site). The error costs about as much as
// the rest, so the search asks for it only where it decides.
func (tl targetLaws) figure(t Target, count int64, withErr bool) (p, errEst float64) {
	T := t.Date
	if T >= tl.calendar {
		return 1, 0
	}
	n := float64(count)
	for e, l := range tl.laws {
		f := l.CDF(T)
		eps := 0.0
		if withErr {
			eps = l.accuracyAt([]float64{T}).CDFAbs
		}
		switch t.Kind {
		case GroupFlat:
			// 1 − (1 − F)^n, from log1p so a small F keeps its digits.
			p += tl.w[e] * -math.Expm1(n*math.Log1p(-f))
			errEst += tl.w[e] * n * math.Exp((n-1)*math.Log1p(-math.Min(1, math.Max(0, f-eps)))) * eps
		default:
			p += tl.w[e] * f
			errEst += tl.w[e] * eps
		}
	}
	return math.Min(1, math.Max(0, p)), errEst
}

// nodeLaw is the mixture over the shared factors of the conditional laws.
func (tl targetLaws) nodeLaw(name string) dist.Law {
	laws := make([]dist.Law, len(tl.laws))
	for i, l := range tl.laws {
		laws[i] = l
	}
	return newSharedMixture(name, tl.w, laws)
}

// MixedNodeLifetime returns the lifetime law (s) of a node of spec at a
// site of climate clim (nil: the reference temperature) whose shared
// factors spread as shared: the mixture over the shared factors'
// Gauss–Hermite nodes of NewNodeLifetime's laws, evaluated directly (no
// tables, unlike Site): what SearchDesign evaluates at each candidate.
// Quantiles are found by bisection between the conditional laws'
// quantiles, each step one CDF per shared node. Errors as NewNodeLifetime's
// and for a bad SharedSpread (wrapping ErrParam).
func MixedNodeLifetime(spec NodeSpec, clim *Climate, shared SharedSpread) (dist.Law, error) {
	const fn = "MixedNodeLifetime"
	if err := shared.check(fn); err != nil {
		return nil, err
	}
	tl, err := newTargetLaws(fn, spec, clim, shared)
	if err != nil {
		return nil, err
	}
	return tl.nodeLaw(fn), nil
}
