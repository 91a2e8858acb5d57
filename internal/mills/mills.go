// Package mills is joulelaw's one Mills' ratio of the standard normal law,
// R(x) = Φ̄(x)/φ(x): the upper tail over the density. Where a caller has
// φ(x) (or a product with it) at hand already, Φ̄(x) = φ(x)·R(x) costs a
// rational function instead of a complementary error function (whose
// evaluation takes two exponentials of its own). Package energy's floor
// integral uses it at each quadrature node where it computes the normal
// density for its gradient anyway. A pure function: safe for concurrent
// use.
//
// For SmallX <= x < 64 R is a polynomial of degree 9 on each of the
// pieces of that range, sixteen of equal length to an octave (ratioPoly:
// Chebyshev interpolants computed with mpmath at 50 digits, within
// ratioPolyErr as evaluated): an index from x's leading bits and Horner's
// steps, no division. From 64 on R = √(π/2)·erfcx(x/√2), with
// erfcx(y) = e^{y²}·erfc(y) the scaled complementary error function, from
// W. J. Cody's rational Chebyshev approximations (W. J. Cody, "Rational
// Chebyshev approximations for the error function", Math. Comp. 23 (1969)
// 631–637; the coefficients as in his SPECFUN package, ACM TOMS 19 (1993)
// 22–32, Algorithm 715), his asymptotic form for y > 4,
// (1/√π − y⁻²·P(y⁻²)/Q(y⁻²))/y with a ratio of degree 4 in y⁻² (his ratio
// of degree 8 for 0.46875 <= y <= 4 served SmallX <= x < 5.66 before the
// pieces, at about twice their cost). Below y = 0.46875
// (x < 0.66291) R is Φ̄/φ from the standard library's erfc and exp, which
// lose nothing there (φ(x) > 0.32). The oracles:
// TestRatioPolyAgainstBigCF, Laplace's continued fraction (Abramowitz and
// Stegun 26.2.14) at 256 bits on every piece, 2.0e-16 at most;
// TestRatioAgainstContinuedFraction, the same fraction in float64, 4.7e-16
// at most over [0.2, 40] (7.7e-16 with Cody's ratios throughout, before);
// TestAgainstPreciseTable, 1600-bit values of Φ̄ (internal/testref);
// TestRatioAgainstErfc, the standard library's erfc over [0, 35], within
// MaxRelErr plus that oracle's own rounding.
package mills

import (
	"math"

	"github.com/joulelaw/joulelaw/internal/fexp"
)

// MaxRelErr bounds the relative error of Ratio on [0, 40], as measured by
// the tests against their oracles (4.7e-16 at most, below SmallX; on the
// pieces' polynomials 2.0e-16, ratioPolyErr; Cody's approximations, from
// 64 on, are themselves accurate to about 1e-18 relative).
const MaxRelErr = 1e-15

// ratioPolyErr bounds the relative error of Ratio on [0.65625, 64), the
// pieces' polynomials (ratioPoly) as evaluated, against a 256-bit oracle
// (TestRatioPolyAgainstBigCF; measured: 1.97e-16, about one unit in the
// last place: their own error is below 1.3e-18, the rest is the
// rounding of the coefficients and of Horner's steps).
const ratioPolyErr = 3e-16

// SmallX is where Ratio turns from the standard library's erfc to the
// pieces' polynomials: x = 0.46875·√2.
const SmallX = 0.46875 * math.Sqrt2

// Ratio returns Mills' ratio R(x) = Φ̄(x)/φ(x) of the standard normal law
// (dimensionless), for x >= 0, within MaxRelErr relative. R decreases
// from √(π/2) at 0 and R(x)·x → 1 as x grows. NaN for NaN or x < 0 (the
// ratio grows as e^{x²/2} there: compute Φ̄ directly instead); 0 at +Inf.
func Ratio(x float64) float64 {
	// The common case first, one comparison pair (NaN fails both): the
	// floor integral's quadrature nodes mostly lie there. Horner's form
	// in t = x − c, exact (x and c are within a factor 2 of each other).
	if x >= SmallX && x < ratioHi {
		p := &ratioPoly[math.Float64bits(x)>>48-ratioKeyLo]
		t := x - p[0]
		return ((((((((p[1]*t+p[2])*t+p[3])*t+p[4])*t+p[5])*t+p[6])*t+p[7])*t+p[8])*t+p[9])*t + p[10]
	}
	return ratioEdge(x)
}

