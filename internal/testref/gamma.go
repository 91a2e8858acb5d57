package testref

import (
	"math"

	"gonum.org/v1/gonum/mathext"
)

// Closed forms of the gamma law with shape k > 0 and rate λ > 0 (mean k/λ),
// computed through gonum's regularised incomplete gamma functions
// (mathext.GammaIncReg, GammaIncRegComp, GammaIncRegInv), which are an
// implementation independent of this module. Arguments outside the domain
// give NaN; x <= 0 gives the value at the lower end of the support.

// GammaLower returns P(X <= x) = P(k, λx), the regularised lower incomplete
// gamma function.
func GammaLower(shape, rate, x float64) float64 {
	if !(shape > 0) || !(rate > 0) || math.IsNaN(x) {
		return math.NaN()
	}
	if x <= 0 {
		return 0
	}
	return mathext.GammaIncReg(shape, rate*x)
}

// GammaUpper returns P(X > x) = Q(k, λx), the regularised upper incomplete
// gamma function, computed directly (not as 1 - GammaLower).
func GammaUpper(shape, rate, x float64) float64 {
	if !(shape > 0) || !(rate > 0) || math.IsNaN(x) {
		return math.NaN()
	}
	if x <= 0 {
		return 1
	}
	return mathext.GammaIncRegComp(shape, rate*x)
}

// GammaDensity returns λ^k x^(k-1) exp(-λx) / Γ(k) for x > 0 (in log space).
func GammaDensity(shape, rate, x float64) float64 {
	if !(shape > 0) || !(rate > 0) || math.IsNaN(x) {
		return math.NaN()
	}
	if x <= 0 {
		if x == 0 && shape == 1 {
			return rate
		}
		if x == 0 && shape < 1 {
			return math.Inf(1)
		}
		return 0
	}
	lg, _ := math.Lgamma(shape)
	return math.Exp(shape*math.Log(rate) + (shape-1)*math.Log(x) - rate*x - lg)
}

// GammaQuantile returns x with GammaLower(shape, rate, x) = p.
func GammaQuantile(shape, rate, p float64) float64 {
	if !(shape > 0) || !(rate > 0) || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	return mathext.GammaIncRegInv(shape, p) / rate
}

// ExponentialSurvival returns P(X > x) for the exponential law with rate λ,
// as the gamma law of shape 1: GammaUpper(1, λ, x). It is a second route to
// exp(-λx), through gonum's incomplete gamma rather than math.Exp alone.
func ExponentialSurvival(rate, x float64) float64 { return GammaUpper(1, rate, x) }

// ExponentialCDF returns P(X <= x) = GammaLower(1, λ, x).
func ExponentialCDF(rate, x float64) float64 { return GammaLower(1, rate, x) }

// ErlangUpper returns P(X > x) for the gamma law of integer shape k by the
// finite Poisson sum exp(-λx)·Σ_{j<k} (λx)^j/j! (common practice), a closed
// form independent of the incomplete gamma function. Accurate relative to its
// value when λx is not much larger than k; meant for small k.
func ErlangUpper(k int, rate, x float64) float64 {
	if k < 1 || !(rate > 0) || math.IsNaN(x) {
		return math.NaN()
	}
	if x <= 0 {
		return 1
	}
	y := rate * x
	term, sum := 1.0, 1.0
	for j := 1; j < k; j++ {
		term *= y / float64(j)
		sum += term
	}
	return math.Exp(-y) * sum
}
