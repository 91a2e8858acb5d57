package dist

import (
	"math"
	"math/cmplx"
)

// truncExpTransform is the transform of an exponential law of rate λ
// conditioned on [lo, hi], in closed form: with a = max(lo, 0), w = hi − a
// and r = λ − s (Re r > 0 on the strip),
//
//	M(s) = (λ/P)·e^{−r·a}·(1 − e^{−r·w})/r,   P = P(lo <= X <= hi),
//
// taken in logs, 1 − e^{−r·w} as −expm1(−r·w) so that a short interval or a
// small r keeps its digits. The quadrature of truncGammaTransform, which it
// replaces for shape 1, needs panels of at most six radians of phase: its
// cost grows with |Im s|·(hi − lo), and the inversion of a law whose
// density jumps at the cut (so that its transform decays only as 1/|s|)
// asks for the transform far out, which took minutes for a k-fold sum of a
// truncated exponential mixed with an atom (a cell's life cut at its
// calendar limit). Stated error 1e-14 relative (rounding).
func truncExpTransform(t truncated, rate float64) transform {
	a := max(t.lo, 0)
	w := t.hi - a
	logC := math.Log(rate) - math.Log(t.mass)
	return transform{
		logm: func(s complex128) complex128 {
			r := complex(rate, 0) - s
			var frac complex128 // (1 − e^{−r·w})/r
			if math.IsInf(w, 1) {
				frac = 1 / r
			} else {
				frac = -expm1c(-r*complex(w, 0)) / r
			}
			return complex(logC, 0) - r*complex(a, 0) + cmplx.Log(frac)
		},
		lo: math.Inf(-1), hi: rate, err: 1e-14,
	}
}

// expm1c returns e^z − 1 for complex z = x + iy without cancellation near
// 0: Re = expm1(x)·cos y − 2·sin²(y/2), Im = e^x·sin y.
func expm1c(z complex128) complex128 {
	x, y := real(z), imag(z)
	s, c := math.Sincos(y)
	h := math.Sin(y / 2)
	return complex(math.Expm1(x)*c-2*h*h, math.Exp(x)*s)
}
