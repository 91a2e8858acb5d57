package energy_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// replaceSite is an invented two-group site whose nodes last about a year
// (a small cell, a minute's reporting), with a capacity spread, optionally
// a calendar limit and shared factors.
func replaceSite(t *testing.T, counts [2]int64, calendar float64, shared energy.SharedSpread) energy.Site {
	t.Helper()
	var groups []energy.SiteGroup
	for g, u := range []float64{600, 800} { // J
		b, err := energy.NewBattery(energy.BatterySpec{Name: "small cell", Energy: u, NominalVoltage: 3, UsableFraction: 1})
		require.NoError(t, err)
		st := energy.MustFixedState("uplink", 10*energy.MilliAmp, 3, 0.05)
		cyc := energy.MustCycle(st, dist.MustPointMass(60), 3e-6)
		groups = append(groups, energy.SiteGroup{Name: []string{"a", "b"}[g], Count: counts[g], Node: energy.NodeSpec{
			Settings: []energy.NodeSetting{{Weight: 1, Cycle: cyc}}, Battery: b, Spread: energy.NodeSpread{Capacity: 0.08}, CalendarLife: calendar}})
	}
	s, err := energy.NewSite(energy.SiteSpec{Shared: shared, Groups: groups})
	require.NoError(t, err)
	return s
}

// TestReplacementScheduled: without failures replaced, a node fails at most
// once a block, so given the (single) shared node the failures are
// Binomial(n·B, F(τ)) + Binomial(n, F(r)) per group, and no node is flat
// with probability Π S(τ)^(n·B)·S(r)^n (closed forms over the node law).
func TestReplacementScheduled(t *testing.T) {
	s := replaceSite(t, [2]int64{30, 20}, 0, energy.SharedSpread{})
	H := 3.5 * energy.Year
	tau := 1.2 * energy.Year
	o, err := s.Replacement(energy.ReplaceAll(tau), H, energy.Costs{Visit: 100, Cell: 10})
	require.NoError(t, err)
	// Dates 1.2 and 2.4 years; last block 1.1 years.
	B, r := 2.0, H-2*tau
	mean, no := 0.0, 0.0
	var terms []dist.Law
	for g, n := range []float64{30, 20} {
		l, err := s.NodeLifetime(g)
		require.NoError(t, err)
		ft, fr := l.CDF(tau), l.CDF(r)
		mean += n*B*ft + n*fr
		no += n*B*math.Log(l.Survival(tau)) + n*math.Log(l.Survival(r))
		for _, c := range []struct {
			k int
			p float64
		}{{int(n * B), ft}, {int(n), fr}} {
			terms = append(terms, dist.MustSumIID(dist.MustDiscrete([]float64{0, 1}, []float64{1 - c.p, c.p}), c.k))
		}
	}
	tol := s.Accuracy().CDFAbs * 150 // 150 node-blocks, each within the table's error
	assert.InDelta(t, mean, o.Failures.Mean(), tol)
	assert.InDelta(t, -math.Expm1(no), o.AnyFlat, tol)
	assert.LessOrEqual(t, o.AnyFlatError, 1.0)
	want := dist.MustSum(terms...)
	for k := 0.0; k <= 150; k++ {
		assert.InDelta(t, want.CDF(k), o.Failures.CDF(k), tol+1e-12, "k = %v", k)
	}
	// Visits and cells are fixed: 2 dates, 2 × 50 cells.
	assert.Equal(t, 2/3.5, o.VisitsPerYear.Mean)
	assert.Equal(t, o.VisitsPerYear.Low, o.VisitsPerYear.High)
	assert.InDelta(t, 100/3.5, o.CellsPerYear.Mean, 1e-12)
	assert.InDelta(t, 2*100+100*10, o.Cost.Mean, 1e-9)

	// Per group: the groups' dates differ, so each date is a visit; a
	// shared date is one.
	o2, err := s.Replacement(energy.ReplaceGroups([]float64{tau, tau / 2}), H, energy.Costs{})
	require.NoError(t, err)
	assert.InDelta(t, 5, o2.Visits.Mean(), 1e-12) // 0.6, 1.2, 1.8, 2.4, 3.0 years: 1.2 and 2.4 shared
	assert.InDelta(t, 30*2+20*5, o2.Cells.Mean(), 1e-9)
}

