package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Exponential is the exponential law with rate Rate (λ > 0), on [0, ∞):
//
//	f(x) = λ·exp(-λx),  S(x) = exp(-λx)
type Exponential struct {
	rate float64
}

// NewExponential returns the exponential law with rate λ (per unit of the
// variable; the mean is 1/λ). rate must be finite and > 0.
func NewExponential(rate float64) (Exponential, error) {
	if !finite(rate) || rate <= 0 {
		return Exponential{}, paramErr("NewExponential", "rate", rate, "must be finite and > 0")
	}
	return Exponential{rate: rate}, nil
}

// MustExponential is NewExponential that panics on bad input; for examples and tests.
func MustExponential(rate float64) Exponential {
	e, err := NewExponential(rate)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return e
}

// Rate returns λ.
func (e Exponential) Rate() float64 { return e.rate }

// CDF returns 1 - exp(-λx) computed as -expm1(-λx).
func (e Exponential) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if x <= 0 {
		return 0
	}
	return -math.Expm1(-e.rate * x)
}

// Survival returns exp(-λx).
func (e Exponential) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if x <= 0 {
		return 1
	}
	return math.Exp(-e.rate * x)
}

// Density returns λ·exp(-λx) for x >= 0.
func (e Exponential) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if x < 0 {
		return 0
	}
	return e.rate * math.Exp(-e.rate*x)
}

// Quantile returns -log1p(-p)/λ.
func (e Exponential) Quantile(p float64) float64 {
	if !isProb(p) {
		return math.NaN()
	}
	return -math.Log1p(-p) / e.rate
}

// UpperQuantile returns -log(q)/λ.
func (e Exponential) UpperQuantile(q float64) float64 {
	if !isProb(q) {
		return math.NaN()
	}
	return -math.Log(q) / e.rate
}

// Mean returns 1/λ.
func (e Exponential) Mean() float64 { return 1 / e.rate }

// Variance returns 1/λ².
func (e Exponential) Variance() float64 { return 1 / (e.rate * e.rate) }

// Support returns [0, +Inf).
func (e Exponential) Support() (lo, hi float64) { return 0, math.Inf(1) }

// Rand draws an exponential value using r.
func (e Exponential) Rand(r *rand.Rand) float64 { return r.ExpFloat64() / e.rate }

// CF returns λ/(λ - it).
func (e Exponential) CF(t float64) complex128 {
	return complex(e.rate, 0) / complex(e.rate, -t)
}

// CGF returns -log(1 - s/λ) for s < λ and +Inf otherwise.
func (e Exponential) CGF(s float64) float64 {
	if s >= e.rate {
		return math.Inf(1)
	}
	return -math.Log1p(-s / e.rate)
}

// String prints the law compactly, e.g. "Exponential(λ=2)".
func (e Exponential) String() string { return fmt.Sprintf("Exponential(λ=%.6g)", e.rate) }
