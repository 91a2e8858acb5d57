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

// TestFleetOfLawsExponential: groups with exponential lifetimes (rates λ_g,
// counts n_g). The first failure of independent exponentials is exponential
// with rate Λ = Σ n_g·λ_g (a standard result; any probability text), so
// P(no failure by t) = e^{-Λt}, the replacement date at risk r is
// -log(1 - r)/Λ for the fleet and -log(1 - r)/(n_g·λ_g) for a group, and the
// expected number failed by t is Σ n_g·(1 - e^{-λ_g t}).
func TestFleetOfLawsExponential(t *testing.T) {
	year := energy.Year
	rates := []float64{1 / (6 * year), 1 / (9 * year)}
	counts := []int64{120, 800}
	var gs []energy.FleetLawGroup
	lambda := 0.0
	for i, r := range rates {
		gs = append(gs, energy.FleetLawGroup{Name: []string{"cellar", "roof"}[i], Lifetime: dist.MustExponential(r), Count: counts[i]})
		lambda += float64(counts[i]) * r
	}
	f, err := energy.NewFleetOfLaws(gs)
	require.NoError(t, err)
	assert.Equal(t, 2, f.Groups())
	assert.Equal(t, int64(920), f.Size())
	first, err := f.FirstFailure()
	require.NoError(t, err)
	for _, d := range []float64{0.001, 0.01, 0.05, 0.2} {
		tt := d * year
		assert.InEpsilon(t, math.Exp(-lambda*tt), f.NoFailureBefore(tt), 1e-12, "t = %g y", d)
		assert.InEpsilon(t, math.Exp(-lambda*tt), first.Survival(tt), 1e-9, "t = %g y", d)
		c, err := f.FailedBy(tt)
		require.NoError(t, err)
		want := 0.0
		for i, r := range rates {
			want += float64(counts[i]) * -math.Expm1(-r*tt)
		}
		assert.InEpsilon(t, want, c.Mean(), 1e-10)
	}
	const risk = 0.05
	plan, err := f.ReplacementPlan(risk)
	require.NoError(t, err)
	assert.InEpsilon(t, -math.Log1p(-risk)/lambda, plan.FleetReplaceBy, 1e-8)
	for i, g := range plan.Groups {
		assert.InEpsilon(t, -math.Log1p(-risk)/(float64(counts[i])*rates[i]), g.ReplaceBy, 1e-8, g.Name)
		assert.InEpsilon(t, math.Ln2/rates[i], g.MedianLifetime, 1e-12, g.Name)
	}
	_, _, ok := f.Lifetime(0)
	assert.False(t, ok, "a law group has no Lifetime value")
	l, name, ok := f.Law(1)
	require.True(t, ok)
	assert.Equal(t, "roof", name)
	assert.InEpsilon(t, 9*year, l.Mean(), 1e-12)
}

// TestFleetOfLawsMatchesFleet: the same groups given as cycles or as their
// lifetime laws give the same answers.
func TestFleetOfLawsMatchesFleet(t *testing.T) {
	st, err := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustExponential(2))
	require.NoError(t, err)
	cy := energy.MustCycle(st, dist.MustPointMass(60), 0)
	b := energy.MustBattery(energy.BatterySpec{Energy: 500, NominalVoltage: 3, UsableFraction: 1})
	f1, err := energy.NewFleet([]energy.FleetGroup{{Name: "a", Cycle: cy, Battery: b, Count: 40}})
	require.NoError(t, err)
	l, _, ok := f1.Lifetime(0)
	require.True(t, ok)
	f2, err := energy.NewFleetOfLaws([]energy.FleetLawGroup{{Name: "a", Lifetime: l, Count: 40}})
	require.NoError(t, err)
	p1, err := f1.ReplacementPlan(0.1)
	require.NoError(t, err)
	p2, err := f2.ReplacementPlan(0.1)
	require.NoError(t, err)
	assert.Equal(t, p1, p2)
	l1, _, _ := f1.Law(0)
	assert.Equal(t, l.Quantile(0.5), l1.Quantile(0.5))
}

func TestFleetOfLawsBadInput(t *testing.T) {
	e := dist.MustExponential(1e-8)
	tests := []struct {
		name   string
		groups []energy.FleetLawGroup
	}{
		{"no groups", nil},
		{"nil law", []energy.FleetLawGroup{{Name: "a", Count: 3}}},
		{"law below 0", []energy.FleetLawGroup{{Name: "a", Lifetime: dist.MustNormal(1e8, 1e7), Count: 3}}},
		{"count 0", []energy.FleetLawGroup{{Name: "a", Lifetime: e, Count: 0}}},
		{"names repeated", []energy.FleetLawGroup{{Name: "a", Lifetime: e, Count: 1}, {Name: "a", Lifetime: e, Count: 2}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := energy.NewFleetOfLaws(tc.groups)
			require.Error(t, err)
			assert.True(t, errors.Is(err, energy.ErrParam), "%v", err)
		})
	}
}
