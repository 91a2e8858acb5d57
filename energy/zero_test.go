package energy_test

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/energy"
)

// TestZeroValues: methods of zero values (not built by their constructors)
// return NaN, nil or an error; none panics.
func TestZeroValues(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	assert.NotPanics(t, func() {
		var c energy.Cycle
		_ = c.Energy()
		_ = c.ActiveTime()
		_ = c.MeanEnergy()
		_ = c.EnergyVariance()
		_ = c.MeanPower()
		_ = c.MeanCurrent(3)
		_ = c.OverrunProbability()
		_ = c.States()
		_ = c.Rand(r)
		_ = c.Breakdown()
		_ = c.String()
		_, _ = c.Cycles(3)
		_, _ = c.Day()
		_, _ = c.AverageCurrent(energy.Day, 3, 0.9)
	}, "Cycle")
	assert.NotPanics(t, func() {
		var l energy.Lifetime
		_ = l.CDF(1)
		_ = l.Survival(1)
		_ = l.Quantile(0.5)
		_ = l.UpperQuantile(0.5)
		_ = l.Mean()
		_ = l.Variance()
		_, _ = l.Support()
		_ = l.Rand(r)
		_ = l.Simulate(r)
		_ = l.Accuracy()
		_, _ = l.Cycles(3)
		_, _ = l.RenewalEstimate()
		_ = l.PulseWarnings()
		_ = l.String()
	}, "Lifetime")
	assert.NotPanics(t, func() {
		var b energy.Battery
		_ = b.NominalEnergy()
		_ = b.UsableEnergy()
		_ = b.SelfDischargePower()
		_ = b.DeterministicLifetime(1)
		_ = b.PulseCheck(energy.Cycle{})
		_ = b.String()
		_, _ = energy.NewLifetime(energy.Cycle{}, b)
	}, "Battery")
	assert.NotPanics(t, func() {
		var f energy.Fleet
		_, _ = f.FirstFailure()
		_, _ = f.FractionFailed(0.5)
		_ = f.NoFailureBefore(1)
		_, _ = f.FailedBy(1)
		_, _ = f.ReplacementPlan(0.1)
		_, _, _ = f.Lifetime(0)
	}, "Fleet")
	assert.NotPanics(t, func() {
		var s energy.State
		_ = s.MeanEnergy()
		_, _ = s.Energy()
		_ = s.String()
	}, "State")
}
