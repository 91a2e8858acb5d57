package quad

import (
	"math"
	"testing"

	"github.com/joulelaw/joulelaw/internal/testref"
	"gonum.org/v1/gonum/integrate/quad"
)

// BenchmarkBaselineSort is the machine-speed baseline (see testref).
func BenchmarkBaselineSort(b *testing.B) { testref.SortBaseline(b) }

// The benchmarks integrate a smooth peak, 1/(1e-2 + (x − 1/2)²) on [0, 1],
// to 1e-12 relative: adaptively here, and with the fixed Gauss–Legendre
// rule of gonum at the order that reaches the same accuracy (what a user
// would otherwise write, knowing the order in advance).
func peak(x float64) float64 { return 1 / (1e-2 + (x-0.5)*(x-0.5)) }

func BenchmarkAdaptivePeak(b *testing.B) {
	for b.Loop() {
		if _, err := Adaptive(peak, 0, 1, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkGonumFixedPeak(b *testing.B) {
	want := 2 * math.Atan(5) / 0.1 // closed form
	if v := quad.Fixed(peak, 0, 1, 100, quad.Legendre{}, 0); math.Abs(v-want) > 1e-12*want {
		b.Fatalf("order 100 misses: %g", v-want)
	}
	for b.Loop() {
		quad.Fixed(peak, 0, 1, 100, quad.Legendre{}, 0)
	}
}

// BenchmarkAdaptiveVec5 integrates five components at once (as a
// checker's transform at several t).
func BenchmarkAdaptiveVec5(b *testing.B) {
	f := func(x float64, y []float64) {
		e := math.Exp(-x)
		for j := range y {
			y[j] = e * math.Cos(float64(j)*x)
		}
	}
	dst := make([]float64, 5)
	for b.Loop() {
		if _, err := AdaptiveVec(dst, f, 0, 10, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
