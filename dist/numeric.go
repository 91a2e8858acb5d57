package dist

import (
	"errors"
	"fmt"
	"math"

	gquad "gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// checkProb reports whether p is a probability; NaN is not.
func isProb(p float64) bool { return p >= 0 && p <= 1 }

// finite reports whether x is neither NaN nor ±Inf.
func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// compSum is a running sum with Neumaier's compensation (A. Neumaier,
// "Rundungsfehleranalyse einiger Verfahren zur Summation endlicher
// Summen", ZAMM 54, 1974): the error of the sum is about one rounding of
// the result plus n·ε² of Σ|x|, whatever the order and number of terms,
// where a plain running sum errs by up to n·ε·Σ|x| (1e-10 for 10^6
// probabilities of 1/10^6). The zero value is an empty sum.
type compSum struct{ s, c float64 }

// add adds x.
func (k *compSum) add(x float64) {
	t := k.s + x
	if math.Abs(k.s) >= math.Abs(x) {
		k.c += (k.s - t) + x
	} else {
		k.c += (x - t) + k.s
	}
	k.s = t
}

// value returns the compensated sum.
func (k compSum) value() float64 { return k.s + k.c }

// probSum checks probabilities (finite, >= 0) and returns their
// compensated sum, with an error naming param[i] for a bad one and param
// itself when the sum is off 1 by more than ProbSumTolerance.
func probSum(fn, param string, ps []float64) (float64, error) {
	var k compSum
	for i, p := range ps {
		if !finite(p) || p < 0 {
			return 0, paramErr(fn, fmt.Sprintf("%s[%d]", param, i), p, "must be finite and >= 0")
		}
		k.add(p)
	}
	sum := k.value()
	if math.Abs(sum-1) > ProbSumTolerance {
		return 0, paramErr(fn, param, fmt.Sprintf("sum %.17g", sum), fmt.Sprintf("must sum to 1 within %g", ProbSumTolerance))
	}
	return sum, nil
}

// edgeCDF returns the CDF value that x alone fixes for a law with support
// [lo, hi]: NaN for NaN x, 0 below lo, 1 at or above hi; ok is false when x
// lies in [lo, hi) and the law must compute it.
func edgeCDF(x, lo, hi float64) (v float64, ok bool) {
	switch {
	case math.IsNaN(x):
		return x, true
	case x < lo:
		return 0, true
	case x >= hi:
		return 1, true
	}
	return 0, false
}

// edgeSurvival is edgeCDF for the survival: NaN, 1 below lo, 0 at or above
// hi.
func edgeSurvival(x, lo, hi float64) (v float64, ok bool) {
	switch {
	case math.IsNaN(x):
		return x, true
	case x < lo:
		return 1, true
	case x >= hi:
		return 0, true
	}
	return 0, false
}

// bracketStart returns a starting point and a scale for a root search on l.
func bracketStart(l Law) (x0, step float64) {
	lo, hi := l.Support()
	m, v := l.Mean(), l.Variance()
	x0 = m
	if !finite(x0) {
		switch {
		case finite(lo) && finite(hi):
			x0 = lo/2 + hi/2
		case finite(lo):
			x0 = lo + 1
		case finite(hi):
			x0 = hi - 1
		default:
			x0 = 0
		}
	}
	step = math.Sqrt(v)
	if !finite(step) || step <= 0 {
		step = max(1, math.Abs(x0))
	}
	return x0, step
}

// invert returns inf{x : g(x)}, where g is monotone (false then true) on the
// support [lo, hi] of l. It brackets from the mean outwards and then bisects
// to adjacent floating-point numbers. g(hi) is assumed true.
func invert(l Law, g func(x float64) bool) float64 {
	lo, hi := l.Support()
	x0, step := bracketStart(l)
	x0 = min(max(x0, lo), hi)
	var a, b float64 // g(a) false, g(b) true
	if g(x0) {
		b = x0
		a = x0 - step
		for !(a <= lo) && g(a) {
			b = a
			step *= 2
			a = x0 - step
			if math.IsInf(a, -1) {
				break
			}
		}
		if a <= lo {
			if g(lo) {
				return lo
			}
			a = lo
		}
	} else {
		a = x0
		b = x0 + step
		for !(b >= hi) && !g(b) {
			a = b
			step *= 2
			b = x0 + step
			if math.IsInf(b, 1) {
				break
			}
		}
		if b >= hi {
			b = hi
		}
	}
	if math.IsInf(a, -1) || math.IsInf(b, 1) {
		return max(min(b, math.MaxFloat64), -math.MaxFloat64)
	}
	for i := 0; i < 2100; i++ {
		m := a + (b-a)/2
		if m <= a || m >= b {
			break
		}
		if g(m) {
			b = m
		} else {
			a = m
		}
	}
	return b
}

// quantileByInversion implements Quantile for any law by inverting CDF (for
// p <= 1/2) or Survival (for p > 1/2, where the CDF saturates).
func quantileByInversion(l Law, p float64) float64 {
	switch {
	case !isProb(p):
		return math.NaN()
	case p == 0:
		lo, _ := l.Support()
		return lo
	case p == 1:
		_, hi := l.Support()
		return hi
	}
	if p <= 0.5 {
		return invert(l, func(x float64) bool { return l.CDF(x) >= p })
	}
	q := 1 - p
	return invert(l, func(x float64) bool { return l.Survival(x) <= q })
}

// upperQuantileByInversion implements UpperQuantile for any law.
func upperQuantileByInversion(l Law, q float64) float64 {
	switch {
	case !isProb(q):
		return math.NaN()
	case q == 1:
		lo, _ := l.Support()
		return lo
	case q == 0:
		_, hi := l.Support()
		return hi
	}
	if q >= 0.5 {
		p := 1 - q
		return invert(l, func(x float64) bool { return l.CDF(x) >= p })
	}
	return invert(l, func(x float64) bool { return l.Survival(x) <= q })
}

// legendreRule returns the n-point Gauss–Legendre nodes and weights on
// [-1, 1], from gonum's integrate/quad.Legendre (the one generator of the
// rule in the library; orderstat uses it too).
func legendreRule(n int) (x, w []float64) {
	x = make([]float64, n)
	w = make([]float64, n)
	gquad.Legendre{}.FixedLocations(x, w, -1, 1)
	return x, w
}

// momentBreaks returns sorted integration breakpoints for law l: its
// finite support ends (cut to ±1e300), quantiles from 1e-16 to 1-1e-16, and atoms.
func momentBreaks(l Law) []float64 {
	lo, hi := l.Support()
	levels := []float64{1e-16, 1e-12, 1e-9, 1e-6, 1e-4, 1e-3, 0.01, 0.03, 0.1, 0.2, 0.3, 0.4, 0.5}
	pts := make([]float64, 0, 2*len(levels)+4)
	if finite(lo) {
		pts = append(pts, lo)
	}
	if finite(hi) {
		pts = append(pts, hi)
	}
	for _, p := range levels {
		pts = append(pts, l.Quantile(p), l.UpperQuantile(p))
	}
	if al, ok := l.(Atomic); ok {
		for _, a := range al.Atoms() {
			pts = append(pts, a.Value)
		}
	}
	out := pts[:0]
	for _, x := range pts {
		if finite(x) && x >= lo && x <= hi {
			// an end beyond ±1e300 (a support up to MaxFloat64) is cut
			// there, so that the quadrature's panel arithmetic cannot
			// overflow; it lies far beyond the 1e-16 quantiles
			out = append(out, max(-1e300, min(1e300, x)))
		}
	}
	sortFloats(out)
	uniq := out[:0]
	for i, x := range out {
		if i == 0 || x > uniq[len(uniq)-1] {
			uniq = append(uniq, x)
		}
	}
	return uniq
}

// numericMoments returns the mean and variance of l by the library's
// adaptive Gauss–Kronrod quadrature (internal/quad.BreaksVec) over
// momentBreaks, about the breakpoint c nearest the median:
//
//	E[X - c]   = ∫_c^b S(x) dx - ∫_a^c F(x) dx,
//	E[(X-c)²]  = ∫_c^b 2(x-c)·S(x) dx + ∫_a^c 2(c-x)·F(x) dx,
//	Var X      = E[(X-c)²] - E[X - c]²
//
// with a and b the lowest and highest breakpoints, to a stated error of
// 1e-13 relative to the larger integral (rounding included; quad's budget
// of 10^5 evaluations). Centring at the median keeps both integrals of the
// size of the spread, so a finite support end far from the mass (a normal
// truncated to [-1e10, 1e10], say) costs no precision, where integrating
// the survival from the lower end would lose it all to cancellation. Mass
// below the 1e-16 quantile or above the 1-1e-16 quantile is ignored, so the
// error is about 1e-15 of the spread beyond the stated one for light tails.
// Atoms are breakpoints, so F and S are smooth on every piece. A NaN or
// infinite CDF or survival (a FromDistuv law outside its range) gives NaN
// moments, which every caller refuses (ErrMoment or ErrParam); a budget or
// resolution shortfall keeps the best values found.
func numericMoments(l Law) (mean, variance float64) {
	pts := momentBreaks(l)
	if len(pts) < 2 {
		if len(pts) == 1 {
			return pts[0], 0
		}
		return math.NaN(), math.NaN()
	}
	// the centre: the breakpoint nearest the median
	med := l.Quantile(0.5)
	c := pts[0]
	for _, x := range pts {
		if math.Abs(x-med) < math.Abs(c-med) {
			c = x
		}
	}
	var m [2]float64
	_, err := quad.BreaksVec(m[:], func(x float64, y []float64) {
		// weight first: a zero tail value times a huge interval is 0, not NaN
		if x >= c {
			s := l.Survival(x)
			y[0], y[1] = s, 2*(x-c)*s
			return
		}
		f := l.CDF(x)
		y[0], y[1] = -f, 2*(c-x)*f
	}, pts, quad.Options{RelTol: 1e-13, MaxEvals: 100000})
	if err != nil && errors.Is(err, quad.ErrParam) {
		return math.NaN(), math.NaN()
	}
	mean = c + m[0]
	variance = max(0, m[1]-m[0]*m[0])
	return mean, variance
}

// sortFloats sorts xs in place (insertion sort for short slices).
func sortFloats(xs []float64) {
	for i := 1; i < len(xs); i++ {
		for j := i; j > 0 && xs[j] < xs[j-1]; j-- {
			xs[j], xs[j-1] = xs[j-1], xs[j]
		}
	}
}
