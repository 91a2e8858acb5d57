package orderstat

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
)

// ExtremeApprox is an extreme-value approximation to the law of the maximum
// or minimum of n independent copies of a law: a Gumbel law, or a reversed
// Weibull law where the parent's support ends on that side. It is an
// APPROXIMATION, never used by this package unless asked for: it carries
// its measured error against the exact order-statistic law (see
// ApproxError), and its Accuracy reports that error. It implements
// dist.Law, dist.Densitied and dist.Estimated; values are immutable.
type ExtremeApprox struct {
	family string // "Gumbel" or "reversed Weibull"
	max    bool
	n      int64
	parent dist.Law
	// Gumbel: z = (x-loc)/scale. Weibull: t = |x-end|/scale, shape α.
	loc, scale, shape, end float64
	err                    ApproxError
}

// ApproxError is the error of an extreme-value approximation against the
// exact law, measured at the exact law's quantiles at levels 1e-6 to
// 1 - 1e-6 (and the upper levels 1e-4, 1e-6, 1e-9 on the extreme's far
// side).
type ApproxError struct {
	CDFAbs  float64 // largest |G(x) - P(X <= x)| at the points measured
	TailRel float64 // largest relative error of the far-side tail at levels 1e-4, 1e-6, 1e-9
	MeanRel float64 // |mean of G - exact mean| / |exact mean|
}

// GumbelMax returns the Gumbel approximation to the maximum of n copies of
// l, G(x) = exp(-exp(-(x-b)/a)), with the norming constants taken from the
// parent's quantiles: b = l.UpperQuantile(1/n) and
// a = l.UpperQuantile(1/(n·e)) - b, so that G matches the exact law at its
// 1/e and exp(-1/e) levels asymptotically (Gnedenko 1943; for the normal
// parent this is the classical b_n ≈ √(2 ln n), a_n ≈ 1/√(2 ln n)). It is
// an approximation, with its error reported; n must be in [2, MaxCount].
func GumbelMax(l dist.Law, n int64) (ExtremeApprox, error) {
	return newApprox("GumbelMax", l, n, true, false)
}

// GumbelMin returns the Gumbel approximation to the minimum of n copies of
// l, G(x) = 1 - exp(-exp((x-b)/a)) with b = l.Quantile(1/n) and
// a = b - l.Quantile(1/(n·e)). An approximation, with its error reported.
func GumbelMin(l dist.Law, n int64) (ExtremeApprox, error) {
	return newApprox("GumbelMin", l, n, false, false)
}

// WeibullMax returns the reversed Weibull approximation to the maximum of n
// copies of a law whose support ends at a finite ω:
// G(x) = exp(-((ω-x)/a)^α) for x < ω, with a = ω - l.UpperQuantile(1/n) and
// α = 1/log(a/(ω - l.UpperQuantile(1/(n·e)))) (the tail index seen at level
// 1/n). An approximation, with its error reported; l's upper end must be
// finite.
func WeibullMax(l dist.Law, n int64) (ExtremeApprox, error) {
	return newApprox("WeibullMax", l, n, true, true)
}

// WeibullMin returns the Weibull approximation to the minimum of n copies
// of a law whose support starts at a finite λ (a lifetime, say):
// G(x) = 1 - exp(-((x-λ)/a)^α) for x > λ, with a = l.Quantile(1/n) - λ and
// α = 1/log(a/(l.Quantile(1/(n·e)) - λ)). An approximation, with its error
// reported; l's lower end must be finite.
func WeibullMin(l dist.Law, n int64) (ExtremeApprox, error) {
	return newApprox("WeibullMin", l, n, false, true)
}

