package energy

import (
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// sum returns the law of the sum of independent laws.
func sum(ls ...dist.Law) (dist.Law, error) {
	if len(ls) == 1 {
		return ls[0], nil
	}
	return dist.Sum(ls...)
}

// randomSum returns the law of Σ_{k<=N} Y_k.
func randomSum(count, term dist.Law) (dist.Law, error) { return dist.RandomSum(count, term) }

// product returns the law of x·y for independent x, y >= 0 (dist.Product:
// exact when either is finite discrete, numerical with a stated error, a
// density and a transform otherwise).
func product(x, y dist.Law) (dist.Law, error) { return dist.Product(x, y) }

// sumIID returns the law of the sum of k independent copies of l.
func sumIID(l dist.Law, k int64) (dist.Law, error) {
	if k > int64(^uint(0)>>1) {
		return nil, paramErr("sumIID", "k", k, "too large")
	}
	return dist.SumIID(l, int(k))
}

// invertLaw returns inf{z : CDF(z) >= q} (upper = false) or
// inf{z : Survival(z) <= q} (upper = true) by bracketing from the mean and
// bisecting to adjacent floating-point numbers; NaN for q outside [0, 1].
func invertLaw(l dist.Law, q float64, upper bool) float64 {
	lo, hi := l.Support()
	switch {
	case !(q >= 0 && q <= 1):
		return math.NaN()
	case (!upper && q == 0) || (upper && q == 1):
		return lo
	case (!upper && q == 1) || (upper && q == 0):
		return hi
	}
	ok := func(z float64) bool {
		if upper {
			return l.Survival(z) <= q
		}
		return l.CDF(z) >= q
	}
	a, b := lo, l.Mean()
	step := math.Sqrt(l.Variance())
	for !ok(b) {
		a = b
		b += step
		step *= 2
		if b >= hi {
			b = hi
			break
		}
	}
	for range 200 {
		m := a + (b-a)/2
		if m <= a || m >= b {
			break
		}
		if ok(m) {
			b = m
		} else {
			a = m
		}
	}
	return b
}
