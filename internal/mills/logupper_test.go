package mills

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// oracleSeries is Φ̄(x) = 1/2 − (1/√(2π))·Σ (−1)ⁿ x^(2n+1)/(2ⁿ·n!·(2n+1))
// (Abramowitz and Stegun, Handbook of Mathematical Functions, 26.2.10),
// summed in float64 until the terms fall below 2^-70 of the sum: for
// |x| <= 0.7 the terms fall at least fourfold each and the sum stays
// within [0.2, 0.8], so a few roundings in all.
func oracleSeries(x float64) float64 {
	sum, term := 0.0, x
	for n := 0; math.Abs(term) > 0x1p-70; n++ {
		sum += term / float64(2*n+1)
		term *= -x * x / (2 * float64(n+1))
	}
	return 0.5 - sum/math.Sqrt(2*math.Pi)
}

// oracleLogUpper is log Φ̄(x) from sources independent of LogUpper's
// branches: for |x| <= 0.7 the log of oracleSeries; beyond, φ(|x|)·R(|x|)
// with R from Laplace's continued fraction (oracleCF, A&S 26.2.14) and
// φ's exponent split exactly (as oracleErfc): for x > 0.7 in the log
// domain, log φ + log R, and for x < −0.7 as log1p(−φ·R).
func oracleLogUpper(x float64) float64 {
	a := math.Abs(x)
	if a <= 0.7 {
		return math.Log(oracleSeries(x))
	}
	z := float64(float32(a))
	r := oracleCF(a, 4000)
	if x > 0 {
		return (-0.5*z*z - 0.91893853320467274178) - 0.5*(a-z)*(a+z) + math.Log(r)
	}
	phi := math.Exp(-0.5*z*z) * math.Exp(-0.5*(a-z)*(a+z)) / math.Sqrt(2*math.Pi)
	return math.Log1p(-phi * r)
}

// TestLogUpperAgainstOracles sweeps [−9, 40] and the turns at ±SmallX
// against oracleLogUpper (the series and the continued fraction above;
// their own rounding, a few units of 2^-52, is allowed on top of
// LogUpperMaxRelErr).
func TestLogUpperAgainstOracles(t *testing.T) {
	xs := []float64{SmallX, -SmallX, math.Nextafter(SmallX, 0), math.Nextafter(-SmallX, 0), 0.7, -0.7, 0, -9}
	for i := -9000; i <= 40000; i++ {
		xs = append(xs, float64(i)*1e-3)
	}
	worst, at := 0.0, 0.0
	for _, x := range xs {
		got, want := LogUpper(x), oracleLogUpper(x)
		if e := testref.RelErr(got, want) / (LogUpperMaxRelErr + 8*0x1p-52); e > worst {
			worst, at = e, x
		}
	}
	t.Logf("LogUpper: largest relative difference %.3g of its tolerance, at x = %g", worst, at)
	assert.LessOrEqual(t, worst, 1.0)
}

// TestLogUpperPreciseTable: LogUpper at ±z against testref.NormalUpperTail,
// Q(z) at 1600-bit precision (A&S 7.1.6 with math/big, each entry the
// float64 nearest the exact value): log Q(z) at z and log1p(−Q(z)) at −z,
// whose float64 evaluation adds at most a unit of 2^-52 relative. Below
// −9 the bound is Upper's there (erfc's, testref.NormalTailTol).
func TestLogUpperPreciseTable(t *testing.T) {
	for _, pt := range testref.NormalUpperTail {
		assert.LessOrEqual(t, testref.RelErr(LogUpper(pt.Z), math.Log(pt.Q)), LogUpperMaxRelErr+0x1p-52, "LogUpper(%v)", pt.Z)
		tol := LogUpperMaxRelErr + 0x1p-52
		if pt.Z >= upperDirect {
			tol = testref.NormalTailTol(pt.Z)
		}
		assert.LessOrEqual(t, testref.RelErr(LogUpper(-pt.Z), math.Log1p(-pt.Q)), tol, "LogUpper(%v)", -pt.Z)
	}
}

