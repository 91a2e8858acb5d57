package mills

import (
	"math"
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
