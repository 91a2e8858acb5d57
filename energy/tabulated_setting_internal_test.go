package energy

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// tabManySpec is an invented group (test input): seven settings whose
// transmissions of 0.5 to 12 s put the settings' lives from months to
// years apart, so that their mixture's probit has bumps where one setting
// takes over from another, with a calendar limit inside the longest
// settings' laws.
func tabManySpec(t testing.TB) (NodeSpec, *Climate) {
	t.Helper()
	spec := tabTestSpec(t)
	node := spec.Groups[0].Node
	node.Settings = nil
	ws := []float64{0.3, 0.2, 0.15, 0.12, 0.1, 0.08, 0.05}
	for i, tx := range []float64{0.5, 1, 2, 3, 5, 8, 12} {
		node.Settings = append(node.Settings, NodeSetting{Weight: ws[i], Cycle: tabTestCycle(12*Hour, 8*MicroAmp, tx)})
	}
	node.CalendarLife = 2.5 * Year
	return node, spec.Climate
}

// tabTestNodes returns the seven-setting group and the test site's groups,
// with the site's climate (test input).
func tabTestNodes(t testing.TB) ([]NodeSpec, *Climate) {
	t.Helper()
	many, clim := tabManySpec(t)
	nodes := []NodeSpec{many}
	for _, g := range tabTestSpec(t).Groups {
		nodes = append(nodes, g.Node)
	}
	return nodes, clim
}

// forEachTestLaw calls fn with each test node's law (tabTestNodes, their
// index gi) under each of tabTestConditions.
func forEachTestLaw(t *testing.T, fn func(gi int, cond Conditions, l NodeLifetime)) {
	t.Helper()
	nodes, clim := tabTestNodes(t)
	for _, cond := range tabTestConditions {
		for gi, node := range nodes {
			l, err := NewNodeLifetime(node, Environment{Climate: clim, Conditions: cond})
			require.NoError(t, err)
			fn(gi, cond, l)
		}
	}
}

// tabTestConditions are the shared factors the node tables are tested
// under: nominal, and a weak batch in a cold year.
var tabTestConditions = []Conditions{{BatchFactor: 1}, {BatchFactor: 0.95, TemperatureOffset: -6}}

// Each setting's own table (the gradient scheme between knots, month
// boundaries stored as knots) against direct evaluation of the setting's
// law by the node model (the oracle: settingAt afresh at each time), on
// 2000 times across the table and at both sides of every month boundary:
// the probit error must stay within the table's measured worst error
// times 1.5 (the check is made before an interval's last halving; the
// halves are closer still) and within the tolerance; and at looser
// tolerances (below).
func TestSettingTablesAgainstDirect(t *testing.T) {
	forEachTestLaw(t, func(gi int, cond Conditions, l NodeLifetime) {
		for j := range l.n.settings {
			t.Run(fmt.Sprintf("node %d setting %d dT=%+g", gi, j, cond.TemperatureOffset), func(t *testing.T) {
				st, ok := settingTable(l, j, tabSetZTol, tabSetTail)
				if !ok {
					// Below 1e-18 up to the calendar limit: checked there.
					a, d, _ := l.n.settingAt(j, l.n.calendar)
					assert.Less(t, d, tabSetTail)
					assert.Greater(t, a, 0.5)
					return
				}
				lo, hi := st.t[0], st.t[len(st.t)-1]
				ts := tableTestTimes(lo, hi, 2000)
				worst := 0.0
				wx, wz := 0.0, 0.0
				for _, x := range ts {
					a, d, _ := l.n.settingAt(j, x)
					if e := math.Abs(st.zAt(x) - probitOf(a, d)); e > worst {
						worst, wx, wz = e, x, probitOf(a, d)
					}
				}
				assert.LessOrEqual(t, st.worst, tabSetZTol)
				assert.LessOrEqual(t, worst, 1.5*tabSetZTol, "probit error against direct evaluation")
				assert.LessOrEqual(t, worst, math.Max(1.5*st.worst, 1e-9), "within the measured worst")
				t.Logf("%d points (%d model evaluations, %d month boundaries): probit error %.2g (measured worst %.2g) at month %.4f, z=%.3f", len(st.t), st.evals, st.kinks, worst, st.worst, wx/Month, wz)
				if st.gk == nil {
					return
				}
				// The same setting at looser tolerances (λ times
				// tabSetZTol, from tabLooseInitial knots: what
				// settingTables builds for a setting whose law is small
				// beside the mixture's), between the same ends: within
				// 1.5 times the tolerance, what the loose tables' stated
				// error and accuracyAtZ's reading take (tabLooseShift at
				// the loosest). There the midpoint checks no longer bound
				// the error by themselves (measured: up to 5 times the
				// measured worst; 1.1 of the tolerance at most, at λ = 3).
				for _, loose := range []float64{3, 10, tabLooseMax} {
					tol := loose * tabSetZTol
					lt := l.n.gradGrid(&tableScratch{}, j, st.gk[0], st.gk[len(st.gk)-1], tol, tabLooseInitial, nil, nil)
					lw := 0.0
					for _, x := range tableTestTimes(lt.t[0], lt.t[len(lt.t)-1], 2000) {
						a, d, _ := l.n.settingAt(j, x)
						lw = math.Max(lw, math.Abs(lt.zAt(x)-probitOf(a, d)))
					}
					assert.LessOrEqual(t, lt.worst, tol)
					assert.LessOrEqual(t, lw, 1.5*tol, "loose %g: probit error against direct evaluation", loose)
					t.Logf("loose %g: %d knots: probit error %.2g, %.2g of the tolerance (measured worst %.2g)", loose, len(lt.gk), lw, lw/tol, lt.worst)
				}
			})
		}
	})
}

