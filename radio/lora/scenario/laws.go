package scenario

import (
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/workers"
	"github.com/joulelaw/joulelaw/orderstat"
)

// Laws are the plan's probability laws for one model: the class A cycle of
// every setting of every group (heard or not), the fleet's lifetime model
// (energy.Site: per-node lifetimes, first failures, failed counts and their
// accuracy) and the per-cycle energy laws of a group's node, of a node drawn
// from the fleet, and of the fleet's largest and smallest cycle. Every law
// is an immutable value, safe for concurrent use; each numerical law
// reports its own error (dist.Estimated, energy.Site.Accuracy).
type Laws struct {
	Model Model
	// Cycles[g][i] is the cycle of group g's nodes at
	// Model.Groups[g].AllSettings()[i].
	Cycles [][]energy.Cycle
	// SiteSpec is what Site was built from (one energy.SiteGroup per group,
	// with the group's node count); Site answers every lifetime question.
	SiteSpec energy.SiteSpec
	Site     energy.Site
	// GroupEnergy[g] is the per-cycle energy (J) of a node drawn at random
	// from group g, heard or not: the mixture of its settings' cycles with
	// the weights of AllWeights.
	GroupEnergy []dist.Law
	// GroupMax[g] is the largest per-cycle energy (J) among group g's nodes
	// in one cycle (orderstat.Max of GroupEnergy[g] over its node count).
	GroupMax []dist.Law
	// FleetEnergy is the per-cycle energy (J) of a node drawn at random from
	// the fleet: the groups' laws mixed by node count.
	FleetEnergy dist.Law
	// FleetMax and FleetMin are the largest and smallest per-cycle energy
	// (J) among all the fleet's nodes in one cycle (orderstat.MaxOfGroups,
	// MinOfGroups; the groups independent).
	FleetMax, FleetMin dist.Law
}

// Laws computes the plan's laws of m on goroutines goroutines (a count below
// 1 means 1; the per-setting cycles are built in parallel, and the result
// does not depend on the count). progress, if not nil, is told about each step (from one
// goroutine at a time). Errors name the group and setting that failed.
//
// The cost is dominated by the cycles (see the package doc: exact and fast
// for discrete cycles, numerical and slower when a jitter, a work spread or
// a wait current above the floor makes them partly continuous) and by the
// lifetime laws that Site builds lazily when asked.
func (m Model) Laws(goroutines int, progress func(step string)) (Laws, error) {
	say := func(format string, args ...any) {
		if progress != nil {
			progress(fmt.Sprintf(format, args...))
		}
	}
	s := m.Scenario
	l := Laws{Model: m, Cycles: make([][]energy.Cycle, len(m.Groups))}
	type job struct{ group, setting int }
	var jobs []job
	for gi, g := range m.Groups {
		n := len(g.AllWeights())
		l.Cycles[gi] = make([]energy.Cycle, n)
		for si := range n {
			jobs = append(jobs, job{gi, si})
		}
	}
	say("per-cycle laws for %d (group, data rate, power) settings on %d workers", len(jobs), max(1, goroutines))
	err := workers.Run(len(jobs), goroutines, func(k int) error {
		j := jobs[k]
		g := m.Groups[j.group]
		c, err := g.AllSettingCycle(j.setting)
		if err != nil {
			return groupError(j.group, g.Group.Name, fmt.Errorf("setting %v: %w", g.AllSettings()[j.setting], err))
		}
		l.Cycles[j.group][j.setting] = c
		return nil
	}, nil)
	if err != nil {
		return Laws{}, err
	}

	say("lifetime model: per-node spreads, the cell over the calendar, the shared factors")
	l.SiteSpec = energy.SiteSpec{Climate: s.Climate, Shared: s.Shared}
	for gi, g := range m.Groups {
		spec, err := g.NodeSpec(s, l.Cycles[gi])
		if err != nil {
			return Laws{}, groupError(gi, g.Group.Name, err)
		}
		l.SiteSpec.Groups = append(l.SiteSpec.Groups, energy.SiteGroup{Name: g.Group.Name, Node: spec, Count: int64(g.Group.Nodes)})
	}
	if l.Site, err = energy.NewSite(l.SiteSpec); err != nil {
		return Laws{}, err
	}

	say("per-cycle energy of the groups and the fleet, and the fleet's extremes")
	total := float64(s.TotalNodes())
	weights := make([]float64, len(m.Groups))
	groups := make([]orderstat.Group, len(m.Groups))
	for gi, g := range m.Groups {
		laws := make([]dist.Law, len(l.Cycles[gi]))
		for i, c := range l.Cycles[gi] {
			laws[i] = c.Energy()
		}
		e, err := dist.Mixture(g.AllWeights(), laws)
		if err != nil {
			return Laws{}, groupError(gi, g.Group.Name, err)
		}
		mx, err := orderstat.Max(e, int64(g.Group.Nodes))
		if err != nil {
			return Laws{}, groupError(gi, g.Group.Name, err)
		}
		l.GroupEnergy = append(l.GroupEnergy, e)
		l.GroupMax = append(l.GroupMax, mx)
		weights[gi] = float64(g.Group.Nodes) / total
		groups[gi] = orderstat.Group{Law: e, Count: int64(g.Group.Nodes)}
	}
	if l.FleetEnergy, err = dist.Mixture(weights, l.GroupEnergy); err != nil {
		return Laws{}, err
	}
	if l.FleetMax, err = orderstat.MaxOfGroups(groups); err != nil {
		return Laws{}, err
	}
	if l.FleetMin, err = orderstat.MinOfGroups(groups); err != nil {
		return Laws{}, err
	}
	return l, nil
}

// Compute builds the model of s (Build) and its laws (Model.Laws) on
// goroutines goroutines: the whole site model in one call.
func Compute(s Scenario, goroutines int, progress func(step string)) (Laws, error) {
	m, err := Build(s, progress)
	if err != nil {
		return Laws{}, err
	}
	return m.Laws(goroutines, progress)
}
