package energy

import (
	"math"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// integrate returns ∫_a^b f by the project's one adaptive quadrature
// (internal/quad), to max(abs, rel·|value|).
func integrate(f func(float64) float64, a, b, abs, rel float64) (float64, error) {
	r, err := quad.Adaptive(f, a, b, quad.Options{AbsTol: abs, RelTol: rel, MaxEvals: 1 << 16})
	return r.Value, err
}

// integratePiecesTol returns ∫_a^b f and its error estimate, starting from
// the panels between a, the breakpoints brk (sorted, inside (a, b)) and b,
// to the relative error rel (absolute 1e-300, so that a tail probability
// keeps its relative precision).
func integratePiecesTol(f func(float64) float64, a, b float64, brk []float64, rel float64) (float64, float64) {
	pts := make([]float64, 0, len(brk)+2)
	pts = append(pts, a)
	for _, x := range brk {
		if x > pts[len(pts)-1] && x < b {
			pts = append(pts, x)
		}
	}
	pts = append(pts, b)
	r, err := quad.Breaks(f, pts, quad.Options{AbsTol: 1e-300, RelTol: rel, MaxEvals: 1 << 14})
	if err != nil && r.Evals == 0 {
		return math.NaN(), math.NaN()
	}
	return r.Value, r.Error
}
