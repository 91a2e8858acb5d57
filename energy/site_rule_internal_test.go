package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// The rule's stated error is estimated against a reference on a fine grid
// (sharedFineStep, or finer where the laws are steep), with the fine
// grid's own error taken from every other point. The check: against a
// reference four times finer in both factors, the rule errs by no more
// than its estimated total at every probe time of every law it states,
// on the two-factor site of TestSiteMixtureMoments (3 × 8 nodes in 2
// pieces, where the default step applies in the batch factor), on the
// test site whose laws are steep in the temperature factor (fitFine
// refines its grid there) and on the same site with 20 times the nodes
// (steeper first failures). A check of the estimate's
// logic on a grid it did not use; the independent oracles are the closed
// form (TestSiteSharedDominatedClosedForm) and internal/lifesim's sampler.
func TestSiteRuleErrorAgainstFinerReference(t *testing.T) {
	for _, tc := range []struct {
		name    string
		spec    SiteSpec
		refined bool // the fine grid refined by the laws' slope (fitFine) in a factor
	}{
		{"two-factor site", TwoFactorSiteSpec(t), false},
		{"steep test site", tabTestSpec(t), true},
		{"steep test site, 20 times the nodes", manyNodes(tabTestSpec(t), 20), true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			siteRuleAgainstFinerReference(t, tc.spec, tc.refined)
		})
	}
}

// manyNodes returns spec with every group's count times k (steeper first
// failures).
func manyNodes(spec SiteSpec, k int64) SiteSpec {
	spec.Groups = append([]SiteGroup(nil), spec.Groups...)
	for i := range spec.Groups {
		spec.Groups[i].Count *= k
	}
	return spec
}

// siteRuleAgainstFinerReference is TestSiteRuleErrorAgainstFinerReference
// on one site.
func siteRuleAgainstFinerReference(t *testing.T, spec SiteSpec, refined bool) {
	s, err := NewSite(spec)
	require.NoError(t, err)
	widest := finePoints(sharedFineStep) // the grid's points where fitFine does not refine it
	if refined {
		assert.True(t, len(s.fac[0].fz) > widest || len(s.fac[1].fz) > widest, "a factor's fine grid refined: %d and %d points", len(s.fac[0].fz), len(s.fac[1].fz))
	}
	fine := s
	for d := range 2 {
		f := s.fac[d]
		if len(f.z) == 1 {
			continue
		}
		step := (f.fz[1] - f.fz[0]) / 4
		f.setFine(step)
		fine.fac[d] = f
	}
	worst, ratio := 0.0, 0.0
	check := func(kind lawKind, g int, name string) {
		for _, tm := range s.probeTimes(kind, g, 0) {
			_, total := s.ruleError(tm, kind, g, 0)
			var want []bool
			if kind != kindFleet {
				want = make([]bool, len(s.names))
				want[g] = true
			}
			Z := s.nodeZ(tm, want)
			rule := s.mixZ(Z, kind, g, 0, [2]int{modeNodes, modeNodes})[0]
			ref := fine.mixZ(Z, kind, g, 0, [2]int{modeFine, modeFine})[0]
			d := math.Abs(rule - ref)
			worst = max(worst, d)
			if total > 0 {
				ratio = max(ratio, d/total)
			}
			assert.LessOrEqual(t, d, total, "%s at t = %g s", name, tm)
		}
	}
	for g := range s.names {
		check(kindNode, g, "node "+s.names[g])
		check(kindFirst, g, "first failure "+s.names[g])
	}
	check(kindFleet, 0, "fleet's first failure")
	t.Logf("fine grids %d × %d points; largest error against the finer reference %.2g, at most %.2f of the estimate", len(s.fac[0].fz), len(s.fac[1].fz), worst, ratio)
}