// TestReplacementOnFailure: the failures of a group replaced on failure
// against Monte Carlo over the same node laws (lives drawn by the law's
// own sampler, renewals counted by adding them), 4000 seeded site
// replicates: the count's CDF within the DKW bound at level 1e-6,
// sqrt(ln(2e6)/8000) = 0.0426, and its mean within 5 standard errors.
func TestReplacementOnFailure(t *testing.T) {
	if testing.Short() {
		t.Skip("renewal counts of the node laws and 4000 sampled sites: about a second")
	}
	s := replaceSite(t, [2]int64{6, 4}, 0, energy.SharedSpread{})
	H := 2.5 * energy.Year
	o, err := s.Replacement(energy.ReplaceOnFailure(), H, energy.Costs{Visit: 50, Cell: 10})
	require.NoError(t, err)
	assert.Less(t, o.CountError, 1e-3)
	// A failure is a visit and a cell.
	assert.InDelta(t, o.Failures.Mean(), o.Visits.Mean(), 1e-9)
	assert.InDelta(t, 60*o.Failures.Mean(), o.Cost.Mean, 1e-6)

	laws := make([]dist.Law, 2)
	for g := range laws {
		laws[g], err = s.NodeLifetime(g)
		require.NoError(t, err)
	}
	const reps = 4000
	src := rand.New(rand.NewPCG(16, 2))
	counts := make([]int, 64)
	total := 0.0
	for range reps {
		n := 0
		for g, m := range []int{6, 4} {
			for range m {
				for sum := laws[g].Rand(src); sum <= H; sum += laws[g].Rand(src) {
					n++
				}
			}
		}
		counts[min(n, len(counts)-1)]++
		total += float64(n)
	}
	dkw := math.Sqrt(math.Log(2/1e-6) / (2 * reps))
	cum := 0
	for k := range counts {
		cum += counts[k]
		assert.InDelta(t, float64(cum)/reps, o.Failures.CDF(float64(k)), dkw+o.CountError, "k = %d", k)
	}
	assert.InDelta(t, o.Failures.Mean(), total/reps, 5*math.Sqrt(o.Failures.Variance()/reps))
	// Any flat: some node fails within the horizon.
	assert.InDelta(t, o.Failures.Survival(0.5), o.AnyFlat, o.AnyFlatError+o.CountError+1e-9)
}

// TestComparePolicies: the cheapest at the risk is a feasible policy of
// least mean cost; an impossible risk gives the least risky, not an error;
// Schedule's periods meet the risk.
func TestComparePolicies(t *testing.T) {
	s := replaceSite(t, [2]int64{30, 20}, 0, energy.SharedSpread{Batch: 0.02})
	H := 4 * energy.Year
	const risk = 0.05
	all, err := s.Schedule(risk, H, false)
	require.NoError(t, err)
	per, err := s.Schedule(risk, H, true)
	require.NoError(t, err)
	require.Len(t, all, 1)
	require.Len(t, per, 2)
	ps := []energy.Policy{energy.ReplaceAll(all[0]), energy.ReplaceGroups(per), energy.ReplaceAll(H / 8), energy.ReplaceAll(H / 2)}
	pc, err := s.ComparePolicies(ps, H, risk, energy.Costs{Visit: 200, Cell: 5})
	require.NoError(t, err)
	require.True(t, pc.Feasible)
	for i, o := range pc.Outcomes {
		ok := o.AnyFlat+o.AnyFlatError <= risk
		if i < 2 {
			assert.True(t, ok, "policy %d: any flat %v", i, o.AnyFlat)
		}
		if ok {
			assert.LessOrEqual(t, pc.Outcomes[pc.Cheapest].Cost.Mean, o.Cost.Mean)
		}
	}
	// One replacement fewer than Schedule's common period breaks the risk.
	k := int(math.Round(H / all[0]))
	if k > 1 {
		o, err := s.Replacement(energy.ReplaceAll(H/float64(k-1)), H, energy.Costs{})
		require.NoError(t, err)
		assert.Greater(t, o.AnyFlat+o.AnyFlatError, risk)
	}
	pc, err = s.ComparePolicies(ps[2:], H, 1e-12, energy.Costs{Visit: 1})
	require.NoError(t, err)
	assert.False(t, pc.Feasible)
	assert.Equal(t, 0, pc.Cheapest) // every 0.5 years is the less risky
}

