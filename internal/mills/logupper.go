package mills

import "math"

// LogUpperMaxRelErr bounds the relative error of LogUpper for x > −9, as
// measured by TestLogUpperAgainstOracles and TestLogUpperPreciseTable
// (with room): Upper's UpperMaxRelErr where log Φ̄(x) ≈ −Φ(x) is small
// (x <= −SmallX), and there and elsewhere a few roundings more (the
// logarithm's, and x²/2 and log √(2π) against |log Φ̄(x)| >= 1.38 for
// x >= SmallX).
const LogUpperMaxRelErr = 1e-14

// logSqrt2Pi is log √(2π), to 20 digits (common practice).
const logSqrt2Pi = 0.91893853320467274178

// LogUpper returns log Φ̄(x), the natural logarithm of the standard normal
// upper tail P(Z > x) (dimensionless, at most 0), computed directly, never
// as the logarithm of a rounded small number nor of one less a small
// number:
//
//   - x >= SmallX: −x²/2 − log √(2π) + log R(x), R Mills' ratio (Ratio):
//     one logarithm and Ratio's polynomial, no exponential, and no
//     underflow (−Inf only at x = +Inf or where x² overflows);
//   - x <= −SmallX: log1p(−Φ̄(−x)), Φ̄(−x) = Φ(x) from Upper (at most
//     1 − Φ̄(SmallX) < 0.26, so no cancellation);
//   - between: log(erfc(x/√2)/2), with erfc/2 in [0.25, 0.75].
//
// Within LogUpperMaxRelErr relative for x > −9; below −9, where
// |log Φ̄(x)| < 1.2e-19, within Upper's error there (erfc's, about
// 2·x²·2^-53 relative), and −0 where Φ(x) underflows (x below about
// −38.4754, the true value under 5e-324 in magnitude). NaN for NaN. A pure
// function: safe for concurrent use.
func LogUpper(x float64) float64 {
	switch {
	case x >= SmallX:
		return -0.5*x*x - logSqrt2Pi + math.Log(Ratio(x))
	case x <= -SmallX:
		return math.Log1p(-Upper(-x))
	}
	return math.Log(0.5 * math.Erfc(x/math.Sqrt2))
}