// lawProbes computes the interpolation terms only at the probes whose
// bounds could raise the stated error or the rule's total: those must be
// the same bits as computing every probe (lawError), the parts at least
// those computed (+Inf where a probe's are not), and each probe's bound
// (interpBound's, from the slope cells between the two interpolants)
// must hold, the same bits whether both factors' are computed in one
// pass (probeStart) or each alone, and whether or not the points where a
// factor's two interpolation rows agree are skipped.
func TestSiteLawErrorPruned(t *testing.T) {
	s, err := NewSite(TwoFactorSiteSpec(t))
	require.NoError(t, err)
	// every computes both interpolants at every fine point, also where a
	// factor's two rows agree (sharedFactor.same): those add nothing.
	every := s
	for d := range 2 {
		require.Contains(t, s.fac[d].same, true, "factor %d: some rows agree", d)
		every.fac[d].same = make([]bool, len(s.fac[d].same))
	}
	for _, c := range []struct {
		kind lawKind
		g    int
	}{{kindNode, 0}, {kindNode, 1}, {kindFirst, 0}, {kindFirst, 1}, {kindFleet, 0}} {
		var parts [2]float64
		var rule, stated float64
		for _, tm := range s.probeTimes(c.kind, c.g, 0) {
			p := s.probeStart(tm, c.kind, c.g, 0)
			bound := p.interp
			s.probeFinish(&p, c.kind, c.g, 0)
			for d := range 2 {
				// Both factors' bounds in one pass: each the same bits as alone.
				assert.Equal(t, s.interpBound(p.Z, c.kind, c.g, d), bound[d], "kind %d group %d factor %d at %g s: alone", c.kind, c.g, d, tm)
				assert.Equal(t, every.interpBound(p.Z, c.kind, c.g, d), bound[d], "kind %d group %d factor %d at %g s: every point", c.kind, c.g, d, tm)
				assert.LessOrEqual(t, p.interp[d], bound[d], "kind %d group %d factor %d at %g s", c.kind, c.g, d, tm)
			}
			pp := p.parts()
			parts[0], parts[1] = math.Max(parts[0], pp[0]), math.Max(parts[1], pp[1])
			rule = math.Max(rule, p.total())
			stated = math.Max(stated, p.total()+s.tableError(tm, c.kind, c.g))
		}
		gp, gr, gs := s.lawError(c.kind, c.g, 0)
		assert.Equal(t, parts, gp, "kind %d group %d: parts", c.kind, c.g)
		assert.Equal(t, rule, gr, "kind %d group %d: rule", c.kind, c.g)
		assert.Equal(t, math.Min(1, stated), gs, "kind %d group %d: stated", c.kind, c.g)
		// Pruned: the same rule's total and stated error, parts bounded.
		bp, br, bs := probeMaxima(s.lawProbes(c.kind, c.g, 0))
		assert.Equal(t, rule, br, "kind %d group %d: pruned rule", c.kind, c.g)
		assert.Equal(t, math.Min(1, stated), bs, "kind %d group %d: pruned stated", c.kind, c.g)
		assert.GreaterOrEqual(t, bp[0], parts[0])
		assert.GreaterOrEqual(t, bp[1], parts[1])
	}
}

// minSlope bounds the largest slope of a first failure's CDF against the
// nodes' probit: 1/√(2π) for one node (closed form), and for n nodes the
// largest of n·Φ(−z)^(n−1)·φ(z) on a grid of 1e-4 by gonum's
// distuv.UnitNormal, which it must bound from above by at most 5 %.
func TestMinSlope(t *testing.T) {
	for _, n := range []int64{1, 2, 50, 1000, 1e6} {
		scan := 0.0
		for i := range 200000 {
			z := -12 + 1e-4*float64(i)
			v := float64(n) * math.Pow(distuv.UnitNormal.Survival(z), float64(n-1)) * distuv.UnitNormal.Prob(z)
			scan = math.Max(scan, v)
		}
		if n == 1 {
			assert.InDelta(t, 1/math.Sqrt(2*math.Pi), scan, 1e-12, "closed form")
		}
		got := minSlope(n)
		assert.GreaterOrEqual(t, got, scan, "n = %d", n)
		assert.LessOrEqual(t, got, 1.05*scan, "n = %d", n)
	}
}

// slopeBound.over bounds the slope of a first failure's CDF among n nodes
// against their probit between two probits (what the rule's interpolation
// bound reads): checked against n·Φ(−z)^(n−1)·φ(z) by gonum's
// distuv.UnitNormal on 201 points of each interval (its ends included),
// for intervals of widths 1e-4 to 2 (fixed seed) from −14 to 11 (beyond
// the cells on both sides), n = 1 to 10^6; never above the largest
// (minSlope), and far below it away from the mode.
func TestSlopeBoundOver(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 1))
	for _, n := range []int64{1, 50, 625, 1e6} {
		b := newSlopeBound(n)
		slope := func(z float64) float64 {
			return float64(n) * math.Pow(distuv.UnitNormal.Survival(z), float64(n-1)) * distuv.UnitNormal.Prob(z)
		}
		for range 2000 {
			a := -14 + 25*r.Float64()
			w := math.Pow(10, -4+math.Log10(2e4)*r.Float64())
			got := b.over(a+w, a) // either order
			scan := 0.0
			for i := range 201 {
				scan = math.Max(scan, slope(a+w*float64(i)/200))
			}
			require.GreaterOrEqual(t, got, scan, "n = %d on [%g, %g]", n, a, a+w)
			require.LessOrEqual(t, got, b.most, "n = %d on [%g, %g]", n, a, a+w)
		}
		assert.Less(t, b.over(5, 5.01), 1e-3*b.most, "n = %d: far above the mode", n)
		assert.Equal(t, b.most, b.over(math.Inf(1), 0), "n = %d: an infinite probit", n)
	}
}

