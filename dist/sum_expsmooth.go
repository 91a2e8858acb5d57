package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// expSmoothed is the law of H + D + C for independent H, D, C: H one
// exponential or a hypoexponential (distinct rates λ_j, S_H(u) =
// Σ_j c_j·exp(-λ_j·u) for u >= 0), D a finite discrete law (atoms v_i,
// masses p_i; a point mass at 0 when absent) and C one uniform, normal,
// normal truncated to an interval, or gamma law. Conditioning on D and C,
//
//	S(x) = Σ_i p_i·[S_C(y) + Σ_j c_j·g_j(y)],   y = x - v_i,
//	F(x) = Σ_i p_i·[F_C(y) - Σ_j c_j·g_j(y)],
//	f(x) = Σ_i p_i·Σ_j c_j·λ_j·g_j(y),
//
// with g_j(y) = E[exp(-λ_j·(y - C)); C <= y] in closed form for each such C
// (the exponential tilt of C is again a law of its family: a uniform gives
// an exponential segment, a normal a normal with mean μ + λσ², a gamma of
// rate β a gamma of rate β - λ, for λ < β). Every term of the survival is
// positive for one exponential, so the upper tail keeps its relative
// precision to the smallest positive float; with several rates the terms'
// signs mix and the condition number of the hypoexponential (at most 1e3)
// multiplies the rounding. This is the cycle energy of a node with a
// discrete radio part, one exponential (or a few) state duration and one
// jittered term, which the Fourier series would meet with a kinked density
// (65536 terms, CDF error about 1e-8) and here costs a few special
// functions per atom.
type expSmoothed struct {
	rates, coef []float64
	cond        float64
	d           Discrete
	c           Law
	g           func(lambda, y float64) float64 // E[exp(-λ(y - C)); C <= y]
	terms       []Law
	mean, vr    float64
}

// newExpSmoothed returns the closed form when cont holds one or more
// exponentials (a well-conditioned hypoexponential) and exactly one other
// law of a supported family, and d is the discrete part (nil: none).
func newExpSmoothed(d *Discrete, cont, terms []Law) (Law, bool) {
	var rates []float64
	var c Law
	for _, l := range cont {
		if e, ok := l.(Exponential); ok {
			rates = append(rates, e.rate)
			continue
		}
		if c != nil {
			return nil, false
		}
		c = l
	}
	if len(rates) == 0 || c == nil {
		return nil, false
	}
	h, ok := newHypoExp(rates)
	if !ok {
		return nil, false
	}
	g, ok := tiltSmoother(c, rates)
	if !ok {
		return nil, false
	}
	dd := MustPointMass(0)
	if d != nil {
		dd = *d
	}
	l := expSmoothed{rates: h.rates, coef: h.coef, cond: h.cond, d: dd, c: c, g: g, terms: append([]Law(nil), terms...)}
	for _, t := range terms {
		l.mean += t.Mean()
		l.vr += t.Variance()
	}
	return expSmoothedDensity{l}, true
}

// tiltSmoother returns g(λ, y) = E[exp(-λ·(y - C)); C <= y] in closed form
// for the supported families, checked usable at every rate.
func tiltSmoother(c Law, rates []float64) (func(lambda, y float64) float64, bool) {
	switch b := c.(type) {
	case Uniform:
		a, w := b.lo, b.hi-b.lo
		return func(lambda, y float64) float64 {
			if y <= a {
				return 0
			}
			m := min(y, b.hi)
			return math.Exp(-lambda*(y-m)) * -math.Expm1(-lambda*(m-a)) / (lambda * w)
		}, true
	case Normal:
		mu, s := b.mu, b.sigma
		return func(lambda, y float64) float64 {
			return math.Exp(-lambda*(y-mu) + lambda*lambda*s*s/2 + logPhi((y-mu)/s-lambda*s))
		}, true
	case affine:
		return affineSmoother(b, rates)
	case affineDensity:
		return affineSmoother(b.affine, rates)
	case truncated:
		return truncNormalSmoother(b)
	case truncatedDensity:
		return truncNormalSmoother(b.truncated)
	case Gamma:
		for _, r := range rates {
			if !(r < b.rate) {
				return nil, false
			}
		}
		return func(lambda, y float64) float64 {
			if y <= 0 {
				return 0
			}
			f := Gamma{shape: b.shape, rate: b.rate - lambda}.CDF(y)
			if f == 0 {
				return 0
			}
			return math.Exp(-lambda*y - b.shape*math.Log1p(-lambda/b.rate) + math.Log(f))
		}, true
	}
	return nil, false
}

