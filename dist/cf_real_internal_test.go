package dist

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
)

// TestComplexHelpersShortcuts: cexpm1 and clog1p on the real axis, and
// sinhcm1's part-by-part quotients, give the bits of the formulas they
// shortcut: exp(a)·(cos b + i·sin b) − 1 as em·cos b − 2·sin²(b/2) +
// i·(em + 1)·sin b, log|1 + z| + i·arg(1 + z) as ½·log1p(2x + x² + y²) +
// i·atan2(y, 1 + x), and the series with Go's complex division by c + 0i
// (Smith's algorithm, Commun. ACM 5(8): 435, 1962; the language's own
// operator is the oracle). 2000 points a helper, fixed seed, inside each
// branch's domain, and the axis (imaginary part ±0) where it is shortcut.
func TestComplexHelpersShortcuts(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 1))
	expm1Ref := func(z complex128) complex128 {
		a, b := real(z), imag(z)
		sb, cb := math.Sincos(b)
		sh := math.Sin(b / 2)
		em := math.Expm1(a)
		return complex(em*cb-2*sh*sh, (em+1)*sb)
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
		assert.True(t, same(expm1Ref(ze), cexpm1(ze)), "cexpm1(%v)", ze)
		assert.True(t, same(log1pRef(zl), clog1p(zl)), "clog1p(%v)", zl)
		assert.True(t, same(sinhcRef(zs), sinhcm1(zs)), "sinhcm1(%v)", zs)
	}
}