// TwoFactorSiteSpec is an invented two-group site (50 and 500 nodes)
// with a seasonal climate, a thermal model and a voltage curve (kinks in
// the tables), and both shared factors (batch sd 0.03, temperature sd
// 1.5 °C). Exported for the external tests of this package only.
func TwoFactorSiteSpec(t testing.TB) SiteSpec {
	t.Helper()
	b := MustBattery(TypicalER14505())
	th := TypicalThermal()
	clim, err := NewSeasonalClimate(10, 8, 6, 8)
	require.NoError(t, err)
	var gs []SiteGroup
	for g := range 2 {
		var sets []NodeSetting
		for j := range 3 {
			tx := MustFixedState("tx", 40*MilliAmp, 3.6, 0.05*float64(j+1))
			c := MustCycle(MustSequence(tx), dist.MustPointMass(900*float64(g+1)), 5e-6*3.6)
			sets = append(sets, NodeSetting{Weight: 1.0 / 3, Cycle: c})
		}
		gs = append(gs, SiteGroup{Name: fmt.Sprint("g", g), Count: int64(50 + 450*g), Node: NodeSpec{Settings: sets, Battery: b, Thermal: &th,
			Spread: NodeSpread{Capacity: 0.05, Floor: 0.4, Active: 0.03}, CalendarLife: 40 * Year, StorageTime: Year}})
	}
	return SiteSpec{Climate: &clim, Shared: SharedSpread{Batch: 0.03, Temperature: 1.5}, Groups: gs}
}

// A Site's mixtures seed their quantile searches (seedFor: the rule's
// mixture of the tables, or the counts' normal approximation for a k-th
// failure); the seeded answers must be those of the unseeded search (the
// corners', then all components') within the searches' tolerance, 1e-12
// relative each, on the two-factor site, and every seed must hold there.
func TestSiteQuantileSeeds(t *testing.T) {
	s, err := NewSite(TwoFactorSiteSpec(t))
	require.NoError(t, err)
	var laws []dist.Law
	var names []string
	for g := range s.names {
		node, err := s.NodeLifetime(g)
		require.NoError(t, err)
		first, err := s.GroupFirstFailure(g)
		require.NoError(t, err)
		laws, names = append(laws, node, first), append(names, "node "+s.names[g], "first failure "+s.names[g])
	}
	ff, err := s.FirstFailure()
	require.NoError(t, err)
	laws, names = append(laws, ff), append(names, "fleet's first failure")
	for _, q := range []float64{0.01, 0.5} {
		kth, err := s.FractionFailed(q)
		require.NoError(t, err)
		laws, names = append(laws, kth), append(names, fmt.Sprintf("flat fraction %g", q))
	}
	for i, l := range laws {
		m, ok := l.(sharedMixture)
		require.True(t, ok, names[i])
		require.NotNil(t, m.seed, names[i])
		plain := m
		plain.seed = nil
		plain.lz = &mixLazy{} // its own answers, not the Site's kept ones
		for _, p := range []float64{1e-4, 0.005, 0.05, 0.5, 0.95, 0.995} {
			target := dist.MustNormal(0, 1).Quantile(p)
			seeded, ok := m.seedSolve(target)
			assert.True(t, ok, "%s: the seed at %g holds", names[i], p)
			want := plain.Quantile(p)
			assert.InDelta(t, want, seeded, 2e-12*want, "%s: Quantile(%g)", names[i], p)
			assert.InDelta(t, plain.UpperQuantile(p), m.UpperQuantile(p), 2e-12*want, "%s: UpperQuantile(%g)", names[i], p)
		}
	}
}

