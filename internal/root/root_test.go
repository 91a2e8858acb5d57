package root

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

// TestIllinois checks the answer against closed-form roots (each named
// beside its case) and the number of evaluations against bisection's.
func TestIllinois(t *testing.T) {
	cases := []struct {
		name   string
		g      func(float64) float64
		a, b   float64
		tol    float64
		want   float64 // the closed form
		within float64 // the bracket width asked for (or resolution)
		most   int     // evaluations at most (bisection to the same width: 52 for the cube, 45 for exp, 62 for the normal, 53 with infinite ends)
	}{
		// x³ − 2 = 0 at 2^(1/3) (closed form).
		{"cube", func(x float64) float64 { return x*x*x - 2 }, 0, 4, 0, math.Cbrt(2), 4 * epsilon * 2, 20},
		// e^x − 10 = 0 at ln 10 (closed form), to 1e-12.
		{"exp", func(x float64) float64 { return math.Exp(x) - 10 }, -5, 30, 1e-12, math.Log(10), 1e-12, 25},
		// Φ(x) − 0.975 through erfc, at 1.959963984540054 (common practice:
		// the 97.5 % normal quantile, to 16 digits from memory).
		{"normal", func(x float64) float64 { return 0.5*math.Erfc(-x/math.Sqrt2) - 0.975 }, -10, 10, 0, 1.959963984540054, 1e-14, 25},
		// A step: g = −1 below 0.3, +1 from 0.3 on; the answer 0.3 (closed
		// form), each fourth step halving at least.
		{"step", func(x float64) float64 {
			if x >= 0.3 {
				return 1
			}
			return -1
		}, 0, 1, 1e-12, 0.3, 1e-12, 4*40 + 4},
		// Infinite values at the ends: probit of a uniform on [0, 1]
		// reaching 0 at 0.5 (closed form).
		{"infinite ends", func(x float64) float64 {
			if x <= 0 {
				return math.Inf(-1)
			}
			if x >= 1 {
				return math.Inf(1)
			}
			return math.Log(x / (1 - x))
		}, 0, 1, 0, 0.5, 1e-15, 10},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			n := 0
			g := func(x float64) float64 { n++; return c.g(x) }
			x := Illinois(g, c.a, c.b, c.g(c.a), c.g(c.b), c.tol)
			assert.InDelta(t, c.want, x, c.within+4*epsilon*math.Abs(c.want))
			assert.GreaterOrEqual(t, c.g(x), 0.0, "the answer is the bracket's right end")
			assert.LessOrEqual(t, n, c.most)
			t.Logf("%d evaluations", n)
		})
	}
}

// TestIllinoisNaN checks that a NaN value keeps the search inside the
// bracket and that a g that is not monotone still stops.
func TestIllinoisNaN(t *testing.T) {
	x := Illinois(func(x float64) float64 {
		if x < 0.5 {
			return math.NaN()
		}
		return 1
	}, 0, 1, -1, 1, 0)
	assert.InDelta(t, 0.5, x, 1e-15)
	n := 0
	Illinois(func(x float64) float64 { n++; return math.Sin(1e6 * x) }, 0, 1, -1, 1, 0)
	assert.LessOrEqual(t, n, MaxSteps)
}
