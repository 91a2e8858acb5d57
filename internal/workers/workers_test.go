package workers

import (
	"errors"
	"math"
	"sync/atomic"
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

// RunEach gives each worker a value of its own (fresh once per worker, at
// most min(workers, n) of them), never to two items at once, and runs
// every item once (the contract of a worker's own working memory: common
// practice).
func TestRunEachOwnValues(t *testing.T) {
	type own struct{ busy atomic.Bool }
	for _, tc := range []struct{ n, workers int }{{0, 2}, {1, 2}, {10, 1}, {10, 2}, {50, 3}, {5, 100}} {
		var made atomic.Int32
		seen := make([]int, tc.n)
		clash := make([]bool, tc.n)
		err := RunEach(tc.n, tc.workers, func() *own { made.Add(1); return &own{} }, func(v *own, i int) error {
			if !v.busy.CompareAndSwap(false, true) {
				clash[i] = true
			}
			seen[i]++
			v.busy.Store(false)
			return nil
		}, nil)
		require.NoError(t, err, "n %d, workers %d", tc.n, tc.workers)
		assert.LessOrEqual(t, int(made.Load()), max(1, min(tc.workers, tc.n)), "n %d, workers %d: values made", tc.n, tc.workers)
		for i := range seen {
			assert.Equal(t, 1, seen[i], "n %d, workers %d, item %d", tc.n, tc.workers, i)
			assert.False(t, clash[i], "n %d, workers %d, item %d: value in use", tc.n, tc.workers, i)
		}
	}
}
