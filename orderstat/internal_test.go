package orderstat

import (
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// The two ways of computing the whole count law agree: the tilted Fourier
// windows and the direct convolution, to 1e-10 relative on every mass
// above 1e-280.
func TestCountMethodsAgree(t *testing.T) {
	terms := []binom{{n: 40, p: 0.1, q: 0.9}, {n: 25, p: 0.6, q: 0.4}, {n: 3, p: 0.97, q: 0.03}, {n: 100, p: 0.002, q: 0.998}}
	cm := newCountModel(terms)
	lo1, a, _ := cm.march()
	lo2, b, _ := cm.convolve()
	n := 0
	for i, v := range b {
		if v < 1e-280 {
			continue
		}
		j := int(lo2) + i - int(lo1)
		if j < 0 || j >= len(a) {
			t.Fatalf("mass at %d missing from the Fourier law", int(lo2)+i)
		}
		assert.LessOrEqual(t, testref.RelErr(a[j], v), 1e-10, "j=%d", int(lo2)+i)
		n++
	}
	assert.Greater(t, n, 100)
}
