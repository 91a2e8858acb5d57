package dist_test

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// The powers of a geometric sequence p_i = (1−r)·r^i against the negative
// binomial law, its m-fold sum (a standard result: the sum of m geometric
// counts on 0, 1, … is negative binomial, P(i) = C(i+m−1, m−1)·(1−r)^m·r^i;
// the binomial coefficient from math.Lgamma), and every power against the
// direct O(M²) convolution of the previous one (the definition). Absolute
// tolerance: 64 ulps of 1 per power, far above the ε·log₂N rounding the
// doc states and far below any mass that matters here (the sequences sum
// to at most 1).
func TestTruncatedPowersAgainstDirect(t *testing.T) {
	for _, c := range []struct {
		name string
		r    float64
		M    int
		max  int
	}{
		{"geometric r=0.9, 300 points", 0.9, 300, 12},
		{"geometric r=0.99, 1000 points (defective: mass beyond the lattice)", 0.99, 1000, 8},
		{"geometric r=0.3, 17 points", 0.3, 17, 30},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := make([]float64, c.M)
			for i := range p {
				p[i] = (1 - c.r) * math.Pow(c.r, float64(i))
			}
			prev := append([]float64(nil), p...)
			var worstNB, worstDirect float64
			last, err := dist.TruncatedPowers(p, c.max, func(m int, q []float64) bool {
				require.Len(t, q, c.M)
				direct := make([]float64, c.M)
				for i := range direct {
					for j := 0; j <= i; j++ {
						direct[i] += prev[j] * p[i-j]
					}
				}
				for i, v := range q {
					lc, _ := math.Lgamma(float64(i + m))
					l1, _ := math.Lgamma(float64(m))
					l2, _ := math.Lgamma(float64(i + 1))
					nb := math.Exp(lc - l1 - l2 + float64(m)*math.Log1p(-c.r) + float64(i)*math.Log(c.r))
					worstNB = math.Max(worstNB, math.Abs(v-nb))
					worstDirect = math.Max(worstDirect, math.Abs(v-direct[i]))
				}
				prev = append(prev[:0], q...)
				return true
			})
			require.NoError(t, err)
			assert.Equal(t, c.max+1, last, "powers 2 … maxPowers + 1")
			tol := 64 * 0x1p-52 * float64(c.max)
			assert.LessOrEqual(t, worstDirect, tol, "against the direct convolution")
			assert.LessOrEqual(t, worstNB, tol, "against the negative binomial law")
			t.Logf("worst absolute error: %.2g against the direct sum, %.2g against the negative binomial", worstDirect, worstNB)
		})
	}
}

// more stops the powers; bad input is refused with ErrParam.
func TestTruncatedPowersStopAndBadInput(t *testing.T) {
	calls := 0
	last, err := dist.TruncatedPowers([]float64{0.5, 0.5}, 100, func(m int, q []float64) bool {
		calls++
		return m < 4
	})
	require.NoError(t, err)
	assert.Equal(t, 4, last)
	assert.Equal(t, 3, calls)
	for _, c := range []struct {
		name string
		p    []float64
		max  int
	}{
		{"empty", nil, 3},
		{"negative mass", []float64{0.5, -0.1}, 3},
		{"NaN mass", []float64{0.5, math.NaN()}, 3},
		{"infinite mass", []float64{math.Inf(1)}, 3},
		{"no powers", []float64{1}, 0},
		{"too many powers", []float64{1}, dist.MaxTruncatedPowers + 1},
		{"too many points", make([]float64, dist.MaxTruncatedPowerPoints+1), 3},
	} {
		_, err := dist.TruncatedPowers(c.p, c.max, func(int, []float64) bool { return true })
		assert.True(t, errors.Is(err, dist.ErrParam), "%s: %v", c.name, err)
	}
}

// A fair coin's count of heads on the lattice 0, 1, 2, 3: its m-fold sums
// are Binomial(m, ½), cut at 3.
func ExampleTruncatedPowers() {
	coin := []float64{0.5, 0.5, 0, 0}
	_, err := dist.TruncatedPowers(coin, 2, func(m int, q []float64) bool {
		fmt.Printf("m=%d: %.4f\n", m, q)
		return true
	})
	fmt.Println(err)
	// Output:
	// m=2: [0.2500 0.5000 0.2500 0.0000]
	// m=3: [0.1250 0.3750 0.3750 0.1250]
	// <nil>
}
