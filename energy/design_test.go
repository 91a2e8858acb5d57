package energy_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// Invented numbers for the tests (not a real node): a cell of usable
// energy U J, a floor of floorW W, and a cycle whose energy above the
// floor is a fixed burst per uplink plus a per-reading part per batched
// reading, a per-transmission part per transmission and a window part.
const (
	designFloorW    = 10e-6 // W
	designBurstJ    = 0.05  // J per uplink, fixed part
	designReadingJ  = 0.01  // J per reading carried (payload grows)
	designTxJ       = 0.04  // J per transmission
	designConfirmJ  = 0.02  // J per confirmed uplink (the acknowledgement window)
	designCellSmall = 10e3  // J
	designCellLarge = 20e3  // J
)

var designWindowsJ = []float64{0.005, 0.02} // J per uplink: short and long receive windows

// designEnergy is the energy above the floor of one uplink of choice c (J).
func designEnergy(c energy.DesignChoice) float64 {
	e := designBurstJ + designReadingJ*float64(c.Batch) + designTxJ*float64(c.Link.Transmissions) + designWindowsJ[c.Window]
	if c.Link.Confirmed {
		e += designConfirmJ
	}
	return e
}

// designBuilder builds a node of choice c with the per-node spread given
// and no self-discharge, thermal model or calendar (unless calendar > 0).
func designBuilder(spread energy.NodeSpread, calendar, minInterval float64) energy.Builder {
	return func(c energy.DesignChoice) (energy.Candidate, error) {
		u := []float64{designCellSmall, designCellLarge}[c.Cell]
		b, err := energy.NewBattery(energy.BatterySpec{Name: "test cell", Energy: u, NominalVoltage: 3.6, UsableFraction: 1})
		if err != nil {
			return energy.Candidate{}, err
		}
		st, err := energy.NewFixedState("uplink", designEnergy(c)/3.6+designFloorW/3.6, 3.6, 1)
		if err != nil {
			return energy.Candidate{}, err
		}
		cyc, err := energy.NewCycle(st, dist.MustPointMass(c.UplinkPeriod()), designFloorW)
		if err != nil {
			return energy.Candidate{}, err
		}
		spec := energy.NodeSpec{Name: "test node", Settings: []energy.NodeSetting{{Weight: 1, Cycle: cyc}}, Battery: b, Spread: spread, CalendarLife: calendar}
		return energy.Candidate{Node: spec, MinInterval: minInterval}, nil
	}
}

// closedInterval is the reading interval at which a node of choice c with
// a normal capacity factor (sd sigma; sigma = 0: none) is flat by T with
// probability r: with no per-cycle or other per-node noise the life is
// c·U/P(I), P(I) = P_floor + E/(Batch·I), so P(life <= T) = Φ((T·P/U −
// 1)/σ) and I = E/(Batch·(U·(1 + σ·z_r)/T − P_floor)), z_r the r-quantile
// of the standard normal (closed form; the standard normal from package
// dist, checked there against gonum).
func closedInterval(c energy.DesignChoice, T, r, sigma float64) float64 {
	u := []float64{designCellSmall, designCellLarge}[c.Cell]
	z := dist.MustNormal(0, 1).Quantile(r)
	return designEnergy(c) / (float64(c.Batch) * (u*(1+sigma*z)/T - designFloorW))
}

func oneChoice(minI, maxI float64) energy.DesignSpace {
	return energy.DesignSpace{MinInterval: minI, MaxInterval: maxI, Cells: []string{"small"}, Links: []energy.Link{{Transmissions: 1}},
		Batches: []int{1}, Windows: []string{"short"}}
}

