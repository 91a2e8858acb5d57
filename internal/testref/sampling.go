package testref

import (
	"math"
	"slices"
)

// KSStatistic returns the Kolmogorov–Smirnov distance
// sup_x |F_n(x) - F(x)| between the empirical distribution of samples and
// the distribution function cdf. It is exact for continuous and for
// discontinuous cdf alike: at each distinct sample value v it compares
// F_n(v) with cdf(v) and F_n(v⁻) with cdf just below v (the next float64
// down), which are where the supremum of a difference of two
// right-continuous step-and-ramp functions is reached. samples is not
// modified. NaN samples make the result NaN; an empty slice gives 0.
func KSStatistic(samples []float64, cdf func(float64) float64) float64 {
	n := len(samples)
	if n == 0 {
		return 0
	}
	xs := slices.Clone(samples)
	for _, x := range xs {
		if math.IsNaN(x) {
			return math.NaN()
		}
	}
	slices.Sort(xs)
	fn := float64(n)
	d := 0.0
	for i := 0; i < n; {
		j := i
		for j < n && xs[j] == xs[i] {
			j++
		}
		v := xs[i]
		below := cdf(math.Nextafter(v, math.Inf(-1)))
		at := cdf(v)
		d = max(d, math.Abs(float64(i)/fn-below))
		d = max(d, math.Abs(float64(j)/fn-at))
		i = j
	}
	return d
}

// KSGridBounds bounds the Kolmogorov–Smirnov distance sup_x |F_n(x) − F(x)|
// of samples to the law F = cdf from F evaluated at m+1 of the sorted
// samples only (2·(m+1) evaluations, where KSStatistic makes two a
// distinct sample: for laws whose each evaluation is costly). With grid
// points g_0 < … < g_m, both F_n and F are non-decreasing, so on
// (g_j, g_{j+1}) F_n lies in [F_n(g_j), F_n(g_{j+1}⁻)] and F in
// [F(g_j), F(g_{j+1}⁻)]:
//
//	sup |F_n − F| <= max_j max(F_n(g_{j+1}⁻) − F(g_j), F(g_{j+1}⁻) − F_n(g_j))
//
// together with the exact differences at the grid points and the ends
// (F_n = 0 below g_0, 1 from g_m on). It returns that upper bound and the
// exact lower bound max_j |F_n(g_j) − F(g_j)|; the upper bound exceeds the
// distance by at most about 1/m plus F's rise over one grid interval
// (about 1/m again when F is near F_n). Atoms are kept exact: F is read
// just below each grid point too. A check that the upper bound is within
// KSCritical is a check that the distance is. samples is not modified; NaN
// samples give NaN; an empty slice gives 0, 0; m < 1 is taken as 1.
func KSGridBounds(samples []float64, cdf func(float64) float64, m int) (upper, lower float64) {
	n := len(samples)
	if n == 0 {
		return 0, 0
	}
	for _, x := range samples {
		if math.IsNaN(x) {
			return math.NaN(), math.NaN()
		}
	}
	xs := slices.Clone(samples)
	slices.Sort(xs)
	m = max(m, 1)
	fn := float64(n)
	var g, at, below, fAt, fBelow []float64
	for j := 0; j <= m; j++ {
		x := xs[j*(n-1)/m]
		if len(g) > 0 && x == g[len(g)-1] {
			continue
		}
		i, _ := slices.BinarySearch(xs, x) // samples below x
		k := i
		for k < n && xs[k] == x {
			k++
		}
		g = append(g, x)
		below = append(below, float64(i)/fn)
		at = append(at, float64(k)/fn)
		fBelow = append(fBelow, cdf(math.Nextafter(x, math.Inf(-1))))
		fAt = append(fAt, cdf(x))
	}
	for j := range g {
		lower = max(lower, max(math.Abs(at[j]-fAt[j]), math.Abs(below[j]-fBelow[j])))
	}
	upper = max(lower, fBelow[0])         // below the smallest sample F_n = 0
	upper = max(upper, 1-fAt[len(fAt)-1]) // from the largest on F_n = 1
	for j := 0; j+1 < len(g); j++ {
		upper = max(upper, below[j+1]-fAt[j])
		upper = max(upper, fBelow[j+1]-at[j])
	}
	return upper, lower
}

