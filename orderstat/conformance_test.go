package orderstat_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
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
	ln := dist.MustLogNormal(0, 1)
	g5 := dist.MustGamma(0.5, 1) // density infinite at 0
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
		{"max lognormal n=1e6", func() (dist.Law, error) { return orderstat.Max(ln, 1_000_000) }},
		{"min gamma(0.5) n=100", func() (dist.Law, error) { return orderstat.Min(g5, 100) }},
		{"kth lognormal 50 of 100", func() (dist.Law, error) { return orderstat.Kth(ln, 50, 100) }},
		{"min of gamma and lognormal groups", func() (dist.Law, error) {
			return orderstat.MinOfGroups([]orderstat.Group{{Law: g5, Count: 10}, {Law: ln, Count: 20}})
		}},
		{"max of groups", func() (dist.Law, error) {
			return orderstat.MaxOfGroups([]orderstat.Group{{Law: nrm, Count: 100}, {Law: nrm2, Count: 10}, {Law: ex, Count: 1000}})
		}},
		{"min of groups", func() (dist.Law, error) {
			return orderstat.MinOfGroups([]orderstat.Group{{Law: nrm, Count: 100}, {Law: nrm2, Count: 10}, {Law: un, Count: 3}})
		}},
		{"kth of groups", func() (dist.Law, error) {
			return orderstat.KthOfGroups([]orderstat.Group{{Law: nrm, Count: 30}, {Law: nrm2, Count: 20}}, 7)
		}},
		{"kth of groups, middle rank", func() (dist.Law, error) {
			return orderstat.KthOfGroups([]orderstat.Group{{Law: nrm, Count: 100}, {Law: nrm2, Count: 150}, {Law: ex, Count: 50}}, 150)
		}},
		{"kth of groups with atoms", func() (dist.Law, error) {
			return orderstat.KthOfGroups([]orderstat.Group{{Law: disc, Count: 3}, {Law: ex, Count: 4}}, 2)
		}},
	}
}

func TestConformance(t *testing.T) {
	t.Parallel()
	for _, tc := range conformanceCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel() // the laws are immutable; the checks independent
			l, err := tc.build()
			require.NoError(t, err)
			require.NoError(t, disttest.Check(l))
		})
	}
}

// The checker with reference tails: far-tail values from closed forms
// independent of this package, and (through Accuracy) that the reported
// SurvivalRel bounds the error there.
func TestConformanceWithReferences(t *testing.T) {
	ex := dist.MustExponential(2)
	const n = 1_000_000
	mn, err := orderstat.Min(ex, n)
	require.NoError(t, err)
	// Min of n Exp(λ) is Exp(nλ): S(x) = exp(-nλx) (common practice).
	xs := []float64{1e-9, 1e-7, 1e-6, 1e-5, 1e-4, 3e-4}
	require.NoError(t, disttest.Check(mn,
		disttest.WithReference(func(x float64) float64 { return math.Exp(-2 * n * x) }, xs, 1e-12),
		disttest.WithCDFReference(func(x float64) float64 { return -math.Expm1(-2 * n * x) }, xs[:3], 1e-12)))

	// The 2nd smallest of 10^9 Exp(1): P(X_(2) > x) = e^{-nx} + n(1-e^{-x})e^{-(n-1)x}
	// (David & Nagaraja §2.5, Rényi's representation).
	const m = 1e9
	k2, err := orderstat.Kth(dist.MustExponential(1), 2, m)
	require.NoError(t, err)
	xs2 := []float64{1e-11, 1e-10, 1e-9, 1e-8, 2e-8, 4e-8}
	require.NoError(t, disttest.Check(k2,
		disttest.WithReference(func(x float64) float64 {
			return math.Exp(-m*x) + m*-math.Expm1(-x)*math.Exp(-(m-1)*x)
		}, xs2, 1e-9)))

	// The max of 1000 standard normals: S(x) = -expm1(1000·log1p(-Q(x)))
	// with Q from the internal/testref table (1600-bit values).
	mx, err := orderstat.Max(dist.MustNormal(0, 1), 1000)
	require.NoError(t, err)
	var zs []float64
	qz := map[float64]float64{}
	for _, pt := range testref.NormalUpperTail {
		if pt.Z >= 3 {
			zs = append(zs, pt.Z)
			qz[pt.Z] = pt.Q
		}
	}
	require.NoError(t, disttest.Check(mx,
		disttest.WithReference(func(x float64) float64 { return -math.Expm1(1000 * math.Log1p(-qz[x])) }, zs, 1e-11)))
}
