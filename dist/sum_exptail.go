package dist

import (
	"fmt"
	"math"
	"sync"
)

// expTailLaw is an inverted sum E + R whose exponential part E (one
// exponential, or several with distinct rates: a hypoexponential with
// S_E(y) = Σ_j C_j·exp(-λ_j·y) for y >= 0) is added to a rest R that is
// bounded above, R <= r1. Beyond x0 = r1 the upper tail is then known in
// closed form:
//
//	S(x) = E[S_E(x - R)] = Σ_j C_j·exp(-λ_j·x)·M_R(λ_j),  x >= x0,
//
// since x - R >= 0 there; M_R is the product of the rest's transforms at
// the real points λ_j. This is the tail that matters for the largest of many
// nodes (the energy of a state with an exponential duration plus bounded
// radio and timing terms), and the series with tilting reaches it only to
// about 1e-6 relative where the rest's density has jumps or kinks.
type expTailLaw struct {
	*numLaw
	x0    float64
	rates []float64
	coef  []float64 // C_j
	logMR []float64 // log M_R(λ_j)
	rel   float64   // relative error of the closed form
	s0    float64   // S(x0)
	acc   *lazyAccuracy
}

// lazyAccuracy is an Accuracy computed on first use (the inversion's own
// estimate costs tilted probes and the bulk grid).
type lazyAccuracy struct {
	once sync.Once
	acc  Accuracy
}

// withExpTail returns l with the closed-form upper tail when the terms are
// exponentials (distinct rates, a well-conditioned hypoexponential) plus
// terms bounded above whose transforms are known at those rates; otherwise
// l itself.
func withExpTail(l Law, terms []Law) Law {
	nl, ok := l.(*numLaw)
	if !ok {
		return l
	}
	var rates []float64
	var rest []Law
	for _, t := range terms {
		if e, ok := t.(Exponential); ok {
			rates = append(rates, e.rate)
			continue
		}
		rest = append(rest, t)
	}
	if len(rates) == 0 || len(rest) == 0 {
		return l
	}
	h, ok := newHypoExp(rates)
	if !ok {
		return l
	}
	x0, trErr := 0.0, 0.0
	logMR := make([]float64, len(rates))
	for _, t := range rest {
		_, hi := t.Support()
		tr, ok := transformOf(t)
		if !finite(hi) || !ok {
			return l
		}
		x0 += hi
		for j, r := range rates {
			if !tr.allowed(r) {
				return l
			}
			logMR[j] += real(tr.logm(complex(r, 0)))
		}
		trErr += tr.err
	}
	for _, v := range logMR {
		if !finite(v) {
			return l
		}
	}
	e := &expTailLaw{numLaw: nl, x0: x0, rates: h.rates, coef: h.coef, logMR: logMR}
	// rounding: 8ε per term times the condition number of the sum at x0
	// (where the terms are largest relative to S), plus the transforms'
	// own relative errors, each entering through exp(log M_R)
	s0, abs := e.closedTail(x0)
	if !(s0 > 0) {
		return l
	}
	e.rel = 8*0x1p-52*(abs/s0+float64(len(rates))) + 2*trErr
	e.s0 = s0
	e.acc = new(lazyAccuracy)
	nl.upperClosed, nl.closedAbove = true, x0-nl.c // nl is fresh and not yet asked for its Accuracy
	return e
}

// closedTail returns Σ_j C_j·exp(-λ_j·x + log M_R(λ_j)) and the sum of the
// terms' absolute values.
func (e *expTailLaw) closedTail(x float64) (s, abs float64) {
	for j, r := range e.rates {
		v := e.coef[j] * math.Exp(-r*x+e.logMR[j])
		s += v
		abs += math.Abs(v)
	}
	return s, abs
}

// Survival returns P(X > x): the closed form beyond x0, the inversion below.
func (e *expTailLaw) Survival(x float64) float64 {
	if x >= e.x0 {
		s, _ := e.closedTail(x)
		return min(1, max(0, s))
	}
	return e.numLaw.Survival(x)
}

// CDF returns P(X <= x): one minus the closed-form tail beyond x0 (there the
// CDF is at least 1 - S(x0), so no small difference is formed), the
// inversion below.
func (e *expTailLaw) CDF(x float64) float64 {
	if x >= e.x0 {
		s, _ := e.closedTail(x)
		return min(1, max(0, 1-s))
	}
	return e.numLaw.CDF(x)
}

// Quantile inverts CDF by bisection.
func (e *expTailLaw) Quantile(p float64) float64 { return quantileByInversion(e, p) }

// UpperQuantile inverts Survival by bisection; accurate for tiny q.
func (e *expTailLaw) UpperQuantile(q float64) float64 { return upperQuantileByInversion(e, q) }

// Accuracy reports the inversion's CDF bound and the survival bound of the
// closed-form tail (relative, down to the smallest positive value), the
// bulk's absolute bound divided by S(x0) below x0.
func (e *expTailLaw) Accuracy() Accuracy {
	e.acc.once.Do(func() {
		base := e.numLaw.Accuracy()
		rel := max(e.rel, min(base.SurvivalRel, base.CDFAbs/e.s0))
		e.acc.acc = Accuracy{CDFAbs: base.CDFAbs, SurvivalRel: rel, TailFloor: 0,
			Method: base.Method + fmt.Sprintf("; upper tail beyond %.6g in closed form (exponential part over a bounded rest)", e.x0)}
	})
	return e.acc.acc
}

func (e *expTailLaw) String() string { return e.numLaw.String() }
