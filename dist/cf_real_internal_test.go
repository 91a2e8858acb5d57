package dist

import (
	"math"
	"math/big"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
)

// TestComplexHelpersShortcuts: clog1p on the real axis and sinhcm1's
// part-by-part quotients give the bits of the formulas they shortcut,
// log|1 + z| + i·arg(1 + z) as ½·log1p(2x + x² + y²) + i·atan2(y, 1 + x)
// and the series with Go's complex division by c + 0i (Smith's algorithm,
// Commun. ACM 5(8): 435, 1962; the language's own operator is the oracle);
// cexpm1 gives the bits of Expm1 on the axis, and off it (cos b − 1 as
// −sin²b/(1 + cos b)) each part within 4ε of the sizes of its terms of
// e^z − 1 by its power series Σ z^n/n! in 256-bit arithmetic (the
// definition of exp). 2000 points a helper, fixed seed, inside each
// branch's domain, and the axis (imaginary part ±0) where it is shortcut.
func TestComplexHelpersShortcuts(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 1))
	// e^z − 1 = Σ_{n>=1} z^n/n! for |z| < √2, to 80 terms (the rest below
	// 2^-300), real and imaginary parts in 256-bit floats
	expm1Ref := func(z complex128) (re, im float64) {
		const prec = 256
		nf := func(x float64) *big.Float { return new(big.Float).SetPrec(prec).SetFloat64(x) }
		a, b := nf(real(z)), nf(imag(z))
		tr, ti := nf(1), nf(0) // z^n/n!
		sr, si := nf(0), nf(0)
		for n := 1; n <= 80; n++ {
			// (tr + i·ti)·(a + i·b)/n
			r := new(big.Float).SetPrec(prec).Sub(new(big.Float).SetPrec(prec).Mul(tr, a), new(big.Float).SetPrec(prec).Mul(ti, b))
			i := new(big.Float).SetPrec(prec).Add(new(big.Float).SetPrec(prec).Mul(tr, b), new(big.Float).SetPrec(prec).Mul(ti, a))
			tr.Quo(r, nf(float64(n)))
			ti.Quo(i, nf(float64(n)))
			sr.Add(sr, tr)
			si.Add(si, ti)
		}
		re, _ = sr.Float64()
		im, _ = si.Float64()
		return re, im
	}
	log1pRef := func(z complex128) complex128 {
		x, y := real(z), imag(z)
		return complex(0.5*math.Log1p(2*x+x*x+y*y), math.Atan2(y, 1+x))
	}
	sinhcRef := func(z complex128) complex128 {
		z2 := z * z
		term := z2 / 6
		sum := term
		for n := 2; n <= 8; n++ {
			term *= z2 / complex(float64((2*n)*(2*n+1)), 0)
			sum += term
		}
		return sum
	}
	same := func(want, got complex128) bool {
		return math.Float64bits(real(want)) == math.Float64bits(real(got)) &&
			(imag(want) == imag(got) || (imag(want) == 0 && imag(got) == 0))
	}
	for i := range 2000 {
		u := 2*r.Float64() - 1
		axis := i%2 == 0
		zero := 0.0
		if i%4 == 0 {
			zero = math.Copysign(0, -1)
		}
		ze := complex(0.999*u, 0.999*(2*r.Float64()-1))
		zl := complex(0.499*u, 0.499*(2*r.Float64()-1))
		zs := cmplx.Rect(0.499*r.Float64(), 2*math.Pi*r.Float64())
		if axis {
			ze, zl, zs = complex(real(ze), zero), complex(real(zl), zero), complex(real(zs), zero)
		}
		got := cexpm1(ze)
		if axis {
			assert.True(t, same(complex(math.Expm1(real(ze)), imag(ze)), got), "cexpm1(%v)", ze)
		} else {
			re, im := expm1Ref(ze)
			a, b := real(ze), imag(ze)
			em, sb := math.Expm1(a), math.Sin(b)
			const eps = 0x1p-52
			assert.InDelta(t, re, real(got), 4*eps*(math.Abs(em)+sb*sb), "Re cexpm1(%v)", ze)
			assert.InDelta(t, im, imag(got), 4*eps*math.Abs((em+1)*sb), "Im cexpm1(%v)", ze)
		}
		assert.True(t, same(log1pRef(zl), clog1p(zl)), "clog1p(%v)", zl)
		assert.True(t, same(sinhcRef(zs), sinhcm1(zs)), "sinhcm1(%v)", zs)
	}
}