func newApprox(fn string, l dist.Law, n int64, isMax, weibull bool) (ExtremeApprox, error) {
	if l == nil {
		return ExtremeApprox{}, paramErr(fn, "l", nil, "must not be nil")
	}
	if n < 2 || n > MaxCount {
		return ExtremeApprox{}, paramErr(fn, "n", n, fmt.Sprintf("must be in [2, %d]", MaxCount))
	}
	lo, hi := l.Support()
	nf := float64(n)
	a := ExtremeApprox{family: "Gumbel", max: isMax, n: n, parent: l}
	q1, q2 := 1/nf, 1/(nf*math.E)
	var x1, x2 float64
	if isMax {
		x1, x2 = l.UpperQuantile(q1), l.UpperQuantile(q2)
	} else {
		x1, x2 = l.Quantile(q1), l.Quantile(q2)
	}
	if weibull {
		a.family = "reversed Weibull"
		if !isMax {
			a.family = "Weibull"
		}
		end := hi
		if !isMax {
			end = lo
		}
		if !finite(end) {
			return ExtremeApprox{}, paramErr(fn, "l", fmt.Sprintf("support [%v, %v]", lo, hi), "must have a finite end on the extreme's side")
		}
		d1, d2 := math.Abs(end-x1), math.Abs(end-x2)
		if !(d1 > d2 && d2 > 0) {
			return ExtremeApprox{}, paramErr(fn, "l", fmt.Sprintf("quantiles %v, %v near the end %v", x1, x2, end), "must approach its end gradually")
		}
		a.end, a.scale, a.shape = end, d1, 1/math.Log(d1/d2)
	} else {
		a.loc, a.scale = x1, math.Abs(x2-x1)
		if !(a.scale > 0) || !finite(a.loc) {
			return ExtremeApprox{}, paramErr(fn, "l", fmt.Sprintf("quantiles %v, %v", x1, x2), "must have distinct finite quantiles at 1/n and 1/(n·e)")
		}
	}
	var exact dist.Law
	var err error
	if isMax {
		exact, err = Max(l, n)
	} else {
		exact, err = Min(l, n)
	}
	if err != nil {
		return ExtremeApprox{}, err
	}
	a.err = measure(a, exact)
	return a, nil
}

// measure compares the approximation with the exact law.
func measure(a ExtremeApprox, exact dist.Law) ApproxError {
	var e ApproxError
	for _, p := range []float64{1e-6, 1e-4, 1e-3, 0.01, 0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.95, 0.99, 0.999, 0.9999, 1 - 1e-6} {
		x := exact.Quantile(p)
		e.CDFAbs = max(e.CDFAbs, math.Abs(a.CDF(x)-exact.CDF(x)))
	}
	for _, q := range []float64{1e-4, 1e-6, 1e-9} {
		if a.max {
			x := exact.UpperQuantile(q)
			e.TailRel = max(e.TailRel, math.Abs(a.Survival(x)/exact.Survival(x)-1))
		} else {
			x := exact.Quantile(q)
			e.TailRel = max(e.TailRel, math.Abs(a.CDF(x)/exact.CDF(x)-1))
		}
	}
	if m := exact.Mean(); finite(m) && m != 0 {
		e.MeanRel = math.Abs(a.Mean()-m) / math.Abs(m)
	}
	return e
}

// Error returns the measured error against the exact law.
func (a ExtremeApprox) Error() ApproxError { return a.err }

// Family returns "Gumbel", "reversed Weibull" or "Weibull".
func (a ExtremeApprox) Family() string { return a.family }

// Params returns the location (Gumbel) or end point (Weibull families),
// the scale and the shape α (0 for Gumbel), in the variable's unit.
func (a ExtremeApprox) Params() (loc, scale, shape float64) {
	if a.family == "Gumbel" {
		return a.loc, a.scale, 0
	}
	return a.end, a.scale, a.shape
}

// logG returns log P(T <= x) for the max form or log P(T > x) for the min
// form: -exp(-z) (Gumbel) or -t^α (Weibull), as a non-positive number.
func (a ExtremeApprox) logG(x float64) float64 {
	if a.family == "Gumbel" {
		z := (x - a.loc) / a.scale
		if a.max {
			return -math.Exp(-z)
		}
		return -math.Exp(z)
	}
	var t float64
	if a.max {
		if x >= a.end {
			return 0
		}
		t = (a.end - x) / a.scale
	} else {
		if x <= a.end {
			return 0
		}
		t = (x - a.end) / a.scale
	}
	return -math.Pow(t, a.shape)
}

// CDF returns the approximate P(X <= x).
func (a ExtremeApprox) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if a.max {
		return math.Exp(a.logG(x))
	}
	return -math.Expm1(a.logG(x))
}

// Survival returns the approximate P(X > x), computed directly.
func (a ExtremeApprox) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if a.max {
		return -math.Expm1(a.logG(x))
	}
	return math.Exp(a.logG(x))
}