// The first failures' moments read each component's survival from the
// tables (quickFor) instead of through the order statistic's general
// path: the two must agree within the sum of their stated moment errors,
// on the two-factor site, for each group and the fleet.
func TestSiteQuickMoments(t *testing.T) {
	s, err := NewSite(TwoFactorSiteSpec(t))
	require.NoError(t, err)
	var laws []dist.Law
	for g := range s.names {
		l, err := s.GroupFirstFailure(g)
		require.NoError(t, err)
		laws = append(laws, l)
	}
	ff, err := s.FirstFailure()
	require.NoError(t, err)
	laws = append(laws, ff)
	for i, l := range laws {
		m, ok := l.(sharedMixture)
		require.True(t, ok)
		require.NotNil(t, m.quick)
		plain := newStatedMixture(m.name, m.w, m.laws, m.method, m.stated)
		em, ev := m.MomentError()
		pm, pv := plain.MomentError()
		assert.InDelta(t, plain.Mean(), m.Mean(), em+pm, "law %d: mean", i)
		assert.InDelta(t, plain.Variance(), m.Variance(), ev+pv, "law %d: variance", i)
		assert.Less(t, em, 1e-5*math.Sqrt(m.Variance()), "law %d: the mean's stated error", i)
		t.Logf("law %d: mean %.6g s (stated ±%.2g, moved %.2g), sd %.6g s", i, m.Mean(), em, m.Mean()-plain.Mean(), math.Sqrt(m.Variance()))
	}
}

// kinkedSiteSpec is TwoFactorSiteSpec with a voltage curve
// (TypicalBobbinCurve, brown-out 2.8 V) and a climate whose coldest day
// (−0.75 °C: monthly means 10 ± 7.75 °C, daily swing 6 °C) lies half a
// temperature spread (1.5 °C) below the curve's 0 °C point: the lifetime
// has a kink against the temperature offset at +0.5 sd, as in the
// fleetplan demo (invented figures), which splits the factor's rule into
// pieces with about 0.69 and 0.31 of its mass.
func kinkedSiteSpec(t testing.TB) SiteSpec {
	t.Helper()
	spec := TwoFactorSiteSpec(t)
	clim, err := NewSeasonalClimate(10, 7.75, 6, 6)
	require.NoError(t, err)
	spec.Climate = &clim
	vc := TypicalBobbinCurve()
	for g := range spec.Groups {
		spec.Groups[g].Node.Voltage = &vc
		spec.Groups[g].Node.Brownout = 2.8
	}
	return spec
}

// A factor's rule split by a kink keeps at least four nodes in a piece
// with at least 0.4 of the factor's mass and three in a smaller one. The
// site's laws must then be within their stated errors of a reference: the
// same site under a much finer rule (batch 7 Gauss–Hermite nodes,
// temperature 21 nodes in the two pieces), at the node laws' 0.001 to 0.9
// points, for each group's node law and first failure and the fleet's
// first failure. The reference is this package's own rule refined (a
// convergence check of the rule's error estimate, as
// TestSiteRuleErrorAgainstFinerReference; the conditional laws at its
// nodes are the node model, checked against gonum's quadrature in
// TestFloorRuleAgainstGonum).
func TestSiteKinkedRuleAgainstFinerRule(t *testing.T) {
	if testing.Short() {
		t.Skip("a reference site of about 300 conditional node laws")
	}
	spec := kinkedSiteSpec(t)
	s, err := NewSite(spec)
	require.NoError(t, err)
	require.Len(t, s.fac[1].edges, 3, "the temperature factor has one kink")
	assert.InDelta(t, 0.5, s.fac[1].edges[1], 1e-9, "the kink's place (sd)")
	top := [2]int{len(sharedOrders) - 1, len(sharedOrders) - 1}
	ref, err := buildSiteFrom(spec, [2]int{2, 5}, top, math.Inf(1))
	require.NoError(t, err)
	require.Greater(t, len(ref.fac[1].z), 2*len(s.fac[1].z), "the reference's temperature rule is finer")
	require.Greater(t, len(ref.fac[0].z), len(s.fac[0].z), "the reference's batch rule is finer")
	t.Logf("rule: batch %d, temperature %d nodes (pieces %v); reference: %d and %d", len(s.fac[0].z), len(s.fac[1].z), s.fac[1].piece, len(ref.fac[0].z), len(ref.fac[1].z))
	type pair struct {
		name     string
		kind     lawKind
		g        int
		got, ref func() (dist.Law, error)
	}
	var laws []pair
	for g := range s.names {
		laws = append(laws,
			pair{"node " + s.names[g], kindNode, g, func() (dist.Law, error) { return s.NodeLifetime(g) }, func() (dist.Law, error) { return ref.NodeLifetime(g) }},
			pair{"first failure " + s.names[g], kindFirst, g, func() (dist.Law, error) { return s.GroupFirstFailure(g) }, func() (dist.Law, error) { return ref.GroupFirstFailure(g) }})
	}
	laws = append(laws, pair{"fleet's first failure", kindFleet, 0, s.FirstFailure, ref.FirstFailure})
	node, err := s.NodeLifetime(0)
	require.NoError(t, err)
	worst := 0.0
	for _, p := range laws {
		got, err := p.got()
		require.NoError(t, err)
		want, err := p.ref()
		require.NoError(t, err)
		global := got.(dist.Estimated).Accuracy().CDFAbs + want.(dist.Estimated).Accuracy().CDFAbs
		for _, q := range []float64{0.001, 0.01, 0.1, 0.5, 0.9} {
			tm := node.Quantile(q)
			d := math.Abs(got.CDF(tm) - want.CDF(tm))
			_, local := s.ruleError(tm, p.kind, p.g, 0)
			worst = max(worst, d/local)
			assert.LessOrEqual(t, d, local, "%s at the node law's %g point: the rule's estimate there", p.name, q)
			assert.LessOrEqual(t, d, global, "%s at the node law's %g point: the laws' stated errors", p.name, q)
		}
	}
	t.Logf("largest difference from the reference: %.2f of the rule's estimate there", worst)
}

