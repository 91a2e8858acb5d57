package disttest

import (
	"errors"
	"math"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// integrator integrates vector-valued functions with the library's one
// adaptive quadrature (internal/quad: globally adaptive Gauss–Kronrod 7–15
// bisection), within an evaluation budget per call.
type integrator struct {
	budget int // evaluations allowed per call of integrate
}

// newIntegrator returns an integrator with the given per-call budget.
func newIntegrator(budget int) *integrator { return &integrator{budget: budget} }

// integrate returns ∫_a^b f (k components) and an error estimate bounding
// every component (quad.VecResult.Error), aiming at max(abs, rel·max|value|).
// converged is false when the budget ran out or the panels could not be
// bisected further before the target (a singularity or a jump): the
// estimate is then the Gauss–Kronrod difference of unresolved panels,
// which may understate their error, and callers count such pieces in full.
func (in *integrator) integrate(k int, f func(x float64, out []float64), a, b, rel, abs float64) (val []float64, errEst float64, converged bool) {
	val = make([]float64, k)
	if !(b > a) {
		return val, 0, true
	}
	r, err := quad.AdaptiveVec(val, f, a, b, quad.Options{AbsTol: abs, RelTol: rel, MaxEvals: in.budget})
	if err != nil {
		if errors.Is(err, quad.ErrParam) { // a NaN or infinite integrand: nothing resolved
			return val, math.Inf(1), false
		}
		return val, r.Error, false
	}
	return val, r.Error, true
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
func (c *checker) integrationRel(tol float64) float64 { return max(tol/100, 1e-13) }

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
