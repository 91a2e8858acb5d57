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

func TestStageBadInput(t *testing.T) {
	ok := energy.MustFixedState("ok", 1*energy.MilliAmp, 3, 0.01)
	tests := []struct {
		name string
		run  func() error
		want string // part of the message: the state or field and the value
	}{
		{"negative current", func() error {
			_, err := energy.NewFixedState("tx", -0.04, 3.3, 0.1)
			return err
		}, `"tx": current = -0.04`},
		{"negative duration", func() error {
			_, err := energy.NewFixedState("rx", 0.01, 3.3, -0.1)
			return err
		}, `"rx": duration = -0.1`},
		{"current law below zero", func() error {
			_, err := energy.NewState("sense", dist.MustNormal(1e-3, 1e-3), 3.3, dist.MustPointMass(1))
			return err
		}, `"sense": current`},
		{"zero voltage", func() error {
			_, err := energy.NewState("tx", dist.MustPointMass(0.04), 0, dist.MustPointMass(1))
			return err
		}, `"tx": voltage = 0`},
		{"empty name", func() error {
			_, err := energy.NewPowerState("", dist.MustPointMass(1), dist.MustPointMass(1))
			return err
		}, "name"},
		{"choice probability above one", func() error {
			_, err := energy.Choice([]float64{1.5, -0.5}, []energy.Stage{ok, ok})
			return err
		}, "probs[0] = 1.5"},
		{"choice probabilities not summing to one", func() error {
			_, err := energy.Choice([]float64{0.5, 0.4}, []energy.Stage{ok, ok})
			return err
		}, "probs = sum 0.9"},
		{"choice length mismatch", func() error {
			_, err := energy.Choice([]float64{1}, []energy.Stage{ok, ok})
			return err
		}, "probs"},
		{"repeat non-integer", func() error {
			_, err := energy.Repeat(dist.MustDiscrete([]float64{0, 1.5}, []float64{0.5, 0.5}), ok)
			return err
		}, "1.5"},
		{"repeat negative", func() error {
			_, err := energy.Repeat(dist.MustPointMass(-1), ok)
			return err
		}, "-1"},
		{"repeat continuous", func() error {
			_, err := energy.Repeat(dist.MustExponential(1), ok)
			return err
		}, "count"},
		{"empty sequence", func() error {
			_, err := energy.Sequence()
			return err
		}, "stages"},
		{"configured build fails", func() error {
			_, err := energy.Configured(dist.MustDiscrete([]float64{7, 12}, []float64{0.5, 0.5}), func(sf float64) (energy.Stage, error) {
				return energy.NewFixedState("tx", 0.04, 3.3, -sf)
			})
			return err
		}, "= 7"},
		{"period shorter than active time", func() error {
			_, err := energy.NewCycle(energy.MustFixedState("tx", 0.04, 3.3, 2), dist.MustPointMass(1), 0)
			return err
		}, "period"},
		{"negative floor", func() error {
			_, err := energy.NewCycle(ok, dist.MustPointMass(60), -1e-6)
			return err
		}, "floorPower = -1e-06"},
		{"state below floor", func() error {
			_, err := energy.NewCycle(ok, dist.MustPointMass(60), 1)
			return err
		}, `"ok": power`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var err error
			require.NotPanics(t, func() { err = tc.run() })
			require.Error(t, err)
			assert.True(t, errors.Is(err, energy.ErrParam), "%v", err)
			assert.Contains(t, err.Error(), tc.want)
		})
	}
}

// TestStateEnergy: the energy of a state is P·t with P = V·I, and its mean
// E[P]·E[t] (independent factors; any probability text).
func TestStateEnergy(t *testing.T) {
	s := energy.MustState("tx", dist.MustDiscrete([]float64{0.03, 0.05}, []float64{0.5, 0.5}), 3, dist.MustUniform(0.1, 0.3))
	e, err := s.Energy()
	require.NoError(t, err)
	assert.InDelta(t, 3*0.04*0.2, s.MeanEnergy(), 1e-15)
	assert.InDelta(t, 3*0.04*0.2, e.Mean(), 1e-15)
	// P(E <= x) = ½ P(0.09·t <= x) + ½ P(0.15·t <= x), t uniform on [0.1, 0.3].
	x := 0.025
	want := 0.5*math.Min(1, math.Max(0, (x/0.09-0.1)/0.2)) + 0.5*math.Min(1, math.Max(0, (x/0.15-0.1)/0.2))
	assert.InDelta(t, want, e.CDF(x), 1e-14)
}
