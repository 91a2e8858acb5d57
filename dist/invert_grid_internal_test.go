package dist

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/dsp/fourier"
)

func TestFFT2AgainstGonum(t *testing.T) {
	// oracle: gonum dsp/fourier CmplxFFT.Coefficients (the same DFT sign
	// convention, Σ x_j·exp(-2πi·jr/N))
	r := rand.New(rand.NewPCG(3, 4))
	for _, n := range []int{8, 12, 24, 32, 48, 96, 1024, 2048, 3072, 4096, 6144, 8192} {
		x := make([]complex128, n)
		for i := range x {
			x[i] = complex(r.NormFloat64(), r.NormFloat64())
		}
		want := fourier.NewCmplxFFT(n).Coefficients(nil, x)
		got := append([]complex128(nil), x...)
		fft2(got, twiddles(n))
		tol := 1e-15 * math.Sqrt(float64(n)) * math.Log2(float64(n)) * 4
		for i := range got {
			require.LessOrEqual(t, cmplx.Abs(got[i]-want[i]), tol, "n=%d i=%d", n, i)
		}
	}
}

func TestDiscreteAxisWithinStatedError(t *testing.T) {
	// oracle: the transform Σ p·exp(i·t·v) summed directly with
	// math.Sincos per atom and point (the definition); atom counts that
	// are and are not multiples of the four taken at a time
	laws := []Discrete{
		MustDiscrete([]float64{10, 12, 15, 21, 30, 44, 0.3, 57.25}, []float64{0.2, 0.2, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1}),
		MustDiscrete([]float64{-3, 0.5, 2, 7.75, 11, 19, 23}, []float64{0.1, 0.2, 0.1, 0.2, 0.1, 0.2, 0.1}),
		MustDiscrete([]float64{4.5}, []float64{1}),
	}
	for _, d := range laws {
		checkDiscreteAxis(t, d)
	}
}

func checkDiscreteAxis(t *testing.T, d Discrete) {
	t.Helper()
	add, vmax := discreteAxis(d)
	for _, h := range []float64{0.0627, 0.9, 3.1} {
		for _, k0 := range []int{1, 33, 2049} {
			out := make([]complex128, axisBlock)
			add(h, k0, out)
			for j, lm := range out {
				var want complex128
				ps := d.probs()
				for i, v := range d.values() {
					s, c := math.Sincos(float64(k0+j) * h * v)
					want += complex(ps[i]*c, ps[i]*s)
				}
				// stated bound, plus the oracle's own argument rounding
				// (2^-53·|t·v| twice)
				tt := float64(k0+j) * h
				tol := axisErr + axisPhase*tt*vmax + 2.3e-16*tt*vmax
				assert.LessOrEqual(t, cmplx.Abs(cmplx.Exp(lm)-want), tol, "%d atoms h=%v k=%d", d.Len(), h, k0+j)
			}
		}
	}
}

func TestQuinticHermiteReproducesQuintics(t *testing.T) {
	// a quintic Hermite interpolant is exact for polynomials of degree <= 5
	// (the defining property of the basis)
	p := func(x float64) (float64, float64, float64) {
		return 1 + x - 2*x*x + 0.5*x*x*x - 0.1*x*x*x*x + 0.03*x*x*x*x*x,
			1 - 4*x + 1.5*x*x - 0.4*x*x*x + 0.15*x*x*x*x,
			-4 + 3*x - 1.2*x*x + 0.6*x*x*x
	}
	g := &cdfGrid{y0: -1, dy: 0.5}
	for r := 0; r < 6; r++ {
		v, d, d2 := p(-1 + 0.5*float64(r))
		g.v, g.w = append(g.v, complex(v, d*g.dy)), append(g.w, complex(d2*g.dy*g.dy, 0))
	}
	for _, x := range []float64{-1, -0.9, -0.26, 0.1, 0.77, 1.3, 1.49} {
		want, _, _ := p(x)
		assert.InDelta(t, want, g.at(x), 1e-13, "x=%v", x)
	}
}

func TestSixTermGridWithinBound(t *testing.T) {
	// the grid of the six-term sum against its own series at points off the
	// grid: the measured midpoint error (in Accuracy) must bound it
	d6 := MustDiscrete([]float64{10, 12, 15, 21, 30, 44}, []float64{0.3, 0.25, 0.2, 0.12, 0.08, 0.05})
	d3 := MustDiscrete([]float64{0, 4.5, 9}, []float64{0.7, 0.2, 0.1})
	tn, err := NewTruncated(MustNormal(3, 1.5), 0, math.Inf(1))
	require.NoError(t, err)
	l, err := Sum(d6, d3, tn, MustUniform(1, 2.5), MustGamma(2.5, 1.2), MustExponential(0.8))
	require.NoError(t, err)
	nl := l.(*numLaw)
	g := nl.buildGrid()
	require.NotNil(t, g)
	require.LessOrEqual(t, g.err, gridMaxErr)
	r := rand.New(rand.NewPCG(5, 6))
	var worst float64
	for i := 0; i < 2000; i++ {
		y := nl.a + r.Float64()*(nl.b-nl.a)
		worst = math.Max(worst, math.Abs(g.at(y)-nl.bulkCDF(y)))
	}
	assert.LessOrEqual(t, worst, 2*g.err+g.round+1e-15)
}

