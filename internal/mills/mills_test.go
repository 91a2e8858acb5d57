package mills

import (
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/fexp"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// oracleErfc is R(x) = Φ̄(x)/φ(x) from the Go standard library's erfc (the
// fdlibm algorithm, under 1 ulp) and φ with its exponent split exactly:
// x² = z² + (x − z)(x + z) with z = x rounded to 24 bits, so z² and z²/2
// are exact in float64 and only the small remainder is rounded.
func oracleErfc(x float64) float64 {
	z := float64(float32(x))
	phi := math.Exp(-0.5*z*z) * math.Exp(-0.5*(x-z)*(x+z)) / math.Sqrt(2*math.Pi)
	return 0.5 * math.Erfc(x/math.Sqrt2) / phi
}

// oracleCF is Laplace's continued fraction for Mills' ratio,
// R(x) = 1/(x + 1/(x + 2/(x + 3/(x + …)))) (Abramowitz and Stegun,
// Handbook of Mathematical Functions, 26.2.14), summed from the bottom
// with n terms: the error falls about as e^{−2x√n} (e^{−76} at x = 0.6
// with 4000 terms, e^{−126} at x = 0.2 with 10^5).
func oracleCF(x float64, n int) float64 {
	t := x
	for k := n; k >= 1; k-- {
		t = x + float64(k)/t
	}
	return 1 / t
}

func TestRatioAgainstErfc(t *testing.T) {
	// Where Φ̄(x) is far from float64's subnormal range the erfc oracle holds
	// (x up to 35: Φ̄(35) is about 1e-268; near 37.5 Φ̄ turns subnormal and
	// the oracle loses digits);
	// beyond, the continued fraction takes over (next test).
	worst, at := 0.0, 0.0
	for i := 0; i <= 350000; i++ {
		x := float64(i) * 1e-4
		got, want := Ratio(x), oracleErfc(x)
		// The oracle's own error: x/√2 is rounded (relative 2^-53), which
		// moves erfc by up to 2·(x/√2)²·2^-53 = x²·2^-53 relative, and
		// fdlibm's erfc rounds its exponent −y² − 0.5625 (about
		// y²·2^-53 = x²/2·2^-53 more): 2·x²·2^-53 in all. The continued
		// fraction below has no such term and is the tight check.
		e := math.Abs(got-want) / want / (MaxRelErr + 2*x*x*0x1p-53)
		if e > worst {
			worst, at = e, x
		}
	}
	t.Logf("largest relative difference from erfc over [0, 35]: %.3g of MaxRelErr + the oracle's rounding, at x = %g", worst, at)
	assert.LessOrEqual(t, worst, 1.0)
}

func TestRatioAgainstContinuedFraction(t *testing.T) {
	worst, at := 0.0, 0.0
	for i := 0; i <= 39800; i++ {
		x := 0.2 + float64(i)*1e-3
		n := 4000
		if x < 0.6 {
			n = 100000
		}
		got, want := Ratio(x), oracleCF(x, n)
		e := math.Abs(got-want) / want
		if e > worst {
			worst, at = e, x
		}
	}
	t.Logf("largest relative difference from the continued fraction over [0.2, 40]: %.3g at x = %g", worst, at)
	assert.LessOrEqual(t, worst, MaxRelErr)
}

func TestUpperAgainstOracles(t *testing.T) {
	// Φ̄ from erfc (the Go standard library, under 1 ulp, plus the
	// rounding of x/√2: x²·2^-53) and, for x >= 0.6, φ·R from the
	// continued fraction with φ's exponent split exactly.
	worst, at := 0.0, 0.0
	for i := -24000; i <= 24000; i++ {
		x := float64(i) * 5e-4
		got := Upper(x)
		want := 0.5 * math.Erfc(x/math.Sqrt2)
		tol := UpperMaxRelErr + x*x*0x1p-53
		if x >= 0.6 {
			z := float64(float32(x))
			want = math.Exp(-0.5*z*z) * math.Exp(-0.5*(x-z)*(x+z)) / math.Sqrt(2*math.Pi) * oracleCF(x, 4000)
			tol = UpperMaxRelErr
			if math.Abs(x) >= upperDirect {
				tol += 2 * x * x * 0x1p-53 // erfc's own (see Upper)
			}
		}
		if e := math.Abs(got-want) / want / tol; e > worst {
			worst, at = e, x
		}
	}
	t.Logf("Upper: largest relative difference %.3g of its tolerance, at x = %g", worst, at)
	assert.LessOrEqual(t, worst, 1.0)
	for _, x := range []float64{math.Inf(1), math.Inf(-1), 40} {
		assert.Equal(t, 0.5*math.Erfc(x/math.Sqrt2), Upper(x), "x = %g", x)
	}
	assert.True(t, math.IsNaN(Upper(math.NaN())))
}

// TestAgainstPreciseTable: Upper and Ratio against testref.NormalUpperTail,
// Q(z) computed at 1600-bit precision (Abramowitz and Stegun 7.1.6 with
// math/big; each entry the float64 nearest the exact value) at z = 0 to
// 37.5. The points are integers or halves, so z² is exact and φ(z) is
// within one rounding of its exponential: Ratio within MaxRelErr + 2^-52
// of Q/φ, Upper within UpperMaxRelErr inside ±9 and erfc's own error
// (testref.NormalTailTol) beyond.
func TestAgainstPreciseTable(t *testing.T) {
	for _, pt := range testref.NormalUpperTail {
		tol := UpperMaxRelErr
		if pt.Z >= upperDirect {
			tol = testref.NormalTailTol(pt.Z)
		}
		assert.LessOrEqual(t, testref.RelErr(Upper(pt.Z), pt.Q), tol, "Upper(%v)", pt.Z)
		phi := math.Exp(-0.5*pt.Z*pt.Z) / math.Sqrt(2*math.Pi)
		assert.LessOrEqual(t, testref.RelErr(Ratio(pt.Z), pt.Q/phi), MaxRelErr+0x1p-52, "Ratio(%v)", pt.Z)
	}
}

// TestUpperDensity: UpperDensity gives Upper's bits and the density
// e^{−x²/2}/√(2π) (the textbook formula, common practice) bit for bit as
// fexp.Exp(−x²/2)/√(2π), across both of Upper's branches and their edges;
// against the formula with the standard library's math.Exp (under one
// unit in the last place, as documented) within that unit, fexp's
// MaxRelErr and the division's rounding; and so, through Upper, the
// 1600-bit table's tail values within UpperMaxRelErr.
func TestUpperDensity(t *testing.T) {
	xs := []float64{0, SmallX, math.Nextafter(SmallX, 0), upperDirect, math.Nextafter(upperDirect, 0), 40, math.Inf(1)}
	for i := -24000; i <= 24000; i += 7 {
		xs = append(xs, float64(i)*5e-4)
	}
	for _, x := range append(xs, negate(xs)...) {
		u, d := UpperDensity(x)
		assert.Equal(t, math.Float64bits(Upper(x)), math.Float64bits(u), "upper at x = %g", x)
		assert.Equal(t, math.Float64bits(fexp.Exp(-0.5*x*x)/math.Sqrt(2*math.Pi)), math.Float64bits(d), "density at x = %g", x)
		std := math.Exp(-0.5*x*x) / math.Sqrt(2*math.Pi)
		assert.InDelta(t, std, d, (0x1p-52+fexp.MaxRelErr+0x1p-52)*std, "density at x = %g against math.Exp", x)
	}
	for _, pt := range testref.NormalUpperTail {
		if pt.Z >= upperDirect {
			continue
		}
		u, _ := UpperDensity(pt.Z)
		assert.LessOrEqual(t, testref.RelErr(u, pt.Q), UpperMaxRelErr, "UpperDensity(%v)", pt.Z)
	}
	u, d := UpperDensity(math.NaN())
	assert.True(t, math.IsNaN(u) && math.IsNaN(d))
}

func negate(xs []float64) []float64 {
	out := make([]float64, len(xs))
	for i, x := range xs {
		out[i] = -x
	}
	return out
}

func TestRatioEdges(t *testing.T) {
	tests := []struct {
		name string
		x    float64
		want float64
		tol  float64
	}{
		// R(0) = Φ̄(0)/φ(0) = (1/2)·√(2π) = √(π/2) (closed form).
		{"zero", 0, math.Sqrt(math.Pi / 2), 1e-16},
		// The turn from erfc to Cody's ratio is continuous (both sides
		// within MaxRelErr of the oracle).
		{"below the turn", math.Nextafter(SmallX, 0), oracleErfc(math.Nextafter(SmallX, 0)), MaxRelErr},
		{"at the turn", SmallX, oracleErfc(SmallX), MaxRelErr},
		// R(x)·x → 1: at x = 1e9 the next term, −1/x², is 1e-18.
		{"huge", 1e9, 1e-9, 1e-15},
		{"beyond Cody's cut", 2e8, 5e-9, 1e-15},
		{"infinite", math.Inf(1), 0, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := Ratio(tc.x)
			if tc.want == 0 {
				assert.Equal(t, 0.0, got)
				return
			}
			assert.InDelta(t, 1, got/tc.want, tc.tol)
		})
	}
	for _, x := range []float64{-1e-300, -1, math.Inf(-1), math.NaN()} {
		require.True(t, math.IsNaN(Ratio(x)), "x = %g", x)
	}
}