// Density returns the approximate density.
func (a ExtremeApprox) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if math.IsInf(x, 0) {
		return 0
	}
	l := a.logG(x)
	if a.family == "Gumbel" {
		return -l / a.scale * math.Exp(l)
	}
	if l == 0 {
		return 0
	}
	// |d/dx (t^α)| = α t^(α-1)/scale with t^α = -l.
	t := math.Pow(-l, 1/a.shape)
	return a.shape * math.Pow(t, a.shape-1) / a.scale * math.Exp(l)
}

// inv returns x with logG(x) = l (l < 0).
func (a ExtremeApprox) inv(l float64) float64 {
	if a.family == "Gumbel" {
		if a.max {
			return a.loc - a.scale*math.Log(-l)
		}
		return a.loc + a.scale*math.Log(-l)
	}
	t := math.Pow(-l, 1/a.shape)
	if a.max {
		return a.end - a.scale*t
	}
	return a.end + a.scale*t
}

// Quantile returns the approximate p-quantile; NaN outside [0, 1].
func (a ExtremeApprox) Quantile(p float64) float64 {
	switch {
	case !(p >= 0 && p <= 1):
		return math.NaN()
	case p == 0:
		lo, _ := a.Support()
		return lo
	case p == 1:
		_, hi := a.Support()
		return hi
	}
	if a.max {
		return a.inv(math.Log(p))
	}
	return a.inv(math.Log1p(-p))
}

// UpperQuantile returns the approximate upper q-quantile, accurate for tiny q.
func (a ExtremeApprox) UpperQuantile(q float64) float64 {
	switch {
	case !(q >= 0 && q <= 1):
		return math.NaN()
	case q == 1:
		lo, _ := a.Support()
		return lo
	case q == 0:
		_, hi := a.Support()
		return hi
	}
	if a.max {
		return a.inv(math.Log1p(-q))
	}
	return a.inv(math.Log(q))
}

// Mean returns the approximation's mean: loc ± γ·scale (Gumbel, γ the
// Euler–Mascheroni constant) or end ∓ scale·Γ(1 + 1/α) (Weibull).
func (a ExtremeApprox) Mean() float64 {
	const gamma = 0.57721566490153286060651209008240243
	sign := 1.0
	if !a.max {
		sign = -1
	}
	if a.family == "Gumbel" {
		return a.loc + sign*gamma*a.scale
	}
	return a.end - sign*a.scale*math.Gamma(1+1/a.shape)
}

// Variance returns π²·scale²/6 (Gumbel) or scale²·(Γ(1+2/α) - Γ(1+1/α)²).
func (a ExtremeApprox) Variance() float64 {
	if a.family == "Gumbel" {
		return math.Pi * math.Pi * a.scale * a.scale / 6
	}
	g1 := math.Gamma(1 + 1/a.shape)
	return a.scale * a.scale * (math.Gamma(1+2/a.shape) - g1*g1)
}

// Support returns the approximation's support.
func (a ExtremeApprox) Support() (lo, hi float64) {
	switch {
	case a.family == "Gumbel":
		return math.Inf(-1), math.Inf(1)
	case a.max:
		return math.Inf(-1), a.end
	}
	return a.end, math.Inf(1)
}

// Rand draws from the approximation by inversion.
func (a ExtremeApprox) Rand(r *rand.Rand) float64 { return a.Quantile(openUniform(r)) }

// Accuracy reports the measured error against the exact law (CDFAbs and
// the far-tail relative error), labelled as an approximation.
func (a ExtremeApprox) Accuracy() dist.Accuracy {
	return dist.Accuracy{
		CDFAbs:      a.err.CDFAbs,
		SurvivalRel: a.err.TailRel,
		TailFloor:   1e-9,
		Method:      fmt.Sprintf("%s approximation (not exact), measured against the exact law", a.family),
	}
}

// String prints the approximation with its error, e.g.
// "Gumbel approximation to Max of 1000 × …: sup|ΔF|=0.012, mean error 0.3%".
func (a ExtremeApprox) String() string {
	what := "Max"
	if !a.max {
		what = "Min"
	}
	return fmt.Sprintf("%s approximation to %s of %d × %v: sup|ΔF|=%.2g, tail error %.2g, mean error %.2g%%",
		a.family, what, a.n, a.parent, a.err.CDFAbs, a.err.TailRel, 100*a.err.MeanRel)
}