// The probit's gradient against capLeft, mean, floorE and h (part, from
// the fixed rule's nodes) against central differences of the probit of
// the same integral by adaptive quadrature (internal/quad, adaptivePart:
// an independent path), at probits from −8 to 8, within 0.5 % (measured:
// 1e-6 in the bulk, 2.6e-3 at probit 8, where the fixed rule's nodes are
// sparse). The gradient only shapes a setting table between knots whose
// error is measured against the model itself (TestSettingTablesAgainstDirect),
// so its error costs knots, not accuracy.
func TestPartGradientAgainstAdaptive(t *testing.T) {
	spec := tabTestSpec(t)
	l, err := NewNodeLifetime(spec.Groups[1].Node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
	require.NoError(t, err)
	n := l.n
	s := n.settings[0]
	std := dist.MustNormal(0, 1)
	for _, target := range []float64{-8, -4, -1, 0, 1, 4, 8} {
		z := func(x float64) (float64, float64) {
			a, d, _ := n.settingAt(0, x)
			return probitOf(a, d), math.NaN()
		}
		x, _ := probitEnd(z, n.settingLife(0), target, 0.05, false)
		c := n.clocks(x)
		capLeft := n.batch*s.usable - n.nominal*(n.storage+n.sdRate*c[1])
		mean, floorE, h := c[0]*s.rate*s.mu, s.floorP*c[2], n.quiescent*c[0]
		p := n.part(capLeft, mean, 0, floorE, h, 0, true)
		probit := func(cl, mn, fe, hh float64) float64 {
			a, d, _ := n.adaptivePart(cl, mn, fe, hh)
			if d <= 0.5 {
				return std.Quantile(d)
			}
			return std.UpperQuantile(a)
		}
		for _, tc := range []struct {
			name string
			i    int
			at   func(d float64) float64
			size float64
		}{
			{"capLeft", dCap, func(d float64) float64 { return probit(capLeft+d, mean, floorE, h) }, capLeft},
			{"mean", dMean, func(d float64) float64 { return probit(capLeft, mean+d, floorE, h) }, capLeft},
			{"floorE", dFloor, func(d float64) float64 { return probit(capLeft, mean, floorE+d, h) }, floorE},
			{"h", dQuiet, func(d float64) float64 { return probit(capLeft, mean, floorE, h+d) }, capLeft},
		} {
			d := 1e-4 * tc.size
			fd := (tc.at(d) - tc.at(-d)) / (2 * d)
			assert.InDelta(t, 1, p.dz[tc.i]/fd, 5e-3, "z=%g ∂z/∂%s: %g against %g", p.z, tc.name, p.dz[tc.i], fd)
		}
	}
}

// A setting that almost never runs out before the calendar limit, beside
// one that runs out well before it, is left out of the mixture
// (settingTables, tabDropAbs); the table against direct evaluation of the
// law (the oracle: NodeLifetime's CDF and Survival computed afresh, every
// setting in), on 4000 times across the table and both sides of every
// month boundary: the stated part of the error (tabCDF, tabRel, errAt at
// each time) must bound what is measured, with the left-out setting's
// mass (w·P(run out by the calendar limit), computed directly) within
// dropAbs. A third setting with a chance of 6e-10 (weight 0.2) is kept:
// its mass is above tabDropRel of the others' CDF at its lower end; it is
// tabulated to a looser tolerance (tabLooseMax), its stated part
// (looseRel, looseAbs) within errAt.
func TestTabulatedDroppedSettingAgainstDirect(t *testing.T) {
	l := threeSettingLaw(t)
	out := l.n.settingTables(&tableScratch{}, l)
	require.Len(t, out, 3)
	assert.False(t, out[0].ends.left, "the short-lived setting is tabulated")
	require.True(t, out[1].ends.left, "the long-lived setting is left out")
	assert.False(t, out[2].ends.left, "the setting with more mass is tabulated")
	assert.Positive(t, out[2].looseRel, "to a looser tolerance")
	assert.Zero(t, out[0].looseRel, "the short-lived one to the full tolerance")
	tb := tabulate(l)
	_, dead, _ := l.n.settingAt(1, l.n.calendar)
	assert.LessOrEqual(t, 0.3*dead, tb.dropAbs, "the left-out mass")
	assert.LessOrEqual(t, tb.dropAbs, tabDropAbs)
	ts := tableTestTimes(tb.t[0], tb.t[len(tb.t)-1], 4000)
	worst, rel := tableAgainstDirect(tb, l, ts)
	for _, x := range ts {
		assert.LessOrEqual(t, math.Abs(tb.CDF(x)-l.CDF(x)), tb.errAt(x), "at %g y", x/Year)
	}
	assert.LessOrEqual(t, worst, tb.tabCDF, "CDF: the table's stated part")
	assert.LessOrEqual(t, rel, tb.tabRel, "relative tails down to 1e-12: the table's stated part")
	t.Logf("left out: mass %.2g (bound %.2g, %.2g of the CDF from its lower end on); CDF error %.2g (stated %.2g), relative tail error %.2g (stated %.2g)",
		0.3*dead, tb.dropAbs, tb.dropRel, worst, tb.tabCDF, rel, tb.tabRel)
}

// The node model's probabilities are the same bits with the gradient and
// without (fixedPieces leaves a term out only where both compute φ(g)), for
// every setting of the test site's groups at 400 times from deployment to
// twice the setting's nominal life (its law from 0 to 1, both extreme
// tails): settingTables' evaluations at the calendar limit then serve
// energyAt's there (seedCalendar). A check of two paths of one computation
// against each other; the values themselves are checked against gonum's
// quadrature elsewhere (TestFloorRuleErrorAgainstGonum and others).
func TestSettingProbabilitiesSameWithGradient(t *testing.T) {
	spec := tabTestSpec(t)
	for _, grp := range spec.Groups {
		l, err := NewNodeLifetime(grp.Node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
		require.NoError(t, err)
		n := l.n
		for j := range n.settings {
			life := n.settingLife(j)
			require.True(t, life > 0 && !math.IsInf(life, 0))
			for i := 1; i <= 400; i++ {
				at := life * float64(i) / 200
				_, _, p, _ := n.settingProbitAt(j, n.clocks(at), false)
				aw, dw := p.alive, p.dead
				a, d, _ := n.settingAt(j, at)
				if aw != a || dw != d {
					t.Errorf("group %s setting %d at %.4g y: with the gradient (%v, %v), without (%v, %v)", grp.Name, j, at/Year, aw, dw, a, d)
				}
			}
		}
	}
}

// The law at the calendar limit that settingTables leaves for atCalendar
// is energyAt's there bit for bit (a fresh law's, computed directly), so
// that EnergyBinds and the table's atom do not depend on which came first.
func TestCalendarSeedSameAsEnergyAt(t *testing.T) {
	spec := tabTestSpec(t)
	node := spec.Groups[2].Node // the group with a calendar limit
	env := Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}}
	fresh, err := NewNodeLifetime(node, env)
	require.NoError(t, err)
	wantA, wantD, _ := fresh.energyAt(fresh.n.calendar)
	l, err := NewNodeLifetime(node, env)
	require.NoError(t, err)
	_ = l.n.settingTables(&tableScratch{}, l)
	l.seedCalendar(-1, -1) // ignored: seeded already
	a, d := l.atCalendar()
	assert.Equal(t, wantA, a, "P(energy left) at the calendar limit")
	assert.Equal(t, wantD, d, "P(run out) at the calendar limit")
	assert.Equal(t, wantD, l.EnergyBinds())
}

