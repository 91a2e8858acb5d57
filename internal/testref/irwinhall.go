package testref

import (
	"math"
	"math/big"
)

// IrwinHall returns P(U_1 + … + U_k <= x) and P(U_1 + … + U_k > x) for k
// independent uniforms on [0, 1], exactly in rational arithmetic at the
// float64 x (taken exactly), each rounded once to float64:
//
//	P(S_k <= x) = (1/k!)·Σ_{j=0}^{⌊x⌋} (−1)^j·C(k, j)·(x − j)^k
//
// (the Irwin–Hall law; Feller, An Introduction to Probability Theory and
// Its Applications, vol. II, 2nd ed., §I.9, from memory). The cost grows
// like x big-integer powers of k·53 bits: meant for k up to a few hundred.
func IrwinHall(k int, x float64) (below, above float64) {
	switch {
	case x <= 0:
		return 0, 1
	case x >= float64(k):
		return 1, 0
	}
	// x = n/D exactly, D a power of two; then
	// k!·D^k·P(S_k <= x) = Σ_j (−1)^j·C(k, j)·(n − j·D)^k, in integers
	frac, exp := math.Frexp(x)
	n := new(big.Int).SetInt64(int64(frac * (1 << 53)))
	d := big.NewInt(1)
	if sh := exp - 53; sh >= 0 {
		n.Lsh(n, uint(sh))
	} else {
		d.Lsh(d, uint(-sh))
	}
	num := new(big.Int)
	binom := big.NewInt(1)
	kk := big.NewInt(int64(k))
	for j := 0; j <= k && float64(j) <= x; j++ {
		t := new(big.Int).Mul(big.NewInt(int64(j)), d)
		t.Sub(n, t)
		t.Exp(t, kk, nil)
		t.Mul(t, binom)
		if j%2 == 1 {
			t.Neg(t)
		}
		num.Add(num, t)
		binom.Mul(binom, big.NewInt(int64(k-j)))
		binom.Quo(binom, big.NewInt(int64(j+1)))
	}
	den := new(big.Int).Exp(d, kk, nil)
	den.Mul(den, new(big.Int).MulRange(1, int64(k)))
	sum := new(big.Rat).SetFrac(num, den)
	up := new(big.Rat).Sub(big.NewRat(1, 1), sum)
	below, _ = sum.Float64()
	above, _ = up.Float64()
	return below, above
}
