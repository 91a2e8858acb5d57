package dist

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestSaddlepointAgainstExact compares the second-order saddlepoint of
// atomicSums with the exact k-fold discrete law (all 501 501 atoms listed,
// by multinomial enumeration) for a three-atom law with incommensurate
// values, k = 1000: the difference must stay within the bound from Esseen's
// inequality (edgeworthBound), which the code reports for four or more
// energies.
func TestSaddlepointAgainstExact(t *testing.T) {
	d := MustDiscrete([]float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3}, []float64{0.6, 0.3, 0.1})
	a := newAtomicSums(d)
	const k = 1000
	// The exact law of S_k: every count vector (n0, n1, n2) with its
	// multinomial probability k!/(n0!·n1!·n2!)·0.6^n0·0.3^n1·0.1^n2
	// (501 501 atoms).
	v := []float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3}
	var vals, probs []float64
	lk, _ := math.Lgamma(k + 1)
	for n1 := 0; n1 <= k; n1++ {
		for n2 := 0; n1+n2 <= k; n2++ {
			n0 := k - n1 - n2
			l0, _ := math.Lgamma(float64(n0) + 1)
			l1, _ := math.Lgamma(float64(n1) + 1)
			l2, _ := math.Lgamma(float64(n2) + 1)
			lp := lk - l0 - l1 - l2 + float64(n0)*math.Log(0.6) + float64(n1)*math.Log(0.3) + float64(n2)*math.Log(0.1)
			vals = append(vals, float64(n0)*v[0]+float64(n1)*v[1]+float64(n2)*v[2])
			probs = append(probs, math.Exp(lp))
		}
	}
	sum := 0.0
	for _, p := range probs {
		sum += p
	}
	for i := range probs {
		probs[i] /= sum
	}
	exact, err := NewDiscrete(vals, probs)
	require.NoError(t, err)
	atoms := exact.Atoms()
	m, s := exact.Mean(), math.Sqrt(exact.Variance())
	worst := 0.0
	bound := a.edgeworthBound(k)
	for z := -4.0; z <= 4; z += 0.25 {
		x := m + z*s
		b, c := a.saddle(k, x)
		assert.InDelta(t, 1, b+c, 1e-12)
		raw := math.Abs(b - exact.CDF(x))
		local := 0.0
		for _, at := range atoms {
			if math.Abs(at.Value-x) < 0.1*s {
				local = math.Max(local, at.Mass)
			}
		}
		if testing.Verbose() {
			t.Logf("z=%5.2f error %.2e, largest atom within 0.1 sd %.2e, bound %.2e", z, raw, local, bound)
		}
		worst = math.Max(worst, raw/bound)
	}
	t.Logf("error at most %.3g of the reported bound", worst)
	assert.Less(t, worst, 1.0)
}

// TestBinomialTails checks the two-atom exact path against the binomial
// tails of internal/testref.
func TestBinomialTails(t *testing.T) {
	for _, tc := range []struct {
		n, j int
		p    float64
	}{{100, 30, 0.3}, {1000, 250, 0.3}, {1000, 350, 0.3}, {5000, 10, 0.01}, {5000, 100, 0.01}} {
		b, c := binomialTails(int64(tc.n), int64(tc.j), tc.p)
		wb, _ := testref.BinomialTails(tc.n, tc.j, tc.p)
		_, wc := testref.BinomialTails(tc.n, tc.j+1, tc.p)
		assert.InDelta(t, wb, b, 1e-11*wb+1e-300, "%+v", tc)
		assert.InDelta(t, wc, c, 1e-11*wc+1e-300, "%+v", tc)
	}
}

// TestSaddlepointCommensurate: energies 1, 2 and 3 (in units of e) put S_k
// on a lattice whose atoms are far larger than the multinomial mode; the
// Esseen bound (edgeworthBound, whose far integral meets the lattice's
// peaks of |ψ|) must still cover the saddlepoint's error against the exact
// k-fold law, k = 1000, here convolved directly on the lattice (k steps of
// a three-point probability vector: the pmf on {k, …, 3k}·e).
func TestSaddlepointCommensurate(t *testing.T) {
	const e = 0.0137
	ps := []float64{0.5, 0.3, 0.2}
	d := MustDiscrete([]float64{e, 2 * e, 3 * e}, ps)
	a := newAtomicSums(d)
	const k = 1000
	pmf := []float64{1} // pmf[j] = P(S = (j + n)·e) after n steps
	for range k {
		next := make([]float64, len(pmf)+2)
		for j, q := range pmf {
			for i, p := range ps {
				next[j+i] += q * p
			}
		}
		pmf = next
	}
	cdf := func(x float64) float64 { // P(S_k <= x)
		top := int(math.Floor(x/e+1e-9)) - k
		s := 0.0
		for j := 0; j <= top && j < len(pmf); j++ {
			s += pmf[j]
		}
		return s
	}
	m, s := a.mu*k, a.sd*math.Sqrt(k)
	worst := 0.0
	bound := a.edgeworthBound(k)
	for z := -3.0; z <= 3; z += 0.1 {
		x := m + z*s
		b, _ := a.saddle(k, x)
		worst = math.Max(worst, math.Abs(b-cdf(x))/bound)
	}
	t.Logf("largest error / bound: %.3g (bound %.3g)", worst, bound)
	assert.Less(t, worst, 1.0)
}