func TestAxisAddersAgainstTransforms(t *testing.T) {
	// oracle: the complex closed forms of cf.go (exp of transformOf's logm),
	// which are tested against gonum's laws elsewhere; relative agreement
	tn, err := NewTruncated(MustNormal(3, 1.5), 0, math.Inf(1))
	require.NoError(t, err)
	laws := []Law{MustUniform(1, 2.5), MustUniform(-3, 7), MustGamma(2.5, 1.2), MustExponential(0.8), MustNormal(-2, 0.7), tn}
	for _, l := range laws {
		tr, ok := transformOf(l)
		require.True(t, ok)
		add := axisAdderOf(l, tr)
		for _, h := range []float64{0.0627, 0.9} {
			for _, k0 := range []int{1, 65, 1025} {
				out := make([]complex128, axisBlock)
				add(h, k0, out)
				for j, lm := range out {
					want := cmplx.Exp(tr.logm(complex(0, float64(k0+j)*h)))
					got := cmplx.Exp(lm)
					// relative 1e-14, plus the argument rounding both sides
					// carry at large t (sin(x)/x off by a few 2^-53·|x|/|x|
					// absolute; the oracle forms exp(x + log(…) - log x),
					// so 9·2^-53 ≈ 1e-15 for the two)
					assert.LessOrEqual(t, cmplx.Abs(got-want), 1e-14*cmplx.Abs(want)+1e-15, "%v h=%v k=%d", l, h, k0+j)
				}
			}
		}
	}
}

func TestChernoffEndNormalAndGamma(t *testing.T) {
	// closed forms: a centred normal has K(θ) = σ²θ²/2, whose Chernoff
	// bound min (K + c)/θ is σ·√(2c) (at θ = √(2c)/σ); a centred
	// exponential of rate λ has K(θ) = -log(1 - θ/λ) - θ/λ, minimised
	// numerically here on a fine grid of θ (an independent brute force).
	// The search must return a bound (never below the minimum) within 1e-6
	// of it.
	for _, sigma := range []float64{1e-3, 1, 7, 1e4} {
		for _, eps := range []float64{1e-5, 1e-14, 1e-60} {
			c := -math.Log(eps)
			want := sigma * math.Sqrt(2*c)
			logm := func(s complex128) complex128 { return complex(sigma*sigma/2, 0) * s * s }
			got := chernoffEnd(logm, math.Inf(1), sigma, eps)
			assert.GreaterOrEqual(t, got, want*(1-1e-15), "σ=%g eps=%g", sigma, eps)
			assert.LessOrEqual(t, got, want*(1+1e-6), "σ=%g eps=%g", sigma, eps)
		}
	}
	for _, rate := range []float64{0.8, 5} {
		eps := 1e-14
		c := -math.Log(eps)
		K := func(th float64) float64 { return -math.Log1p(-th/rate) - th/rate }
		want := math.Inf(1)
		for i := 1; i < 2000000; i++ {
			th := rate * float64(i) / 2000000
			want = math.Min(want, (K(th)+c)/th)
		}
		logm := func(s complex128) complex128 { return -cmplx.Log(1-s/complex(rate, 0)) - s/complex(rate, 0) }
		got := chernoffEnd(logm, rate, 1/rate, eps)
		assert.InEpsilon(t, want, got, 1e-6, "rate %g", rate)
		assert.GreaterOrEqual(t, got, want*(1-1e-12), "rate %g", rate)
	}
}

func TestLogOfAgainstCmplxLog(t *testing.T) {
	// oracle: math/cmplx.Log (the hypotenuse form); logOf may differ by
	// the rounding of the squared modulus, 1.2e-16 in the real part
	for _, z := range []complex128{1, -1, complex(0, 1), complex(0.3, -0.4), complex(-2e-5, 3e-7),
		complex(1e-160, 1e-161), complex(1e200, -3e199), complex(-0.999999, 1e-9), complex(0, -1e-300)} {
		got, want := logOf(z), cmplx.Log(z)
		assert.InDelta(t, real(want), real(got), 2.3e-16*math.Max(1, math.Abs(real(want))), "%v", z)
		assert.InDelta(t, imag(want), imag(got), 4.5e-16*math.Max(1, math.Abs(imag(want))), "%v", z)
	}
}
