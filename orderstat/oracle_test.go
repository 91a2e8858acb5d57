package orderstat_test

import (
	"math"
	"math/big"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/orderstat"
)

// Harter (1961), Biometrika 48:151–165: expected largest of n standard
// normals, to the table's five decimals (testref.HarterExpectedMax), with
// the closed forms 1/√π (n = 2) and 3/(2√π) (n = 3) to 1e-12 (common
// practice: E max of two is σ/√π; of three, 3/(2√π)).
func TestHarterExpectedMaxNormal(t *testing.T) {
	nrm := dist.MustNormal(0, 1)
	for _, ref := range testref.HarterExpectedMax {
		l, err := orderstat.Max(nrm, int64(ref.N))
		require.NoError(t, err)
		assert.InDelta(t, ref.Mean, l.Mean(), testref.HarterTolerance, "n=%d (Harter 1961)", ref.N)
	}
	for _, tc := range []struct {
		n    int64
		want float64
	}{{2, 1 / math.Sqrt(math.Pi)}, {3, 3 / (2 * math.Sqrt(math.Pi))}} {
		l, _ := orderstat.Max(nrm, tc.n)
		assert.LessOrEqual(t, testref.RelErr(l.Mean(), tc.want), 1e-12, "n=%d closed form", tc.n)
	}
}

// bigPow returns x^n and 1 − x^n for 0 <= x <= 1, by repeated squaring in
// 256-bit math/big arithmetic (rounding error below 2^-200·n), rounded to
// float64: an oracle for Beta(n, 1) that is independent of float64 logs.
func bigPow(x float64, n int64) (pow, comp float64) {
	const prec = 256
	base := new(big.Float).SetPrec(prec).SetFloat64(x)
	acc := new(big.Float).SetPrec(prec).SetFloat64(1)
	for e := n; e > 0; e >>= 1 {
		if e&1 == 1 {
			acc.Mul(acc, base)
		}
		base.Mul(base, base)
	}
	one := new(big.Float).SetPrec(prec).SetFloat64(1)
	c := new(big.Float).SetPrec(prec).Sub(one, acc)
	pow, _ = acc.Float64()
	comp, _ = c.Float64()
	return pow, comp
}

// The maximum of n Uniform(0,1) is Beta(n, 1) (David & Nagaraja, Order
// Statistics, §2.2): checked against gonum's distuv.Beta for n <= 1000
// (where its cephes incomplete beta is accurate) and, for every n up to
// 10^9, against x^n and 1 − x^n in 256-bit math/big arithmetic, to 1e-12
// relative in both tails; mean n/(n+1) and variance n/((n+1)²(n+2)) (the
// Beta(n, 1) moments) to 1e-12 and 1e-10 relative (1e-7 for the variance
// at n = 10^9, see below).
func TestMaxUniformIsBeta(t *testing.T) {
	un := dist.MustUniform(0, 1)
	for _, n := range []int64{1, 2, 10, 1000, 1_000_000, 1_000_000_000} {
		l, err := orderstat.Max(un, n)
		require.NoError(t, err)
		nf := float64(n)
		b := distuv.Beta{Alpha: nf, Beta: 1}
		for _, s := range []float64{1e-6, 1e-3, 0.1, 1, 5, 20} {
			x := 1 - s/nf
			if x <= 0 {
				continue
			}
			pow, comp := bigPow(x, n)
			assert.LessOrEqual(t, testref.RelErr(l.CDF(x), pow), 1e-12, "CDF n=%d x=1-%g/n", n, s)
			assert.LessOrEqual(t, testref.RelErr(l.Survival(x), comp), 1e-12, "Survival n=%d x=1-%g/n", n, s)
			if n <= 1000 {
				assert.LessOrEqual(t, testref.RelErr(l.CDF(x), b.CDF(x)), 1e-12, "CDF vs distuv.Beta n=%d", n)
			}
		}
		assert.LessOrEqual(t, testref.RelErr(l.Mean(), nf/(nf+1)), 1e-12, "mean n=%d", n)
		// The variance is limited by the float64 grid near 1 itself: the
		// standard deviation 1/n spans only about 10^16/n units in the last
		// place, so for n = 10^9 the attainable relative accuracy is about
		// 1e-8 (the mean keeps 1e-12).
		vtol := 1e-10
		if n >= 1_000_000_000 {
			vtol = 1e-7
		}
		assert.LessOrEqual(t, testref.RelErr(l.Variance(), nf/((nf+1)*(nf+1)*(nf+2))), vtol, "variance n=%d", n)
		if n <= 1000 {
			assert.LessOrEqual(t, testref.RelErr(l.Mean(), b.Mean()), 1e-12, "mean vs distuv.Beta n=%d", n)
		}
	}
}

