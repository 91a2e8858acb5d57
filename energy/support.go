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
	if d, ok := y.(dist.Discrete); ok && d.Len() == 1 {
		return dist.Affine(x, d.Atoms()[0].Value, 0)
	}
	if d, ok := x.(dist.Discrete); ok && d.Len() == 1 {
		return dist.Affine(y, d.Atoms()[0].Value, 0)
	}
	return nil, errNotYet
}