// affineSmoother is tiltSmoother for a·C + b with a > 0 (a scaled state
// energy, say): E[e^{-λ(y - aC - b)}; aC + b <= y] is the base's g at rate
// λ·a and point (y - b)/a.
func affineSmoother(m affine, rates []float64) (func(lambda, y float64) float64, bool) {
	if !(m.scale > 0) || len(m.baseAtoms) > 0 {
		return nil, false
	}
	scaled := make([]float64, len(rates))
	for i, r := range rates {
		scaled[i] = r * m.scale
	}
	g, ok := tiltSmoother(m.base, scaled)
	if !ok {
		return nil, false
	}
	a, b := m.scale, m.shift
	return func(lambda, y float64) float64 { return g(lambda*a, (y-b)/a) }, true
}

// truncNormalSmoother is tiltSmoother for a normal parent truncated to
// [lo, hi] with mass Z: the tilted parent N(μ + λσ², σ) on the same
// interval, its mass a difference of normal tails taken in logs.
func truncNormalSmoother(t truncated) (func(lambda, y float64) float64, bool) {
	n, ok := t.base.(Normal)
	if !ok || len(t.atoms) > 0 || !(t.mass > 0) {
		return nil, false
	}
	mu, s, lo, hi, lz := n.mu, n.sigma, t.lo, t.hi, math.Log(t.mass)
	return func(lambda, y float64) float64 {
		if y <= lo {
			return 0
		}
		m := min(y, hi)
		mt := mu + lambda*s*s
		ld := logDiffPhi((lo-mt)/s, (m-mt)/s)
		return math.Exp(-lambda*(y-mu) + lambda*lambda*s*s/2 + ld - lz)
	}, true
}

// logPhi returns log Φ(z), the log of the standard normal CDF, accurate to
// a few ulps relative for every z: log1p of the upper tail for z > 0, the
// log of erfc down to z = -35, and the asymptotic (Mills ratio) series
// -z²/2 - log(-z·√(2π)) + log(1 - 1/z² + 3/z⁴ - 15/z⁶ + 105/z⁸) beyond,
// whose next term is below 1e-13 there.
func logPhi(z float64) float64 {
	switch {
	case math.IsNaN(z):
		return z
	case z > 0:
		return math.Log1p(-0.5 * math.Erfc(z/math.Sqrt2))
	case z > -35:
		return math.Log(0.5 * math.Erfc(-z/math.Sqrt2))
	case math.IsInf(z, -1):
		return math.Inf(-1)
	}
	u := 1 / (z * z)
	return -z*z/2 - math.Log(-z*math.Sqrt(2*math.Pi)) + math.Log1p(u*(-1+u*(3+u*(-15+u*105))))
}

// logDiffPhi returns log(Φ(b) - Φ(a)) for a < b, each side from the tail
// it lies in.
func logDiffPhi(a, b float64) float64 {
	switch {
	case !(a < b):
		return math.Inf(-1)
	case a >= 0: // both in the upper tail: Q(a) - Q(b)
		la, lb := logPhi(-a), logPhi(-b)
		return la + math.Log(-math.Expm1(lb-la))
	case b <= 0:
		la, lb := logPhi(a), logPhi(b)
		return lb + math.Log(-math.Expm1(la-lb))
	}
	return math.Log1p(-(0.5*math.Erfc(b/math.Sqrt2) + 0.5*math.Erfc(-a/math.Sqrt2)))
}

// smooth returns Σ_j c_j·g_j(y) and Σ_j |c_j·g_j(y)|.
func (l expSmoothed) smooth(y float64) (s, abs float64) {
	if math.IsInf(y, -1) {
		return 0, 0
	}
	for j, r := range l.rates {
		v := l.coef[j] * l.g(r, y)
		s += v
		abs += math.Abs(v)
	}
	return s, abs
}

