package lora

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

// TestGKRule checks the hand-typed Gauss–Kronrod constants: on [−1, 1] the
// 15-point rule integrates x^k exactly for k ≤ 22 and the 7-point rule for
// k ≤ 13 (∫ x^k = 2/(k+1) for even k, 0 for odd; the defining property of
// the rules, Piessens et al., QUADPACK, 1983).
func TestGKRule(t *testing.T) {
	nodes, wk, wg := gkRule()
	for k := 0; k <= 22; k++ {
		want := 0.0
		if k%2 == 0 {
			want = 2 / float64(k+1)
		}
		kr, ga := 0.0, 0.0
		for i := 0; i < 8; i++ {
			v := math.Pow(nodes[i], float64(k))
			m := 2.0
			if i == 7 {
				m = 1
			}
			if k%2 == 1 {
				m = 0 // symmetric pairs cancel
			}
			kr += m * wk[i] * v
			if i%2 == 1 {
				ga += m * wg[i/2] * v
			}
		}
		assert.InDelta(t, want, kr, 1e-15, "Kronrod x^%d", k)
		if k <= 13 {
			assert.InDelta(t, want, ga, 1e-15, "Gauss x^%d", k)
		}
	}
}

// TestIntegrate checks the adaptive rule on integrals with closed forms and
// that its reported bound covers the true error.
func TestIntegrate(t *testing.T) {
	tests := []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64
	}{
		{"exp", math.Exp, 0, 1, math.E - 1},
		{"sqrt", math.Sqrt, 0, 1, 2.0 / 3},
		{"log", math.Log, 0, 1, -1}, // endpoint singularity
		{"step-like", func(x float64) float64 { return math.Erfc(200 * (x - 0.3)) }, 0, 1, 0.6}, // (1/200)·∫_{−60}^{140} erfc = 2·60/200
		{"peak", func(x float64) float64 { return 1 / (1e-4 + (x-0.5)*(x-0.5)) }, 0, 1, 2 * math.Atan(50) / 1e-2},
	}
	for _, tc := range tests {
		v, bound := integrate(func(x float64, dst []float64) { dst[0] = tc.f(x) }, tc.a, tc.b, 1, 1e-10, 4000)
		assert.InDelta(t, tc.want, v[0], math.Max(bound, 1e-14), tc.name)
		assert.Less(t, bound, 1e-9, tc.name)
	}
}
