package energy

import (
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

// product returns the law of x·y for independent x, y >= 0: exact when
// either is finite discrete (dist.ScaleByDiscrete), numerical otherwise
// (newProduct).
func product(x, y dist.Law) (dist.Law, error) {
	if d, ok := y.(dist.Discrete); ok {
		return dist.ScaleByDiscrete(x, d)
	}
	if d, ok := x.(dist.Discrete); ok {
		return dist.ScaleByDiscrete(y, d)
	}
	return newProduct(x, y)
}

// sumIID returns the law of the sum of k independent copies of l.
func sumIID(l dist.Law, k int64) (dist.Law, error) {
	if k > int64(^uint(0)>>1) {
		return nil, paramErr("sumIID", "k", k, "too large")
	}
	return dist.SumIID(l, int(k))
}
