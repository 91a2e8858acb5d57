package lattice

import (
	"math"
	"math/big"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// exactBinom returns P(Bin(n, a/2^e) = j) for j = 0 … n in 256-bit
// arithmetic from the closed form C(n, j)·p^j·(1 − p)^(n−j) (common
// practice; p dyadic, so p and 1 − p are exact).
func exactBinom(n int, a, e int64) []*big.Float {
	den := new(big.Int).Lsh(big.NewInt(1), uint(e))
	out := make([]*big.Float, n+1)
	for j := 0; j <= n; j++ {
		num := new(big.Int).Binomial(int64(n), int64(j))
		num.Mul(num, new(big.Int).Exp(big.NewInt(a), big.NewInt(int64(j)), nil))
		num.Mul(num, new(big.Int).Exp(new(big.Int).Sub(den, big.NewInt(a)), big.NewInt(int64(n-j)), nil))
		d := new(big.Int).Exp(den, big.NewInt(int64(n)), nil)
		out[j] = new(big.Float).SetPrec(256).Quo(new(big.Float).SetPrec(256).SetInt(num), new(big.Float).SetPrec(256).SetInt(d))
	}
	return out
}

// binomLog is log E[exp(iω(M − c0))] of M ~ Bin(n, p) by complex
// arithmetic, and its rounding in units of 2^-52: a few ulps of each
// factor's log, times n.
func binomLog(n int, p float64, c0 int64) func(int, float64) (complex128, float64) {
	return func(_ int, w float64) (complex128, float64) {
		z := complex(1-p, 0) + complex(p, 0)*cmplx.Exp(complex(0, w))
		lz := cmplx.Log(z)
		lg := complex(float64(n), 0)*lz - complex(0, w*float64(c0))
		return lg, 4*float64(n)*(cmplx.Abs(lz)+1) + 4*math.Abs(w*float64(c0))
	}
}

// TestInvertBinomialFolded: the window's values are the law folded modulo
// N, Σ_j P(M = m0 + r + jN). Oracle: the exact binomial masses (closed
// form in 256-bit arithmetic), folded exactly. Every value within the
// stated absErr, on windows that hold the whole support and on windows
// that cut it (where the mass outside wraps round), on sizes 2^a, 3·2^a
// and 5·2^a, centred anywhere (d of either sign), with the spectrum taken
// everywhere, on a list, or cut where it falls below e^Cut.
func TestInvertBinomialFolded(t *testing.T) {
	for _, tc := range []struct {
		name     string
		n        int
		a, e     int64 // p = a/2^e
		size     int
		m0, c0   int64
		spectrum Spectrum
		maxErr   float64 // the stated bound must stay this tight
	}{
		{"whole support, N=256", 200, 3, 3, 256, 0, 0, Spectrum{Cut: math.Inf(-1)}, 1e-12},
		{"whole support, N=384, centred", 300, 1, 2, 384, 0, 75, Spectrum{Cut: math.Inf(-1)}, 1e-12},
		{"window cuts the support, N=64", 2000, 1, 5, 64, 40, 62, Spectrum{Cut: math.Inf(-1)}, 1e-12},
		{"window above the mean, N=80", 2000, 1, 5, 80, 70, 62, Spectrum{Cut: -50, Decreasing: true}, 1e-12},
		{"window below the centre, N=320, d < 0", 2500, 3, 4, 320, 400, 469, Spectrum{Cut: -50, Decreasing: true}, 1e-11},
		// the l where |φ(ω_l)| = |cos(ω_l/2)|^1000 >= e^-60 (l <= 111)
		{"listed spectrum", 1000, 1, 1, 1024, 0, 500, Spectrum{At: upTo(111), Cut: -45}, 1e-11},
	} {
		t.Run(tc.name, func(t *testing.T) {
			exact := exactBinom(tc.n, tc.a, tc.e)
			p := float64(tc.a) / math.Exp2(float64(tc.e))
			folded := make([]*big.Float, tc.size)
			for r := range folded {
				folded[r] = new(big.Float).SetPrec(256)
			}
			for j, v := range exact {
				r := ((int64(j)-tc.m0)%int64(tc.size) + int64(tc.size)) % int64(tc.size)
				folded[r].Add(folded[r], v)
			}
			inv := NewInverter(tc.size)
			q, absErr := inv.Invert(tc.c0-tc.m0, tc.spectrum, binomLog(tc.n, p, tc.c0))
			require.Len(t, q, tc.size)
			worst := 0.0
			for r, v := range q {
				want, _ := folded[r].Float64()
				worst = math.Max(worst, math.Abs(v-want))
			}
			assert.LessOrEqual(t, worst, absErr, "measured against stated")
			assert.LessOrEqual(t, absErr, tc.maxErr, "stated bound")
			t.Logf("worst absolute error %.3g, stated %.3g", worst, absErr)
		})
	}
}

func upTo(n int) []int {
	out := make([]int, n+1)
	for i := range out {
		out[i] = i
	}
	return out
}

// TestModuli: |φ(ω_l)| of a few atoms folded modulo N against the sum
// Σ p_i·exp(iω·m_i) written out (closed form, the angle reduced modulo 2π
// in integers), within the FFT's rounding (a few ulps times log₂N: 1e-14).
func TestModuli(t *testing.T) {
	inv := NewInverter(48)
	at := []int64{0, 3, 7, 50, 101}
	ps := []float64{0.1, 0.2, 0.3, 0.25, 0.15}
	got := inv.Moduli(nil, at, ps)
	require.Len(t, got, 25)
	for l, g := range got {
		var z complex128
		for i, m := range at {
			z += complex(ps[i], 0) * cmplx.Exp(complex(0, 2*math.Pi*float64((int64(l)*m)%48)/48))
		}
		assert.InDelta(t, cmplx.Abs(z), g, 1e-14, "l=%d", l)
	}
}

// TestInvertDeterministic: the same call gives the same bits on a reused
// Inverter whatever it computed before.
func TestInvertDeterministic(t *testing.T) {
	f := binomLog(500, 0.125, 60)
	a := NewInverter(256)
	q1, e1 := a.Invert(60, Spectrum{Cut: -50, Decreasing: true}, f)
	q1 = append([]float64(nil), q1...)
	_, _ = a.Invert(-17, Spectrum{Cut: math.Inf(-1)}, binomLog(90, 0.5, 3))
	q2, e2 := a.Invert(60, Spectrum{Cut: -50, Decreasing: true}, f)
	assert.Equal(t, q1, q2)
	assert.Equal(t, e1, e2)
}
