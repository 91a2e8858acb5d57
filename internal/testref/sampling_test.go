package testref

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func uniformCDF(x float64) float64 { return math.Min(1, math.Max(0, x)) }

func TestKSStatistic(t *testing.T) {
	tests := []struct {
		name    string
		samples []float64
		cdf     func(float64) float64
		want    float64
	}{
		// One sample at 0.5 from U(0,1): F_n jumps 0 -> 1 where F = 0.5.
		{"single", []float64{0.5}, uniformCDF, 0.5},
		// Samples at 0.1, 0.2 and 0.9: the largest gap is at 0.2, where
		// F_n = 2/3 and F = 0.2 (just below 0.9 it is only 0.9 - 2/3).
		{"three", []float64{0.9, 0.1, 0.2}, uniformCDF, 2.0/3 - 0.2},
		// All samples at the one atom of a point mass: no distance.
		{"point mass", []float64{1, 1, 1}, func(x float64) float64 {
			if x >= 1 {
				return 1
			}
			return 0
		}, 0},
		// Half the samples at 0, half at 1, law with atoms 0 (0.25) and 1 (0.75).
		{"atoms", []float64{0, 1, 0, 1}, func(x float64) float64 {
			switch {
			case x < 0:
				return 0
			case x < 1:
				return 0.25
			}
			return 1
		}, 0.25},
		{"empty", nil, uniformCDF, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			orig := append([]float64(nil), tc.samples...)
			assert.InDelta(t, tc.want, KSStatistic(tc.samples, tc.cdf), 1e-15)
			assert.Equal(t, orig, tc.samples, "samples must not be modified")
		})
	}
	assert.True(t, math.IsNaN(KSStatistic([]float64{math.NaN()}, uniformCDF)))
}

func TestKSCritical(t *testing.T) {
	// sqrt(ln(2e6)/40000) for n = 20000 at level 1e-6 (Massart 1990 bound).
	assert.InDelta(t, math.Sqrt(math.Log(2e6)/40000), KSCritical(20000, 1e-6), 1e-16)
	// The bound is exact in the sense 2·exp(-2nε²) = level.
	eps := KSCritical(500, 0.01)
	assert.InDelta(t, 0.01, 2*math.Exp(-2*500*eps*eps), 1e-15)
	assert.True(t, math.IsNaN(KSCritical(0, 0.1)))
	assert.True(t, math.IsNaN(KSCritical(10, 1)))
}

// binomialPMFExact returns the binomial probabilities C(n,j)·p^j·(1-p)^(n-j)
// in exact rational arithmetic (p is a dyadic rational), an oracle
// independent of the incomplete beta function.
func binomialPMFExact(n int, p float64) []*big.Rat {
	pr := new(big.Rat).SetFloat64(p)
	qr := new(big.Rat).Sub(big.NewRat(1, 1), pr)
	pmf := make([]*big.Rat, n+1)
	for j := 0; j <= n; j++ {
		c := new(big.Rat).SetInt(new(big.Int).Binomial(int64(n), int64(j)))
		for i := 0; i < j; i++ {
			c.Mul(c, pr)
		}
		for i := 0; i < n-j; i++ {
			c.Mul(c, qr)
		}
		pmf[j] = c
	}
	return pmf
}

// tailsExact returns P(C <= k) and P(C >= k) from exact probabilities.
func tailsExact(pmf []*big.Rat, k int) (atMost, atLeast float64) {
	le, ge := new(big.Rat), new(big.Rat)
	for j, c := range pmf {
		if j <= k {
			le.Add(le, c)
		}
		if j >= k {
			ge.Add(ge, c)
		}
	}
	a, _ := le.Float64()
	b, _ := ge.Float64()
	return a, b
}

func TestBinomialTails(t *testing.T) {
	for _, n := range []int{1, 7, 40} {
		for _, p := range []float64{0.03125, 0.3, 0.5, 0.9} {
			pmf := binomialPMFExact(n, p)
			for k := -1; k <= n+1; k++ {
				le, ge := BinomialTails(n, k, p)
				wle, wge := tailsExact(pmf, k)
				assert.LessOrEqual(t, RelErr(le, wle), 1e-12, "P(C<=%d), n=%d p=%v", k, n, p)
				assert.LessOrEqual(t, RelErr(ge, wge), 1e-12, "P(C>=%d), n=%d p=%v", k, n, p)
			}
		}
	}
	le, ge := BinomialTails(10, 3, 0)
	assert.Equal(t, [2]float64{1, 0}, [2]float64{le, ge})
	le, _ = BinomialTails(10, 3, math.NaN())
	assert.True(t, math.IsNaN(le))
}

