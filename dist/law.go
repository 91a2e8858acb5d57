package dist

import (
	"errors"
	"fmt"
	"math/rand/v2"
)

// Law is a univariate probability law on the real line. Implementations are
// immutable values and safe for concurrent use; the caller owns the random
// source passed to Rand.
//
// Special values, common to every law in this module unless a type says
// otherwise: every method returns NaN for a NaN argument; CDF(-Inf) = 0,
// CDF(+Inf) = 1, Survival(-Inf) = 1, Survival(+Inf) = 0; Quantile and
// UpperQuantile return NaN for an argument outside [0, 1], Quantile(0) and
// UpperQuantile(1) return the lower end of the support, Quantile(1) and
// UpperQuantile(0) the upper end (which may be ±Inf).
type Law interface {
	// CDF returns P(X <= x), right-continuous in x.
	CDF(x float64) float64
	// Survival returns P(X > x), computed directly so that it is accurate
	// relative to its value in the upper tail (never as 1 - CDF).
	Survival(x float64) float64
	// Quantile returns inf{x : CDF(x) >= p}.
	Quantile(p float64) float64
	// UpperQuantile returns inf{x : Survival(x) <= q}; accurate for tiny q.
	UpperQuantile(q float64) float64
	// Mean returns E[X]; NaN or ±Inf when it does not exist (documented per law).
	Mean() float64
	// Variance returns Var[X]; +Inf when it is infinite.
	Variance() float64
	// Support returns the smallest closed interval holding all the mass;
	// either end may be infinite.
	Support() (lo, hi float64)
	// Rand draws one value using r.
	Rand(r *rand.Rand) float64
}

// Atom is a point mass: P(X = Value) = Mass.
type Atom struct {
	Value float64 // the point, in the law's unit
	Mass  float64 // its probability, in (0, 1]
}

// Atomic is implemented by laws that have point masses. Atoms lists every
// atom exactly, sorted by increasing Value, as a fresh slice the caller may
// modify. A law whose Atoms is empty has none. The continuous part then has
// mass 1 - Σ Mass.
type Atomic interface {
	Law
	Atoms() []Atom
}

// Densitied is implemented by laws with an absolutely continuous part.
// Density returns the density of the continuous part only (it integrates to
// 1 - Σ atom masses, not to 1); it is 0 outside the support and at atoms it
// ignores the point masses.
type Densitied interface {
	Law
	Density(x float64) float64
}

// CharFunc is implemented by laws whose characteristic function
// φ(t) = E[exp(i·t·X)] is known in closed form or to a stated error.
type CharFunc interface {
	Law
	// CF returns φ(t).
	CF(t float64) complex128
}

// Accuracy is the error estimate a numerically computed law reports.
type Accuracy struct {
	CDFAbs      float64 // bound on |CDF error| (absolute)
	SurvivalRel float64 // bound on the relative error of Survival where the true value is >= TailFloor
	TailFloor   float64 // smallest survival value to which SurvivalRel applies
	Method      string  // how the law is computed, in a few words
}

// Estimated is implemented by laws whose values are computed numerically and
// which report an error estimate for them.
type Estimated interface {
	Law
	Accuracy() Accuracy
}

// ErrParam is wrapped by every error that reports a bad parameter to a
// constructor or function of this package. Test with errors.Is.
var ErrParam = errors.New("dist: invalid parameter")

// ErrMoment is wrapped when a moment is asked of a law that does not have it
// finite (for example the variance of a sum with an infinite-variance term).
var ErrMoment = errors.New("dist: moment does not exist")

// ParamError describes a bad parameter: the function, the parameter's name,
// its value and the rule it breaks. It wraps ErrParam.
type ParamError struct {
	Func  string // the constructor or function, e.g. "NewNormal"
	Param string // the parameter's name, e.g. "sigma"
	Value any    // the value given
	Rule  string // the rule it breaks, e.g. "must be finite and > 0"
}

// Error implements error.
func (e *ParamError) Error() string {
	return fmt.Sprintf("dist.%s: %s = %v: %s", e.Func, e.Param, e.Value, e.Rule)
}

// Unwrap returns ErrParam.
func (e *ParamError) Unwrap() error { return ErrParam }

func paramErr(fn, param string, value any, rule string) error {
	return &ParamError{Func: fn, Param: param, Value: value, Rule: rule}
}