// CDF returns P(X <= x) (NaN for NaN x).
func (l expSmoothed) CDF(x float64) float64 {
	lo, hi := l.Support()
	if v, ok := edgeCDF(x, lo, hi); ok {
		return v
	}
	return l.d.weighted(func(v float64) float64 {
		y := x - v
		s, _ := l.smooth(y)
		return max(0, l.c.CDF(y)-s)
	})
}

// Survival returns P(X > x), summed from positive terms (NaN for NaN x).
func (l expSmoothed) Survival(x float64) float64 {
	lo, hi := l.Support()
	if v, ok := edgeSurvival(x, lo, hi); ok {
		return v
	}
	return l.d.weighted(func(v float64) float64 {
		y := x - v
		s, _ := l.smooth(y)
		return max(0, l.c.Survival(y)+s)
	})
}

// Quantile inverts CDF by bisection.
func (l expSmoothed) Quantile(p float64) float64 { return quantileByInversion(l, p) }

// UpperQuantile inverts Survival by bisection; accurate for tiny q.
func (l expSmoothed) UpperQuantile(q float64) float64 { return upperQuantileByInversion(l, q) }

// Mean returns the sum of the terms' means.
func (l expSmoothed) Mean() float64 { return l.mean }

// Variance returns the sum of the terms' variances.
func (l expSmoothed) Variance() float64 { return l.vr }

// Support returns the sum of the terms' supports.
func (l expSmoothed) Support() (lo, hi float64) {
	for _, t := range l.terms {
		a, b := t.Support()
		lo, hi = lo+a, hi+b
	}
	if math.IsNaN(lo) {
		lo = math.Inf(-1)
	}
	if math.IsNaN(hi) {
		hi = math.Inf(1)
	}
	return lo, hi
}

// Rand adds one draw of each term (sampling from the structure).
func (l expSmoothed) Rand(r *rand.Rand) float64 {
	x := 0.0
	for _, t := range l.terms {
		x += t.Rand(r)
	}
	return x
}

// Accuracy reports rounding: 1e-14 absolute in the CDF and 1e-12 relative
// in the survival, times the hypoexponential's condition number.
func (l expSmoothed) Accuracy() Accuracy {
	return Accuracy{CDFAbs: 1e-14 * l.cond, SurvivalRel: 1e-12 * l.cond, TailFloor: 0,
		Method: fmt.Sprintf("closed form: %d exponential(s) over %v, conditioned on %d atom(s)", len(l.rates), l.c, l.d.Len())}
}

// CF returns the product of the terms' characteristic functions.
func (l expSmoothed) CF(t float64) complex128 {
	tr, ok := l.transform()
	if !ok || math.IsNaN(t) {
		return complex(math.NaN(), math.NaN())
	}
	return cexpm1(tr.logm(complex(0, t))) + 1
}

// transform is the sum of the terms' log-transforms.
func (l expSmoothed) transform() (transform, bool) {
	trs := make([]transform, 0, len(l.terms))
	lo, hi := math.Inf(-1), math.Inf(1)
	var e float64
	for _, t := range l.terms {
		tr, ok := transformOf(t)
		if !ok {
			return transform{}, false
		}
		trs = append(trs, tr)
		lo, hi, e = max(lo, tr.lo), min(hi, tr.hi), e+tr.err
	}
	return transform{
		logm: func(s complex128) complex128 {
			var v complex128
			for _, tr := range trs {
				v += tr.logm(s)
			}
			return v
		},
		lo: lo, hi: hi, err: e,
	}, true
}

func (l expSmoothed) String() string {
	return fmt.Sprintf("Sum(%d exponential(s) + %v + %d-atom discrete: %s)", len(l.rates), l.c, l.d.Len(), summary(l))
}

// expSmoothedDensity is an expSmoothed with a density (always: the
// exponential part has one).
type expSmoothedDensity struct{ expSmoothed }

// Density returns Σ_i p_i·Σ_j c_j·λ_j·g_j(x - v_i) (NaN for NaN x).
func (l expSmoothedDensity) Density(x float64) float64 {
	lo, hi := l.Support()
	switch {
	case math.IsNaN(x):
		return x
	case x < lo || x > hi || math.IsInf(x, 0):
		return 0
	}
	f := 0.0
	ps := l.d.probs()
	for i, v := range l.d.values() {
		y := x - v
		for j, r := range l.rates {
			f += ps[i] * l.coef[j] * r * l.g(r, y)
		}
	}
	return max(0, f)
}
