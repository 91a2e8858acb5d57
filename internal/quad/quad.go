package quad

import (
	"errors"
	"fmt"
	"math"
	"sort"
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
	// MaxBreaks caps the number of breakpoints given to Breaks, BreaksVec
	// and Partition.
	MaxBreaks = 1 << 16
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
// value is an error. The zero Rule is GK15.
type Options struct {
	AbsTol   float64 // absolute error target, in the integral's units (>= 0)
	RelTol   float64 // relative error target, a fraction of |Value| (>= 0)
	MaxEvals int     // cap on integrand evaluations (0 <= MaxEvals <= 1<<20)
	Rule     Rule    // the rule on each panel (GK15 or GK7)
}

// Rule is the Gauss–Kronrod pair the driver applies to each panel; its
// error estimate is the difference between the pair's Kronrod and Gauss
// values (see the package doc).
type Rule int8

const (
	// GK15 is the 7-point Gauss rule with its 15-point Kronrod extension
	// (QUADPACK's DQK15): exact for polynomials of degree 22, its error
	// estimate that of the 7-point rule (exact to degree 13). The default.
	GK15 Rule = iota
	// GK7 is the 3-point Gauss rule with its 7-point Kronrod extension:
	// seven evaluations a panel instead of fifteen, exact for polynomials
	// of degree 11, its error estimate that of the 3-point rule (exact to
	// degree 5). For integrands smooth on the scale of each panel the
	// breakpoints make, such as an interpolant integrated between its
	// knots, where the first pass of GK15 would already be far inside the
	// target. Partition takes GK15 only.
	GK7
)

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
// pts must be sorted (non-decreasing), at least 2 and at most 1<<16
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

// Panel is one piece of an adaptive partition (see Partition), with the
// integrand's values at its 15 Kronrod nodes.
type Panel struct {
	A, B  float64     // the piece, in x's units
	Value float64     // the Kronrod estimate of ∫_A^B f
	Error float64     // its error estimate (as Result.Error, for this piece)
	F     [15]float64 // f at the nodes, left to right (see Nodes)
}

// Nodes returns the 15 nodes of the 7–15 Kronrod rule on [p.A, p.B], left
// to right, bit for bit the points where Partition evaluated f, and their
// weights (in x's units, summing to B − A), so that Σ w_i·F_i is Value to
// rounding and Σ w_i·g(x_i) integrates any other g on the piece.
func (p Panel) Nodes() (x, w [15]float64) {
	nodes, wk, _ := gk15()
	c, h := p.A+(p.B-p.A)/2, (p.B-p.A)/2
	for i := 0; i < 8; i++ {
		x[i], w[i] = c-h*nodes[i], h*wk[i]
		x[14-i], w[14-i] = c+h*nodes[i], h*wk[i]
	}
	return x, w
}

// Partition integrates f over the finite pieces between pts as Breaks does
// and returns, appended to dst, the final panels sorted by A, each with
// f's values at its nodes, so that the caller can integrate other
// functions of the same shape (f times a smooth weight) on the partition
// f's accuracy chose. pts must be finite (sorted; 2 to 1<<16 points).
// A Result wrapping ErrBudget or ErrResolution comes with its panels too.
// The panels take 152 bytes each; at most MaxEvals/15 + len(pts).
func Partition(dst []Panel, f func(x float64) float64, pts []float64, opt Options) ([]Panel, Result, error) {
	if opt.Rule != GK15 {
		return dst, Result{}, paramErr("Partition", "opt.Rule", opt.Rule, "must be GK15 (a Panel holds 15 node values)")
	}
	for i, p := range pts {
		if math.IsInf(p, 0) {
			return dst, Result{}, paramErr("Partition", fmt.Sprintf("pts[%d]", i), p, "must be finite")
		}
	}
	var one [1]float64
	d := driver{f: f, keep: true}
	r, err := d.run("Partition", one[:], pts, opt)
	res := Result{Value: one[0], Error: r.Error, Evals: r.Evals}
	if errors.Is(err, ErrParam) && len(d.pans) == 0 {
		return dst, res, err
	}
	start := len(dst)
	for i, p := range d.pans {
		var pn Panel
		pn.A, pn.B, pn.Value, pn.Error = p.a, p.b, d.vals[i], p.err
		copy(pn.F[:], d.kept[i*15:(i+1)*15])
		dst = append(dst, pn)
	}
	sort.Slice(dst[start:], func(i, j int) bool { return dst[start+i].A < dst[start+j].A })
	return dst, res, err
}

func checkFinite(fn string, a, b float64) error {
	if math.IsNaN(a) || math.IsNaN(b) || math.IsInf(a, 0) || math.IsInf(b, 0) || !(a <= b) {
		return paramErr(fn, "[a, b]", [2]float64{a, b}, "must be finite with a <= b")
	}
	return nil
}
