package energy_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// poissonFleet is a fleet of groups whose cycle energies are exponential
// (mean 0.5 J) on cells of usable energy m/2 J, so that each group's number
// of complete cycles is Poisson(m) (see TestLifetimePoisson); period 60 s.
func poissonFleet(t *testing.T, ms []float64, counts []int64) energy.Fleet {
	t.Helper()
	st, err := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustExponential(2))
	require.NoError(t, err)
	cy := energy.MustCycle(st, dist.MustPointMass(60), 0)
	var gs []energy.FleetGroup
	for i, m := range ms {
		b := energy.MustBattery(energy.BatterySpec{Energy: m / 2, NominalVoltage: 3, UsableFraction: 1})
		gs = append(gs, energy.FleetGroup{Cycle: cy, Battery: b, Count: counts[i]})
	}
	f, err := energy.NewFleet(gs)
	require.NoError(t, err)
	return f
}

// TestFleetPoisson checks the fleet answers against the exact Poisson
// lifetimes of poissonFleet: P(no failure by t) = Π_g P(M_g > k)^{n_g} with
// k = floor(t/60) (independent nodes), the expected number failed
// Σ n_g·P(M_g <= k) (mean of a Poisson-binomial count), the first-failure
// law, the replacement dates (the risk is crossed between one period and
// the next), and the time by which a fraction has failed for one group
// against the binomial tail (testref.BinomialTails).
func TestFleetPoisson(t *testing.T) {
	ms := []float64{400, 500, 650}
	counts := []int64{30, 50, 20}
	f := poissonFleet(t, ms, counts)
	require.EqualValues(t, 100, f.Size())
	pNone := func(k int64) float64 {
		s := 0.0
		for i, m := range ms {
			atLeast, _ := poissonTails(m, k+1) // P(M > k)
			s += float64(counts[i]) * math.Log(atLeast)
		}
		return math.Exp(s)
	}
	ff, err := f.FirstFailure()
	require.NoError(t, err)
	for _, k := range []int64{300, 330, 350, 370} {
		tt := float64(k) * 60
		want := pNone(k)
		assert.InDelta(t, want, f.NoFailureBefore(tt), 1e-9*want+1e-15, "k=%d", k)
		assert.InDelta(t, want, ff.Survival(tt), 1e-9*want+1e-15, "k=%d", k)
		c, err := f.FailedBy(tt)
		require.NoError(t, err)
		mean := 0.0
		for i, m := range ms {
			_, fewer := poissonTails(m, k+1) // P(M <= k)
			mean += float64(counts[i]) * fewer
		}
		assert.InDelta(t, mean, c.Mean(), 1e-9*mean+1e-15, "k=%d", k)
		assert.InDelta(t, 1-want, 1-c.CDF(0), 1e-9, "P(count >= 1) = P(some failure), k=%d", k)
	}
	plan, err := f.ReplacementPlan(0.1)
	require.NoError(t, err)
	require.Len(t, plan.Groups, 3)
	for i, g := range plan.Groups {
		k := int64(g.ReplaceBy / 60)
		atLeast, _ := poissonTails(ms[i], k+1)
		risk := 1 - math.Pow(atLeast, float64(counts[i]))
		assert.GreaterOrEqual(t, risk, 0.1-1e-9, g.Name)
		before, _ := poissonTails(ms[i], k)
		assert.Less(t, 1-math.Pow(before, float64(counts[i])), 0.1+1e-9, g.Name)
	}
	kf := int64(plan.FleetReplaceBy / 60)
	assert.LessOrEqual(t, pNone(kf), 0.9+1e-9)
	assert.Greater(t, pNone(kf-1), 0.9-1e-9)
	assert.LessOrEqual(t, plan.FleetReplaceBy, plan.Groups[0].ReplaceBy)

	// One group of 40: the time by which 25 % (10 nodes) are flat, against
	// the binomial tail P(Bin(40, F(t)) >= 10).
	one := poissonFleet(t, []float64{500}, []int64{40})
	q, err := one.FractionFailed(0.25)
	require.NoError(t, err)
	for _, k := range []int64{470, 490, 500} {
		_, fk := poissonTails(500, k+1)
		_, atLeast := testref.BinomialTails(40, 10, fk)
		assert.InDelta(t, atLeast, q.CDF(float64(k)*60), 1e-9, "k=%d", k)
	}
}

