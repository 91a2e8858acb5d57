package testref

import "math"

// BinomialTails returns P(C <= k) and P(C >= k) for C ~ Binomial(n, p).
//
// Each tail is a sum of binomial probabilities taken from the tail's end
// nearest the mode outward (where the probabilities fall), or, when k lies
// on the other side of the mode, one minus the opposite tail (then the
// answer is not small, P(C <= mode) and P(C >= mode) being well away from
// 0, so nothing is lost to cancellation). Each
// probability is computed in the saddle-point form of C. Loader (2000),
// "Fast and accurate computation of binomial probabilities" (see
// binomialMass); the sum stops once the remaining terms, bounded by a
// geometric series through the log-concavity of the binomial law, are below
// 1e-17 of the sum. So each tail is accurate relative to its own size:
// about 1e-12 relative for n up to 1e8 (the exponent of a probability near
// the float64 underflow is about 700, and its rounding is what is left),
// measured in this package's tests against exact big-integer sums (n up to
// 20000, worst 3e-13) and, for larger n, against the median identity, the
// symmetry at p = 1/2 and the normal law near the centre. Tails below
// the float64 range (about 1e-308) come out as 0 or subnormal. The work is
// about 9·sqrt(n·p·(1−p)) + 1 probabilities at most.
//
// It returns NaN unless n >= 0 and 0 <= p <= 1 (NaN p included).
func BinomialTails(n, k int, p float64) (atMost, atLeast float64) {
	return BinomialAtMost(n, k, p), BinomialAtLeast(n, k, p)
}

// BinomialAtMost returns P(C <= k) for C ~ Binomial(n, p): BinomialTails'
// first value alone, at half the work where one tail is all a check needs.
// It returns NaN unless n >= 0 and 0 <= p <= 1 (NaN p included).
func BinomialAtMost(n, k int, p float64) float64 {
	if v, ok := binomialEdge(n, k, p, false); ok {
		return v
	}
	return binomialAtMost(n, k, p)
}

// BinomialAtLeast returns P(C >= k) for C ~ Binomial(n, p): BinomialTails'
// second value alone. It returns NaN unless n >= 0 and 0 <= p <= 1.
func BinomialAtLeast(n, k int, p float64) float64 {
	if v, ok := binomialEdge(n, k, p, true); ok {
		return v
	}
	return binomialAtLeast(n, k, p)
}

// binomialEdge returns P(C <= k) (or P(C >= k) when upper) where no sum is
// needed: bad parameters (NaN), k beyond the support, and p = 0 or 1.
// Mirrored, P(C >= k) of Binomial(n, p) is P(C' <= n−k) of Binomial(n, 1−p).
func binomialEdge(n, k int, p float64, upper bool) (float64, bool) {
	if n < 0 || !(p >= 0 && p <= 1) {
		return math.NaN(), true
	}
	if upper {
		k, p = n-k, 1-p // exact for p = 0 and 1, the only p used below
	}
	switch {
	case k < 0:
		return 0, true
	case k >= n || p == 0:
		return 1, true
	case p == 1:
		return 0, true
	}
	return 0, false
}

// BinomialMass returns P(C = k) for C ~ Binomial(n, p) in the saddle-point
// form of Loader (2000) (see binomialMass), each term of BinomialTails'
// sums: within the tails' 1e-12 relative (3.2e-13 measured at n = 2000
// against exact big-integer terms). It returns 0
// for k outside 0 … n, and NaN unless n >= 0 and 0 <= p <= 1.
func BinomialMass(n, k int, p float64) float64 {
	switch {
	case n < 0 || !(p >= 0 && p <= 1):
		return math.NaN()
	case k < 0 || k > n:
		return 0
	case p == 0:
		if k == 0 {
			return 1
		}
		return 0
	case p == 1:
		if k == n {
			return 1
		}
		return 0
	}
	return binomialMass(n, k, p)
}

// binomialMode returns floor((n+1)·p), a mode of Binomial(n, p): the
// probabilities rise up to it and fall after it.
func binomialMode(n int, p float64) int {
	m := int(math.Floor(float64(n+1) * p))
	return min(max(m, 0), n)
}

// binomialAtMost returns P(C <= k) for 0 <= k < n and 0 < p < 1.
func binomialAtMost(n, k int, p float64) float64 {
	if k < binomialMode(n, p) {
		return binomialLowerSum(n, k, p)
	}
	return 1 - binomialUpperSum(n, k+1, p)
}

// binomialAtLeast returns P(C >= k) for 0 < k <= n and 0 < p < 1.
func binomialAtLeast(n, k int, p float64) float64 {
	if k > binomialMode(n, p) {
		return binomialUpperSum(n, k, p)
	}
	return 1 - binomialLowerSum(n, k-1, p)
}

// tailStop is the relative size of the neglected remainder of a tail sum.
const tailStop = 1e-17

// binomialLowerSum returns P(C <= k) = Σ_{j<=k} P(C = j) for k below the
// mode, summed from j = k downward. The ratio r_j = P(C = j−1)/P(C = j) =
// j·q/((n−j+1)·p) falls as j falls (log-concavity), so the remainder after
// term j is at most P(C = j)·r_j/(1−r_j).
func binomialLowerSum(n, k int, p float64) float64 {
	q := 1 - p
	sum := 0.0
	for j := k; j >= 0; j-- {
		t := binomialMass(n, j, p)
		sum += t
		if j == 0 || t == 0 {
			break
		}
		r := float64(j) * q / (float64(n-j+1) * p)
		if r < 1 && t*r <= tailStop*sum*(1-r) {
			break
		}
	}
	return sum
}

