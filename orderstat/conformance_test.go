package orderstat_test

import (
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/orderstat"
)

// lawCase builds one law of this package for the conformance checker.
type lawCase struct {
	name  string
	build func() (dist.Law, error)
}

func conformanceCases() []lawCase {
	nrm := dist.MustNormal(0, 1)
	nrm2 := dist.MustNormal(0.5, 2)
	ex := dist.MustExponential(2)
	un := dist.MustUniform(1, 3)
	disc := dist.MustDiscrete([]float64{1, 2, 4, 7}, []float64{0.1, 0.4, 0.3, 0.2})
	mixed, _ := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(1), dist.MustExponential(1)})
	return []lawCase{
		{"max normal n=1", func() (dist.Law, error) { return orderstat.Max(nrm, 1) }},
		{"max normal n=1000", func() (dist.Law, error) { return orderstat.Max(nrm, 1000) }},
		{"max normal n=1e12", func() (dist.Law, error) { return orderstat.Max(nrm, 1e12) }},
		{"min exponential n=1e6", func() (dist.Law, error) { return orderstat.Min(ex, 1e6) }},
		// n = 1e9 is checked against Beta(n, 1) in the oracle tests: its
		// density is too concentrated for the checker's mass quadrature.
		{"max uniform n=1000", func() (dist.Law, error) { return orderstat.Max(un, 1000) }},
		{"kth normal 3 of 10", func() (dist.Law, error) { return orderstat.Kth(nrm, 3, 10) }},
		{"kth uniform 500 of 1000", func() (dist.Law, error) { return orderstat.Kth(un, 500, 1000) }},
		{"kth exponential 10 of 1e12", func() (dist.Law, error) { return orderstat.Kth(ex, 10, 1e12) }},
		{"max discrete n=10", func() (dist.Law, error) { return orderstat.Max(disc, 10) }},
		{"kth discrete 3 of 7", func() (dist.Law, error) { return orderstat.Kth(disc, 3, 7) }},
		{"min mixed n=3", func() (dist.Law, error) { return orderstat.Min(mixed, 3) }},
		{"max mixed n=4", func() (dist.Law, error) { return orderstat.Max(mixed, 4) }},
		{"max of groups", func() (dist.Law, error) {
			return orderstat.MaxOfGroups([]orderstat.Group{{Law: nrm, Count: 100}, {Law: nrm2, Count: 10}, {Law: ex, Count: 1000}})
		}},
		{"min of groups", func() (dist.Law, error) {
			return orderstat.MinOfGroups([]orderstat.Group{{Law: nrm, Count: 100}, {Law: nrm2, Count: 10}, {Law: un, Count: 3}})
		}},
		{"kth of groups", func() (dist.Law, error) {
			return orderstat.KthOfGroups([]orderstat.Group{{Law: nrm, Count: 30}, {Law: nrm2, Count: 20}}, 7)
		}},
		{"kth of groups with atoms", func() (dist.Law, error) {
			return orderstat.KthOfGroups([]orderstat.Group{{Law: disc, Count: 3}, {Law: ex, Count: 4}}, 2)
		}},
	}
}

func TestConformance(t *testing.T) {
	for _, tc := range conformanceCases() {
		t.Run(tc.name, func(t *testing.T) {
			l, err := tc.build()
			require.NoError(t, err)
			require.NoError(t, disttest.Check(l))
		})
	}
}
