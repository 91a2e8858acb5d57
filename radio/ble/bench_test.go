package ble_test

import (
	"math/rand/v2"
	"testing"

	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/ble"
)

// BenchmarkBaselineSort is the machine-speed reference that BENCHMARKS.md
// divides by: sorting 10 000 pseudo-random float64 values (testref.SortBaseline).
func BenchmarkBaselineSort(b *testing.B) { testref.SortBaseline(b) }

// BenchmarkAdvCycle builds the exact per-event energy law of a scannable
// advertiser (three channels, scan requests).
func BenchmarkAdvCycle(b *testing.B) {
	a := testBeacon()
	for b.Loop() {
		if _, err := a.Cycle(); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkConnCycle builds the exact per-wake-up energy law of a
// peripheral (one to three exchanges, widened window).
func BenchmarkConnCycle(b *testing.B) {
	c := testLink()
	for b.Loop() {
		if _, err := c.Cycle(); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkDiscovery computes the discovery-time law of the first test case
// (advInterval 100 ms, scan 30/100 ms, horizon 3 s) to DiscoveryTolerance:
// grids of 39 µs and 78 µs, stated CDF error 2.3e-4 (true 8.7e-5).
func BenchmarkDiscovery(b *testing.B) {
	c := discoveryCases()[0]
	for b.Loop() {
		if _, err := ble.NewDiscovery(c.adv, c.scan, c.success, c.horizon); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkDiscoveryWithin7e5 computes the same law to a stated CDF error
// of 7e-5, as fine as NewDiscovery was before DiscoveryTolerance (grids
// down to 9.8 µs).
func BenchmarkDiscoveryWithin7e5(b *testing.B) {
	c := discoveryCases()[0]
	for b.Loop() {
		if _, err := ble.NewDiscoveryWithin(c.adv, c.scan, c.success, c.horizon, 7e-5); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkDiscoveryMonteCarlo is the baseline a user would otherwise
// write: 10⁵ simulated discoveries of the same model (CDF error about
// 4e-3 at 95 %, from the DKW bound).
func BenchmarkDiscoveryMonteCarlo(b *testing.B) {
	c := discoveryCases()[0]
	d, err := ble.NewDiscovery(c.adv, c.scan, c.success, c.horizon)
	if err != nil {
		b.Fatal(err)
	}
	r := rand.New(rand.NewPCG(1, 1))
	for b.Loop() {
		for i := 0; i < 100000; i++ {
			_ = d.Rand(r)
		}
	}
}
