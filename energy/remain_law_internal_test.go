package energy

import (
	"math"
	"sort"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestSearchFloats checks the posterior law's bisection against the
// standard library's (sort.SearchFloat64s for the first value >= x,
// sort.Search for the first > x) on sorted values with repeats, at every
// value, between values and beyond both ends.
func TestSearchFloats(t *testing.T) {
	for _, xs := range [][]float64{
		nil,
		{1},
		{-2, -1, -1, 0, 0, 0, 3.5, 7, 7, 1e300},
		{math.Inf(-1), -5, 2, 2, math.Inf(1)},
	} {
		var probes []float64
		for _, v := range xs {
			probes = append(probes, v, math.Nextafter(v, math.Inf(-1)), math.Nextafter(v, math.Inf(1)))
		}
		probes = append(probes, -1e308, 1e308, 0.5)
		for _, x := range probes {
			require.Equal(t, sort.SearchFloat64s(xs, x), searchFloats(xs, x, false), "%v >= %g", xs, x)
			require.Equal(t, sort.Search(len(xs), func(k int) bool { return xs[k] > x }), searchFloats(xs, x, true), "%v > %g", xs, x)
		}
	}
}