// TestSearchDesignDeterministic: with no spread the life is C/P(I) to
// within one period (the cycles begun by t), so the interval that meets
// "flat by T" solves C = P(I)·T to within one period of life (closed form).
func TestSearchDesignDeterministic(t *testing.T) {
	T := 5 * energy.Year
	p := energy.DesignProblem{Space: oneChoice(60, 86400), Target: energy.Target{Kind: energy.NodeFlat, Date: T, Level: 0.01},
		Build: designBuilder(energy.NodeSpread{}, 0, 0)}
	d, err := energy.SearchDesign(p)
	require.NoError(t, err)
	require.True(t, d.Feasible)
	r := d.Results[d.Best]
	c := r.Choice
	E, C, Pf := designEnergy(c), designCellSmall, designFloorW
	solve := func(sign float64) float64 {
		// sign·P_f·I² + (C + sign·E − T·P_f)·I − T·E = 0 (life C/P(I) + sign·I = T).
		a, b, cc := sign*Pf, C+sign*E-T*Pf, -T*E
		// The positive root for a > 0, the smaller positive one for a < 0.
		return (-b + math.Sqrt(b*b-4*a*cc)) / (2 * a)
	}
	lo, hi := solve(1), solve(-1)
	exact := E * T / (C - Pf*T)
	assert.InDelta(t, exact, lo, 1e-4*exact)
	tol := energy.DefaultDesignTolerance
	assert.GreaterOrEqual(t, c.Interval, lo*(1-1e-9), "interval %v below the closed form's lower end %v", c.Interval, lo)
	assert.LessOrEqual(t, c.Interval, hi*(1+tol), "interval %v above the closed form's upper end %v", c.Interval, hi)
	assert.Equal(t, energy.BindEnergy, r.Binds)
	assert.LessOrEqual(t, r.Probability+r.ProbabilityError, 0.01)
	assert.LessOrEqual(t, r.IntervalLow, c.Interval)
}

// TestSearchDesignNormalCapacity: a normal capacity factor makes
// P(flat by T) = Φ((T·P(I)/U − 1)/σ) (closed form, see closedInterval); the
// three targets reduce to it: NodeFlat at r, NodeQuantile at q (the
// q-quantile is T exactly where F(T) = q), GroupFlat of n nodes at
// 1 − (1 − r)^(1/n).
func TestSearchDesignNormalCapacity(t *testing.T) {
	const sigma = 0.05
	T := 6 * energy.Year
	n := int64(200)
	for _, c := range []struct {
		name   string
		target energy.Target
		rNode  float64 // the node probability the target allows
	}{
		{"node flat", energy.Target{Kind: energy.NodeFlat, Date: T, Level: 0.01}, 0.01},
		{"node quantile", energy.Target{Kind: energy.NodeQuantile, Date: T, Level: 0.05}, 0.05},
		{"group flat", energy.Target{Kind: energy.GroupFlat, Date: T, Level: 0.1}, -math.Expm1(math.Log1p(-0.1) / float64(n))},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := energy.DesignProblem{Space: oneChoice(60, 86400), Target: c.target, Count: n,
				Build: designBuilder(energy.NodeSpread{Capacity: sigma}, 0, 0)}
			d, err := energy.SearchDesign(p)
			require.NoError(t, err)
			r := d.Results[0]
			require.True(t, r.Feasible)
			want := closedInterval(r.Choice, T, c.rNode, sigma)
			tol := energy.DefaultDesignTolerance
			assert.GreaterOrEqual(t, r.Choice.Interval, want*(1-1e-6), "interval %v, closed form %v", r.Choice.Interval, want)
			assert.LessOrEqual(t, r.Choice.Interval, want*(1+tol), "interval %v, closed form %v", r.Choice.Interval, want)
			assert.LessOrEqual(t, r.IntervalLow, want*(1+1e-6))
			assert.GreaterOrEqual(t, r.IntervalLow, want*(1-tol)*(1-tol))
			switch c.target.Kind {
			case energy.NodeQuantile:
				assert.GreaterOrEqual(t, r.Figure, T)
				assert.InDelta(t, T, r.Figure, 2*tol*T) // a life ∝ I near I*: the margin is within the bracket
				assert.InDelta(t, r.Figure-T, r.Margin, 1e-9*T)
			default:
				assert.InDelta(t, c.target.Level-r.Figure, r.Margin, 1e-15)
				assert.LessOrEqual(t, r.Figure, c.target.Level)
				assert.Greater(t, r.Figure, 0.9*c.target.Level) // a bracket of 0.1 % moves p by a few per cent of it
			}
		})
	}
}

