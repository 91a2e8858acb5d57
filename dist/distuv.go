package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// ContinuousDistuv is what FromDistuv needs of a gonum stat/distuv law
// (Normal, Gamma, Beta, Weibull, …): a CDF and a quantile. Methods Prob
// (density), Survival, Mean and Variance are used when present.
type ContinuousDistuv interface {
	CDF(x float64) float64
	Quantile(p float64) float64
}

// FromDistuv lifts a continuous gonum distuv law into a Law. It is meant for
// continuous laws only (for a discrete distuv law, whose Prob is a mass
// function, build a Discrete from its masses instead).
//
// Caution: several distuv laws compute Survival as 1 - CDF, or saturate
// (Normal and LogNormal return 0 beyond about 8.3σ), so the lifted law is
// only as accurate in its upper tail as its source; prefer this package's
// own laws where they exist. Rand draws by inversion, Quantile(u), with one
// uniform from the caller's source. Mean and Variance, when the source lacks
// them, are computed by quadrature (numericMoments).
func FromDistuv(d ContinuousDistuv) (Law, error) {
	if d == nil {
		return nil, paramErr("FromDistuv", "d", nil, "must not be nil")
	}
	lo, hi := d.Quantile(0), d.Quantile(1)
	if math.IsNaN(lo) || math.IsNaN(hi) || !(lo < hi) {
		return nil, paramErr("FromDistuv", "d", fmt.Sprintf("%T", d), "must have Quantile(0) < Quantile(1)")
	}
	a := distuvLaw{d: d, lo: lo, hi: hi}
	type meanVar interface {
		Mean() float64
		Variance() float64
	}
	if mv, ok := d.(meanVar); ok {
		a.mean, a.variance = mv.Mean(), mv.Variance()
	} else {
		a.mean, a.variance = numericMoments(a)
	}
	if _, ok := d.(interface{ Prob(float64) float64 }); ok {
		return distuvDensity{a}, nil
	}
	return a, nil
}

type distuvLaw struct {
	d              ContinuousDistuv
	lo, hi         float64
	mean, variance float64
}

// source calls f, a method of the source law, and reports whether its
// answer is a number in [lo, hi]: a NaN, an answer out of range, or a panic
// (gonum's gamma quantile panics at p = 5e-324) is reported as not ok, and
// the caller falls back to this package's own inversion or complement.
func source(f func() float64, lo, hi float64) (v float64, ok bool) {
	defer func() {
		if recover() != nil { // panic-ok: a panic of the outside law is turned into a fallback
			v, ok = math.NaN(), false
		}
	}()
	v = f()
	return v, v >= lo && v <= hi
}

// CDF is the source's CDF; where that is NaN or outside [0, 1] for a number
// x, it is 1 - Survival when the source has one (else NaN).
func (a distuvLaw) CDF(x float64) float64 {
	if v, ok := edgeCDF(x, a.lo, a.hi); ok {
		return v
	}
	if v, ok := source(func() float64 { return a.d.CDF(x) }, 0, 1); ok {
		return v
	}
	if sv, ok := a.d.(interface{ Survival(float64) float64 }); ok {
		if v, ok := source(func() float64 { return sv.Survival(x) }, 0, 1); ok {
			return 1 - v
		}
	}
	return math.NaN()
}

// Survival is the source's Survival when it has one and answers in [0, 1],
// else 1 - CDF (see the caution on FromDistuv).
func (a distuvLaw) Survival(x float64) float64 {
	if v, ok := edgeSurvival(x, a.lo, a.hi); ok {
		return v
	}
	if sv, ok := a.d.(interface{ Survival(float64) float64 }); ok {
		if v, ok := source(func() float64 { return sv.Survival(x) }, 0, 1); ok {
			return v
		}
	}
	if v, ok := source(func() float64 { return a.d.CDF(x) }, 0, 1); ok {
		return 1 - v
	}
	return math.NaN()
}

// Quantile is the source's quantile; where that is NaN, outside the
// support or panics (gonum's gamma quantile is NaN below p ≈ 1e-20 and
// panics at 5e-324), the CDF (p <= 1/2) or survival is inverted by
// bisection instead.
func (a distuvLaw) Quantile(p float64) float64 {
	if !isProb(p) {
		return math.NaN()
	}
	if v, ok := source(func() float64 { return a.d.Quantile(p) }, a.lo, a.hi); ok {
		return v
	}
	return quantileByInversion(a, p)
}

// UpperQuantile inverts the survival for q < 1/2 when the source has one,
// else it is the source's Quantile(1 - q), with the same fallback as
// Quantile.
func (a distuvLaw) UpperQuantile(q float64) float64 {
	if !isProb(q) {
		return math.NaN()
	}
	if _, ok := a.d.(interface{ Survival(float64) float64 }); ok && q < 0.5 {
		return upperQuantileByInversion(a, q)
	}
	if v, ok := source(func() float64 { return a.d.Quantile(1 - q) }, a.lo, a.hi); ok {
		return v
	}
	return upperQuantileByInversion(a, q)
}

func (a distuvLaw) Mean() float64             { return a.mean }
func (a distuvLaw) Variance() float64         { return a.variance }
func (a distuvLaw) Support() (lo, hi float64) { return a.lo, a.hi }
func (a distuvLaw) Rand(r *rand.Rand) float64 { return a.Quantile(r.Float64()) }
func (a distuvLaw) String() string            { return fmt.Sprintf("%T(%s)", a.d, summary(a)) }

type distuvDensity struct{ distuvLaw }

func (a distuvDensity) Density(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x < a.lo || x > a.hi || math.IsInf(x, 0):
		return 0
	}
	return a.d.(interface{ Prob(float64) float64 }).Prob(x)
}
