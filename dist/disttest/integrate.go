package disttest

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"
)

// integrator is an adaptive Gauss–Legendre quadrature of vector-valued
// functions: each piece is integrated by the 10-point rule and by the rule
// on its two halves; the halves are refined until they agree to the
// tolerance, to a depth of 48 halvings, or until the evaluation budget is
// spent. The nodes come from gonum's quad.Legendre.
type integrator struct {
	x, w   []float64 // nodes and weights on [-1, 1]
	evals  int       // evaluations made
	budget int       // evaluations allowed per call of integrate
}

// newIntegrator returns an integrator with the given per-call budget.
func newIntegrator(budget int) *integrator {
	const order = 10
	x, w := make([]float64, order), make([]float64, order)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	return &integrator{x: x, w: w, budget: budget}
}

// rule adds the order-10 Gauss–Legendre estimate of ∫_a^b f to dst.
func (in *integrator) rule(dst []float64, f func(x float64, out []float64), a, b float64, buf []float64) {
	h, m := (b-a)/2, a+(b-a)/2
	for i := range dst {
		dst[i] = 0
	}
	for k, t := range in.x {
		f(m+h*t, buf)
		in.evals++
		for i := range dst {
			dst[i] += in.w[k] * h * buf[i]
		}
	}
}

// integrate returns ∫_a^b f (k components) and an error estimate (the
// largest component's), aiming at max(abs, rel·|value|) per component.
// converged is false when the budget or the depth ran out first.
func (in *integrator) integrate(k int, f func(x float64, out []float64), a, b, rel, abs float64) (val []float64, errEst float64, converged bool) {
	val = make([]float64, k)
	if !(b > a) {
		return val, 0, true
	}
	in.evals = 0
	buf := make([]float64, k)
	whole := make([]float64, k)
	in.rule(whole, f, a, b, buf)
	converged = true
	errEst = in.adapt(val, whole, f, a, b, rel, abs, 0, buf, &converged)
	return val, errEst, converged
}

func (in *integrator) adapt(acc, whole []float64, f func(float64, []float64), a, b, rel, abs float64, depth int, buf []float64, ok *bool) float64 {
	k := len(whole)
	m := a + (b-a)/2
	left, right := make([]float64, k), make([]float64, k)
	in.rule(left, f, a, m, buf)
	in.rule(right, f, m, b, buf)
	diff, size := 0.0, 0.0
	for i := range whole {
		diff = math.Max(diff, math.Abs(left[i]+right[i]-whole[i]))
		size = math.Max(size, math.Abs(left[i]+right[i]))
	}
	if math.IsNaN(diff) {
		diff = math.Inf(1)
	}
	stop := diff <= math.Max(abs, rel*size) || depth >= 48 || !(m > a && m < b) || in.evals >= in.budget
	if stop {
		if diff > math.Max(abs, rel*size) {
			*ok = false
		}
		for i := range acc {
			acc[i] += left[i] + right[i]
		}
		return diff
	}
	e := in.adapt(acc, left, f, a, m, rel, abs/2, depth+1, buf, ok)
	return e + in.adapt(acc, right, f, m, b, rel, abs/2, depth+1, buf, ok)
}

// scalar adapts a scalar function to the vector form.
func scalar(f func(float64) float64) func(float64, []float64) {
	return func(x float64, out []float64) { out[0] = f(x) }
}
