package energy

import (
	"math"
	"reflect"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// twinSiteSpec is TwoFactorSiteSpec with three copies of its first group
// (50 nodes, 900 s period): "g0 jittered" differs only in its name and its
// period's spread (uniform over 900 ± 90 s: the same mean, 900 s exactly,
// which is all a lifetime law reads of a period), "g0 × 60" also in its
// count, and "g0 wider" in its capacity spread (0.0500001 instead of 0.05).
func twinSiteSpec(t *testing.T) SiteSpec {
	t.Helper()
	spec := TwoFactorSiteSpec(t)
	g0 := spec.Groups[0]
	jit := g0
	jit.Name = "g0 jittered"
	jit.Node.Settings = nil
	for _, st := range g0.Node.Settings {
		c := MustCycle(st.Cycle.Active(), dist.MustUniform(810, 990), st.Cycle.FloorPower())
		jit.Node.Settings = append(jit.Node.Settings, NodeSetting{Weight: st.Weight, Cycle: c})
	}
	require.Equal(t, g0.Node.Settings[0].Cycle.Period().Mean(), jit.Node.Settings[0].Cycle.Period().Mean())
	more := g0
	more.Name, more.Count = "g0 × 60", 60
	wider := g0
	wider.Name = "g0 wider"
	wider.Node.Spread.Capacity = 0.0500001
	spec.Groups = append(spec.Groups, jit, more, wider)
	return spec
}

// Groups whose node models are the same number for number (sameNodeModel)
// share one conditional table at each of the rule's nodes; a group with
// the same count as well shares its stated errors (twin). The oracle for
// the shared table is the group's own: a table built afresh from its own
// spec at the same shared point must give the same bits, and so must the
// group's stated errors probed for it directly (lawError). A group whose
// spread differs by 1e-7 (relative 2e-6) gets its own tables.
func TestSiteTwinGroups(t *testing.T) {
	spec := twinSiteSpec(t)
	s, err := NewSite(spec)
	require.NoError(t, err)
	require.Equal(t, 5, s.Groups())
	assert.Equal(t, []int{0, 1, 0, 3, 4}, s.twin, "twins")
	ts := []float64{0.5 * Year, 2 * Year, 5 * Year, 8 * Year, 12 * Year, 20 * Year}
	for e := range s.envs {
		env := &s.envs[e]
		assert.Same(t, env.laws[0].lz, env.laws[2].lz, "env %d: the jittered copy shares the table", e)
		assert.Same(t, env.laws[0].lz, env.laws[3].lz, "env %d: the copy of another count shares the table", e)
		assert.NotSame(t, env.laws[0].lz, env.laws[4].lz, "env %d: the wider spread has its own", e)
		assert.NotSame(t, env.laws[0].lz, env.laws[1].lz, "env %d", e)
		if e%5 != 0 {
			continue // a fresh table for every fifth shared point
		}
		l, err := NewNodeLifetime(spec.Groups[2].Node, Environment{Climate: spec.Climate, Conditions: env.cond})
		require.NoError(t, err)
		own := tabulate(l)
		for _, tm := range ts {
			assert.Equal(t, own.CDF(tm), env.laws[2].CDF(tm), "env %d: CDF at %g s", e, tm)
			assert.Equal(t, own.Survival(tm), env.laws[2].Survival(tm), "env %d: Survival at %g s", e, tm)
		}
		assert.Equal(t, own.Accuracy(), env.laws[2].Accuracy(), "env %d: accuracy", e)
	}
	for _, g := range []int{2, 3} {
		_, _, stated := s.lawError(kindNode, g, 0)
		assert.Equal(t, stated, s.nodeAcc[g], "group %d: the node law's stated error", g)
		_, _, stated = s.lawError(kindFirst, g, 0)
		assert.Equal(t, stated, s.firstAcc[g], "group %d: the first failure's stated error", g)
	}
	a, err := s.NodeLifetime(0)
	require.NoError(t, err)
	b, err := s.NodeLifetime(2)
	require.NoError(t, err)
	for _, p := range []float64{1e-4, 0.05, 0.5, 0.95} {
		assert.Equal(t, a.Quantile(p), b.Quantile(p), "node law's quantile %g", p)
	}
	assert.Equal(t, a.(dist.Estimated).Accuracy(), b.(dist.Estimated).Accuracy())
	// Twins keep one lazily computed state (the moments): the same as a
	// mixture of the same components computed afresh.
	for _, get := range []func(i int) (dist.Law, error){s.NodeLifetime, s.GroupFirstFailure} {
		a, err := get(0)
		require.NoError(t, err)
		b, err := get(2)
		require.NoError(t, err)
		c, err := get(3)
		require.NoError(t, err)
		ma, mb, mc := a.(sharedMixture), b.(sharedMixture), c.(sharedMixture)
		assert.Same(t, ma.lz, mb.lz, "twins")
		assert.NotSame(t, ma.lz, mc.lz, "another count")
		fresh := ma
		fresh.lz = &mixLazy{}
		assert.Equal(t, fresh.Mean(), mb.Mean())
		assert.Equal(t, fresh.Variance(), mb.Variance())
	}
}

// sameNodeModel compares every field of node and nodeSetting but the
// name and the warnings; a field added to either struct must be added
// there (or here, with the reason it does not enter a law), or two groups
// could share a table their laws do not share.
func TestSameNodeModelFields(t *testing.T) {
	fields := func(v any) []string {
		var out []string
		rt := reflect.TypeOf(v)
		for i := range rt.NumField() {
			out = append(out, rt.Field(i).Name)
		}
		return out
	}
	assert.Equal(t, []string{"name", "settings", "spread", "nominal", "batch", "quiescent", "sdRate", "storage", "calendar",
		"months", "warnings", "glx", "glw", "tgx", "tgw"}, fields(node{}),
		"node's fields: update sameNodeModel")
	assert.Equal(t, []string{"w", "rate", "floorP", "usable", "mu", "k2", "l3", "l4", "l5", "excess", "sums", "scale", "usableF"},
		fields(nodeSetting{}), "nodeSetting's fields: update sameNodeModel")

	// Each number compared: a node differing in any one of them, by one
	// unit in the last place, is not the same model.
	spec := TwoFactorSiteSpec(t)
	l, err := NewNodeLifetime(spec.Groups[0].Node, Environment{Climate: spec.Climate})
	require.NoError(t, err)
	base := l.n
	up := func(x *float64) { *x = math.Nextafter(*x, math.Inf(1)) }
	for name, bump := range map[string]func(n *node){
		"nominal": func(n *node) { up(&n.nominal) }, "batch": func(n *node) { up(&n.batch) },
		"quiescent": func(n *node) { up(&n.quiescent) }, "sdRate": func(n *node) { up(&n.sdRate) },
		"storage": func(n *node) { up(&n.storage) }, "calendar": func(n *node) { up(&n.calendar) },
		"spread.Capacity": func(n *node) { up(&n.spread.Capacity) }, "spread.Floor": func(n *node) { up(&n.spread.Floor) },
		"spread.Active": func(n *node) { up(&n.spread.Active) }, "floorCum": func(n *node) { up(&n.months.floorCum[12]) },
		"sdCum": func(n *node) { up(&n.months.sdCum[3]) }, "floorRate": func(n *node) { up(&n.months.floorRate[11]) },
		"sdFactor": func(n *node) { up(&n.months.sdFactor[0]) }, "glx": func(n *node) { up(&n.glx[1]) }, "glw": func(n *node) { up(&n.glw[2]) },
		"tgx": func(n *node) { up(&n.tgx[1]) }, "tgw": func(n *node) { up(&n.tgw[2]) },
		"settings[2].w": func(n *node) { up(&n.settings[2].w) }, "rate": func(n *node) { up(&n.settings[1].rate) },
		"floorP": func(n *node) { up(&n.settings[0].floorP) }, "usable": func(n *node) { up(&n.settings[0].usable) },
		"mu": func(n *node) { up(&n.settings[0].mu) }, "k2": func(n *node) { up(&n.settings[0].k2) },
		"l3": func(n *node) { up(&n.settings[0].l3) }, "l4": func(n *node) { up(&n.settings[0].l4) },
		"l5": func(n *node) { up(&n.settings[0].l5) }, "scale": func(n *node) { up(&n.settings[0].scale) },
		"usableF":  func(n *node) { up(&n.settings[0].usableF) },
		"settings": func(n *node) { n.settings = n.settings[:2] },
	} {
		n := *base
		months := *base.months
		n.months = &months
		n.settings = append([]nodeSetting(nil), base.settings...)
		n.glx, n.glw = append([]float64(nil), base.glx...), append([]float64(nil), base.glw...)
		n.tgx, n.tgw = append([]float64(nil), base.tgx...), append([]float64(nil), base.tgw...)
		require.True(t, sameNodeModel(base, &n), "%s: a copy is the same", name)
		n.name, n.warnings = "another", []string{"a warning"}
		require.True(t, sameNodeModel(base, &n), "%s: the name and warnings do not count", name)
		bump(&n)
		assert.False(t, sameNodeModel(base, &n), "%s differs", name)
	}
}

// A node without per-node spread reads its active energy's law itself
// (the exact k-fold path): two such nodes are the same model where the
// laws' atoms are, and not where one atom's probability differs.
func TestSameNodeModelExactPath(t *testing.T) {
	b := MustBattery(TypicalER14505())
	tx := MustFixedState("tx", 40*MilliAmp, 3.6, 0.05)
	rx := MustFixedState("rx", 10*MilliAmp, 3.6, 0.1)
	model := func(p float64) *node {
		c := MustCycle(MustChoice([]float64{p, 1 - p}, []Stage{tx, rx}), dist.MustPointMass(900), 5e-6*3.6)
		l, err := NewNodeLifetime(NodeSpec{Settings: []NodeSetting{{Weight: 1, Cycle: c}}, Battery: b}, Environment{})
		require.NoError(t, err)
		require.NotNil(t, l.n.settings[0].sums, "the exact path")
		return l.n
	}
	a := model(0.3)
	assert.True(t, sameNodeModel(a, model(0.3)))
	assert.False(t, sameNodeModel(a, model(math.Nextafter(0.3, 1))))
	// The law alone (its moments left as they are): the same atoms are
	// the same model, others are not, and a law of another type is not.
	with := func(l dist.Law) *node {
		n := *a
		n.settings = append([]nodeSetting(nil), a.settings...)
		n.settings[0].excess = l
		return &n
	}
	ex := a.settings[0].excess.(dist.Discrete)
	var vals, probs []float64
	for _, at := range ex.Atoms() {
		vals, probs = append(vals, at.Value), append(probs, at.Mass)
	}
	assert.True(t, sameNodeModel(a, with(dist.MustDiscrete(vals, probs))), "the same atoms")
	vals[0] = math.Nextafter(vals[0], 0)
	assert.False(t, sameNodeModel(a, with(dist.MustDiscrete(vals, probs))), "one value an ulp lower")
	assert.False(t, sameNodeModel(a, with(dist.MustUniform(vals[0], vals[1]))), "another law")
}

// A Site's node laws, first failures and fleet's first failure keep the
// quantiles asked of them (at most maxQuantMemo levels): a kept answer
// must be the bits of the same question asked of the same mixture
// afresh, before and after the memo is full.
func TestSiteQuantileMemo(t *testing.T) {
	s, err := NewSite(TwoFactorSiteSpec(t))
	require.NoError(t, err)
	l, err := s.GroupFirstFailure(1)
	require.NoError(t, err)
	m := l.(sharedMixture)
	fresh := m
	fresh.lz = &mixLazy{}
	var ps []float64
	for i := range maxQuantMemo + 6 {
		ps = append(ps, (float64(i)+0.5)/float64(maxQuantMemo+6))
	}
	for round := range 2 {
		for _, p := range ps {
			assert.Equal(t, fresh.Quantile(p), m.Quantile(p), "round %d: Quantile(%g)", round, p)
			assert.Equal(t, fresh.UpperQuantile(p), m.UpperQuantile(p), "round %d: UpperQuantile(%g)", round, p)
		}
		assert.Len(t, m.lz.qmemo, maxQuantMemo, "the memo's cap")
	}
	again, err := s.GroupFirstFailure(1)
	require.NoError(t, err)
	assert.Same(t, m.lz, again.(sharedMixture).lz, "a later call keeps the answers")
	assert.Nil(t, fresh.lz.qmemo, "a mixture of its own keeps none")
}

// The fleet's laws read groups with the same tables once (nodeZ,
// rowReps in mixZ and interpBound, tableError): the fleet's rule error and
// stated error must be those of reading every group (a copy of the Site
// that knows no shared tables) to rounding, its mixture the same bits; a
// caller's probits that differ between such groups (a design's, a
// policy's own laws) must not be merged.
func TestSiteFleetReadsSharedTablesOnce(t *testing.T) {
	s, err := NewSite(twinSiteSpec(t))
	require.NoError(t, err)
	require.Equal(t, []int{0, 1, 0, 0, 4}, s.same)
	every := s
	every.same = nil
	for i, tm := range every.probeTimes(kindFleet, 0, 0) {
		if i%3 != 0 {
			continue // every third probe time
		}
		Z := s.nodeZ(tm, nil)
		assert.Equal(t, every.nodeZ(tm, nil), Z, "probits at %g s", tm)
		modes := [][2]int{{modeNodes, modeNodes}, {modeFine, modeFine}, {modeFine, modeReduced}, {modeReduced, modeFine}, {modeNodes, modeFine}}
		for _, m := range modes {
			assert.Equal(t, every.mixZ(Z, kindFleet, 0, 0, m)[0], s.mixZ(Z, kindFleet, 0, 0, m)[0], "mixture at %g s, modes %v", tm, m)
			assert.Equal(t, every.mixZ(Z, kindKth, 0, 40, m)[0], s.mixZ(Z, kindKth, 0, 40, m)[0], "40th failure at %g s, modes %v", tm, m)
		}
		for d := range 2 {
			want := every.interpBound(Z, kindFleet, 0, d)
			assert.InDelta(t, want, s.interpBound(Z, kindFleet, 0, d), 1e-14*want, "interpolation bound at %g s, factor %d", tm, d)
		}
		assert.Equal(t, every.tableError(tm, kindFleet, 0), s.tableError(tm, kindFleet, 0), "table error at %g s", tm)
	}
	_, rule, stated := s.lawError(kindFleet, 0, 0)
	_, wantRule, wantStated := every.lawError(kindFleet, 0, 0)
	assert.InDelta(t, wantRule, rule, 1e-14*wantRule)
	assert.InDelta(t, wantStated, stated, 1e-14*wantStated)
	// A caller's own probits: group 2's moved, so it is read on its own.
	tm := s.probeTimes(kindFleet, 0, 0)[3]
	Z := s.nodeZ(tm, nil)
	E := len(s.envs)
	for e := range E {
		Z[2*E+e] += 0.01
	}
	sc := new(ruleScratch)
	assert.Equal(t, []int{0, 1, 2, 0, 4}, s.rowReps(sc, Z, 0, 5))
	assert.Equal(t, every.mixZ(Z, kindFleet, 0, 0, [2]int{modeFine, modeFine})[0], s.mixZ(Z, kindFleet, 0, 0, [2]int{modeFine, modeFine})[0])
}

// A Site's nodes at one temperature offset share their settings (the
// settings do not read the batch factor: Environment.settings). The
// oracle is the node built afresh from its group's spec at its shared
// point: each of the Site's must be the same number for number
// (sameNodeModel, and every setting's fields), and the nodes at one
// offset must hold one list.
func TestSiteSharedSettings(t *testing.T) {
	spec := TwoFactorSiteSpec(t)
	s, err := NewSite(spec)
	require.NoError(t, err)
	shared := 0
	for e := range s.envs {
		env := &s.envs[e]
		for g := range spec.Groups {
			fresh, err := newNode("test", spec.Groups[g].Node, Environment{Climate: spec.Climate, Conditions: env.cond})
			require.NoError(t, err)
			got := env.exact[g].n
			require.True(t, sameNodeModel(fresh, got), "env %d, group %d: the node built afresh", e, g)
			require.Equal(t, fresh.settings, got.settings, "env %d, group %d", e, g)
			for f := range e {
				if s.envs[f].cond.TemperatureOffset == env.cond.TemperatureOffset {
					assert.Same(t, &s.envs[f].exact[g].n.settings[0], &got.settings[0], "envs %d and %d, group %d: one list", f, e, g)
					shared++
				}
			}
		}
	}
	assert.Positive(t, shared, "batch factors at one offset")
}
