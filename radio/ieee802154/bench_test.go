package ieee802154_test

import (
	"math/rand/v2"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// BenchmarkBaselineSort is the machine-speed reference that BENCHMARKS.md
// divides by: sorting 10 000 pseudo-random float64 values (testref.SortBaseline).
func BenchmarkBaselineSort(b *testing.B) { testref.SortBaseline(b) }

// BenchmarkBackoffTime builds the exact law of the backoff time of one
// CSMA-CA run with the default attributes.
func BenchmarkBackoffTime(b *testing.B) {
	n := testNode()
	for b.Loop() {
		if _, err := n.CSMA.BackoffTime(n.PHY, 0.3); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFrameEnergy builds the exact frame-energy law of the test node
// (default attributes, 30 % busy CCAs, 20 % of transmissions
// unacknowledged).
func BenchmarkFrameEnergy(b *testing.B) {
	n := testNode()
	for b.Loop() {
		if _, err := n.FrameEnergy(); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFrameEnergyMonteCarlo is the baseline a user would otherwise
// write: 10^5 frames from the packet-level sampler sorted into an
// empirical law (KS error about 0.0085 at level 1e-6, against an exact law).
func BenchmarkFrameEnergyMonteCarlo(b *testing.B) {
	n := testNode()
	r := rand.New(rand.NewPCG(1, 1))
	xs := make([]float64, 100000)
	for b.Loop() {
		for i := range xs {
			xs[i] = simFrame(r, n).energy
		}
		if _, err := dist.NewEmpirical(xs); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkCycle builds the cycle law of the test node with a sensing
// stage and a 60 s period.
func BenchmarkCycle(b *testing.B) {
	n := testNode()
	period := dist.MustPointMass(60)
	for b.Loop() {
		if _, err := n.Cycle(period); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFrameEnergyRefused is the cost of refusing a setting beyond
// MaxFramePaths whose pruned enumeration at DefaultPathTolerance keeps
// more paths than the cap (macMaxBE 8, 7 retries, half the transmissions
// unacknowledged): the structural count, the pruned enumeration up to the
// cap and the error. Before the cap the same call ran for about 10 s of
// CPU into package dist's caps on exact sums.
func BenchmarkFrameEnergyRefused(b *testing.B) {
	n := testNode()
	n.CSMA.MaxBE, n.CSMA.MaxFrameRetries, n.AckLoss = 8, 7, 0.5
	for b.Loop() {
		if _, err := n.FrameEnergy(); err == nil {
			b.Fatal("accepted")
		}
	}
}

// BenchmarkCycleMaxBE6 builds the cycle law of the test node with macMaxBE
// 6 (27 521 frame paths, below MaxFramePaths).
func BenchmarkCycleMaxBE6(b *testing.B) {
	n := testNode()
	n.CSMA.MaxBE = 6
	period := dist.MustPointMass(60)
	for b.Loop() {
		if _, err := n.Cycle(period); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFrameEnergyPruned builds the frame-energy law of the test node
// with macMaxFrameRetries 7 (116 321 paths, beyond MaxFramePaths) by the
// pruned enumeration at DefaultPathTolerance: 26 192 paths kept, 11 132
// atoms, stated error 3.0e-9.
func BenchmarkFrameEnergyPruned(b *testing.B) {
	n := testNode()
	n.CSMA.MaxFrameRetries = 7
	for b.Loop() {
		if _, err := n.FrameEnergy(); err != nil {
			b.Fatal(err)
		}
	}
}