func BenchmarkRatio(b *testing.B) {
	s := 0.0
	for b.Loop() {
		for x := 0.7; x < 9; x += 0.5 {
			s += Ratio(x)
		}
	}
	_ = s
}

func BenchmarkErfc(b *testing.B) {
	s := 0.0
	for b.Loop() {
		for x := 0.7; x < 9; x += 0.5 {
			s += 0.5 * math.Erfc(x/math.Sqrt2)
		}
	}
	_ = s
}

// bigCF is Laplace's continued fraction for Mills' ratio (Abramowitz and
// Stegun 26.2.14, as oracleCF) at 256 bits, summed from the bottom with n
// terms.
func bigCF(x float64, n int) *big.Float {
	const prec = 256
	bx := new(big.Float).SetPrec(prec).SetFloat64(x)
	t := new(big.Float).SetPrec(prec).Set(bx)
	k := new(big.Float).SetPrec(prec)
	for i := n; i >= 1; i-- {
		k.SetInt64(int64(i))
		t.Quo(k, t)
		t.Add(t, bx)
	}
	return t.Quo(new(big.Float).SetPrec(prec).SetInt64(1), t)
}

// TestRatioPolyAgainstBigCF checks Ratio on every piece of ratioPoly (its
// two ends, the float64 just below its end and 24 points between) against
// Laplace's continued fraction at 256 bits (bigCF) with 1600/x² + 60
// terms, whose truncation error falls about as e^{−2x√n} (under e^{−80}
// here; checked on every eighth point against twice the terms, to
// 1e-30): within ratioPolyErr relative, a bound kept with room over the
// largest measured (see the log).
func TestRatioPolyAgainstBigCF(t *testing.T) {
	worst, at := 0.0, 0.0
	for i := range ratioPoly {
		a := math.Float64frombits(uint64(ratioKeyLo+i) << 48)
		b := math.Float64frombits(uint64(ratioKeyLo+i+1) << 48)
		xs := []float64{a, math.Nextafter(b, 0)}
		for j := 1; j < 25; j++ {
			xs = append(xs, a+(b-a)*float64(j)/25)
		}
		for j, x := range xs {
			if x < SmallX {
				continue
			}
			n := int(1600/(x*x)) + 60
			want := bigCF(x, n)
			if j%8 == 0 {
				twice := bigCF(x, 2*n)
				d, _ := new(big.Float).Quo(new(big.Float).Sub(want, twice), want).Float64()
				require.LessOrEqualf(t, math.Abs(d), 1e-30, "the oracle at x = %v", x)
			}
			w, _ := want.Float64()
			d, _ := new(big.Float).Quo(new(big.Float).Sub(new(big.Float).SetFloat64(Ratio(x)), want), want).Float64()
			if math.Abs(d) > worst {
				worst, at = math.Abs(d), x
			}
			require.LessOrEqualf(t, math.Abs(d), ratioPolyErr, "Ratio(%v) = %v, want %v", x, Ratio(x), w)
		}
	}
	t.Logf("largest relative error of the pieces' polynomials against the continued fraction: %.3g at x = %v", worst, at)
}

// TestRatioTailAgainstBigCF: from 64 on, where Ratio takes Cody's
// asymptotic form, against the continued fraction at 256 bits (bigCF, 100
// terms: its truncation error below e^{−1280}) on 2000 points spread
// logarithmically over [64, 1e9]: within MaxRelErr relative.
func TestRatioTailAgainstBigCF(t *testing.T) {
	worst := 0.0
	for i := range 2001 {
		x := 64 * math.Pow(1e9/64, float64(i)/2000)
		want := bigCF(x, 100)
		d, _ := new(big.Float).Quo(new(big.Float).Sub(new(big.Float).SetFloat64(Ratio(x)), want), want).Float64()
		worst = math.Max(worst, math.Abs(d))
		require.LessOrEqualf(t, math.Abs(d), MaxRelErr, "Ratio(%v)", x)
	}
	t.Logf("largest relative error from 64 on: %.3g", worst)
}
