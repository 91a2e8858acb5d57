package lora_test

import (
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
)

// BenchmarkBaselineSort is the machine-speed reference that BENCHMARKS.md
// divides by: sorting 10 000 pseudo-random float64 values.
func BenchmarkBaselineSort(b *testing.B) {
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

// BenchmarkClassACycle builds the per-cycle energy law of a confirmed class
// A node over 6 data rates × 4 power levels with NbTrans = 8 (issue 6
// target: ≤ 2 ms).
func BenchmarkClassACycle(b *testing.B) {
	c := testNode(b, 3000)
	period := dist.MustPointMass(600)
	for b.Loop() {
		if _, err := c.Cycle(period); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkClassAStage builds the stage only (this package's share of the
// cycle build; the rest is package energy computing the laws).
func BenchmarkClassAStage(b *testing.B) {
	c := testNode(b, 3000)
	for b.Loop() {
		if _, err := c.Stage(); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSettleADR computes the ADR law of 6 data rates × 4 powers over a
// disk with 6 dB shadowing by adaptive quadrature.
func BenchmarkSettleADR(b *testing.B) {
	link := testBenchLink(b)
	for b.Loop() {
		if _, err := settle(link); err != nil {
			b.Fatal(err)
		}
	}
}
