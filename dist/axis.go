package dist

import (
	"math"
	"math/cmplx"
)

// Transforms on the equally spaced axis points s = i·k·h, for the series of
// a Sum (see invert.go). The atoms of a finite discrete law rotate:
// exp(i·(k+1)·h·v) = exp(i·k·h·v)·exp(i·h·v), so their transform at
// axisBlock consecutive points costs one Sincos per atom and a complex
// multiplication per point and atom instead of a complex exponential.
// The rotation is restarted from Sincos at each block. Each step's complex
// product has relative error at most √5·2^-53 (Brent, Percival &
// Zimmermann, Math. Comp. 76, 2007) and the rotation factor itself at most
// 2^-53, so after j < axisBlock = 32 steps an atom's term is off by at most
// 32·3.4·2^-53 ≈ 1.2e-14 of its mass from the rounding of the products;
// summed over atoms of total mass 1, with the summation's rounding, that is
// at most axisErr = 2e-14. The phase carries in addition the rounding of
// its argument: k0·h·v at the block start (two roundings) and j times that
// of h·v in the steps, at most 2^-52·|t|·max|v| in all at t = k·h; the
// stated bound takes twice that, axisPhase·|t|·max|v|. It is used only by
// Sum (whose transform is exponentiated once), not by SumIID (which raises
// it to the power k and needs M - 1 to relative precision).

const (
	axisBlock = 32
	axisErr   = 2e-14   // absolute error of a discrete law's axis value from products
	axisPhase = 4.4e-16 // phase error per unit of |t|·max|v|
)

// axisAdder adds log M(i·k·h) of one law to out[j], k = k0 + j.
type axisAdder func(h float64, k0 int, out []complex128)

// discreteAxis returns the axis adder of a finite discrete law and the
// largest |value| of its atoms.
func discreteAxis(d Discrete) (axisAdder, float64) {
	vs, ps := d.values, d.probs
	var vmax float64
	for _, v := range vs {
		vmax = math.Max(vmax, math.Abs(v))
	}
	return func(h float64, k0 int, out []complex128) {
		var m [axisBlock]complex128
		n := min(len(out), axisBlock)
		for i, v := range vs {
			zi, zr := math.Sincos(float64(k0) * h * v)
			s1, c1 := math.Sincos(h * v)
			p := ps[i]
			for j := 0; j < n; j++ {
				m[j] += complex(p*zr, p*zi)
				zr, zi = zr*c1-zi*s1, zr*s1+zi*c1
			}
		}
		for j := 0; j < n; j++ {
			out[j] += cmplx.Log(m[j])
		}
	}, vmax
}

// logmAdder returns the adder that evaluates tr.logm point by point.
func logmAdder(tr transform) axisAdder {
	return func(h float64, k0 int, out []complex128) {
		for j := range out {
			out[j] += tr.logm(complex(0, float64(k0+j)*h))
		}
	}
}

// axisAdderOf returns the axis adder of a non-discrete part of a Sum: real
// closed forms on the axis for the uniform, gamma, exponential and normal
// laws (the same closed forms as cf.go, written for s = i·t, to rounding),
// tr.logm point by point otherwise.
//
//	uniform on m ± w:  log M(it) = i·t·m + log(sin(t·w)/(t·w))
//	gamma(k, λ):       log M(it) = -k/2·log1p((t/λ)²) + i·k·atan(t/λ)
//	normal(μ, σ):      log M(it) = i·μ·t - σ²·t²/2
//
// (the logarithm of a negative sinc is taken as log|sinc| + iπ: only
// exp(log M) is used, so the branch does not matter).
func axisAdderOf(p Law, tr transform) axisAdder {
	switch b := p.(type) {
	case Uniform:
		w := (b.hi - b.lo) / 2
		m := b.lo + w
		return func(h float64, k0 int, out []complex128) {
			for j := range out {
				t := float64(k0+j) * h
				x := t * w
				sc := 1.0
				if x != 0 {
					sc = math.Sin(x) / x
				}
				im := t * m
				if sc < 0 {
					im += math.Pi
				}
				out[j] += complex(math.Log(math.Abs(sc)), im)
			}
		}
	case Gamma:
		return gammaAxis(b.shape, b.rate)
	case Exponential:
		return gammaAxis(1, b.rate)
	case Normal:
		return func(h float64, k0 int, out []complex128) {
			for j := range out {
				t := float64(k0+j) * h
				out[j] += complex(-0.5*b.sigma*b.sigma*t*t, b.mu*t)
			}
		}
	}
	return logmAdder(tr)
}

func gammaAxis(k, rate float64) axisAdder {
	return func(h float64, k0 int, out []complex128) {
		for j := range out {
			u := float64(k0+j) * h / rate
			out[j] += complex(-0.5*k*math.Log1p(u*u), k*math.Atan(u))
		}
	}
}
