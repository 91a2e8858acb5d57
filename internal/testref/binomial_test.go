package testref

import (
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// binomialTailsBig returns, for every k in [0, n], P(C <= k) and P(C >= k)
// for C ~ Binomial(n, p) in exact integer arithmetic: p = a/2^s is the
// exact binary value of the float64, so
// P(C = j) = C(n, j)·a^j·(2^s − a)^(n−j) / 2^(s·n), and the tails are exact
// integer sums rounded once to float64. An oracle independent of the
// saddle-point form (binomial theorem; exact arithmetic of math/big).
func binomialTailsBig(n int, p float64) (atMost, atLeast, mass []float64) {
	mant, exp := math.Frexp(p) // p = mant·2^exp, 0.5 <= mant < 1
	const bits = 60
	a := new(big.Int).SetUint64(uint64(math.Ldexp(mant, bits)))
	s := uint(bits - exp) // p = a / 2^s exactly
	for a.Bit(0) == 0 {   // lowest terms, so that dyadic p stay short
		a.Rsh(a, 1)
		s--
	}
	one := new(big.Int).Lsh(big.NewInt(1), s)
	b := new(big.Int).Sub(one, a)
	terms := make([]*big.Int, n+1)
	// N_0 = b^n; N_{j+1} = N_j·(n−j)·a / ((j+1)·b), an exact division.
	t := new(big.Int).Exp(b, big.NewInt(int64(n)), nil)
	for j := 0; j <= n; j++ {
		terms[j] = new(big.Int).Set(t)
		if j < n {
			t.Mul(t, big.NewInt(int64(n-j)))
			t.Mul(t, a)
			t.Quo(t, new(big.Int).Mul(big.NewInt(int64(j+1)), b))
		}
	}
	toFloat := func(x *big.Int) float64 {
		f := new(big.Float).SetPrec(200).SetInt(x)
		f.SetMantExp(f, -int(s)*n)
		v, _ := f.Float64()
		return v
	}
	atMost = make([]float64, n+1)
	atLeast = make([]float64, n+1)
	mass = make([]float64, n+1)
	for j := range mass {
		mass[j] = toFloat(terms[j])
	}
	sum := new(big.Int)
	for j := 0; j <= n; j++ {
		sum.Add(sum, terms[j])
		atMost[j] = toFloat(sum)
	}
	sum.SetInt64(0)
	for j := n; j >= 0; j-- {
		sum.Add(sum, terms[j])
		atLeast[j] = toFloat(sum)
	}
	return atMost, atLeast, mass
}

// binomialRelTol is the relative error bound stated in BinomialTails' doc
// (1e-12) for tails above the float64 normal range.
const binomialRelTol = 1e-12

// The saddle-point tails and probabilities (BinomialMass) against exact
// big-integer sums for n up to 2000, every k, at dyadic and non-dyadic p
// (source: the binomial theorem in exact arithmetic, binomialTailsBig). Tails below 1e-300 are only required
// to be below 2e-300 (the subnormal range, documented).
func TestBinomialTailsAgainstExact(t *testing.T) {
	for _, n := range []int{2, 15, 16, 100, 1000, 2000} {
		for _, p := range []float64{0.5, 0.3, 0.03125, 0.9, 1e-3, 0.999} {
			le, ge, pm := binomialTailsBig(n, p)
			worst := 0.0
			for k := 0; k <= n; k++ {
				gle, gge := BinomialTails(n, k, p)
				for _, c := range [][2]float64{{gle, le[k]}, {gge, ge[k]}, {BinomialMass(n, k, p), pm[k]}} {
					if c[1] < 1e-300 {
						require.Less(t, c[0], 2e-300, "n=%d p=%v k=%d", n, p, k)
						continue
					}
					worst = math.Max(worst, RelErr(c[0], c[1]))
				}
			}
			assert.LessOrEqual(t, worst, binomialRelTol, "n=%d p=%v", n, p)
			t.Logf("n=%d p=%v worst rel err %.2g", n, p, worst)
		}
	}
}

// The Stirling-error table (recalled from memory) against
// log(n!) − (n+½)·log n + n − ½·log 2π from math.Lgamma (Go standard
// library), which cancels to about 1e-14 absolute for n <= 15; and the
// series against the same at n = 16..40.
func TestStirlingError(t *testing.T) {
	for n := 1; n <= 40; n++ {
		lg, _ := math.Lgamma(float64(n + 1))
		fn := float64(n)
		want := lg - (fn+0.5)*math.Log(fn) + fn - 0.5*math.Log(2*math.Pi)
		assert.InDelta(t, want, stirlingError(n), 2e-14, "n=%d", n)
	}
}

// centralMassSeries returns C(2m, m)/4^m from the asymptotic series
// (1/sqrt(πm))·(1 − 1/(8m) + 1/(128m²) + 5/(1024m³) − 21/(32768m⁴))
// (central binomial coefficient expansion — from memory; checked below
// against exact big-integer values).
func centralMassSeries(m float64) float64 {
	x := 1 / m
	return (1 - x/8 + x*x/128 + 5*x*x*x/1024 - 21*x*x*x*x/32768) / math.Sqrt(math.Pi*m)
}

// The median of Binomial(2m, 1/2): by symmetry P(C <= m) = ½ + P(C = m)/2
// exactly, with P(C = m) from the series above. At n = 2e7 this is
// ≈ 0.5000892 (gonum's RegIncBeta gave 0.49708 here). The series is first
// checked against exact C(2m, m)/4^m from math/big at m = 1000, where its
// truncation (next term of order m⁻⁵) is below 1e-15.
func TestBinomialMedianHalf(t *testing.T) {
	c := new(big.Float).SetPrec(200).SetInt(new(big.Int).Binomial(2000, 1000))
	c.SetMantExp(c, -2000)
	exact, _ := c.Float64()
	require.LessOrEqual(t, RelErr(centralMassSeries(1000), exact), 1e-14)

	for _, n := range []int{2000, 2e5, 2e7, 1e8} {
		m := n / 2
		mass := centralMassSeries(float64(m))
		want := 0.5 + mass/2
		le, ge := BinomialTails(n, m, 0.5)
		assert.LessOrEqual(t, RelErr(le, want), binomialRelTol, "P(C<=n/2), n=%d", n)
		assert.LessOrEqual(t, RelErr(ge, want), binomialRelTol, "P(C>=n/2), n=%d", n)
		// P(C = n/2) itself: P(C <= m) − P(C <= m−1).
		below, _ := BinomialTails(n, m-1, 0.5)
		assert.LessOrEqual(t, RelErr(le-below, mass), 1e-8, "P(C=n/2), n=%d", n)
	}
	le, _ := BinomialTails(2e7, 1e7, 0.5)
	assert.InDelta(t, 0.5000892, le, 1e-7)
}

// Far tails at n = 20000 (down to about 1e-300) against exact
// big-integer sums (the binomial theorem, binomialTailsBig), at short
// dyadic p so that the exact integers stay small.
func TestBinomialTailsFarExact(t *testing.T) {
	if testing.Short() {
		t.Skip("slow oracle sweep: skipped under -short (go test -race -short ./...); CI runs it")
	}
	const n = 20000
	for _, p := range []float64{0.5, 0.03125, 0.75} {
		le, ge, _ := binomialTailsBig(n, p)
		worst := 0.0
		for k := 0; k <= n; k += 7 {
			gle, gge := BinomialTails(n, k, p)
			for _, c := range [][2]float64{{gle, le[k]}, {gge, ge[k]}} {
				if c[1] < 1e-300 {
					require.Less(t, c[0], 2e-300, "p=%v k=%d", p, k)
					continue
				}
				worst = math.Max(worst, RelErr(c[0], c[1]))
			}
		}
		assert.LessOrEqual(t, worst, binomialRelTol, "p=%v", p)
		t.Logf("n=%d p=%v worst rel err %.2g", n, p, worst)
	}
}

// Symmetry of Binomial(n, 1/2): P(C <= k) = P(C >= n−k) (the law of C is
// that of n − C). The two sides are computed from different ends of the
// law, so this checks the summation and its stopping; tolerance 1e-13
// (the two masses are the same formula with terms in another order).
func TestBinomialSymmetry(t *testing.T) {
	for _, n := range []int{1001, 2e7, 1e8} {
		sd := math.Sqrt(float64(n)) / 2
		for _, z := range []float64{-40, -12, -5, -1, -0.1, 0, 0.3, 2, 8, 37} {
			k := n/2 + int(z*sd)
			if k < 0 || k > n {
				continue
			}
			le, _ := BinomialTails(n, k, 0.5)
			_, ge := BinomialTails(n, n-k, 0.5)
			if le < 1e-300 {
				assert.Less(t, ge, 2e-300)
				continue
			}
			assert.LessOrEqual(t, RelErr(le, ge), 1e-13, "n=%d k=%d", n, k)
		}
	}
}

// Near the centre, large n, against the normal law with continuity
// correction. Tolerance: the Berry–Esseen bound for the uncorrected normal,
// C·(p² + q²)/sqrt(n·p·q) with C = 0.4748 (Shevtsova 2011 — from memory),
// plus 0.2/sqrt(n·p·q) for the half-unit shift of the continuity correction
// (φ <= 0.4). Loose (6e-5 at n = 1e8, p = 0.3) but far below the 3e-3 error
// of the incomplete beta function at n = 2e7.
func TestBinomialNormalCentre(t *testing.T) {
	phi := func(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }
	for _, n := range []int{2e7, 1e8} {
		for _, p := range []float64{0.5, 0.3, 0.01} {
			q := 1 - p
			mu, sd := float64(n)*p, math.Sqrt(float64(n)*p*q)
			tol := (0.4748*(p*p+q*q) + 0.2) / sd
			for _, z := range []float64{-3, -1, -0.2, 0, 0.5, 2, 3} {
				k := int(math.Round(mu + z*sd))
				le, ge := BinomialTails(n, k, p)
				assert.InDelta(t, phi((float64(k)+0.5-mu)/sd), le, tol, "P(C<=%d) n=%d p=%v", k, n, p)
				assert.InDelta(t, phi(-(float64(k)-0.5-mu)/sd), ge, tol, "P(C>=%d) n=%d p=%v", k, n, p)
				// The two tails overlap in P(C = k): they sum to 1 + P(C = k).
				below, _ := BinomialTails(n, k-1, p)
				assert.InDelta(t, 1, below+ge, 1e-14, "n=%d p=%v k=%d", n, p, k)
			}
		}
	}
}

// BinomialInterval at n = 1e8, p = 1/2 is symmetric (lo = n − hi, by the
// symmetry of the law) and its width matches the normal quantile
// z = 5.33 for level 1e-7 (two-sided; common practice) to within a few
// counts of sqrt(n)/2 = 5000 (Berry–Esseen as above).
func TestBinomialIntervalLarge(t *testing.T) {
	const n = 100_000_000
	lo, hi := BinomialInterval(n, 0.5, 1e-7)
	assert.Equal(t, n, lo+hi, "symmetric")
	half := float64(hi-lo) / 2
	z := half / 5000
	assert.InDelta(t, 5.3267, z, 0.01)
}

// The one-sided forms and the probability at the edges and on bad input
// (their documented values; the binomial law's support is 0 … n).
func TestBinomialOneSidedEdges(t *testing.T) {
	for _, c := range []struct {
		n, k   int
		p      float64
		le, ge float64
		pm     float64
		what   string
	}{
		{10, -1, 0.3, 0, 1, 0, "k below the support"},
		{10, 11, 0.3, 1, 0, 0, "k above the support"},
		{10, 0, 0, 1, 1, 1, "p = 0: all mass at 0"},
		{10, 10, 1, 1, 1, 1, "p = 1: all mass at n"},
		{10, 3, 0, 1, 0, 0, "p = 0, k > 0"},
		{10, 3, 1, 0, 1, 0, "p = 1, k < n"},
	} {
		assert.Equal(t, c.le, BinomialAtMost(c.n, c.k, c.p), c.what)
		assert.Equal(t, c.ge, BinomialAtLeast(c.n, c.k, c.p), c.what)
		assert.Equal(t, c.pm, BinomialMass(c.n, c.k, c.p), c.what)
	}
	for _, p := range []float64{math.NaN(), -0.1, 1.1} {
		assert.True(t, math.IsNaN(BinomialAtMost(5, 2, p)), "p = %v", p)
		assert.True(t, math.IsNaN(BinomialAtLeast(5, 2, p)), "p = %v", p)
		assert.True(t, math.IsNaN(BinomialMass(5, 2, p)), "p = %v", p)
	}
	assert.True(t, math.IsNaN(BinomialMass(-1, 0, 0.5)), "n < 0")
}