func TestBinomialInterval(t *testing.T) {
	for _, tc := range []struct {
		n     int
		p     float64
		alpha float64
	}{{20000, 0.05, 1e-6 / 40}, {20000, 1e-5, 1e-7}, {100, 0.5, 0.05}, {1000, 0.999, 1e-6}} {
		lo, hi := BinomialInterval(tc.n, tc.p, tc.alpha)
		require.LessOrEqual(t, lo, hi)
		below, _ := BinomialTails(tc.n, lo-1, tc.p)
		_, above := BinomialTails(tc.n, hi+1, tc.p)
		assert.LessOrEqual(t, below, tc.alpha/2, "P(C < lo)")
		assert.LessOrEqual(t, above, tc.alpha/2, "P(C > hi)")
		// Tight: one step inward breaks the bound.
		if lo < tc.n {
			b2, _ := BinomialTails(tc.n, lo, tc.p)
			assert.Greater(t, b2, tc.alpha/2, "lo not maximal")
		}
		if hi > 0 {
			_, a2 := BinomialTails(tc.n, hi, tc.p)
			assert.Greater(t, a2, tc.alpha/2, "hi not minimal")
		}
	}
	// Classic check: 100 fair coin flips, 95 %: [40, 60] (common practice).
	lo, hi := BinomialInterval(100, 0.5, 0.05)
	assert.Equal(t, [2]int{40, 60}, [2]int{lo, hi})
	lo, hi = BinomialInterval(10, 2, 0.1)
	assert.Equal(t, [2]int{-1, -1}, [2]int{lo, hi})
}

// KSWithSlack never exceeds the exact KS distance, and it still sees a law
// moved by 10 %.
func TestKSWithSlack(t *testing.T) {
	samples := []float64{1, 1, 2, 2, 2, 3, 5, 5, 8, 13}
	cdf := func(x float64) float64 { return 1 - math.Exp(-x/4) }
	exact := KSStatistic(samples, cdf)
	slack := KSWithSlack(samples, cdf, 1e-9)
	assert.LessOrEqual(t, slack, exact)
	assert.InDelta(t, exact, slack, 1e-8)
	moved := KSWithSlack(samples, func(x float64) float64 { return cdf(x / 1.1) }, 1e-9)
	assert.Greater(t, moved, 0.0)
}

// KSGridBounds brackets the exact distance (KSStatistic): lower <= exact
// <= upper, the upper bound within 3/m of it, for continuous laws (the
// exponential, from math.Exp) and a law with atoms (a fair die), on
// samples drawn from the law itself and from one moved by 10 %.
func TestKSGridBounds(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 8))
	expCDF := func(x float64) float64 { return -math.Expm1(-math.Max(x, 0) / 4) }
	dieCDF := func(x float64) float64 { return math.Min(1, math.Max(0, math.Floor(x)/6)) }
	for _, c := range []struct {
		name string
		draw func() float64
		cdf  func(float64) float64
	}{
		{"exponential", func() float64 { return 4 * r.ExpFloat64() }, expCDF},
		{"exponential moved 10 %", func() float64 { return 4.4 * r.ExpFloat64() }, expCDF},
		{"die", func() float64 { return float64(1 + r.IntN(6)) }, dieCDF},
		{"die against the exponential", func() float64 { return float64(1 + r.IntN(6)) }, expCDF},
	} {
		xs := make([]float64, 5000)
		for i := range xs {
			xs[i] = c.draw()
		}
		exact := KSStatistic(xs, c.cdf)
		for _, m := range []int{50, 400} {
			up, lo := KSGridBounds(xs, c.cdf, m)
			assert.LessOrEqual(t, lo, exact+1e-15, "%s, m=%d", c.name, m)
			assert.GreaterOrEqual(t, up, exact-1e-15, "%s, m=%d", c.name, m)
			assert.LessOrEqual(t, up-exact, 3/float64(m), "%s, m=%d", c.name, m)
		}
	}
	up, lo := KSGridBounds(nil, expCDF, 10)
	assert.Equal(t, [2]float64{0, 0}, [2]float64{up, lo})
	up, _ = KSGridBounds([]float64{1, math.NaN()}, expCDF, 10)
	assert.True(t, math.IsNaN(up))
}