// KSCritical returns the distance ε for which a sample of size n from F
// has P(sup_x |F_n(x) - F(x)| > ε) <= level, by the
// Dvoretzky–Kiefer–Wolfowitz inequality with Massart's constant:
//
//	P(sup |F_n - F| > ε) <= 2·exp(-2nε²),  so  ε = sqrt(ln(2/level) / (2n)).
//
// Source: P. Massart (1990), "The tight constant in the
// Dvoretzky–Kiefer–Wolfowitz inequality", Ann. Probab. 18(3):1269–1283. The
// bound holds for every n (it is not asymptotic) and, being proved for
// continuous F, is conservative for discontinuous F, whose statistic is
// stochastically smaller. It returns NaN unless n >= 1 and 0 < level < 1.
func KSCritical(n int, level float64) float64 {
	if n < 1 || !(level > 0 && level < 1) {
		return math.NaN()
	}
	return math.Sqrt(math.Log(2/level) / (2 * float64(n)))
}

// BinomialInterval returns the acceptance interval [lo, hi] for a count
// C ~ Binomial(n, p) at two-sided level alpha: lo is the largest k with
// P(C < k) <= alpha/2 and hi the smallest k with P(C > k) <= alpha/2, so
// that P(C < lo) + P(C > hi) <= alpha. Found by bisection on BinomialTails.
// It returns (-1, -1) unless n >= 0, 0 <= p <= 1 and 0 < alpha < 1.
func BinomialInterval(n int, p, alpha float64) (lo, hi int) {
	if n < 0 || !(p >= 0 && p <= 1) || !(alpha > 0 && alpha < 1) {
		return -1, -1
	}
	half := alpha / 2
	// lo: largest k in [0, n] with P(C <= k-1) <= half. P(C <= k-1) grows with k.
	a, b := 0, n // invariant: ok(a) true; find the last true
	okLo := func(k int) bool { m, _ := BinomialTails(n, k-1, p); return m <= half }
	for a < b {
		m := a + (b-a+1)/2
		if okLo(m) {
			a = m
		} else {
			b = m - 1
		}
	}
	lo = a
	// hi: smallest k in [0, n] with P(C >= k+1) <= half. P(C >= k+1) falls with k.
	okHi := func(k int) bool { _, m := BinomialTails(n, k+1, p); return m <= half }
	a, b = 0, n
	for a < b {
		m := a + (b-a)/2
		if okHi(m) {
			b = m
		} else {
			a = m + 1
		}
	}
	hi = a
	return lo, hi
}

// KSWithSlack returns a Kolmogorov–Smirnov distance that forgives rounding
// between two computations of the same atom (a sample value and the law's
// atom reached along different arithmetic paths):
//
//	max_v max( F_n(v) − F(v(1+rel)),  F(v(1−rel)) − F_n(v⁻) )
//
// over the distinct positive sample values v. Each term is at most the true
// distance sup|F_n − F| (F is non-decreasing), so the DKW–Massart bound
// (KSCritical) for the true distance bounds this one as well. It assumes
// positive samples; samples is not modified.
func KSWithSlack(samples []float64, cdf func(float64) float64, rel float64) float64 {
	xs := slices.Clone(samples)
	slices.Sort(xs)
	n := float64(len(xs))
	d := 0.0
	for i := 0; i < len(xs); {
		j := i
		for j < len(xs) && xs[j] == xs[i] {
			j++
		}
		v := xs[i]
		d = max(d, float64(j)/n-cdf(v*(1+rel)))
		d = max(d, cdf(v*(1-rel))-float64(i)/n)
		i = j
	}
	return d
}
