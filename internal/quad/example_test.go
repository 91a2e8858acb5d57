package quad_test

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// ∫_0^1 x^(−1/2) dx = 2, a singularity at the left end.
func ExampleAdaptive() {
	r, err := quad.Adaptive(func(x float64) float64 { return 1 / math.Sqrt(x) }, 0, 1, quad.Options{RelTol: 1e-10})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.9f, error estimate below 2e-10: %v, true error below it: %v\n", r.Value, r.Error < 2e-10, math.Abs(r.Value-2) <= r.Error)
	// Output: 2.000000000, error estimate below 2e-10: true, true error below it: true
}

// ∫_{−∞}^{∞} 1/(1+x²) dx = π.
func ExampleInfinite() {
	r, _ := quad.Infinite(func(x float64) float64 { return 1 / (1 + x*x) }, math.Inf(-1), math.Inf(1), quad.Options{})
	fmt.Printf("%.12f\n", r.Value)
	// Output: 3.141592653590
}