// TestSearchDesignGrid: the bisection finds what a brute-force scan of a
// fine geometric grid finds (the grid's first interval meeting the target,
// its figure from the same model built directly with NewNodeLifetime),
// with per-node spreads of all three kinds and shared factors.
func TestSearchDesignGrid(t *testing.T) {
	spread := energy.NodeSpread{Capacity: 0.04, Floor: 0.3, Active: 0.03}
	T := 5 * energy.Year
	const level = 0.02
	build := designBuilder(spread, 0, 0)
	c0 := energy.DesignChoice{Link: energy.Link{Transmissions: 1}, Batch: 1}
	pAt := func(iv float64) float64 {
		c := c0
		c.Interval = iv
		cand, err := build(c)
		require.NoError(t, err)
		l, err := energy.NewNodeLifetime(cand.Node, energy.Environment{})
		require.NoError(t, err)
		return l.CDF(T)
	}
	d, err := energy.SearchDesign(energy.DesignProblem{Space: oneChoice(100, 10000), Target: energy.Target{Kind: energy.NodeFlat, Date: T, Level: level}, Build: build})
	require.NoError(t, err)
	r := d.Results[0]
	require.True(t, r.Feasible)
	// The grid: 400 geometric steps over [100, 10000] s (1.16 % apart).
	const steps = 400
	first := -1.0
	prev := 100.0
	for i := range steps + 1 {
		iv := 100 * math.Pow(100, float64(i)/steps)
		if pAt(iv) <= level {
			first = iv
			break
		}
		prev = iv
	}
	require.Positive(t, first)
	assert.LessOrEqual(t, pAt(r.Choice.Interval), level)
	assert.GreaterOrEqual(t, r.Choice.Interval, prev)
	assert.LessOrEqual(t, r.Choice.Interval, first*(1+energy.DefaultDesignTolerance))
	assert.InDelta(t, pAt(r.Choice.Interval), r.Probability, 1e-15)

	// With shared factors the figure is Site's node law at the same
	// interval, within the table's stated error and the search's.
	sh := energy.SharedSpread{Batch: 0.03, Temperature: 2}
	th := energy.TypicalThermal()
	buildT := func(c energy.DesignChoice) (energy.Candidate, error) {
		cand, err := build(c)
		cand.Node.Thermal = &th
		return cand, err
	}
	d, err = energy.SearchDesign(energy.DesignProblem{Space: oneChoice(100, 10000), Target: energy.Target{Kind: energy.NodeFlat, Date: T, Level: level},
		Shared: sh, Build: buildT})
	require.NoError(t, err)
	r = d.Results[0]
	require.True(t, r.Feasible)
	cand, err := buildT(r.Choice)
	require.NoError(t, err)
	st, err := energy.NewSite(energy.SiteSpec{Shared: sh, Groups: []energy.SiteGroup{{Name: "g", Node: cand.Node, Count: 1}}})
	require.NoError(t, err)
	nl, err := st.NodeLifetime(0)
	require.NoError(t, err)
	assert.InDelta(t, nl.CDF(T), r.Probability, st.Accuracy().CDFAbs+r.ProbabilityError)
}

