package dist_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

func TestSumsBadInput(t *testing.T) {
	// Student's t with 1.5 degrees of freedom has a mean but no variance
	// (a standard fact; gonum distuv.StudentsT reports +Inf).
	heavy, err := dist.FromDistuv(distuv.StudentsT{Mu: 0, Sigma: 1, Nu: 1.5})
	require.NoError(t, err)
	require.True(t, math.IsInf(heavy.Variance(), 1))
	// Student's t with one degree of freedom is the Cauchy law (no mean:
	// gonum reports NaN); Pareto with α = 1.5 has a mean but no variance
	// (gonum reports +Inf). Standard facts.
	cauchy, err := dist.FromDistuv(distuv.StudentsT{Mu: 0, Sigma: 1, Nu: 1})
	require.NoError(t, err)
	pareto, err := dist.FromDistuv(distuv.Pareto{Xm: 1, Alpha: 1.5})
	require.NoError(t, err)
	require.True(t, math.IsInf(pareto.Variance(), 1))
	n := dist.MustNormal(0, 1)
	coin := dist.MustDiscrete([]float64{1, 2}, []float64{0.5, 0.5})
	tests := []struct {
		name     string
		sentinel error
		param    string // for ErrParam: the parameter the error names
		call     func() error
	}{
		{"empty sum", dist.ErrParam, "laws", func() error { _, e := dist.Sum(); return e }},
		{"nil term", dist.ErrParam, "laws[1]", func() error { _, e := dist.Sum(n, nil); return e }},
		{"k = 0", dist.ErrParam, "k", func() error { _, e := dist.SumIID(n, 0); return e }},
		{"k < 0", dist.ErrParam, "k", func() error { _, e := dist.SumIID(n, -3); return e }},
		{"SumIID nil", dist.ErrParam, "l", func() error { _, e := dist.SumIID(nil, 3); return e }},
		{"count nil", dist.ErrParam, "count", func() error { _, e := dist.RandomSum(nil, n); return e }},
		{"term nil", dist.ErrParam, "term", func() error { _, e := dist.RandomSum(coin, nil); return e }},
		{"count atom off the integers", dist.ErrParam, "count", func() error {
			_, e := dist.RandomSum(dist.MustDiscrete([]float64{0, 1.5}, []float64{0.5, 0.5}), n)
			return e
		}},
		{"count negative atom", dist.ErrParam, "count", func() error {
			_, e := dist.RandomSum(dist.MustDiscrete([]float64{-1, 1}, []float64{0.5, 0.5}), n)
			return e
		}},
		{"count continuous", dist.ErrParam, "count", func() error { _, e := dist.RandomSum(dist.MustNormal(3, 1), n); return e }},
		{"count continuous on [0, ∞)", dist.ErrParam, "count", func() error {
			_, e := dist.RandomSum(dist.MustExponential(1), n)
			return e
		}},
		// issue 13: Sum inverted Cauchy + N(0,1) to a median of 6.7e7
		{"sum of a Cauchy term and a normal", dist.ErrMoment, "", func() error { _, e := dist.Sum(cauchy, n); return e }},
		{"sum of a Pareto(1.5) term and a normal", dist.ErrMoment, "", func() error { _, e := dist.Sum(pareto, n); return e }},
		{"sum of two terms without variance", dist.ErrMoment, "", func() error { _, e := dist.Sum(heavy, heavy); return e }},
		{"sum of a term without variance, a normal and a coin", dist.ErrMoment, "", func() error { _, e := dist.Sum(heavy, n, coin); return e }},
		{"k-fold sum of a term without variance", dist.ErrMoment, "", func() error { _, e := dist.SumIID(heavy, 10); return e }},
		{"random sum of a term without variance", dist.ErrMoment, "", func() error { _, e := dist.RandomSum(coin, heavy); return e }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.call()
			require.Error(t, err)
			assert.True(t, errors.Is(err, tc.sentinel), "%v", err)
			if tc.sentinel == dist.ErrParam {
				var pe *dist.ParamError
				require.True(t, errors.As(err, &pe), "%v", err)
				assert.Equal(t, tc.param, pe.Param)
			} else {
				assert.Contains(t, err.Error(), "variance")
			}
		})
	}
}
