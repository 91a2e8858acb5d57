package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// uniformPair is the law of U + V for independent uniforms U on [a1, a1+w1]
// and V on [a2, a2+w2], w1 <= w2: a trapezoid on [lo, hi] = [a1+a2, a1+a2+w1+w2]
// whose density rises linearly over [lo, lo+w1], stays at 1/w2 up to
// lo+w2 and falls linearly to hi (the convolution of the two boxes). Sum
// and SumIID return it for two uniform terms in closed form: their density
// has kinks, which the Fourier series would resolve only slowly (65536
// terms for a CDF error near 1e-11), while here every value is a quadratic
// or a linear expression, each tail computed from its own end.
type uniformPair struct {
	u, v Uniform // u the narrower
}

// newUniformPair returns the law of a + b.
func newUniformPair(a, b Uniform) uniformPair {
	if a.hi-a.lo > b.hi-b.lo {
		a, b = b, a
	}
	return uniformPair{u: a, v: b}
}

func (p uniformPair) ends() (lo, hi, w1, w2 float64) {
	w1, w2 = p.u.hi-p.u.lo, p.v.hi-p.v.lo
	lo = p.u.lo + p.v.lo
	return lo, lo + w1 + w2, w1, w2
}

// lowerMass returns P(X <= lo + d) for d >= 0 measured from the lower end.
func (p uniformPair) lowerMass(d float64) float64 {
	_, _, w1, w2 := p.ends()
	switch {
	case d <= 0:
		return 0
	case d <= w1:
		return d * d / (2 * w1 * w2)
	case d <= w2:
		return (d - w1/2) / w2
	case d < w1+w2:
		e := w1 + w2 - d
		return 1 - e*e/(2*w1*w2)
	}
	return 1
}

// CDF returns P(U + V <= x): (x-lo)²/(2·w1·w2) on the rising edge,
// (x-lo-w1/2)/w2 on the flat part; near the top it is one minus the
// survival's quadratic. NaN for NaN x.
func (p uniformPair) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	lo, hi, _, _ := p.ends()
	if x-lo <= hi-x {
		return p.lowerMass(x - lo)
	}
	return 1 - p.upperMass(hi-x)
}

// upperMass returns P(X > hi - d), the mirror image of lowerMass.
func (p uniformPair) upperMass(d float64) float64 { return p.lowerMass(d) }

// Survival returns P(U + V > x), computed from the upper end: (hi-x)²/(2·w1·w2)
// on the falling edge. NaN for NaN x.
func (p uniformPair) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	lo, hi, _, _ := p.ends()
	if hi-x <= x-lo {
		return p.upperMass(hi - x)
	}
	return 1 - p.lowerMass(x-lo)
}

// Density returns the trapezoid density (0 outside [lo, hi]; NaN for NaN).
func (p uniformPair) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	lo, hi, w1, w2 := p.ends()
	d := min(x-lo, hi-x)
	switch {
	case d < 0:
		return 0
	case d <= w1:
		return d / (w1 * w2)
	}
	return 1 / w2
}

// offset inverts lowerMass: the d >= 0 with lowerMass(d) = q for q <= 1/2.
func (p uniformPair) offset(q float64) float64 {
	_, _, w1, w2 := p.ends()
	if q <= w1/(2*w2) {
		return math.Sqrt(2 * w1 * w2 * q)
	}
	return q*w2 + w1/2
}

// Quantile returns inf{x : CDF(x) >= q}; NaN outside [0, 1].
func (p uniformPair) Quantile(q float64) float64 {
	lo, hi, _, _ := p.ends()
	switch {
	case !(q >= 0 && q <= 1):
		return math.NaN()
	case q <= 0.5:
		return min(hi, lo+p.offset(q))
	}
	return max(lo, hi-p.offset(1-q))
}

// UpperQuantile returns inf{x : Survival(x) <= q}, from the upper end for
// small q; NaN outside [0, 1].
func (p uniformPair) UpperQuantile(q float64) float64 {
	lo, hi, _, _ := p.ends()
	switch {
	case !(q >= 0 && q <= 1):
		return math.NaN()
	case q <= 0.5:
		return max(lo, hi-p.offset(q))
	}
	return min(hi, lo+p.offset(1-q))
}

// Mean returns the sum of the two means.
func (p uniformPair) Mean() float64 { return p.u.Mean() + p.v.Mean() }

// Variance returns (w1² + w2²)/12.
func (p uniformPair) Variance() float64 { return p.u.Variance() + p.v.Variance() }

// Support returns [lo, hi].
func (p uniformPair) Support() (lo, hi float64) {
	lo, hi, _, _ = p.ends()
	return lo, hi
}

// Rand adds one draw of each uniform.
func (p uniformPair) Rand(r *rand.Rand) float64 { return p.u.Rand(r) + p.v.Rand(r) }

// CF returns the product of the two uniforms' characteristic functions.
func (p uniformPair) CF(t float64) complex128 { return p.u.CF(t) * p.v.CF(t) }

// transform is the sum of the two uniforms' log-transforms (entire).
func (p uniformPair) transform() transform {
	a, b := uniformTransform(p.u.lo, p.u.hi), uniformTransform(p.v.lo, p.v.hi)
	return transform{
		logm: func(s complex128) complex128 { return a.logm(s) + b.logm(s) },
		lo:   math.Inf(-1), hi: math.Inf(1),
	}
}

func (p uniformPair) String() string {
	return fmt.Sprintf("Sum(%v + %v)", p.u, p.v)
}
