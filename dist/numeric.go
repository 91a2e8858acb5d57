package dist

import "math"

// checkProb reports whether p is a probability; NaN is not.
func isProb(p float64) bool { return p >= 0 && p <= 1 }

// finite reports whether x is neither NaN nor ±Inf.
func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

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
		step = math.Max(1, math.Abs(x0))
	}
	return x0, step
}

// invert returns inf{x : g(x)}, where g is monotone (false then true) on the
// support [lo, hi] of l. It brackets from the mean outwards and then bisects
// to adjacent floating-point numbers. g(hi) is assumed true.
func invert(l Law, g func(x float64) bool) float64 {
	lo, hi := l.Support()
	x0, step := bracketStart(l)
	x0 = math.Min(math.Max(x0, lo), hi)
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
		return math.Max(math.Min(b, math.MaxFloat64), -math.MaxFloat64)
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
