package dist

import "fmt"

// latticeSum is the fallback for terms without a known transform.
func latticeSum(terms []Law) (Law, error) {
	return nil, fmt.Errorf("dist.Sum: a term has no known characteristic function: %w", ErrParam)
}

// latticeIID is the fallback of SumIID for a law without a known transform.
func latticeIID(l Law, k int) (Law, error) {
	return nil, fmt.Errorf("dist.SumIID: %v has no known characteristic function: %w", l, ErrParam)
}