// The minimum of n Exp(λ) is Exp(nλ) (David & Nagaraja §2.5): CDF,
// Survival, quantiles, mean and variance against gonum's distuv.Exponential
// and the closed form exp(-nλx), to 1e-12 relative, for n up to 10^9.
func TestMinExponentialIsExponential(t *testing.T) {
	const rate = 0.5
	ex := dist.MustExponential(rate)
	for _, n := range []int64{1, 7, 1000, 1_000_000, 1_000_000_000} {
		l, err := orderstat.Min(ex, n)
		require.NoError(t, err)
		nr := rate * float64(n)
		ref := distuv.Exponential{Rate: nr}
		for _, m := range []float64{1e-6, 0.01, 1, 10, 300} {
			x := m / nr
			assert.LessOrEqual(t, testref.RelErr(l.Survival(x), math.Exp(-nr*x)), 1e-12, "S n=%d m=%g", n, m)
			if m <= 1 {
				assert.LessOrEqual(t, testref.RelErr(l.CDF(x), ref.CDF(x)), 1e-12, "F n=%d m=%g", n, m)
			}
		}
		for _, p := range []float64{1e-9, 0.3, 0.9} {
			// −log1p(−p)/(nλ) (common practice; distuv's Quantile uses
			// log(1−p) and loses digits for small p).
			assert.LessOrEqual(t, testref.RelErr(l.Quantile(p), -math.Log1p(-p)/nr), 1e-12, "Q n=%d p=%g", n, p)
		}
		assert.LessOrEqual(t, testref.RelErr(l.Quantile(0.3), ref.Quantile(0.3)), 1e-12, "Q vs distuv n=%d", n)
		assert.LessOrEqual(t, testref.RelErr(l.UpperQuantile(1e-200), math.Log(1e200)/nr), 1e-12, "UQ n=%d", n)
		assert.LessOrEqual(t, testref.RelErr(l.Mean(), ref.Mean()), 1e-12, "mean n=%d", n)
		assert.LessOrEqual(t, testref.RelErr(l.Variance(), ref.Variance()), 1e-11, "variance n=%d", n)
	}
}

// harmonic returns H_n: by direct summation (smallest terms first) for
// n <= 10^6, and otherwise by the asymptotic expansion
// ln n + γ + 1/(2n) − 1/(12n²) + 1/(120n⁴) (Abramowitz & Stegun 6.3.18
// via ψ(n+1) = H_n − γ; common practice), whose truncation error is below
// 1/(252n⁶).
func harmonic(n int64) float64 {
	if n <= 1_000_000 {
		s := 0.0
		for k := n; k >= 1; k-- {
			s += 1 / float64(k)
		}
		return s
	}
	const gamma = 0.57721566490153286060651209008240243 // Euler–Mascheroni (common practice)
	x := float64(n)
	return math.Log(x) + gamma + 1/(2*x) - 1/(12*x*x) + 1/(120*x*x*x*x)
}

// The expected largest of n Exp(1) values is H_n (Rényi's representation;
// David & Nagaraja §2.5), to 1e-12 relative for n up to 10^9.
func TestMaxExponentialHarmonic(t *testing.T) {
	ex := dist.MustExponential(1)
	for _, n := range []int64{1, 2, 10, 1000, 1_000_000, 10_000_000, 1_000_000_000} {
		l, err := orderstat.Max(ex, n)
		require.NoError(t, err)
		assert.LessOrEqual(t, testref.RelErr(l.Mean(), harmonic(n)), 1e-12, "n=%d", n)
	}
}