// TestReplacementBadInput: each rule names its field.
func TestReplacementBadInput(t *testing.T) {
	s := replaceSite(t, [2]int64{3, 2}, 0, energy.SharedSpread{})
	H := energy.Year
	for _, c := range []struct {
		name  string
		run   func() error
		field string
	}{
		{"negative horizon", func() error { _, err := s.Replacement(energy.ReplaceAll(H), -1, energy.Costs{}); return err }, "horizon"},
		{"negative visit cost", func() error { _, err := s.Replacement(energy.ReplaceAll(H), H, energy.Costs{Visit: -1}); return err }, "Visit"},
		{"negative cell cost", func() error { _, err := s.Replacement(energy.ReplaceAll(H), H, energy.Costs{Cell: -1}); return err }, "Cell"},
		{"negative period", func() error { _, err := s.Replacement(energy.ReplaceAll(-1), H, energy.Costs{}); return err }, "Every"},
		{"periods count", func() error {
			_, err := s.Replacement(energy.ReplaceGroups([]float64{1, 2, 3}), H, energy.Costs{})
			return err
		}, "Every"},
		{"nothing", func() error { _, err := s.Replacement(energy.Policy{Name: "x"}, H, energy.Costs{}); return err }, "Every"},
		{"too many dates", func() error { _, err := s.Replacement(energy.ReplaceAll(1), H, energy.Costs{}); return err }, "Every"},
		{"no policies", func() error { _, err := s.ComparePolicies(nil, H, 0.1, energy.Costs{}); return err }, "policies"},
		{"risk 0", func() error {
			_, err := s.ComparePolicies([]energy.Policy{energy.ReplaceAll(H)}, H, 0, energy.Costs{})
			return err
		}, "risk"},
		{"risk 1", func() error { _, err := s.Schedule(1, H, false); return err }, "risk"},
		{"schedule horizon", func() error { _, err := s.Schedule(0.1, -H, false); return err }, "horizon"},
		{"zero site", func() error { _, err := energy.Site{}.Replacement(energy.ReplaceAll(H), H, energy.Costs{}); return err }, "Site"},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := c.run()
			require.Error(t, err)
			assert.True(t, errors.Is(err, energy.ErrParam), "%v", err)
			assert.Contains(t, err.Error(), c.field)
		})
	}
}

// TestAnyFlatRuleError: the shared rule's stated part of AnyFlatError
// against the rule's true error for the probability of any flat node,
// measured from a reference mixture over the batch factor (the oracle: 41
// Gauss–Hermite nodes, of the exact conditional laws, Site.Conditional;
// the site has no temperature spread), for the common period Schedule
// finds at a risk of 5 % and for replacements every half year: the
// reference lies within the stated error of AnyFlat.
func TestAnyFlatRuleError(t *testing.T) {
	const sd = 0.02
	s := replaceSite(t, [2]int64{30, 20}, 0, energy.SharedSpread{Batch: sd})
	H := 4 * energy.Year
	all, err := s.Schedule(0.05, H, false)
	require.NoError(t, err)
	z, w := hermite41(t)
	for _, tau := range []float64{all[0], H / 8} {
		o, err := s.Replacement(energy.ReplaceAll(tau), H, energy.Costs{})
		require.NoError(t, err)
		assert.Positive(t, o.RuleError)
		assert.LessOrEqual(t, o.RuleError, o.AnyFlatError)
		B := math.Ceil(H/tau) - 1
		r := H - B*tau
		ref := 0.0
		for i := range z {
			logNo := 0.0
			for g, n := range []float64{30, 20} {
				l, err := s.Conditional(g, energy.Conditions{BatchFactor: 1 + sd*z[i]})
				require.NoError(t, err)
				logNo += n * (B*math.Log(l.Survival(tau)) + math.Log(l.Survival(r)))
			}
			ref += w[i] * -math.Expm1(logNo)
		}
		assert.InDelta(t, ref, o.AnyFlat, o.AnyFlatError, "τ = %v", tau)
		t.Logf("τ = %.3g years: any flat %.4g, |reference − it| %.2g, stated %.2g (the rule's %.2g)", tau/energy.Year, o.AnyFlat, math.Abs(ref-o.AnyFlat), o.AnyFlatError, o.RuleError)
	}
}

// hermite41 returns the 41-node Gauss–Hermite rule for the standard
// normal (gonum's integrate/quad.Hermite, nodes scaled by √2, weights
// normalised to 1).
func hermite41(t *testing.T) (z, w []float64) {
	t.Helper()
	x := make([]float64, 41)
	w = make([]float64, 41)
	quad.Hermite{}.FixedLocations(x, w, math.Inf(-1), math.Inf(1))
	tot := 0.0
	for i := range x {
		x[i] *= math.Sqrt2
		tot += w[i]
	}
	for i := range w {
		w[i] /= tot
	}
	return x, w
}
