package workers

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Every item runs once, whatever the worker count (below 1 means 1; issue
// 13: a negative count panicked), and after counts them.
func TestRunEveryItemOnce(t *testing.T) {
	for _, w := range []int{math.MinInt, -7, 0, 1, 3, 100} {
		seen := make([]int, 10)
		last := 0
		require.NoError(t, Run(10, w, func(i int) error { seen[i]++; return nil }, func(_, finished int) { last = finished }), "workers %d", w)
		for i, s := range seen {
			assert.Equal(t, 1, s, "workers %d, item %d", w, i)
		}
		assert.Equal(t, 10, last, "workers %d", w)
	}
	require.NoError(t, Run(0, 2, func(int) error { return errors.New("never called") }, nil))
}

// Errors are joined, every item still runs.
func TestRunJoinsErrors(t *testing.T) {
	seen := make([]bool, 10)
	e3, e7 := errors.New("three"), errors.New("seven")
	err := Run(10, 3, func(i int) error {
		seen[i] = true
		switch i {
		case 3:
			return e3
		case 7:
			return e7
		}
		return nil
	}, nil)
	require.ErrorIs(t, err, e3)
	require.ErrorIs(t, err, e7)
	assert.Equal(t, "three\nseven", err.Error(), "in index order")
	for i, s := range seen {
		assert.True(t, s, "item %d", i)
	}
}