// The k-th smallest of n Uniform(0,1) is Beta(k, n−k+1): CDF against
// gonum's distuv.Beta (cephes incomplete beta; moderate n) to 1e-11
// relative on both tails, and quantiles to 1e-10.
func TestKthUniformIsBeta(t *testing.T) {
	un := dist.MustUniform(0, 1)
	for _, tc := range []struct{ k, n int64 }{{2, 5}, {3, 10}, {50, 100}, {10, 1000}, {990, 1000}} {
		l, err := orderstat.Kth(un, tc.k, tc.n)
		require.NoError(t, err)
		b := distuv.Beta{Alpha: float64(tc.k), Beta: float64(tc.n - tc.k + 1)}
		for _, p := range []float64{1e-8, 0.01, 0.3, 0.5, 0.8, 0.999} {
			x := b.Quantile(p)
			assert.LessOrEqual(t, testref.RelErr(l.CDF(x), b.CDF(x)), 1e-11, "CDF k=%d n=%d p=%g", tc.k, tc.n, p)
			if p >= 0.5 {
				// The upper tail from gonum's complement I_{1-x}(n-k+1, k).
				want := mathext.RegIncBeta(float64(tc.n-tc.k+1), float64(tc.k), 1-x)
				assert.LessOrEqual(t, testref.RelErr(l.Survival(x), want), 1e-10, "S k=%d n=%d p=%g", tc.k, tc.n, p)
			}
			assert.LessOrEqual(t, testref.RelErr(l.Quantile(p), x), 1e-10, "Q k=%d n=%d p=%g", tc.k, tc.n, p)
		}
		assert.LessOrEqual(t, testref.RelErr(l.Mean(), b.Mean()), 1e-11, "mean")
		assert.LessOrEqual(t, testref.RelErr(l.Variance(), b.Variance()), 1e-9, "variance")
	}
}

// For huge n, the k-th smallest of n Exp(1) has Rényi's representation
// Σ_{j<k} E_j/(n−j) (David & Nagaraja §2.5): mean Σ 1/(n−j), variance
// Σ 1/(n−j)²; and for k = 2 the closed form
// P(X_(2) > x) = e^{−nx} + n(1−e^{−x})e^{−(n−1)x}. Checked to 1e-9 for n up
// to 10^12 (the Beta quadrature's conditioning grows like √n).
func TestKthExponentialRenyi(t *testing.T) {
	ex := dist.MustExponential(1)
	for _, n := range []int64{100, 1_000_000, 1_000_000_000, 1_000_000_000_000} {
		nf := float64(n)
		l2, err := orderstat.Kth(ex, 2, n)
		require.NoError(t, err)
		for _, m := range []float64{0.01, 0.5, 2, 10, 40} {
			x := m / nf
			want := math.Exp(-nf*x) + nf*-math.Expm1(-x)*math.Exp(-(nf-1)*x)
			assert.LessOrEqual(t, testref.RelErr(l2.Survival(x), want), 1e-9, "k=2 n=%d m=%g", n, m)
		}
		for _, k := range []int64{2, 5, 30} {
			l, err := orderstat.Kth(ex, k, n)
			require.NoError(t, err)
			mean, v := 0.0, 0.0
			for j := int64(0); j < k; j++ {
				mean += 1 / float64(n-j)
				v += 1 / (float64(n-j) * float64(n-j))
			}
			assert.LessOrEqual(t, testref.RelErr(l.Mean(), mean), 1e-9, "mean k=%d n=%d", k, n)
			assert.LessOrEqual(t, testref.RelErr(l.Variance(), v), 1e-8, "variance k=%d n=%d", k, n)
		}
	}
}

