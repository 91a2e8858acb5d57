package scenario_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// issue 13: a negative worker count panicked in the model assembly. Any
// count below 1 now means 1, and the laws are the same bits whatever the
// count.
func TestWorkerCountsBelowOne(t *testing.T) {
	m, err := scenario.Build(oneGroup(t, 20), nil)
	require.NoError(t, err)
	ref, err := m.Laws(2, nil)
	require.NoError(t, err)
	for _, w := range []int{-1, math.MinInt} {
		l, err := m.Laws(w, nil)
		require.NoError(t, err, "workers %d", w)
		assert.Equal(t, math.Float64bits(ref.FleetEnergy.Mean()), math.Float64bits(l.FleetEnergy.Mean()), "workers %d", w)
		_, err = m.SettingCycles(w)
		require.NoError(t, err, "workers %d", w)
	}
}
