package quad

import (
	"errors"
	"fmt"
	"math"
)

// Caps on the sizes of one call.
const (
	// MaxEvalsCap is the hard cap on Options.MaxEvals (integrand
	// evaluations of one call).
	MaxEvalsCap = 1 << 20
	// DefaultMaxEvals is the evaluation budget when Options.MaxEvals is 0.
	DefaultMaxEvals = 10000
	// DefaultRelTol is the relative error target when both Options.AbsTol
	// and Options.RelTol are 0.
	DefaultRelTol = 1e-12
	// MaxBreaks caps the number of breakpoints given to Breaks and
	// BreaksVec.
	MaxBreaks = 1 << 12
	// MaxDim caps the number of components of a vector integrand.
	MaxDim = 1 << 16
)

// ErrParam is wrapped by the errors for bad input: an interval, a
// tolerance or a budget out of range, or an integrand that returns NaN or
// ±Inf.
var ErrParam = errors.New("quad: invalid parameter")

// ErrBudget is wrapped by the error returned when Options.MaxEvals was
// reached before the error target; the Result is still returned, with its
// (too large) error estimate.
var ErrBudget = errors.New("quad: evaluation budget spent before the error target")

// ErrResolution is wrapped by the error returned when the panels whose
// error keeps the target out of reach are too narrow to bisect in float64
// (a non-integrable singularity, a jump, or a target below the rounding of
// the integrand); the Result is still returned.
var ErrResolution = errors.New("quad: panels too narrow to bisect before the error target")

// ParamError describes a bad parameter: the function, the parameter's
// name, its value and the rule it breaks. It wraps ErrParam.
type ParamError struct {
	Func  string // the function, e.g. "Adaptive"
	Param string // the parameter's name, e.g. "a"
	Value any    // the value given
	Rule  string // the rule it breaks
}

// Error implements error.
func (e *ParamError) Error() string {
	return fmt.Sprintf("quad.%s: %s = %v: %s", e.Func, e.Param, e.Value, e.Rule)
}

// Unwrap returns ErrParam.
func (e *ParamError) Unwrap() error { return ErrParam }

func paramErr(fn, param string, value any, rule string) error {
	return &ParamError{Func: fn, Param: param, Value: value, Rule: rule}
}

// Options control an adaptive integration. Zero AbsTol and RelTol mean
// RelTol = 1e-12 (DefaultRelTol); zero MaxEvals means 10000
// (DefaultMaxEvals). MaxEvals is capped at 1<<20 (MaxEvalsCap); a larger
// value is an error.
type Options struct {
	AbsTol   float64 // absolute error target, in the integral's units (>= 0)
	RelTol   float64 // relative error target, a fraction of |Value| (>= 0)
	MaxEvals int     // cap on integrand evaluations (0 <= MaxEvals <= 1<<20)
}

// Result is an integral with its error estimate.
type Result struct {
	Value float64 // the integral, in the integrand's units times x's
	Error float64 // estimated absolute error (Gauss–Kronrod difference plus rounding terms, summed over panels; see the package doc)
	Evals int     // integrand evaluations used
}

// VecResult is a vector of integrals with one error estimate for all.
type VecResult struct {
	Value []float64 // the integrals, one per component (the dst passed in)
	Error float64   // estimated absolute error of every component: Σ over panels of the worst component's |K15_j − G7_j| plus rounding terms
	Evals int       // integrand evaluations used (one evaluation fills all components)
}

// Adaptive integrates f over [a, b] (finite; a <= b) by globally adaptive
// Gauss–Kronrod (7–15) bisection, stopping when Error <= max(AbsTol, RelTol·|Value|)
// or when MaxEvals is reached (Result still returned, err wraps ErrBudget).
// a == b gives 0. Infinite ends are Infinite's job; breakpoints Breaks'.
func Adaptive(f func(x float64) float64, a, b float64, opt Options) (Result, error) {
	if err := checkFinite("Adaptive", a, b); err != nil {
		return Result{}, err
	}
	ends := [2]float64{a, b}
	var one [1]float64
	d := driver{f: f}
	r, err := d.run("Adaptive", one[:], ends[:], opt)
	return Result{Value: one[0], Error: r.Error, Evals: r.Evals}, err
}

// Infinite integrates f over [a, b] where either end may be infinite
// (a <= b; a may be −Inf, b may be +Inf), mapping an infinite end to
// (0, 1] by x = p ± (1−t)/t (see the package doc); (−∞, ∞) is split at 0.
// Stopping and errors as for Adaptive.
func Infinite(f func(x float64) float64, a, b float64, opt Options) (Result, error) {
	if math.IsNaN(a) || math.IsNaN(b) || !(a <= b) || math.IsInf(a, 1) || math.IsInf(b, -1) {
		return Result{}, paramErr("Infinite", "[a, b]", [2]float64{a, b}, "must satisfy a <= b, no NaN, a < +Inf, b > −Inf")
	}
	ends := [3]float64{a, 0, b}
	pts := ends[:]
	if !(math.IsInf(a, -1) && math.IsInf(b, 1)) {
		pts = []float64{a, b}
	}
	var one [1]float64
	d := driver{f: f}
	r, err := d.run("Infinite", one[:], pts, opt)
	return Result{Value: one[0], Error: r.Error, Evals: r.Evals}, err
}

// Breaks integrates f over [pts[0], pts[len(pts)−1]], starting from the
// panels between consecutive points (where f may jump, kink or be
// singular), then bisecting globally as Adaptive does (QUADPACK's DQAGP).
// pts must be sorted (non-decreasing), at least 2 and at most 1<<12
// (MaxBreaks) points; the first may be −Inf and the last +Inf (mapped as
// in Infinite). Equal consecutive points are skipped. The first pass
// evaluates every panel even beyond MaxEvals (then err wraps ErrBudget).
func Breaks(f func(x float64) float64, pts []float64, opt Options) (Result, error) {
	var one [1]float64
	d := driver{f: f}
	r, err := d.run("Breaks", one[:], pts, opt)
	return Result{Value: one[0], Error: r.Error, Evals: r.Evals}, err
}

// AdaptiveVec integrates the vector integrand f (which writes len(dst)
// values into y) over the finite [a, b], writing the integrals into dst
// (1 <= len(dst) <= 1<<16, MaxDim). Error bounds every component: the
// target is Error <= max(AbsTol, RelTol·max_j |Value_j|). Otherwise as
// Adaptive.
func AdaptiveVec(dst []float64, f func(x float64, y []float64), a, b float64, opt Options) (VecResult, error) {
	if err := checkFinite("AdaptiveVec", a, b); err != nil {
		return VecResult{Value: dst}, err
	}
	ends := [2]float64{a, b}
	d := driver{fv: f}
	return d.run("AdaptiveVec", dst, ends[:], opt)
}

// BreaksVec is Breaks for a vector integrand, as AdaptiveVec.
func BreaksVec(dst []float64, f func(x float64, y []float64), pts []float64, opt Options) (VecResult, error) {
	d := driver{fv: f}
	return d.run("BreaksVec", dst, pts, opt)
}

func checkFinite(fn string, a, b float64) error {
	if math.IsNaN(a) || math.IsNaN(b) || math.IsInf(a, 0) || math.IsInf(b, 0) || !(a <= b) {
		return paramErr(fn, "[a, b]", [2]float64{a, b}, "must be finite with a <= b")
	}
	return nil
}