// The probes' fused pass (fineBounds: the reference and its coarse grids
// with both interpolation bounds in one walk, one group's law or the
// fleet's) must give the same bits as the passes it replaces, mixZs over
// the fine modes and interpBoundsWith, at every probe time of every law,
// and mixZs in one mode for one group (mixOne) those of its loop over the
// modes: on the two-factor site, and on the site with twin groups, whose
// fleet reads repeated groups' probits from the first (rowReps).
func TestSiteFineBoundsSameBits(t *testing.T) {
	for _, c := range []struct {
		name string
		spec SiteSpec
	}{{"two-factor site", TwoFactorSiteSpec(t)}, {"twin groups", twinSiteSpec(t)}} {
		s, err := NewSite(c.spec)
		require.NoError(t, err, c.name)
		spread := [2]bool{len(s.fac[0].fz) > 1, len(s.fac[1].fz) > 1}
		modes := [][2]int{{modeFine, modeFine}}
		for d := range 2 {
			if spread[d] {
				m := [2]int{modeFine, modeFine}
				m[d] = modeCoarse
				modes = append(modes, m)
			}
		}
		type law struct {
			kind lawKind
			g    int
		}
		laws := []law{{kindFleet, 0}}
		for g := range s.names {
			laws = append(laws, law{kindNode, g}, law{kindFirst, g})
		}
		sc := new(ruleScratch)
		probes := 0
		for _, l := range laws {
			for _, tm := range s.probeTimes(l.kind, l.g, 0) {
				probes++
				Z := s.nodeZ(tm, nil)
				sums, bounds := s.fineBounds(sc, Z, l.kind, l.g, 0, spread)
				want := s.mixZs(new(ruleScratch), Z, l.kind, l.g, 0, modes...)
				wantB := s.interpBoundsWith(new(ruleScratch), Z, l.kind, l.g, spread)
				for i := range modes {
					require.Equal(t, math.Float64bits(want[i]), math.Float64bits(sums[i]), "%s: kind %d group %d at %g s: mode %v", c.name, l.kind, l.g, tm, modes[i])
				}
				for d := range 2 {
					require.Equal(t, math.Float64bits(wantB[d]), math.Float64bits(bounds[d]), "%s: kind %d group %d at %g s: bound %d", c.name, l.kind, l.g, tm, d)
				}
				// One mode of a one-group law (mixOne) against the
				// modes' loop (the same mode twice).
				for _, m := range [][2]int{{modeNodes, modeNodes}, {modeFine, modeNodes}, {modeNodes, modeFine}, {modeReduced, modeFine}, {modeFine, modeReduced}} {
					one := s.mixZs(sc, Z, l.kind, l.g, 0, m)[0]
					two := s.mixZs(sc, Z, l.kind, l.g, 0, m, m)
					require.Equal(t, math.Float64bits(two[0]), math.Float64bits(one), "%s: kind %d group %d at %g s: mode %v", c.name, l.kind, l.g, tm, m)
				}
			}
		}
		t.Logf("%s: %d laws, %d probes", c.name, len(laws), probes)
	}
}