// TestSearchDesignBinds: what binds when the target is met at the range's
// lower end, at the duty-cycle limit, or not at all (energy, calendar,
// duty cycle); infeasible results carry the figure at MaxInterval.
func TestSearchDesignBinds(t *testing.T) {
	T := 5 * energy.Year
	target := energy.Target{Kind: energy.NodeFlat, Date: T, Level: 0.01}
	c0 := energy.DesignChoice{Cell: 0, Link: energy.Link{Transmissions: 1}, Batch: 1}
	iStar := closedInterval(c0, T, 0.01, 0.05)
	spread := energy.NodeSpread{Capacity: 0.05}
	for _, c := range []struct {
		name     string
		space    energy.DesignSpace
		build    energy.Builder
		feasible bool
		binds    energy.Binding
		interval float64
	}{
		{"range", oneChoice(2*iStar, 4*iStar), designBuilder(spread, 0, 0), true, energy.BindRange, 2 * iStar},
		{"duty cycle", oneChoice(iStar/2, 4*iStar), designBuilder(spread, 0, 1.5*iStar), true, energy.BindDutyCycle, 1.5 * iStar},
		{"energy", oneChoice(iStar/4, iStar/2), designBuilder(spread, 0, 0), false, energy.BindEnergy, iStar / 2},
		{"calendar", oneChoice(iStar/4, 4*iStar), designBuilder(spread, 4*energy.Year, 0), false, energy.BindCalendar, 4 * iStar},
		{"duty cycle forbids all", oneChoice(iStar/4, 4*iStar), designBuilder(spread, 0, 5*iStar), false, energy.BindDutyCycle, 4 * iStar},
		{"dwell time", oneChoice(iStar/4, 4*iStar), designBuilder(spread, 0, math.Inf(1)), false, energy.BindDutyCycle, 4 * iStar},
	} {
		t.Run(c.name, func(t *testing.T) {
			d, err := energy.SearchDesign(energy.DesignProblem{Space: c.space, Target: target, Build: c.build})
			require.NoError(t, err)
			r := d.Results[0]
			assert.Equal(t, c.feasible, r.Feasible)
			assert.Equal(t, c.feasible, d.Feasible)
			assert.Equal(t, c.binds, r.Binds)
			assert.InDelta(t, c.interval, r.Choice.Interval, 1e-9*c.interval)
			if !c.feasible && c.binds != energy.BindDutyCycle {
				assert.Less(t, r.Margin, 0.0)
				if c.binds == energy.BindCalendar {
					assert.Equal(t, 1.0, r.Figure)
				}
			}
		})
	}
}

// TestSearchDesignBest: the best of cells × links × batches × windows is
// the one whose closed-form interval is shortest (closedInterval for each).
func TestSearchDesignBest(t *testing.T) {
	const sigma = 0.05
	T := 5 * energy.Year
	sp := energy.DesignSpace{MinInterval: 30, MaxInterval: 86400, Cells: []string{"small", "large"},
		Links:   []energy.Link{{Transmissions: 1}, {Confirmed: true, Transmissions: 4}, {Transmissions: 2}},
		Batches: []int{1, 2, 4}, Windows: []string{"short", "long"}}
	d, err := energy.SearchDesign(energy.DesignProblem{Space: sp, Target: energy.Target{Kind: energy.NodeFlat, Date: T, Level: 0.01},
		Build: designBuilder(energy.NodeSpread{Capacity: sigma}, 0, 0)})
	require.NoError(t, err)
	require.Len(t, d.Results, 2*3*3*2)
	bestI, best := math.Inf(1), -1
	for i, r := range d.Results {
		want := closedInterval(r.Choice, T, 0.01, sigma)
		assert.InDelta(t, want, r.Choice.Interval, 1.01e-3*want, "choice %d %+v", i, r.Choice)
		if want < bestI {
			bestI, best = want, i
		}
	}
	assert.Equal(t, best, d.Best)
	c := d.Results[d.Best].Choice
	assert.Equal(t, 1, c.Cell)
	assert.Equal(t, 4, c.Batch)
	assert.Equal(t, energy.Link{Transmissions: 1}, c.Link)
	assert.Equal(t, 0, c.Window)
}

