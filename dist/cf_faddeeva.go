package dist

import (
	"math"
	"math/cmplx"
)

// faddeevaN is the number of terms of Weideman's rational approximation.
const faddeevaN = 40

// faddeevaCoef and faddeevaL are the coefficients and the scale L of
// Weideman's approximation; computed once, never modified.
var faddeevaCoef, faddeevaL = faddeevaSetup(faddeevaN)

// faddeevaSetup computes the coefficients a_n, n = 1..N, of
//
//	w(z) ≈ 2·p(Z)/(L - i·z)² + 1/(√π·(L - i·z)),  Z = (L + i·z)/(L - i·z),
//	p(Z) = Σ_{n=0}^{N-1} a_{n+1}·Z^n,  L = (N/√2)^(1/2),
//
// as the cosine transform a_n = (1/2M)·Σ_{|k|<M} g(k)·cos(π·n·k/M), M = 2N,
// g(k) = exp(-t²)·(L² + t²), t = L·tan(k·π/(2M)) (J. A. C. Weideman,
// Computation of the complex error function, SIAM J. Numer. Anal. 31,
// 1994). A direct sum: it runs once, for 40 coefficients.
func faddeevaSetup(n int) ([]float64, float64) {
	m := 2 * n
	l := math.Sqrt(float64(n) / math.Sqrt2)
	c := make([]float64, n)
	for j := 1; j <= n; j++ {
		s := 0.0
		for k := -m + 1; k <= m-1; k++ {
			t := l * math.Tan(float64(k)*math.Pi/float64(2*m))
			s += math.Exp(-t*t) * (l*l + t*t) * math.Cos(math.Pi*float64(j*k)/float64(m))
		}
		c[j-1] = s / float64(2*m)
	}
	return c, l
}

// faddeevaUpper returns the Faddeeva function w(z) = exp(-z²)·erfc(-i·z)
// for Im z >= 0, by Weideman's rational approximation with N = 40 terms:
// relative error below 1e-13 on the closed upper half-plane (checked in the
// tests against exp(y²)·erfc(y) on the imaginary axis, exp(-x²) for Re w on
// the real axis, the Laplace continued fraction for |z| > 8 and quadrature of
// (i/π)·∫ exp(-u²)/(z - u) du).
func faddeevaUpper(z complex128) complex128 {
	iz := complex(-imag(z), real(z))
	d := complex(faddeevaL, 0) - iz
	zz := (complex(faddeevaL, 0) + iz) / d
	var p complex128
	for n := len(faddeevaCoef) - 1; n >= 0; n-- {
		p = p*zz + complex(faddeevaCoef[n], 0)
	}
	return 2*p/(d*d) + complex(1/math.Sqrt(math.Pi), 0)/d
}

// truncNormalLogM returns log E[exp(s·X)] for X a normal (μ, σ) truncated
// to [lo, hi] (either end may be infinite) with probability mass
// exp(logZ) = P(lo <= X <= hi) under the parent, in closed form:
//
//	M(s) = exp(μs + σ²s²/2)·[Φ(β - σs) - Φ(α - σs)]/Z,  α = (lo-μ)/σ, β = (hi-μ)/σ,
//
// with each end written through the Faddeeva function,
//
//	exp(μs + σ²s²/2)·Φc(u - σs) = ½·exp(s·c - u²/2)·w(i·(u - σs)/√2),
//
// c = μ + σu the end, used as it stands when Re(u - σs) >= 0 and through
// w(z) = 2·exp(-z²) - w(-z) otherwise (the Gaussian parts of two ends on
// the same side cancel exactly and are not formed). Terms are scaled by
// their largest exponent before they are added, so the tilted transform at
// large Re s neither overflows nor loses the answer. Relative error about
// 1e-13 (that of w), more only where the two ends' terms cancel (a
// truncation interval much narrower than σ far from μ).
func truncNormalLogM(s complex128, mu, sigma, lo, hi, logZ float64) complex128 {
	if imag(s) == 0 {
		if v, ok := truncNormalLogMReal(real(s), mu, sigma, lo, hi, logZ); ok {
			return complex(v, 0)
		}
	}
	type term struct{ lg, f complex128 }
	var ts [3]term
	n := 0
	gauss := 0
	add := func(c float64, sign float64) {
		u := (c - mu) / sigma
		switch {
		case math.IsInf(u, 1):
			return
		case math.IsInf(u, -1):
			if sign > 0 {
				gauss++
			} else {
				gauss--
			}
			return
		}
		v := complex(u, 0) - complex(sigma, 0)*s
		lg := s*complex(c, 0) - complex(u*u/2, 0)
		if real(v) >= 0 {
			ts[n] = term{lg, complex(sign/2, 0) * faddeevaUpper(complex(-imag(v), real(v))/math.Sqrt2)}
		} else {
			if sign > 0 {
				gauss++
			} else {
				gauss--
			}
			ts[n] = term{lg, complex(-sign/2, 0) * faddeevaUpper(complex(imag(v), -real(v))/math.Sqrt2)}
		}
		n++
	}
	add(lo, 1)
	add(hi, -1)
	if gauss != 0 {
		ts[n] = term{complex(mu, 0)*s + complex(sigma*sigma/2, 0)*s*s, complex(float64(gauss), 0)}
		n++
	}
	r := math.Inf(-1)
	for _, t := range ts[:n] {
		r = max(r, real(t.lg))
	}
	var sum complex128
	for _, t := range ts[:n] {
		sum += t.f * cmplx.Exp(t.lg-complex(r, 0))
	}
	return cmplx.Log(sum) + complex(r-logZ, 0)
}

// truncNormalLogMReal is truncNormalLogM for real s = θ by math.Erfc:
//
//	log M(θ) = μθ + σ²θ²/2 + log[Φ(β - σθ) - Φ(α - σθ)] - log Z,
//
// the difference taken from the tail where it does not cancel (1 - Φ(b)
// and 1 - Φ(a) when both arguments are positive, Φ when both are negative);
// relative error a few 1e-16, more only where the two ends cancel (as for
// the Faddeeva form). It declines (false) where Erfc would underflow (an
// argument beyond 36) or θ is not a number.
func truncNormalLogMReal(th, mu, sigma, lo, hi, logZ float64) (float64, bool) {
	a, b := (lo-mu)/sigma-sigma*th, (hi-mu)/sigma-sigma*th
	if math.IsNaN(a) || math.IsNaN(b) || a > 36 || b < -36 {
		return 0, false
	}
	const r = 1 / math.Sqrt2
	var p float64
	switch {
	case a >= 0:
		p = (math.Erfc(a*r) - math.Erfc(b*r)) / 2
	case b <= 0:
		p = (math.Erfc(-b*r) - math.Erfc(-a*r)) / 2
	default:
		p = 1 - (math.Erfc(b*r)+math.Erfc(-a*r))/2
	}
	if !(p > 0) {
		return 0, false
	}
	return mu*th + sigma*sigma*th*th/2 + math.Log(p) - logZ, true
}
