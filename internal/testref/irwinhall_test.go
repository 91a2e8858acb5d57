package testref

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// TestIrwinHall against the closed forms of small sums (any probability
// text): one uniform, P(U <= x) = x; two, x²/2 up to 1 and
// 1 − (2 − x)²/2 beyond; k uniforms at k/2, 1/2 by symmetry; and 1/k! at
// x = 1.
func TestIrwinHall(t *testing.T) {
	for _, tc := range []struct {
		name     string
		k        int
		x        float64
		below    float64
		tolBelow float64
	}{
		{"one uniform", 1, 0.3, 0.3, 0},
		{"two, x = 0.5", 2, 0.5, 0.125, 0},
		{"two, x = 1.5", 2, 1.5, 0.875, 0},
		{"seven at the centre", 7, 3.5, 0.5, 0},
		{"forty at the centre", 40, 20, 0.5, 0},
		{"ten at 1", 10, 1, 1.0 / 3628800, 1e-16 / 3628800},
	} {
		b, a := IrwinHall(tc.k, tc.x)
		assert.InDelta(t, tc.below, b, tc.tolBelow+1e-16*tc.below, tc.name)
		assert.InDelta(t, 1-tc.below, a, 1e-16, tc.name)
	}
	b, a := IrwinHall(3, -1)
	assert.Equal(t, [2]float64{0, 1}, [2]float64{b, a})
	b, a = IrwinHall(3, 3)
	assert.Equal(t, [2]float64{1, 0}, [2]float64{b, a})
}