func TestFleetBadInput(t *testing.T) {
	st := energy.MustFixedState("tx", 0.04, 3.3, 0.1)
	cy := energy.MustCycle(st, dist.MustPointMass(60), 0)
	b := energy.MustBattery(energy.TypicalCR2032())
	_, err := energy.NewFleet(nil)
	assert.True(t, errors.Is(err, energy.ErrParam))
	_, err = energy.NewFleet([]energy.FleetGroup{{Name: "a", Cycle: cy, Battery: b, Count: 0}})
	assert.True(t, errors.Is(err, energy.ErrParam))
	assert.Contains(t, err.Error(), `"a": Count = 0`)
	_, err = energy.NewFleet([]energy.FleetGroup{{Name: "a", Cycle: cy, Battery: b, Count: 1}, {Name: "a", Cycle: cy, Battery: b, Count: 1}})
	assert.True(t, errors.Is(err, energy.ErrParam))
	// an unnamed group is "group i", which a given name may repeat
	_, err = energy.NewFleet([]energy.FleetGroup{{Name: "group 1", Cycle: cy, Battery: b, Count: 1}, {Cycle: cy, Battery: b, Count: 1}})
	assert.True(t, errors.Is(err, energy.ErrParam))
	assert.Contains(t, err.Error(), "group 1")
	for _, names := range [][]string{{"", ""}, {"a", ""}, {"", "group 0x"}} {
		f, err := energy.NewFleet([]energy.FleetGroup{{Name: names[0], Cycle: cy, Battery: b, Count: 1}, {Name: names[1], Cycle: cy, Battery: b, Count: 1}})
		require.NoError(t, err, "names %q", names)
		for i, want := range names {
			if want == "" {
				want = fmt.Sprintf("group %d", i)
			}
			_, got, ok := f.Lifetime(i)
			assert.True(t, ok)
			assert.Equal(t, want, got, "names %q", names)
		}
	}
	f, err := energy.NewFleet([]energy.FleetGroup{{Name: "a", Cycle: cy, Battery: b, Count: 3}})
	require.NoError(t, err)
	_, err = f.ReplacementPlan(1.5)
	assert.True(t, errors.Is(err, energy.ErrParam))
	_, err = f.FractionFailed(0)
	assert.True(t, errors.Is(err, energy.ErrParam))
	_, _, ok := f.Lifetime(1)
	assert.False(t, ok)
}

// TestFleetAgainstSimulation: the first-failure law of three small groups
// whose lifetimes come from the numerical K-fold path (demoCycle, jittered
// period, about 150 to 300 cycles per cell) against simulated fleets, each
// node's cycles walked one by one (Lifetime.Simulate); KS at level 1e-6 on
// 100 sample quantiles.
func TestFleetAgainstSimulation(t *testing.T) {
	c := demoCycle(t, dist.MustUniform(880, 920))
	var gs []energy.FleetGroup
	for i, cycles := range []float64{150, 200, 300} {
		b := energy.MustBattery(energy.BatterySpec{Name: fmt.Sprint(i), Energy: cycles * c.MeanEnergy(), NominalVoltage: 3.3, UsableFraction: 1})
		gs = append(gs, energy.FleetGroup{Cycle: c, Battery: b, Count: int64(4 - i)})
	}
	f, err := energy.NewFleet(gs)
	require.NoError(t, err)
	ff, err := f.FirstFailure()
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(51, 52))
	const n = 3000
	xs := make([]float64, n)
	for i := range xs {
		first := math.Inf(1)
		for g := range f.Groups() {
			l, _, ok := f.Lifetime(g)
			require.True(t, ok)
			for range gs[g].Count {
				first = math.Min(first, l.Simulate(r))
			}
		}
		xs[i] = first
	}
	assert.Less(t, gridKS(xs, ff.CDF, 100), testref.KSCritical(n, 1e-6))
}
