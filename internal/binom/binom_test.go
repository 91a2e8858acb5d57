package binom

import (
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"gonum.org/v1/gonum/stat/distuv"
)

// TestStirlingError against its definition log(n!) − log(√(2πn)(n/e)^n)
// through math.Lgamma (common practice), where Lgamma keeps the digits.
func TestStirlingError(t *testing.T) {
	for _, n := range []float64{1, 2, 5, 10, 15, 16, 20, 35, 36, 80, 81, 100, 500, 501, 1000} {
		lg, _ := math.Lgamma(n + 1)
		want := lg - (n+0.5)*math.Log(n) + n - lnSqrt2Pi
		assert.InDelta(t, want, StirlingError(n), 1e-13*math.Max(1, lg), "n=%g", n)
	}
}

// TestLogPMF against gonum's distuv.Binomial (its log-gamma form is
// accurate at these sizes; 1e-11 relative in the probability) and against the exact mass C(n, x)·p^x·q^(n−x), C(n, x) a
// big integer.
func TestLogPMF(t *testing.T) {
	for _, tc := range []struct{ n, p float64 }{{10, 0.3}, {100, 0.01}, {1000, 0.5}, {50, 0.999}, {5000, 0.9}} {
		b := distuv.Binomial{N: tc.n, P: tc.p}
		for x := 0.0; x <= tc.n; x += math.Max(1, math.Floor(tc.n/37)) {
			want := b.Prob(x)
			if want < 1e-280 {
				continue
			}
			got := math.Exp(LogPMF(x, tc.n, tc.p, 1-tc.p))
			assert.InDelta(t, 1, got/want, 1e-11, "n=%g p=%g x=%g", tc.n, tc.p, x)
		}
	}
	// exact: log C(n, x) + x log p + (n−x) log q with p = 1/4 (exact in
	// binary), C(n, x) as a big integer
	const n, x = 20000, 5030
	cnx := new(big.Int).Binomial(n, x)
	mant := new(big.Float).SetPrec(200).SetInt(cnx)
	exp := mant.MantExp(mant)
	m, _ := mant.Float64()
	want := math.Log(m) + float64(exp)*math.Ln2 + x*math.Log(0.25) + (n-x)*math.Log(0.75)
	assert.InDelta(t, want, LogPMF(x, n, 0.25, 0.75), 1e-9, "log P at n = 20000")
	assert.Equal(t, math.Inf(-1), LogPMF(-1, 10, 0.5, 0.5))
	assert.Equal(t, 0.0, LogPMF(0, 10, 0, 1))
}