// binomialUpperSum returns P(C >= k) = Σ_{j>=k} P(C = j) for k above the
// mode, summed from j = k upward; r_j = P(C = j+1)/P(C = j) =
// (n−j)·p/((j+1)·q) falls as j rises.
func binomialUpperSum(n, k int, p float64) float64 {
	q := 1 - p
	sum := 0.0
	for j := k; j <= n; j++ {
		t := binomialMass(n, j, p)
		sum += t
		if j == n || t == 0 {
			break
		}
		r := float64(n-j) * p / (float64(j+1) * q)
		if r < 1 && t*r <= tailStop*sum*(1-r) {
			break
		}
	}
	return sum
}

// binomialMass returns P(C = x) for C ~ Binomial(n, p), 0 <= x <= n,
// 0 < p < 1, in the form of Loader (2000):
//
//	P(C = x) = sqrt(n / (2π·x·(n−x))) ·
//	           exp(δ(n) − δ(x) − δ(n−x) − D(x, n·p) − D(n−x, n·q))
//
// with δ the Stirling-series error (stirlingError) and
// D(x, M) = x·log(x/M) + M − x (deviance), computed without cancellation.
// n·p and n·q are rounded in float64; their rounding errors (found exactly
// with a fused multiply-add and a two-sum) are put back through the
// derivative ∂D/∂M = 1 − x/M, so the result is that of the exact binary p.
func binomialMass(n, x int, p float64) float64 {
	fn := float64(n)
	np := fn * p
	npErr := math.FMA(fn, p, -np) // n·p = np + npErr exactly
	nq := fn - np
	// Two-sum: fn − np = nq + nqErr exactly; true n·q = nq + nqErr − npErr.
	bv := nq - fn
	nqErr := (fn - (nq - bv)) + (-np - bv)
	nqErr -= npErr
	if x == 0 {
		return math.Exp(-deviance(0, np, npErr) - deviance(fn, nq, nqErr))
	}
	if x == n {
		return math.Exp(-deviance(fn, np, npErr) - deviance(0, nq, nqErr))
	}
	fx, fy := float64(x), float64(n-x)
	lc := stirlingError(n) - stirlingError(x) - stirlingError(n-x) -
		deviance(fx, np, npErr) - deviance(fy, nq, nqErr)
	lf := math.Log(2*math.Pi) + math.Log(fx) + math.Log1p(-fx/fn)
	return math.Exp(lc - 0.5*lf)
}

// deviance returns D(x, m+e) = x·log(x/(m+e)) + (m+e) − x for x >= 0,
// m > 0 and a small correction e (|e| <= m·1e-15), as D(x, m) + (1 − x/m)·e.
// When |x − m| < 0.5·(x + m) (m/3 < x < 3m) D(x, m) is summed from the
// series 2x·Σ_{j>=1} v^(2j+1)/(2j+1) + (x − m)·v, v = (x − m)/(x + m),
// which has no cancellation worth the name (Loader 2000, bd0; Loader uses
// the series for |v| < 0.1 only, but the closed form then loses up to ten
// times the rounding of x·log(x/m), 2e-12 relative in tails near 1e-150 at
// n = 20000 in this package's tests; beyond |v| = 0.5 it loses at most
// a factor 3, and the series needs about 26 terms there).
func deviance(x, m, e float64) float64 {
	corr := (1 - x/m) * e
	if x == 0 {
		return m + e
	}
	d := x - m
	if math.Abs(d) < 0.5*(x+m) {
		v := d / (x + m)
		s := d * v
		ej := 2 * x * v
		v2 := v * v
		for j := 1; j < 1000; j++ {
			ej *= v2
			s1 := s + ej/float64(2*j+1)
			if s1 == s {
				break
			}
			s = s1
		}
		return s + corr
	}
	return x*math.Log(x/m) + m - x + corr
}

// stirlingError returns δ(n) = log(n!) − log(sqrt(2πn)·(n/e)^n) for n >= 0:
// the table of Loader (2000) below 16, else the Stirling series
// 1/(12n) − 1/(360n³) + 1/(1260n⁵) − 1/(1680n⁷) + 1/(1188n⁹)
// (Abramowitz & Stegun 1964, eq. 6.1.41 — from memory), whose next term,
// 691/(360360·n¹¹), is below 1e-16 of δ(n) for n >= 16.
func stirlingError(n int) float64 {
	// table holds δ(n) = log(n!) − log(sqrt(2πn)·(n/e)^n) for
	// n = 0..15 (δ(0) = 0 by convention, unused), to 25 digits, as tabulated
	// in Loader (2000) and R's nmath — from memory; checked in the tests
	// against math.Lgamma and against exact rational binomial sums.
	table := [16]float64{
		0,
		0.0810614667953272582196702,
		0.0413406959554092940938221,
		0.02767792568499833914878929,
		0.02079067210376509311152277,
		0.01664469118982119216319487,
		0.01387612882307074799874573,
		0.01189670994589177009505572,
		0.010411265261972096497478567,
		0.009255462182712732917728637,
		0.008330563433362871256469318,
		0.007573675487951840794972024,
		0.006942840107209529865664152,
		0.006408994188004207068439631,
		0.005951370112758847735624416,
		0.005554733551962801371038690,
	}
	if n < len(table) {
		return table[n]
	}
	const (
		s0 = 1.0 / 12
		s1 = 1.0 / 360
		s2 = 1.0 / 1260
		s3 = 1.0 / 1680
		s4 = 1.0 / 1188
	)
	fn := float64(n)
	nn := fn * fn
	return (s0 - (s1-(s2-(s3-s4/nn)/nn)/nn)/nn) / fn
}
