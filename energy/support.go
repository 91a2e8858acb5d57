package energy

import (
	"errors"

	"github.com/joulelaw/joulelaw/dist"
)

// errNotYet marks law operations whose dist implementation has not landed.
var errNotYet = errors.New("energy: law operation not available yet")

// sum returns the law of the sum of independent laws.
func sum(ls ...dist.Law) (dist.Law, error) {
	if len(ls) == 1 {
		return ls[0], nil
	}
	return nil, errNotYet
}

// randomSum returns the law of Σ_{k<=N} Y_k.
func randomSum(count, term dist.Law) (dist.Law, error) { return nil, errNotYet }

// product returns the law of x·y for independent x, y.
func product(x, y dist.Law) (dist.Law, error) {
	if d, ok := y.(dist.Discrete); ok {
		return dist.ScaleByDiscrete(x, d)
	}
	if d, ok := x.(dist.Discrete); ok {
		return dist.ScaleByDiscrete(y, d)
	}
	return nil, errNotYet
}
