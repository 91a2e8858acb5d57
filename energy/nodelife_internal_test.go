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

// A node law's stated error at the times its table's profile measures is
// the same, bit for bit, whether accuracyAtZ passes over the settings
// whose terms cannot raise the largest ones or measures every setting: the
// passing over is exact (what it skips is below what it keeps).
func TestAccuracyPruneExact(t *testing.T) {
	spec := tabTestSpec(t)
	many, _ := tabManySpec(t)
	twelve := spec.Groups[0].Node
	twelve.Settings = nil
	for i := range 12 {
		twelve.Settings = append(twelve.Settings, NodeSetting{Weight: 1.0 / 12, Cycle: tabTestCycle(12*Hour, 8*MicroAmp, 0.2+0.5*float64(i))})
	}
	pruned := 0
	for _, node := range []NodeSpec{spec.Groups[1].Node, many, twelve} {
		for _, cond := range []Conditions{{BatchFactor: 1}, {BatchFactor: 0.95, TemperatureOffset: -6}} {
			l, err := NewNodeLifetime(node, Environment{Climate: spec.Climate, Conditions: cond})
			require.NoError(t, err)
			tb := tabulate(l)
			zOf := func(j int, x float64) float64 {
				z, _ := l.n.settingProbit(j, l.n.clocks(x))
				return z
			}
			ts := append([]float64(nil), tb.profT...)
			for i := 1; i < 40; i++ {
				ts = append(ts, tb.t[0]+(tb.t[len(tb.t)-1]-tb.t[0])*float64(i)/40)
			}
			for _, x := range ts {
				a, np := l.accuracyAtZPruned([]float64{x}, zOf, true)
				b, none := l.accuracyAtZPruned([]float64{x}, zOf, false)
				require.Equal(t, b.CDFAbs, a.CDFAbs, "t = %g", x)
				require.Equal(t, b.SurvivalRel, a.SurvivalRel, "t = %g", x)
				require.Zero(t, none)
				pruned += np
			}
		}
	}
	require.Positive(t, pruned, "some settings are passed over")
	t.Logf("%d settings passed over", pruned)
}
