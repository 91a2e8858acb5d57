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
//     1 − Φ̄(SmallX) < 0.26, so no cancellation), by log1m: for the
//     Φ(x) below 2^-8 that most of the site rule's probes read, a short
//     series instead of math.Log1p;
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
		return log1m(Upper(-x))
	}
	return math.Log(0.5 * math.Erfc(x/math.Sqrt2))
}

// log1mSeriesMax is where log1m turns from its series to math.Log1p.
const log1mSeriesMax = 0x1p-8

// log1mMaxRelErr bounds the relative error of log1m on [0, 0.26] for an
// exact u, as measured by TestLog1mAgainstBig against the series in
// 256-bit arithmetic (with room; math.Log1p is documented within one unit
// in the last place).
const log1mMaxRelErr = 0x1p-52

// log1m returns log(1 − u) (dimensionless) for u in [0, 0.26]: below
// 2^-29 as −u − u²/2, the expression math.Log1p(−u) takes there (the same
// bits); below log1mSeriesMax as the series −Σ_{k=1}^{7} u^k/k (Mercator's
// series, Abramowitz and Stegun 4.1.24) in Horner's form, whose terms
// left out are below u·u^7/(8·(1 − u)) <= 2^-59·u, so that Horner's two
// last roundings (2^-53 each) dominate its error; elsewhere math.Log1p(−u).
// Within log1mMaxRelErr relative. A pure function.
func log1m(u float64) float64 {
	switch {
	case u < 0x1p-29:
		return -u - u*u*0.5
	case u < log1mSeriesMax:
		return -u * (1 + u*(1.0/2+u*(1.0/3+u*(1.0/4+u*(1.0/5+u*(1.0/6+u*(1.0/7)))))))
	}
	return math.Log1p(-u)
}