func TestLogUpperEdges(t *testing.T) {
	tests := []struct {
		name string
		x    float64
		want float64
	}{
		// Φ̄(+∞) = 0 and Φ̄(−∞) = 1 (the law's limits).
		{"plus infinity", math.Inf(1), math.Inf(-1)},
		{"minus infinity", math.Inf(-1), 0},
		// Φ̄(0) = 1/2 by symmetry (common practice).
		{"zero", 0, -math.Ln2},
		// −x²/2 overflows: log Φ̄ is below −MaxFloat64.
		{"overflowing square", 1e200, math.Inf(-1)},
		// Φ(x) underflows to 0 (Φ(−40) is about 3.7e-350): log Φ̄ is −0.
		{"vanishing lower tail", -40, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			assert.Equal(t, tc.want, LogUpper(tc.x))
		})
	}
	assert.True(t, math.IsNaN(LogUpper(math.NaN())))
}

func BenchmarkLogUpper(b *testing.B) {
	s := 0.0
	for b.Loop() {
		for x := -4.0; x < 9; x += 0.5 {
			s += LogUpper(x)
		}
	}
	_ = s
}

// bigLog1m returns log(1 − u) for u in [0, 0.26] from Mercator's series
// −Σ u^k/k (Abramowitz and Stegun 4.1.24, from memory) summed in 256-bit
// arithmetic until a term falls below 2^-300 of u: an oracle independent
// of log1m's float64 evaluation and of math.Log1p.
func bigLog1m(u float64) float64 {
	const prec = 256
	x := new(big.Float).SetPrec(prec).SetFloat64(u)
	pow := new(big.Float).SetPrec(prec).Set(x)
	sum := new(big.Float).SetPrec(prec)
	stop := new(big.Float).SetPrec(prec).SetMantExp(x, -300)
	for k := 1; pow.Sign() > 0 && pow.Cmp(stop) > 0; k++ {
		term := new(big.Float).SetPrec(prec).Quo(pow, new(big.Float).SetPrec(prec).SetInt64(int64(k)))
		sum.Sub(sum, term)
		pow.Mul(pow, x)
	}
	f, _ := sum.Float64()
	return f
}

// TestLog1mAgainstBig: log1m against bigLog1m (each the float64 nearest
// its 256-bit sum, so within 2^-53 relative of log(1 − u)) on log-spaced
// points from 2^-60 to 0.26, the turns at 2^-29 and log1mSeriesMax, and
// 20,000 points drawn with a fixed seed from each of [0, 2^-8] and
// [2^-8, 0.26]: within log1mMaxRelErr plus the oracle's own rounding;
// and the same bits as math.Log1p(−u) below 2^-29 and from
// log1mSeriesMax on, where log1m takes its expression or calls it.
func TestLog1mAgainstBig(t *testing.T) {
	us := []float64{0, 0x1p-1074, 0x1p-60, math.Nextafter(0x1p-29, 0), 0x1p-29, math.Nextafter(log1mSeriesMax, 0), log1mSeriesMax, 0.26}
	for e := -60.0; e <= math.Log2(0.26); e += 1.0 / 64 {
		us = append(us, math.Exp2(e))
	}
	r := rand.New(rand.NewPCG(12, 1))
	for range 20000 {
		us = append(us, r.Float64()*log1mSeriesMax, log1mSeriesMax+r.Float64()*(0.26-log1mSeriesMax))
	}
	worst, at := 0.0, 0.0
	for _, u := range us {
		got := log1m(u)
		if u < 0x1p-29 || u >= log1mSeriesMax {
			assert.Equal(t, math.Float64bits(math.Log1p(-u)), math.Float64bits(got), "log1m(%v) against math.Log1p", u)
		}
		if u == 0 {
			assert.Equal(t, 0.0, got)
			continue
		}
		if e := testref.RelErr(got, bigLog1m(u)); e > worst {
			worst, at = e, u
		}
	}
	t.Logf("log1m: largest relative error %.3g (%.3g units of 2^-53), at u = %g", worst, worst/0x1p-53, at)
	assert.LessOrEqual(t, worst, log1mMaxRelErr+0x1p-53)
}
