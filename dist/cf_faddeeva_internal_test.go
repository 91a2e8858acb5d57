package dist

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/assert"
)

// laplaceCF is the Laplace continued fraction of the Faddeeva function,
// w(z) = (i/√π)/(z - (1/2)/(z - 1/(z - (3/2)/(z - …)))), Im z > 0 (Abramowitz
// & Stegun 7.1.4 — from memory), summed from 200 levels down; for |z| > 8 it
// has converged to rounding.
func laplaceCF(z complex128) complex128 {
	f := z
	for n := 200; n >= 1; n-- {
		f = z - complex(float64(n)/2, 0)/f
	}
	return complex(0, 1/math.Sqrt(math.Pi)) / f
}

func TestFaddeevaUpper(t *testing.T) {
	// imaginary axis: w(iy) = exp(y²)·erfc(y) (Go's math.Erfc)
	for y := 0.0; y < 20; y += 0.37 {
		want := math.Exp(y*y) * math.Erfc(y)
		got := faddeevaUpper(complex(0, y))
		assert.LessOrEqual(t, cmplx.Abs(got-complex(want, 0))/want, 1e-13, "y=%g", y)
	}
	// real axis: Re w(x) = exp(-x²) (definition)
	for x := -8.0; x < 8; x += 0.113 {
		got := faddeevaUpper(complex(x, 0))
		assert.LessOrEqual(t, math.Abs(real(got)-math.Exp(-x*x)), 1e-13*cmplx.Abs(got), "x=%g", x)
	}
	// far from the origin: the continued fraction
	for x := -30.0; x < 30; x += 0.731 {
		for y := 0.0; y < 30; y += 0.913 {
			z := complex(x, y)
			if cmplx.Abs(z) > 8 {
				want := laplaceCF(z)
				assert.LessOrEqual(t, cmplx.Abs(faddeevaUpper(z)-want)/cmplx.Abs(want), 1e-13, "z=%v", z)
			}
		}
	}
	// the middle: w(z) = (i/π)·∫ exp(-u²)/(z - u) du for Im z > 0, by
	// 16-point Gauss–Legendre on panels of width 0.05 over |u| <= 9
	for _, z := range []complex128{complex(0.5, 0.5), complex(2, 1), complex(-3, 2), complex(1, 4), complex(5, 0.7)} {
		var sum complex128
		for a := -9.0; a < 9; a += 0.05 {
			for i, v := range glNodes {
				u := a + 0.025*(v+1)
				sum += complex(glWeights[i]*0.025*math.Exp(-u*u), 0) / (z - complex(u, 0))
			}
		}
		want := complex(0, 1/math.Pi) * sum
		assert.LessOrEqual(t, cmplx.Abs(faddeevaUpper(z)-want)/cmplx.Abs(want), 1e-12, "z=%v", z)
	}
}

func TestTruncatedNormalTransform(t *testing.T) {
	// Real s: M(θ) = exp(μθ + σ²θ²/2)·[Φ(β - σθ) - Φ(α - σθ)]/Z with Φ from
	// math.Erfc (the tilted normal is again normal: a standard result).
	phiUp := func(u float64) float64 { return math.Erfc(u/math.Sqrt2) / 2 }
	cases := []struct{ mu, sigma, lo, hi float64 }{
		{3, 1.5, 0, math.Inf(1)}, {0, 1, -1, 2}, {0, 1, 2, math.Inf(1)}, {5, 2, math.Inf(-1), 4}, {0, 1, 6, 9},
	}
	for _, c := range cases {
		tl, err := NewTruncated(MustNormal(c.mu, c.sigma), c.lo, c.hi)
		if !assert.NoError(t, err) {
			continue
		}
		tr, ok := transformOf(tl)
		assert.True(t, ok)
		a, b := (c.lo-c.mu)/c.sigma, (c.hi-c.mu)/c.sigma
		z := phiUp(a) - phiUp(b)
		for _, th := range []float64{-3, -0.5, 0, 0.2, 1, 4} {
			want := c.mu*th + c.sigma*c.sigma*th*th/2 + math.Log((phiUp(a-c.sigma*th)-phiUp(b-c.sigma*th))/z)
			got := tr.logm(complex(th, 0))
			assert.InDelta(t, want, real(got), 1e-12*math.Max(1, math.Abs(want)), "%+v θ=%g", c, th)
			assert.InDelta(t, 0, imag(got), 1e-13)
		}
		// complex s: against quadrature of the density (oscQuad)
		td := tl.(truncatedDensity)
		lo, hi := math.Max(c.lo, c.mu-12*c.sigma), math.Min(c.hi, c.mu+12*c.sigma)
		for _, tt := range []float64{0.3, 1, 5, 20} {
			q := oscQuad(lo, hi, tt, c.sigma/4, td.Density)
			got := cmplx.Exp(tr.logm(complex(0, tt)))
			assert.LessOrEqual(t, cmplx.Abs(got-q), 1e-13, "%+v t=%g", c, tt)
		}
	}
}

