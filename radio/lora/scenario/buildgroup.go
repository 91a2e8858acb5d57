package scenario

import (
	"fmt"
	"reflect"
	"slices"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// BuildGroup returns the model of group gi of the scenario s, where s is
// base's scenario (base built by Build) with group gi changed — its
// interval, jitter, payload, link settings, cell or node — and nodes or
// cells perhaps appended: what a design search builds for each candidate.
// It gives what Build(s).Groups[gi] gives, up to the collision solve's
// tolerance (the solve stops when a round changes the transmissions per
// report and the shares sent by less than 1e-13; TestBuildGroupAsBuild
// measures the difference), for a fraction of the cost:
//
//   - the ADR laws of the other groups, and group gi's when its placement
//     (radii) is unchanged, are base's (they depend on the link alone);
//   - the collision and retransmission solve runs over the groups of
//     group gi's gateway alone (the groups of other gateways neither load
//     its channels nor book its answers: theirs stay base's; over all of
//     them when group gi moves to another gateway), and starts
//     from base's solution (the other groups' loads and group gi's own per
//     data rate) instead of from one frame a report: a candidate moves the
//     loads a little, and the rounds settle in fewer steps;
//   - only group gi's class A cycle is described.
//
// When s differs from base's scenario anywhere else (the region, the
// environment, the gateways, another group's fields), it builds s in full
// with Build. Errors as Build's, and for gi out of range.
func BuildGroup(base Model, s Scenario, gi int) (GroupModel, error) {
	if gi < 0 || gi >= len(s.Groups) {
		return GroupModel{}, &FieldError{Field: "group", Value: gi, Rule: fmt.Sprintf("must index the scenario's %d groups", len(s.Groups))}
	}
	if !base.sameExcept(s, gi) {
		m, err := Build(s, nil)
		if err != nil {
			return GroupModel{}, err
		}
		return m.Groups[gi], nil
	}
	if err := s.Check(); err != nil {
		return GroupModel{}, err
	}
	m := Model{Scenario: s, Groups: slices.Clone(base.Groups)}
	for i := range m.Groups {
		// The solve writes into PerDR: base's stays as it is.
		m.Groups[i].PerDR = slices.Clone(m.Groups[i].PerDR)
	}
	bg, g := base.Scenario.Groups[gi], s.Groups[gi]
	var settled *lora.Settled
	if g.InnerRadius == bg.InnerRadius && g.OuterRadius == bg.OuterRadius {
		settled = &base.Groups[gi].Settled
	}
	gm, err := newGroupModel(s, gi, s.pathLoss(), settled)
	if err != nil {
		return GroupModel{}, err
	}
	// Group gi's solve starts where base's ended at each data rate both use.
	for k := range gm.PerDR {
		if d, ok := base.Groups[gi].drModel(gm.PerDR[k].DR); ok {
			dm := &gm.PerDR[k]
			dm.Frames, dm.RX1Sent, dm.RX2Sent, dm.RX1Fallback = d.Frames, d.RX1Sent, d.RX2Sent, d.RX1Fallback
		}
	}
	m.Groups[gi] = gm
	only := g.Gateway
	if g.Gateway != bg.Gateway {
		only = -1 // both gateways' loads move: solve them all
	}
	if err := m.solveCollisions(only); err != nil {
		return GroupModel{}, err
	}
	if err := m.Groups[gi].describe(s); err != nil {
		return GroupModel{}, groupError(gi, g.Name, err)
	}
	return m.Groups[gi], nil
}

// sameExcept tells whether s is m's scenario but for group gi, appended
// nodes and cells, and what the model does not read (names, plan, design):
// the same region, environment and gateways, as many groups, and every
// other group equal field by field.
func (m Model) sameExcept(s Scenario, gi int) bool {
	b := m.Scenario
	if len(m.Groups) != len(s.Groups) || len(b.Groups) != len(s.Groups) || b.Region != s.Region || b.Environment != s.Environment ||
		!reflect.DeepEqual(b.Gateways, s.Gateways) {
		return false
	}
	for h := range s.Groups {
		if h != gi && !reflect.DeepEqual(b.Groups[h], s.Groups[h]) {
			return false
		}
	}
	return true
}
