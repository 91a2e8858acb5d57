package testref

import (
	"math/rand/v2"
	"sort"
	"testing"
)

// SortBaseline is the body of the machine-speed baseline that BENCHMARKS.md
// divides benchmark figures by: sorting 10 000 pseudo-random float64 values
// (fixed seed) per iteration. Each package's BenchmarkBaselineSort calls it,
// so the baseline is measured in the same run as the figures it scales.
func SortBaseline(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	src := make([]float64, 10000)
	for i := range src {
		src[i] = r.Float64()
	}
	xs := make([]float64, len(src))
	for b.Loop() {
		copy(xs, src)
		sort.Float64s(xs)
	}
}
