package energy

import (
	"fmt"

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
	if k > dist.MaxSumIIDTerms {
		return nil, paramErr("sumIID", "k", k, fmt.Sprintf("must be at most %d (dist.MaxSumIIDTerms)", dist.MaxSumIIDTerms))
	}
	return dist.SumIID(l, int(k))
}