// TestSearchDesignBadInput: every rule names its field.
func TestSearchDesignBadInput(t *testing.T) {
	good := energy.DesignProblem{Space: oneChoice(60, 86400), Target: energy.Target{Kind: energy.NodeFlat, Date: energy.Year, Level: 0.01},
		Build: designBuilder(energy.NodeSpread{}, 0, 0)}
	for _, c := range []struct {
		name  string
		edit  func(p *energy.DesignProblem)
		field string
	}{
		{"level 0", func(p *energy.DesignProblem) { p.Target.Level = 0 }, "Level"},
		{"level 1", func(p *energy.DesignProblem) { p.Target.Level = 1 }, "Level"},
		{"level NaN", func(p *energy.DesignProblem) { p.Target.Level = math.NaN() }, "Level"},
		{"negative date", func(p *energy.DesignProblem) { p.Target.Date = -1 }, "Date"},
		{"kind", func(p *energy.DesignProblem) { p.Target.Kind = 0 }, "Kind"},
		{"no cells", func(p *energy.DesignProblem) { p.Space.Cells = nil }, "Cells"},
		{"no links", func(p *energy.DesignProblem) { p.Space.Links = nil }, "Links"},
		{"no batches", func(p *energy.DesignProblem) { p.Space.Batches = nil }, "Batches"},
		{"no windows", func(p *energy.DesignProblem) { p.Space.Windows = nil }, "Windows"},
		{"batch 0", func(p *energy.DesignProblem) { p.Space.Batches = []int{0} }, "Batches[0]"},
		{"transmissions 0", func(p *energy.DesignProblem) { p.Space.Links = []energy.Link{{}} }, "Transmissions"},
		{"min interval", func(p *energy.DesignProblem) { p.Space.MinInterval = 0 }, "MinInterval"},
		{"max below min", func(p *energy.DesignProblem) { p.Space.MaxInterval = 1 }, "MaxInterval"},
		{"tolerance", func(p *energy.DesignProblem) { p.Space.Tolerance = 0.9 }, "Tolerance"},
		{"count", func(p *energy.DesignProblem) { p.Target.Kind = energy.GroupFlat; p.Count = 0 }, "Count"},
		{"builder", func(p *energy.DesignProblem) { p.Build = nil }, "Build"},
		{"shared", func(p *energy.DesignProblem) { p.Shared.Batch = -1 }, "Batch"},
		{"too many", func(p *energy.DesignProblem) { p.Space.Batches = make([]int, energy.MaxDesignChoices+1) }, "Space"},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := good
			c.edit(&p)
			_, err := energy.SearchDesign(p)
			require.Error(t, err)
			assert.True(t, errors.Is(err, energy.ErrParam), "%v", err)
			assert.Contains(t, err.Error(), c.field)
		})
	}
	// A builder's own error is returned, wrapped.
	p := good
	p.Build = func(energy.DesignChoice) (energy.Candidate, error) {
		return energy.Candidate{}, errors.New("no such radio")
	}
	_, err := energy.SearchDesign(p)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.Contains(t, err.Error(), "no such radio")
}

// TestGroupRuleBadInput: a group out of range and a zero Site are errors
// naming the field; a GroupFlat target whose count is not the rule's
// group's is an error naming p.Count (the rule's error is estimated for
// the Site's count), and with that count the search states the rule's
// error as part of its own.
func TestGroupRuleBadInput(t *testing.T) {
	s := replaceSite(t, [2]int64{3, 2}, 0, energy.SharedSpread{Batch: 0.02})
	_, err := s.GroupRule(2)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.ErrorContains(t, err, "i = 2")
	_, err = energy.Site{}.GroupRule(0)
	require.ErrorIs(t, err, energy.ErrParam)
	r, err := s.GroupRule(1)
	require.NoError(t, err)
	assert.Equal(t, s.SharedRule().Len(), r.Len())
	p := energy.DesignProblem{Space: oneChoice(60, 86400), Target: energy.Target{Kind: energy.GroupFlat, Date: energy.Year, Level: 0.1}, Count: 3,
		Rule: r, Build: designBuilder(energy.NodeSpread{Capacity: 0.05}, 0, 0)}
	_, err = energy.SearchDesign(p)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.ErrorContains(t, err, "p.Count")
	p.Count = 2
	d, err := energy.SearchDesign(p)
	require.NoError(t, err)
	res := d.Results[d.Best]
	require.True(t, res.Feasible)
	assert.Positive(t, res.RuleError)
	assert.GreaterOrEqual(t, res.ProbabilityError, res.RuleError)
	assert.LessOrEqual(t, res.Probability+res.ProbabilityError, p.Target.Level)
}
