package orderstat

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// stirlerr against its definition through math.Lgamma (common practice:
// log n! = lgamma(n+1)), to 1e-13 absolute for n where the definition is
// itself well conditioned.
func TestStirlerr(t *testing.T) {
	for _, n := range []float64{1, 2, 5, 15, 16, 30, 36, 80, 81, 200, 501, 1000} {
		lg, _ := math.Lgamma(n + 1)
		want := lg - (n+0.5)*math.Log(n) + n - lnSqrt2Pi
		assert.InDelta(t, want, stirlerr(n), 1e-13*math.Max(1, lg), "n=%g", n)
	}
}

// logBinomPMF against gonum's distuv.Binomial (moderate n, where its
// log-gamma form is accurate) to 1e-12 relative in the probability.
func TestLogBinomPMF(t *testing.T) {
	for _, tc := range []struct{ n, p float64 }{{10, 0.3}, {100, 0.01}, {1000, 0.5}, {50, 0.999}} {
		b := distuv.Binomial{N: tc.n, P: tc.p}
		for x := 0.0; x <= tc.n; x += math.Max(1, math.Floor(tc.n/37)) {
			want := b.Prob(x)
			if want < 1e-280 {
				continue
			}
			got := math.Exp(logBinomPMF(x, tc.n, tc.p, 1-tc.p))
			assert.LessOrEqual(t, testref.RelErr(got, want), 1e-11, "n=%g p=%g x=%g", tc.n, tc.p, x)
		}
	}
}

// The two ways of computing the whole count law agree: the tilted Fourier
// windows and the direct convolution, to 1e-10 relative on every mass
// above 1e-280.
func TestCountMethodsAgree(t *testing.T) {
	terms := []binom{{n: 40, p: 0.1, q: 0.9}, {n: 25, p: 0.6, q: 0.4}, {n: 3, p: 0.97, q: 0.03}, {n: 100, p: 0.002, q: 0.998}}
	cm := newCountModel(terms)
	lo1, a := cm.march()
	lo2, b := cm.convolve()
	n := 0
	for i, v := range b {
		if v < 1e-280 {
			continue
		}
		j := int(lo2) + i - int(lo1)
		if j < 0 || j >= len(a) {
			t.Fatalf("mass at %d missing from the Fourier law", int(lo2)+i)
		}
		assert.LessOrEqual(t, testref.RelErr(a[j], v), 1e-10, "j=%d", int(lo2)+i)
		n++
	}
	assert.Greater(t, n, 100)
}
