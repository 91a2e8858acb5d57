package lora_test

import (
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// BenchmarkBaselineSort is the machine-speed reference that BENCHMARKS.md
// divides by: sorting 10 000 pseudo-random float64 values (testref.SortBaseline).
func BenchmarkBaselineSort(b *testing.B) { testref.SortBaseline(b) }

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

// BenchmarkGatewayDownlinks solves the downlink budget of a gateway with 48
// streams (6 groups × 4 data rates × 2 windows over two sub-bands).
func BenchmarkGatewayDownlinks(b *testing.B) {
	var st []lora.DownlinkStream
	for g := 0; g < 6; g++ {
		for dr := 0; dr < 4; dr++ {
			st = append(st, lora.DownlinkStream{Rate: 0.01 * float64(1+g), Airtime: 0.05 * float64(1+dr), Lead: 1, Band: 2, DutyCycle: 0.01},
				lora.DownlinkStream{Rate: 0.002 * float64(1+g), Airtime: 1, Lead: 2, Band: 4, DutyCycle: 0.1})
		}
	}
	for b.Loop() {
		if _, err := lora.GatewayDownlinks(st); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGatewayDownlinksFallback is BenchmarkGatewayDownlinks with every
// RX1 stream falling back to its group and data rate's RX2 stream (the
// network server's fallback, with the bursts' correction).
func BenchmarkGatewayDownlinksFallback(b *testing.B) {
	var st []lora.DownlinkStream
	for g := 0; g < 6; g++ {
		for dr := 0; dr < 4; dr++ {
			n := len(st)
			st = append(st, lora.DownlinkStream{Rate: 0.01 * float64(1+g), Airtime: 0.05 * float64(1+dr), Lead: 1, Band: 2, DutyCycle: 0.01, Fallback: n + 2},
				lora.DownlinkStream{Rate: 0.002 * float64(1+g), Airtime: 1, Lead: 2, Band: 4, DutyCycle: 0.1})
		}
	}
	for b.Loop() {
		if _, err := lora.GatewayDownlinks(st); err != nil {
			b.Fatal(err)
		}
	}
}
