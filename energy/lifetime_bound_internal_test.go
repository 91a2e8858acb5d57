package energy

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// boundTerms solves for the number of cycles at which Hoeffding's and
// Bernstein's bounds reach e^{−L}: the K it returns is the last (above the
// mean) or first (below) at which logTailBound is at most −L, so the next
// one out fails; checked against logTailBound itself at K and its
// neighbour for cycle laws of the shape of the fleet's (a floor with rare
// costly retransmissions) and levels from e^{−1} to e^{−736}.
func TestBoundTerms(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name                    string
		mu, v, lo, hi, capacity float64
	}{
		{"fleet-like", 0.206, 0.0007, 0.0241, 0.316, 31000},
		{"wide", 1, 0.3, 0.01, 5, 1e5},
		{"narrow", 2, 1e-4, 1.9, 2.1, 1e6},
	}
	for _, tc := range tests {
		f := &kfold{emean: tc.mu, evar: tc.v, elo: tc.lo, ehi: tc.hi, capacity: tc.capacity}
		for _, L := range []float64{1, 10, 46, 92, 300, 736} {
			k, ok := f.boundTerms(L, true)
			require.True(t, ok, "%s above L=%g", tc.name, L)
			assert.LessOrEqual(t, f.logTailBound(k, tc.capacity-float64(k)*tc.mu), -L, "%s above L=%g at K", tc.name, L)
			assert.Greater(t, f.logTailBound(k+1, tc.capacity-float64(k+1)*tc.mu), -L*(1+1e-12), "%s above L=%g at K+1", tc.name, L)
			k, ok = f.boundTerms(L, false)
			require.True(t, ok, "%s below L=%g", tc.name, L)
			assert.LessOrEqual(t, f.logTailBound(k, tc.capacity-float64(k)*tc.mu), -L, "%s below L=%g at K", tc.name, L)
			assert.Greater(t, f.logTailBound(k-1, tc.capacity-float64(k-1)*tc.mu), -L*(1+1e-12), "%s below L=%g at K-1", tc.name, L)
		}
		_, ok := f.boundTerms(math.NaN(), true)
		assert.False(t, ok)
	}
	unbounded := &kfold{emean: 1, evar: 1, elo: 0, ehi: math.Inf(1), capacity: 100}
	_, ok := unbounded.boundTerms(10, true)
	assert.False(t, ok, "no bound without a bounded support")
}
