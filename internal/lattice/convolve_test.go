package lattice

import (
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
)

// TestConvolveAgainstExact: Convolve and ConvolveAdd (cut, placed at an
// offset, added onto what dst holds) against the convolution sum
// Σ_i a[i]·b[m − i] in 256-bit arithmetic (its definition), on random
// non-negative arrays with zeros: every value within its stated relative
// rounding, (products added + 1)·2^-53.
func TestConvolveAgainstExact(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 12))
	for c := 0; c < 30; c++ {
		a := make([]float64, 1+r.IntN(40))
		b := make([]float64, 1+r.IntN(40))
		for _, v := range [][]float64{a, b} {
			for i := range v {
				if r.IntN(5) > 0 {
					v[i] = r.Float64() * float64(1+r.IntN(1000))
				}
			}
		}
		off := r.IntN(5)
		n := 1 + r.IntN(len(a)+len(b)+off)
		base := make([]float64, n)
		for i := range base {
			base[i] = r.Float64()
		}
		dst := append([]float64(nil), base...)
		ConvolveAdd(dst, a, b, off)
		full := Convolve(a, b)
		assert.Len(t, full, len(a)+len(b)-1)
		for m := range max(n, len(full)) {
			exact := new(big.Float).SetPrec(256)
			terms := 0
			for i := range a {
				if j := m - i; j >= 0 && j < len(b) {
					exact.Add(exact, new(big.Float).SetPrec(256).Mul(big.NewFloat(a[i]), big.NewFloat(b[j])))
					terms++
				}
			}
			tol := float64(terms+1) * 0x1p-53
			if m < len(full) {
				want, _ := exact.Float64()
				assert.InDelta(t, want, full[m], tol*want+1e-300, "case %d full m=%d", c, m)
			}
			if m < n {
				shifted := new(big.Float).SetPrec(256).SetFloat64(base[m])
				k := 0
				for i := range a {
					if j := m - off - i; j >= 0 && j < len(b) {
						shifted.Add(shifted, new(big.Float).SetPrec(256).Mul(big.NewFloat(a[i]), big.NewFloat(b[j])))
						k++
					}
				}
				want, _ := shifted.Float64()
				assert.InDelta(t, want, dst[m], float64(k+1)*0x1p-53*want+1e-300, "case %d cut m=%d", c, m)
			}
		}
	}
}
