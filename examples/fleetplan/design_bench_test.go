package main

import (
	"testing"

	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
	"github.com/joulelaw/joulelaw/internal/testref"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// BenchmarkWhatItTakes is the demo's "what it takes" section alone (the
// design search over intervals for every group, its quantile table, and the
// policy comparison) on the demo site's laws, built once outside the loop;
// BenchmarkDemoWithoutDesign is the rest of the demo plan, the baseline a
// planner paid before (what fleetplan computes without -what-it-takes).
func BenchmarkWhatItTakes(b *testing.B) {
	s := scenario.Demo()
	laws, err := scenario.Compute(s, 2, nil)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	defer testref.ReportCPU(b)()
	for b.Loop() {
		if _, err := fleet.BuildDesign(s, laws, func(string, ...any) {}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkDemoWithoutDesign(b *testing.B) {
	s := scenario.Demo()
	s.Design = nil
	defer testref.ReportCPU(b)()
	benchPlan(b, s)
}
