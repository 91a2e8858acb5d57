package testref

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestHarterExpectedMax(t *testing.T) {
	for _, e := range HarterExpectedMax {
		got := MaxNormalMean(float64(e.N), 480)
		assert.InDelta(t, e.Mean, got, HarterTolerance, "n = %d", e.N)
	}
	// Closed forms (common practice): E[max of 2] = 1/√π, of 3 = 3/(2√π).
	assert.InDelta(t, 1/math.Sqrt(math.Pi), MaxNormalMean(2, 480), 1e-13)
	assert.InDelta(t, 3/(2*math.Sqrt(math.Pi)), MaxNormalMean(3, 480), 1e-13)
}
