package binom

import (
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"
)

// exactMasses returns P(Bin(n, a/d) = x) for x = 0, …, n, from the
// binomial law's definition C(n, x)·a^x·(d−a)^(n−x)/d^n (closed form): the
// numerators exact integers (each from the last by the exact quotient
// ·(n−x)·a/((x+1)·(d−a))), the quotients in 256-bit arithmetic.
func exactMasses(n, a, d int64) []float64 {
	num := new(big.Int).Exp(big.NewInt(d-a), big.NewInt(n), nil)
	den := new(big.Float).SetPrec(256).SetInt(new(big.Int).Exp(big.NewInt(d), big.NewInt(n), nil))
	out := make([]float64, n+1)
	for x := int64(0); ; x++ {
		f, _ := new(big.Float).SetPrec(256).Quo(new(big.Float).SetPrec(256).SetInt(num), den).Float64()
		out[x] = f
		if x == n {
			return out
		}
		num.Mul(num, big.NewInt((n-x)*a))
		num.Quo(num, big.NewInt((x+1)*(d-a)))
	}
}

// TestWalkExact walks up and down from a start, never taken afresh, and
// against the exact masses (256-bit arithmetic, p = a/d exact in binary)
// every value is within RelAfter(Rel(start), steps); with the value taken
// afresh every 64 steps, within RelAfter(the largest Rel met, 63). Starts at
// the mode and far in a tail (where Loader's deviance cancels), on Bin(300,
// 1/4) over its whole support (masses down to 1e-181) and on Bin(5000, 3/8)
// over 70 standard deviations.
func TestWalkExact(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ n, a, d, start, lo, hi int64 }{
		{300, 1, 4, 75, 0, 300}, {300, 1, 4, 10, 0, 120}, {5000, 3, 8, 1875, 1600, 2150}, {5000, 3, 8, 1300, 1200, 1600},
	} {
		p := float64(tc.a) / float64(tc.d)
		n, x0 := float64(tc.n), float64(tc.start)
		exact := exactMasses(tc.n, tc.a, tc.d)
		for _, every := range []int{0, 64} {
			w := NewWalk(x0, n, p, 1-p, every)
			rel0 := Rel(x0, n, p, 1-p)
			worst := 0.0
			check := func(w Walk) {
				want := exact[int(w.X)]
				bound := RelAfter(rel0, w.Steps())
				if every > 0 {
					// the last value taken afresh is at most 63 steps back,
					// at a count between the start and X
					r := math.Max(rel0, Rel(w.X, n, p, 1-p))
					bound = RelAfter(r, min(w.Steps(), every-1))
				}
				e := math.Abs(w.P-want) / want
				worst = math.Max(worst, e/bound)
				require.LessOrEqual(t, e, bound, "Bin(%d, %g) from %d (every %d): x=%g", tc.n, p, tc.start, every, w.X)
			}
			check(w)
			up, down := w, w
			for up.X < float64(tc.hi) {
				up.Up()
				check(up)
			}
			for down.X > float64(tc.lo) {
				down.Down()
				check(down)
			}
			t.Logf("Bin(%d, %g) from %d, every %d: worst error %.2f of the bound", tc.n, p, tc.start, every, worst)
		}
	}
}

// TestWalkGonum: the whole support of Bin(1000, 0.3) walked from the mode
// against gonum's distuv.Binomial (its log-gamma form, about 1e-11
// relative at this size).
func TestWalkGonum(t *testing.T) {
	b := distuv.Binomial{N: 1000, P: 0.3}
	w := NewWalk(300, 1000, 0.3, 0.7, 0)
	up, down := w, w
	for up.X < 1000 {
		up.Up()
		if want := b.Prob(up.X); want > 1e-250 {
			assert.InDelta(t, 1, up.P/want, 1e-10, "x=%g", up.X)
		}
	}
	for down.X > 0 {
		down.Down()
		if want := b.Prob(down.X); want > 1e-250 {
			assert.InDelta(t, 1, down.P/want, 1e-10, "x=%g", down.X)
		}
	}
	assert.InDelta(t, 1, w.P/b.Prob(300), 1e-11, "the start")
}

// TestWalkWithN: a value carried from Bin(n, p) to Bin(n ± 1, p) (WithN),
// up to 40 times in a row with a few steps of the count between, against
// the exact masses (256-bit arithmetic, p = a/d exact in binary) of each
// law, within RelAfter(Rel(start), steps); at the mode and in a tail, and
// a walk from a given value (WalkFrom) the same as one from LogPMF.
func TestWalkWithN(t *testing.T) {
	t.Parallel()
	exact := map[int64][]float64{}
	mass := func(n, a, d, x int64) float64 {
		if _, ok := exact[n]; !ok {
			exact[n] = exactMasses(n, a, d)
		}
		return exact[n][x]
	}
	for _, tc := range []struct{ n, a, d, x, dn, dx int64 }{
		{400, 1, 4, 100, -1, 1}, {400, 1, 4, 30, 1, -1}, {400, 1, 4, 100, 1, 2}, {600, 3, 8, 150, -1, -3},
	} {
		clear(exact)
		p := float64(tc.a) / float64(tc.d)
		w := NewWalk(float64(tc.x), float64(tc.n), p, 1-p, 0)
		rel0 := Rel(float64(tc.x), float64(tc.n), p, 1-p)
		g := WalkFrom(w.X, float64(tc.n), p, 1-p, w.P, 0)
		g.Up()
		w2 := w
		w2.Up()
		assert.Equal(t, w2.P, g.P, "WalkFrom then Up")
		n := tc.n
		worst := 0.0
		for range 40 {
			n += tc.dn
			w = w.WithN(float64(n))
			for range 2 {
				if tc.dx > 0 {
					for range tc.dx {
						w.Up()
					}
				} else {
					for range -tc.dx {
						w.Down()
					}
				}
				want := mass(n, tc.a, tc.d, int64(w.X))
				e := math.Abs(w.P-want) / want
				bound := RelAfter(rel0, w.Steps())
				worst = math.Max(worst, e/bound)
				require.LessOrEqual(t, e, bound, "Bin(%d, %g) x=%g after %d steps", n, p, w.X, w.Steps())
				tc.dx = -tc.dx // there and back
			}
		}
		t.Logf("Bin(%d, %g) from %d, n by %d: worst error %.2f of the bound", tc.n, p, tc.x, tc.dn, worst)
	}
}
