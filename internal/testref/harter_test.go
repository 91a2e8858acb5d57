package testref

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"gonum.org/v1/gonum/integrate/quad"
)

// expectedMaxByQuadrature returns E[max of n standard normals] =
// ∫ x·n·φ(x)·Φ(x)^(n-1) dx over [-12, 12] (the rest is below 1e-30), by
// composite 20-point Gauss–Legendre quadrature on 480 panels.
func expectedMaxByQuadrature(n int) float64 {
	const lo, hi, panels, order = -12.0, 12.0, 480, 20
	x := make([]float64, order)
	w := make([]float64, order)
	sum := 0.0
	h := (hi - lo) / panels
	for i := 0; i < panels; i++ {
		a := lo + float64(i)*h
		quad.Legendre{}.FixedLocations(x, w, a, a+h)
		for k := range x {
			phi := math.Exp(-x[k]*x[k]/2) / math.Sqrt(2*math.Pi)
			cdf := 0.5 * math.Erfc(-x[k]/math.Sqrt2)
			sum += w[k] * x[k] * float64(n) * phi * math.Pow(cdf, float64(n-1))
		}
	}
	return sum
}

func TestHarterExpectedMax(t *testing.T) {
	for _, e := range HarterExpectedMax {
		got := expectedMaxByQuadrature(e.N)
		assert.InDelta(t, e.Mean, got, HarterTolerance, "n = %d", e.N)
	}
	// Closed forms (common practice): E[max of 2] = 1/√π, of 3 = 3/(2√π).
	assert.InDelta(t, 1/math.Sqrt(math.Pi), expectedMaxByQuadrature(2), 1e-13)
	assert.InDelta(t, 3/(2*math.Sqrt(math.Pi)), expectedMaxByQuadrature(3), 1e-13)
}
