package testref

import (
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// bigPrec is the working precision of the recomputation: enough to absorb
// the cancellation in erfc = 1 - erf down to 1e-308 (about 1023 bits) with
// some 500 bits to spare.
const bigPrec = 1600

func newBig() *big.Float { return new(big.Float).SetPrec(bigPrec) }

// bigEps is 2^-(bigPrec+10), the stopping threshold of the series.
func bigEps() *big.Float { return newBig().SetMantExp(newBig().SetInt64(1), -bigPrec-10) }

// bigAtanInv returns atan(1/k) = Σ (-1)ⁿ / ((2n+1)·k^(2n+1)).
func bigAtanInv(k int64) *big.Float {
	sum := newBig()
	pow := newBig().Quo(newBig().SetInt64(1), newBig().SetInt64(k))
	k2 := newBig().SetInt64(k * k)
	eps := bigEps()
	for n := int64(0); ; n++ {
		t := newBig().Quo(pow, newBig().SetInt64(2*n+1))
		if n%2 == 0 {
			sum.Add(sum, t)
		} else {
			sum.Sub(sum, t)
		}
		if t.Cmp(eps) < 0 {
			return sum
		}
		pow.Quo(pow, k2)
	}
}

// bigPi returns π by Machin's formula π = 16·atan(1/5) - 4·atan(1/239).
func bigPi() *big.Float {
	a := newBig().Mul(newBig().SetInt64(16), bigAtanInv(5))
	return a.Sub(a, newBig().Mul(newBig().SetInt64(4), bigAtanInv(239)))
}

// bigExp returns exp(y) for y >= 0 by the Taylor series of exp(y/2^16),
// squared 16 times.
func bigExp(y *big.Float) *big.Float {
	const halvings = 16
	r := newBig().SetMantExp(y, -halvings)
	sum, t := newBig().SetInt64(1), newBig().SetInt64(1)
	eps := bigEps()
	for n := int64(1); t.Cmp(eps) >= 0; n++ {
		t.Mul(t, r)
		t.Quo(t, newBig().SetInt64(n))
		sum.Add(sum, t)
	}
	for i := 0; i < halvings; i++ {
		sum.Mul(sum, sum)
	}
	return sum
}

// bigNormalUpper returns Q(z) = (1 - erf(z/√2))/2 with
// erf x = (2/√π)·exp(-x²)·Σ 2ⁿx^(2n+1)/(1·3·…·(2n+1)) (A&S 7.1.6), a series of
// positive terms, for z >= 0.
func bigNormalUpper(z float64) *big.Float {
	x := newBig().Quo(newBig().SetFloat64(z), newBig().Sqrt(newBig().SetInt64(2)))
	x2 := newBig().Mul(x, x)
	twoX2 := newBig().Mul(x2, newBig().SetInt64(2))
	sum, t := newBig().Set(x), newBig().Set(x)
	eps := bigEps()
	for n := int64(1); z > 0; n++ {
		t.Mul(t, twoX2)
		t.Quo(t, newBig().SetInt64(2*n+1))
		sum.Add(sum, t)
		if newBig().Quo(t, sum).Cmp(eps) < 0 {
			break
		}
	}
	erf := newBig().Quo(sum, bigExp(x2))
	erf.Mul(erf, newBig().SetInt64(2))
	erf.Quo(erf, newBig().Sqrt(bigPi()))
	q := newBig().Sub(newBig().SetInt64(1), erf)
	return q.Quo(q, newBig().SetInt64(2))
}

func TestBigPi(t *testing.T) {
	// π to 40 digits, from memory (common practice to check against).
	const want = "3.141592653589793238462643383279502884197"
	assert.Equal(t, want, bigPi().Text('f', 39))
}

// TestNormalUpperTailTable recomputes every tabulated value in high
// precision: the table must hold the float64 nearest to it.
func TestNormalUpperTailTable(t *testing.T) {
	for _, pt := range NormalUpperTail {
		got, _ := bigNormalUpper(pt.Z).Float64()
		assert.Equal(t, got, pt.Q, "Q(%v)", pt.Z)
	}
}

// TestNormalUpperTailErfc checks the table against math.Erfc within the
// conditioning tolerance NormalTailTol, and that the tolerance is not so
// loose that a survival computed as 1 - CDF (0.5·(1 + erf)) could pass.
func TestNormalUpperTailErfc(t *testing.T) {
	for _, pt := range NormalUpperTail {
		got := 0.5 * math.Erfc(pt.Z/math.Sqrt2)
		assert.LessOrEqual(t, RelErr(got, pt.Q), NormalTailTol(pt.Z), "Q(%v)", pt.Z)
		if pt.Z >= 8 {
			naive := 1 - 0.5*math.Erfc(-pt.Z/math.Sqrt2)
			assert.Greater(t, RelErr(naive, pt.Q), NormalTailTol(pt.Z), "1-CDF at %v must fail", pt.Z)
		}
	}
	require.Less(t, NormalTailTol(37.5), 2e-12)
}

// TestNormalUpperTailAS checks the table against printed values
// (Abramowitz & Stegun Table 26.1, from memory) to their 15 digits.
func TestNormalUpperTailAS(t *testing.T) {
	byZ := map[float64]float64{}
	for _, pt := range NormalUpperTail {
		byZ[pt.Z] = pt.Q
	}
	for _, pt := range NormalUpperTailAS {
		want, ok := byZ[pt.Z]
		require.True(t, ok, "z = %v not in NormalUpperTail", pt.Z)
		assert.LessOrEqual(t, RelErr(pt.Q, want), 5e-15, "Q(%v)", pt.Z)
	}
}