// The error profile at the calendar limit reads settingTables' evaluations
// there instead of evaluating again: the same stated error bit for bit as
// evaluating afresh (and as the mixture's settings' own evaluation there:
// every one of them is read).
func TestProfileAtCalendarReadsSettingTables(t *testing.T) {
	l := threeSettingLaw(t)
	out := l.n.settingTables(&tableScratch{}, l)
	cal := make([]calPart, len(out))
	for j := range out {
		require.True(t, out[j].calOK, "setting %d evaluated at the calendar limit", j)
		cal[j] = calPart{p: out[j].cal, ok: true}
	}
	ts := []float64{l.n.calendar}
	want, _ := l.accuracyAtZPruned(ts, nil, true)
	got, _ := l.accuracyAtZKnown(ts, nil, true, cal, false)
	assert.Equal(t, want, got)
	assert.Greater(t, got.CDFAbs, 0.0)
	// And it does read them: a setting's value there moved by 1e-3 moves
	// the stated error.
	moved := append([]calPart(nil), cal...)
	moved[0].p.alive -= 1e-3
	other, _ := l.accuracyAtZKnown(ts, nil, true, moved, false)
	assert.NotEqual(t, want.CDFAbs, other.CDFAbs)
}

// threeSettingLaw is the test site's group with a calendar limit with
// three settings: a short-lived one, a long-lived one left out of its
// table (tabDropAbs) and one kept (TestTabulatedDroppedSettingAgainstDirect).
func threeSettingLaw(t *testing.T) NodeLifetime {
	t.Helper()
	spec := tabTestSpec(t)
	node := spec.Groups[2].Node // the group with a calendar limit
	h := Hour
	node.Settings = []NodeSetting{
		{Weight: 0.5, Cycle: tabTestCycle(24*h, 5*MicroAmp, 4)},
		{Weight: 0.3, Cycle: tabTestCycle(30*h, 2*MicroAmp, 4)},
		{Weight: 0.2, Cycle: tabTestCycle(48*h, 3*MicroAmp, 4)},
	}
	l, err := NewNodeLifetime(node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
	require.NoError(t, err)
	return l
}

// A law's table is the same bits whether its working memory is fresh or
// was lent before to other laws' builds, in either order (as a site's
// workers lend theirs: tabulateWith): the rule that a result does not
// depend on what ran before (common practice for deterministic
// numerics); the oracle is tabulate with memory of its own.
func TestTabulateScratchReuse(t *testing.T) {
	var laws []NodeLifetime
	forEachTestLaw(t, func(_ int, _ Conditions, l NodeLifetime) { laws = append(laws, l) })
	require.NotEmpty(t, laws)
	fresh := make([]tabulated, len(laws))
	for i, l := range laws {
		fresh[i] = tabulate(l)
	}
	bits := func(xs []float64) []uint64 {
		out := make([]uint64, len(xs))
		for i, x := range xs {
			out[i] = math.Float64bits(x)
		}
		return out
	}
	for _, tc := range []struct {
		name    string
		reverse bool
	}{{"in order", false}, {"reversed", true}} {
		sc := &tableScratch{}
		for k := range laws {
			i := k
			if tc.reverse {
				i = len(laws) - 1 - k
			}
			got, want := tabulateWith(sc, laws[i]), fresh[i]
			msg := fmt.Sprintf("%s, law %d", tc.name, i)
			require.NotEmpty(t, want.t, msg)
			assert.Equal(t, bits(want.t), bits(got.t), msg)
			assert.Equal(t, bits(want.z), bits(got.z), msg)
			assert.Equal(t, bits(want.d0), bits(got.d0), msg)
			assert.Equal(t, bits(want.d1), bits(got.d1), msg)
			assert.Equal(t, bits(want.profE), bits(got.profE), msg)
			assert.Equal(t, bits([]float64{want.worst, want.atom, want.acc.CDFAbs, want.acc.SurvivalRel}), bits([]float64{got.worst, got.atom, got.acc.CDFAbs, got.acc.SurvivalRel}), msg)
			assert.Equal(t, want.acc.Method, got.acc.Method, msg)
			assert.Equal(t, want.evals, got.evals, msg)
		}
	}
}

// probitEndFrom's prediction moves the search's path alone: wherever the
// first step is put (none, on the wrong side, far off, or on the level),
// the end is within the slack of the level, on the side asked. The probit
// is that of a lognormal lifetime, (ln t − m)/σ (its definition: common
// practice), which is concave in t, as a setting's is over most of its
// range. An endMemo that learned the search of one law predicts, for the
// same law scaled in time, a first step within the slack: one evaluation
// after the start instead of several.
func TestProbitEndFromPrediction(t *testing.T) {
	const sigma, slack = 0.3, 0.25
	law := func(scale float64, evals *int) func(float64) (float64, float64) {
		return func(x float64) (float64, float64) {
			*evals++
			return math.Log(x/scale) / sigma, 1 / (sigma * x)
		}
	}
	for _, tc := range []struct {
		name          string
		target, first float64
		upper         bool
	}{
		{"lower, none", -8.76, math.NaN(), false},
		{"lower, wrong side", -8.76, 3, false},
		{"lower, far off", -8.76, 1e-3, false},
		{"lower, on the level", -8.76, math.Exp(-8.76 * sigma), false},
		{"upper, none", 8.76, math.NaN(), true},
		{"upper, wrong side", 8.76, 0.5, true},
		{"upper, far off", 8.76, 60, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			evals := 0
			x, z := probitEndFrom(law(1, &evals), 1, tc.first, tc.target, slack, tc.upper)
			assert.InDelta(t, math.Log(x)/sigma, z, 1e-12)
			if tc.upper {
				assert.True(t, z >= tc.target && z <= tc.target+slack, "z %g", z)
			} else {
				assert.True(t, z <= tc.target && z >= tc.target-slack, "z %g", z)
			}
			assert.LessOrEqual(t, evals, 100)
		})
	}
	t.Run("memo", func(t *testing.T) {
		var m endMemo
		assert.True(t, math.IsNaN(m.first(0, 0, 1, 0, -8.88)))
		evals := 0
		f := law(1, &evals)
		zg, _ := f(2)
		x, z := probitEndFrom(f, 2, m.first(0, 0, 2, zg, -8.88), -8.76, slack, false)
		m.learn(0, 0, 2, zg, x, z)
		// The same law three times slower, from a guess three times later.
		g := law(3, &evals)
		zg, _ = g(6)
		evals = 0
		x3, z3 := probitEndFrom(g, 6, m.first(0, 0, 6, zg, -8.88), -8.76, slack, false)
		assert.Equal(t, 2, evals, "the start (again) and the predicted step")
		assert.True(t, z3 <= -8.76 && z3 >= -8.76-slack, "z %g at %g", z3, x3)
		var none *endMemo
		none.learn(0, 0, 2, zg, x, z) // a nil memo remembers nothing
		assert.True(t, math.IsNaN(none.first(0, 0, 6, zg, -8.88)))
	})
}