// Groups against the explicit product of CDFs (small counts, math.Pow) and
// the k-th against enumeration over all subsets of the nodes.
func TestGroupsAgainstProducts(t *testing.T) {
	a, b, c := dist.MustNormal(0, 1), dist.MustNormal(1, 0.5), dist.MustExponential(2)
	gs := []orderstat.Group{{Law: a, Count: 3}, {Law: b, Count: 2}, {Law: c, Count: 1}}
	mx, err := orderstat.MaxOfGroups(gs)
	require.NoError(t, err)
	mn, err := orderstat.MinOfGroups(gs)
	require.NoError(t, err)
	for _, x := range []float64{-1, 0, 0.3, 1, 2} {
		fp := math.Pow(a.CDF(x), 3) * math.Pow(b.CDF(x), 2) * c.CDF(x)
		sp := math.Pow(a.Survival(x), 3) * math.Pow(b.Survival(x), 2) * c.Survival(x)
		assert.InDelta(t, fp, mx.CDF(x), 1e-15, "max x=%g", x)
		assert.InDelta(t, sp, mn.Survival(x), 1e-15, "min x=%g", x)
	}
	// k-th: P(X_(k) <= x) = P(at least k of the 6 nodes <= x), by
	// enumerating the 2^6 subsets.
	nodes := []dist.Law{a, a, a, b, b, c}
	for k := int64(1); k <= 6; k++ {
		l, err := orderstat.KthOfGroups(gs, k)
		require.NoError(t, err)
		for _, x := range []float64{-0.5, 0.4, 1.2} {
			want := 0.0
			for mask := 0; mask < 1<<len(nodes); mask++ {
				p, cnt := 1.0, int64(0)
				for i, nd := range nodes {
					if mask&(1<<i) != 0 {
						p *= nd.CDF(x)
						cnt++
					} else {
						p *= nd.Survival(x)
					}
				}
				if cnt >= k {
					want += p
				}
			}
			assert.InDelta(t, want, l.CDF(x), 1e-13, "k=%d x=%g", k, x)
		}
	}
}

// Sampling from the structure: each replicate draws every node's value
// from its own law and takes the order statistic; the empirical law must
// be within the Dvoretzky–Kiefer–Wolfowitz–Massart bound at level 1e-6 of
// the exact CDF (testref.KSCritical), with a fixed seed.
func TestGroupsMonteCarloKS(t *testing.T) {
	a, b, c := dist.MustNormal(0, 1), dist.MustNormal(1, 0.5), dist.MustExponential(2)
	gs := []orderstat.Group{{Law: a, Count: 20}, {Law: b, Count: 7}, {Law: c, Count: 13}}
	const reps = 20000
	r := rand.New(rand.NewPCG(7, 11))
	tests := []struct {
		name string
		k    int
	}{{"min", 1}, {"k=5", 5}, {"k=33", 33}, {"max", 40}}
	laws := make([]dist.Law, len(tests))
	for i, tc := range tests {
		l, err := orderstat.KthOfGroups(gs, int64(tc.k))
		require.NoError(t, err)
		laws[i] = l
	}
	samples := make([][]float64, len(tests))
	vals := make([]float64, 40)
	for rep := 0; rep < reps; rep++ {
		i := 0
		for _, g := range gs {
			for j := int64(0); j < g.Count; j++ {
				vals[i] = g.Law.Rand(r)
				i++
			}
		}
		sort.Float64s(vals)
		for ti, tc := range tests {
			samples[ti] = append(samples[ti], vals[tc.k-1])
		}
	}
	crit := testref.KSCritical(reps, testref.KSLevel)
	for ti, tc := range tests {
		d := testref.KSStatistic(samples[ti], laws[ti].CDF)
		assert.LessOrEqual(t, d, crit, "%s: KS distance", tc.name)
	}
}

// Poisson-binomial with equal probabilities is binomial: tails against
// gonum's mathext.RegIncBeta, P(C >= k) = I_p(k, n−k+1), to 1e-10
// relative where the tail is at least 1e-250.
func TestPoissonBinomialEqualIsBinomial(t *testing.T) {
	for _, tc := range []struct {
		p    float64
		n    int64
		many bool // as n separate terms (else one term of count n)
	}{{0.3, 200, true}, {0.01, 1000, true}, {0.5, 20, true}, {0.999, 50, true}, {0.2, 5000, false}, {1e-4, 100000, false}} {
		probs, counts := []float64{tc.p}, []int64{tc.n}
		if tc.many {
			probs, counts = make([]float64, tc.n), nil
			for i := range probs {
				// Slightly different probabilities would merge into one term
				// only if equal; keep them equal and unmerged by passing counts nil.
				probs[i] = tc.p
			}
		}
		c, err := orderstat.PoissonBinomial(probs, counts)
		require.NoError(t, err)
		nf := float64(tc.n)
		assert.LessOrEqual(t, testref.RelErr(c.Mean(), nf*tc.p), 1e-14)
		for k := int64(1); k <= tc.n; k += max(1, tc.n/97) {
			want := mathext.RegIncBeta(float64(k), nf-float64(k)+1, tc.p)
			if want < 1e-250 || want > 0.5 {
				continue
			}
			got := c.Survival(float64(k) - 0.5)
			assert.LessOrEqual(t, testref.RelErr(got, want), 1e-10, "p=%g n=%d k=%d", tc.p, tc.n, k)
		}
	}
}

