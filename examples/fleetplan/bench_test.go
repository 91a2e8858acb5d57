package main

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// BenchmarkDemo computes the demo's plan: format 2, with per-node and
// shared spreads, the climate, supply path, voltage curve and calendar
// limit. BenchmarkDemoFormat1 is the baseline measured in the same run: the
// same site in the first format (no spreads, no climate, no calendar), the
// demo as it was before the three tiers of randomness. Both report their
// CPU time per operation as cpu-ns/op (the machine is shared: wall time
// moves with the load; issue 12's target for BenchmarkDemo is 0.1 s).
func BenchmarkDemo(b *testing.B) {
	defer testref.ReportCPU(b)()
	benchPlan(b, scenario.Demo())
}

func BenchmarkDemoFormat1(b *testing.B) {
	data, err := os.ReadFile(filepath.Join("..", "..", "radio", "lora", "scenario", "testdata", "format1.json"))
	if err != nil {
		b.Fatal(err)
	}
	s, err := scenario.Parse(data)
	if err != nil {
		b.Fatal(err)
	}
	defer testref.ReportCPU(b)()
	benchPlan(b, s)
}

func benchPlan(b *testing.B, s scenario.Scenario) {
	b.ReportAllocs()
	for b.Loop() {
		if _, err := fleet.Build(s, "bench", func(string, ...any) {}); err != nil {
			b.Fatal(err)
		}
	}
}