// The pieces of ratioPoly: x in [0.65625, ratioHi) has
// math.Float64bits(x) >> 48 in [ratioKeyLo, ratioKeyHi).
const (
	ratioHi    = 64.0
	ratioKeyLo = 0x3fe5 // 0.65625 = 2^-1·(1 + 5/16)
	ratioKeyHi = 0x4050 // 64 = 2^6
)

// ratioEdge is Ratio below SmallX, from ratioHi on (Cody's asymptotic
// form, +Inf and MaxFloat64 included) and for NaN or x < 0.
func ratioEdge(x float64) float64 {
	switch {
	case math.IsNaN(x) || x < 0:
		return math.NaN()
	case math.IsInf(x, 1):
		return 0
	case x < SmallX:
		return 0.5 * math.Erfc(x/math.Sqrt2) * math.Sqrt(2*math.Pi) * math.Exp(0.5*x*x)
	}
	return math.Sqrt(math.Pi/2) * erfcx(x/math.Sqrt2)
}

// UpperMaxRelErr bounds the relative error of Upper (measured by
// TestUpperAgainstOracles, with room): the rounding of x² in φ's exponent
// adds up to x²/2 units of 2^-53 to Ratio's, and the exponential
// (internal/fexp, within fexp.MaxRelErr = 2^-52, the standard library's
// documented bound for math.Exp) and the two roundings of φ·R a few more.
const UpperMaxRelErr = 8e-15

// upperDirect is where Upper turns back to the standard library's erfc,
// whose split exponent keeps its error near one unit in the last place
// where φ's exponent would lose more: x²/2·2^-53 is 4.5e-15 at x = 9.
const upperDirect = 9.0

// Upper returns the standard normal upper tail Φ̄(x) = P(Z > x) within
// UpperMaxRelErr relative for |x| < 9, and within erfc's error beyond
// (about 2·x²·2^-53 relative: the rounding of x/√2 and of erfc's own
// exponent), as the standard library's erfc(x/√2)/2 is everywhere: for
// SmallX <= |x| < 9 as φ(|x|)·R(|x|) (one exponential, fexp.Exp, and
// Ratio's polynomial, about half the cost of erfc or less), with
// Φ̄(x) = 1 − φ(x)·R(−x) for x <= −SmallX (at least 1/2, so the
// subtraction loses nothing relative); elsewhere erfc(x/√2)/2. NaN for
// NaN.
func Upper(x float64) float64 {
	a := math.Abs(x)
	if !(a >= SmallX && a < upperDirect) {
		return 0.5 * math.Erfc(x/math.Sqrt2)
	}
	t := fexp.Exp(-0.5*a*a) / math.Sqrt(2*math.Pi) * Ratio(a)
	if x < 0 {
		return 1 - t
	}
	return t
}

// UpperDensity returns Upper(x) and the standard normal density
// φ(x) = e^{−x²/2}/√(2π) (per unit of x), the same bits as Upper and as
// that expression with fexp.Exp (within fexp.MaxRelErr of e^{−x²/2} plus
// the rounding of x² and of the division), with one exponential where
// Upper takes φ·R (SmallX <= |x| < 9) instead of two: for callers that
// need both.
func UpperDensity(x float64) (upper, density float64) {
	a := math.Abs(x)
	// (−0.5·a)·a is (−0.5·x)·x: negation is exact.
	density = fexp.Exp(-0.5*a*a) / math.Sqrt(2*math.Pi)
	if !(a >= SmallX && a < upperDirect) {
		return 0.5 * math.Erfc(x/math.Sqrt2), density
	}
	t := density * Ratio(a)
	if x < 0 {
		return 1 - t, density
	}
	return t, density
}

// erfcx is Cody's e^{y²}·erfc(y) for y >= 4, his asymptotic form with
// his coefficients written out in Horner's form (numerator over
// denominator, highest power first). Ratio takes it from x = 64
// (y = 45.3) on.
func erfcx(y float64) float64 {
	const invSqrtPi = 0.56418958354775628695 // 1/√π
	if y >= 6.71e7 {
		// y⁻²·P/Q is below 1e-17 of 1/√π: the asymptotic form's first term.
		return invSqrtPi / y
	}
	s := 1 / (y * y)
	num := ((((1.63153871373020978e-2*s+3.05326634961232344e-1)*s+
		3.60344899949804439e-1)*s+1.25781726111229246e-1)*s+
		1.60837851487422766e-2)*s + 6.58749161529837803e-4
	den := ((((s+2.56852019228982242)*s+1.87295284992346047)*s+
		5.27905102951428412e-1)*s+6.05183413124413191e-2)*s +
		2.33520497626869185e-3
	return (invSqrtPi - s*num/den) / y
}