func TestTruncNormalEndExpansion(t *testing.T) {
	// oracle: the transform by quadrature of the truncated density
	// (oscQuad, 16-point Gauss–Legendre on short panels, over the interval
	// cut at 12 σ, in x - μ so that its phases are short, times exp(itμ));
	// the expansion must agree within its stated absolute error bound plus
	// the quadrature's rounding (1e-15) and the rounding of the phases t·μ
	// and t·x (2^-53 relative each: on |M| for t·μ, on the end terms, at most
	// 4·f(x)/(|t|·Z) each here, for t·x)
	// (used: the least number of the 10 points the expansion must answer;
	// a truncation far in the tail has a tiny mass Z, and the remainder bound
	// is relative to the whole parent, so it needs larger σ|t|)
	cases := []struct {
		mu, sigma, lo, hi float64
		used              int
	}{
		{3, 1.5, 0, math.Inf(1), 8}, {0, 1, -1, 2, 8}, {0, 1, 2, math.Inf(1), 7}, {5, 2, math.Inf(-1), 4, 8},
		{0, 1, 6, 9, 3}, {10, 0.1, 9.9, 10.3, 8}, {0, 3, -20, 1, 8},
	}
	for _, c := range cases {
		tl, err := NewTruncated(MustNormal(c.mu, c.sigma), c.lo, c.hi)
		if !assert.NoError(t, err) {
			continue
		}
		td := tl.(truncatedDensity)
		add := truncNormalAxis(c.mu, c.sigma, td.lo, td.hi, td.mass)
		lo, hi := math.Max(c.lo, c.mu-12*c.sigma), math.Min(c.hi, c.mu+12*c.sigma)
		used := 0
		for _, st := range []float64{7, 9, 10, 11, 12, 15, 20, 40, 100, 300} {
			tt := st / c.sigma
			out := make([]complex128, 1)
			add(tt, 1, out)
			got := cmplx.Exp(out[0])
			q := oscQuad(lo-c.mu, hi-c.mu, tt, c.sigma/4, func(y float64) float64 { return td.Density(y + c.mu) })
			sn, cs := math.Sincos(tt * c.mu)
			q *= complex(cs, sn)
			phase := 2.3e-16 * tt * math.Abs(c.mu) * cmplx.Abs(q)
			for _, x := range []float64{td.lo, td.hi} {
				if !math.IsInf(x, 0) {
					u := (x - c.mu) / c.sigma
					phase += 2.3e-16 * math.Abs(x) * 4 * math.Exp(-u*u/2) / (c.sigma * math.Sqrt(2*math.Pi) * td.mass)
				}
			}
			v, est, ok := newTruncSeries(c.mu, c.sigma, td.lo, td.hi, td.mass).at(tt)
			if ok {
				used++
				assert.LessOrEqual(t, est, truncEndTol+truncEndRound)
				assert.LessOrEqual(t, cmplx.Abs(v-got), 1e-15*cmplx.Abs(v)) // the adder answered by it (exp∘log)
			} else {
				est = 1e-13 * cmplx.Abs(got) // the Faddeeva form's relative error
			}
			assert.LessOrEqual(t, cmplx.Abs(got-q), est+phase+1e-15, "%+v σt=%g", c, st)
		}
		// the expansion, not the Faddeeva form, answered
		assert.GreaterOrEqual(t, used, c.used, "%+v", c)
	}
}

func TestTruncNormalLogMRealPath(t *testing.T) {
	// real s by Erfc against (a) quadrature of exp(θx)·f(x) over the
	// tilted normal's central ±12σ within the truncation (16-point
	// Gauss–Legendre on panels of σ/4, oscQuad at t = 0; the exponent
	// shifted by its value at the centre against overflow), where that
	// centre lies within 3σ of the interval and 10σ of μ (the density does
	// not underflow there); (b) the Faddeeva form
	// (reached by an imaginary part of 1e-300), which is independent of
	// Erfc, everywhere, including where the real path declines
	cases := []struct{ mu, sigma, lo, hi float64 }{
		{3, 1.5, 0, math.Inf(1)}, {0, 1, -1, 2}, {0, 1, 2, math.Inf(1)}, {5, 2, math.Inf(-1), 4}, {0, 1, 6, 9},
	}
	quad := 0
	for _, c := range cases {
		tl, err := NewTruncated(MustNormal(c.mu, c.sigma), c.lo, c.hi)
		if !assert.NoError(t, err) {
			continue
		}
		td := tl.(truncatedDensity)
		lz := math.Log(td.mass)
		for _, th := range []float64{-40, -3, -0.5, 0, 0.2, 1, 4, 30} {
			got := truncNormalLogM(complex(th, 0), c.mu, c.sigma, td.lo, td.hi, lz)
			fad := truncNormalLogM(complex(th, 1e-300), c.mu, c.sigma, td.lo, td.hi, lz)
			assert.InDelta(t, real(fad), real(got), 2e-13*math.Max(1, math.Abs(real(fad))), "%+v θ=%g Faddeeva", c, th)
			assert.Zero(t, imag(got))
			m := c.mu + c.sigma*c.sigma*th // centre of the tilted normal
			lo, hi := math.Max(td.lo, m-12*c.sigma), math.Min(td.hi, m+12*c.sigma)
			if m < td.lo-3*c.sigma || m > td.hi+3*c.sigma || !(hi > lo) || math.Abs(th*c.sigma) > 10 {
				continue
			}
			q := oscQuad(lo, hi, 0, c.sigma/4, func(x float64) float64 { return math.Exp(th*(x-m)) * td.Density(x) })
			want := math.Log(real(q)) + th*m
			assert.InDelta(t, want, real(got), 1e-13*math.Max(1, math.Abs(want)), "%+v θ=%g quadrature", c, th)
			quad++
		}
	}
	assert.GreaterOrEqual(t, quad, 20, "quadrature comparisons made")
}
