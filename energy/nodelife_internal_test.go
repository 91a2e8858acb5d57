package energy

import (
	"math"
	"sort"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestSortedUnique checks sortedUnique against the definition: the
// distinct values of the input (NaNs left out), ascending; the oracle is
// the standard library's sort.Float64s followed by a scan that keeps a
// value only when it differs from the one before.
func TestSortedUnique(t *testing.T) {
	nan := math.NaN()
	long := make([]float64, 500)
	for i := range long {
		long[i] = float64((i * 7919) % 101) // a permutation with repeats
	}
	for _, c := range []struct {
		name string
		in   []float64
	}{
		{"empty", nil},
		{"one", []float64{3}},
		{"sorted", []float64{1, 2, 3}},
		{"reversed with repeats", []float64{3, 2, 2, 1, 3}},
		{"signed zeros", []float64{0, math.Copysign(0, -1), 1}},
		{"infinities", []float64{math.Inf(1), 0, math.Inf(-1), math.Inf(1)}},
		{"NaNs dropped", []float64{nan, 2, nan, 1}},
		{"long", long},
	} {
		t.Run(c.name, func(t *testing.T) {
			var want []float64
			for _, v := range c.in {
				if !math.IsNaN(v) {
					want = append(want, v)
				}
			}
			sort.Float64s(want)
			var dedup []float64
			for i, v := range want {
				if i == 0 || v != want[i-1] {
					dedup = append(dedup, v)
				}
			}
			got := sortedUnique(append([]float64(nil), c.in...))
			require.Len(t, got, len(dedup))
			for i := range dedup {
				require.Equal(t, dedup[i], got[i], "index %d", i)
			}
		})
	}
}