// Poisson-binomial with distinct probabilities against direct enumeration
// of all 2^n outcomes (n <= 16), every mass to 1e-12 relative.
func TestPoissonBinomialEnumeration(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 5))
	for _, n := range []int{2, 5, 11, 16} {
		probs := make([]float64, n)
		for i := range probs {
			probs[i] = r.Float64()
		}
		want := make([]float64, n+1)
		for mask := 0; mask < 1<<n; mask++ {
			p, cnt := 1.0, 0
			for i, pi := range probs {
				if mask&(1<<i) != 0 {
					p *= pi
					cnt++
				} else {
					p *= 1 - pi
				}
			}
			want[cnt] += p
		}
		c, err := orderstat.PoissonBinomial(probs, nil)
		require.NoError(t, err)
		atoms := c.Atoms()
		got := make([]float64, n+1)
		for _, a := range atoms {
			got[int(a.Value)] = a.Mass
		}
		for j := range want {
			assert.LessOrEqual(t, testref.RelErr(got[j], want[j]), 1e-12, "n=%d j=%d", n, j)
		}
	}
}

// The range of n Uniform(0,1) is Beta(n−1, 2); of n Exp(1) it has the law
// of the maximum of n−1 Exp(1) (memorylessness; David & Nagaraja §2.5);
// of two standard normals it is |X−Y|, half-normal with P(R > r) =
// erfc(r/2) (common practice).
func TestRangeOracles(t *testing.T) {
	ru, err := orderstat.Range(dist.MustUniform(0, 1), 10)
	require.NoError(t, err)
	b := distuv.Beta{Alpha: 9, Beta: 2}
	for _, r := range []float64{0.2, 0.5, 0.8, 0.95} {
		assert.LessOrEqual(t, testref.RelErr(ru.CDF(r), b.CDF(r)), 1e-12, "uniform r=%g", r)
	}
	re, err := orderstat.Range(dist.MustExponential(1), 50)
	require.NoError(t, err)
	for _, r := range []float64{1, 4, 10, 30} {
		want := -math.Expm1(49 * math.Log1p(-math.Exp(-r)))
		assert.LessOrEqual(t, testref.RelErr(re.Survival(r), want), 1e-11, "exponential r=%g", r)
	}
	assert.LessOrEqual(t, testref.RelErr(re.Mean(), harmonic(49)), 1e-12, "exponential mean")
	rn, err := orderstat.Range(dist.MustNormal(0, 1), 2)
	require.NoError(t, err)
	for _, r := range []float64{0.3, 1, 3, 10, 18} {
		assert.LessOrEqual(t, testref.RelErr(rn.Survival(r), math.Erfc(r/2)), 1e-11, "normal r=%g", r)
	}
	assert.LessOrEqual(t, testref.RelErr(rn.Variance(), 2-4/math.Pi), 1e-10, "normal variance (2 − 4/π)")
}

// The range of n draws from a finite discrete law against enumeration of
// all outcomes.
func TestRangeDiscreteEnumeration(t *testing.T) {
	vals, probs := []float64{1, 2, 4, 7}, []float64{0.1, 0.4, 0.3, 0.2}
	d := dist.MustDiscrete(vals, probs)
	const n = 4
	l, err := orderstat.Range(d, n)
	require.NoError(t, err)
	want := map[float64]float64{}
	idx := make([]int, n)
	for {
		p, lo, hi := 1.0, math.Inf(1), math.Inf(-1)
		for _, i := range idx {
			p *= probs[i]
			lo, hi = math.Min(lo, vals[i]), math.Max(hi, vals[i])
		}
		want[hi-lo] += p
		j := 0
		for j < n {
			idx[j]++
			if idx[j] < len(vals) {
				break
			}
			idx[j] = 0
			j++
		}
		if j == n {
			break
		}
	}
	atoms := l.(dist.Atomic).Atoms()
	require.Len(t, atoms, len(want))
	for _, a := range atoms {
		assert.LessOrEqual(t, testref.RelErr(a.Mass, want[a.Value]), 1e-13, "range %g", a.Value)
	}
}
