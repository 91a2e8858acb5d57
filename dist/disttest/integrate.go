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
			// Not resolved (a singularity, the depth or the budget): the
			// difference of two poor estimates may understate their error,
			// so take the piece's whole size as the error.
			*ok = false
			diff = math.Max(diff, size)
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

// splits are the numbers of equal parts into which a piece is cut when its
// adaptive integral disagrees with the expected value, to rule out a false
// convergence of the adaptive scheme (two estimates agreeing by chance
// across a jump of the integrand): primes, so that the parts' ends fall on
// other points than the dyadic ones.
var splits = [...]int{7, 31}

// closest integrates f (k = 1) over [a, b] adaptively to relative
// accuracy rel and, if the result is farther than tol(err) from want, again
// over each of splits equal parts, returning the value (and its error
// estimate) closest to want.
func (in *integrator) closest(f func(float64, []float64), a, b, want, rel float64, tol func(err float64) float64) (val, errEst float64) {
	v, e, _ := in.integrate(1, f, a, b, rel, 1e-300)
	val, errEst = v[0], e
	if math.Abs(val-want) <= tol(errEst) {
		return val, errEst
	}
	for _, n := range splits {
		s, se := 0.0, 0.0
		for i := 0; i < n; i++ {
			x0 := a + (b-a)*float64(i)/float64(n)
			x1 := a + (b-a)*float64(i+1)/float64(n)
			if i == n-1 {
				x1 = b
			}
			v, e, _ := in.integrate(1, f, x0, x1, rel, 1e-300)
			s += v[0]
			se += e
		}
		if math.Abs(s-want)-tol(se) < math.Abs(val-want)-tol(errEst) {
			val, errEst = s, se
		}
	}
	return val, errEst
}

// integrationBudget caps the integrand evaluations of one adaptive
// integral; an unresolved piece then counts in full as error.
const integrationBudget = 4000

// integrationRel returns the relative accuracy to aim at for quadrature
// whose result is compared at relative tolerance tol: a hundredth of it,
// but no finer than 1e-13.
func (c *checker) integrationRel(tol float64) float64 { return math.Max(tol/100, 1e-13) }

// refine returns the sorted breakpoints br with every piece cut into n
// equal parts (br itself for n = 1).
func refine(br []float64, n int) []float64 {
	if n <= 1 || len(br) < 2 {
		return br
	}
	out := make([]float64, 0, (len(br)-1)*n+1)
	for i := 0; i+1 < len(br); i++ {
		a, b := br[i], br[i+1]
		for k := 0; k < n; k++ {
			out = append(out, a+(b-a)*float64(k)/float64(n))
		}
	}
	return append(out, br[len(br)-1])
}
