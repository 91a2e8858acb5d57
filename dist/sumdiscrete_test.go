package dist_test

import (
	"fmt"
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// exactPMF returns the masses of the sum of independent counts on
// 0, 1, 2, … from the product of their probability generating functions
// (the generating function of a sum of independent counts is the product
// of theirs: Feller 1968, An Introduction to Probability Theory, vol. I,
// XI.2), multiplied out in exact rational arithmetic from the float64
// masses given.
func exactPMF(pmfs [][]float64) []float64 {
	prod := []*big.Rat{big.NewRat(1, 1)}
	for _, p := range pmfs {
		next := make([]*big.Rat, len(prod)+len(p)-1)
		for i := range next {
			next[i] = new(big.Rat)
		}
		for i, a := range prod {
			for j, b := range p {
				next[i+j].Add(next[i+j], new(big.Rat).Mul(a, new(big.Rat).SetFloat64(b)))
			}
		}
		prod = next
	}
	out := make([]float64, len(prod))
	for i, r := range prod {
		out[i], _ = r.Float64()
	}
	return out
}

// TestSumDiscretePoissonBinomial: Bernoulli laws of distinct
// probabilities (a Poisson-binomial count, the failures of nodes in
// different settings) against the exact product of their generating
// functions; each mass within 1e-13 relative where above 1e-280.
func TestSumDiscretePoissonBinomial(t *testing.T) {
	for _, n := range []int{2, 7, 40} {
		var laws []dist.Discrete
		var pmfs [][]float64
		for i := range n {
			p := 0.5 * float64(i+1) / float64(n+1) * (1 + 0.3*math.Sin(float64(i)))
			laws = append(laws, dist.MustDiscrete([]float64{0, 1}, []float64{1 - p, p}))
			pmfs = append(pmfs, []float64{1 - p, p})
		}
		got, err := dist.SumDiscrete(laws...)
		require.NoError(t, err)
		want := exactPMF(pmfs)
		assert.Len(t, got.Atoms(), len(want))
		for _, a := range got.Atoms() {
			j := int(a.Value)
			require.Equal(t, float64(j), a.Value, "an integer count")
			if want[j] > 1e-280 {
				assert.InDelta(t, 1, a.Mass/want[j], 1e-13, "n = %d, j = %d", n, j)
			}
		}
	}
}

// TestSumDiscreteBinomials: binomial laws of one probability add to the
// binomial of the summed trials (closed form), checked against gonum's
// distuv.Binomial (the terms from conformance_test's binomialLaw, by
// log-gamma); and renewal-count-like laws on 0 … 10 of different
// shapes against the exact generating-function product, with the exact
// mean and variance of a sum.
func TestSumDiscreteBinomials(t *testing.T) {
	got, err := dist.SumDiscrete(binomialLaw(30, 0.2), binomialLaw(45, 0.2), binomialLaw(5, 0.2))
	require.NoError(t, err)
	ref := distuv.Binomial{N: 80, P: 0.2}
	for _, a := range got.Atoms() {
		if w := ref.Prob(a.Value); w > 1e-200 {
			assert.InDelta(t, 1, a.Mass/w, 1e-11, "j = %g", a.Value) // gonum's Prob: lgamma, about 1e-13 relative
		}
	}

	var laws []dist.Discrete
	var pmfs [][]float64
	for i := range 6 {
		p := make([]float64, 11)
		v := make([]float64, 11)
		s := 0.0
		for j := range p {
			v[j] = float64(j)
			p[j] = math.Exp(-float64(j) * (0.3 + 0.2*float64(i)))
			s += p[j]
		}
		for j := range p {
			p[j] /= s
		}
		laws, pmfs = append(laws, dist.MustDiscrete(v, p)), append(pmfs, p)
	}
	got, err = dist.SumDiscrete(laws...)
	require.NoError(t, err)
	want := exactPMF(pmfs)
	mean, vari := 0.0, 0.0
	for _, l := range laws {
		mean += l.Mean()
		vari += l.Variance()
	}
	for _, a := range got.Atoms() {
		j := int(a.Value)
		assert.InDelta(t, 1, a.Mass/want[j], 1e-13, "j = %d", j)
	}
	assert.InDelta(t, 1, got.Mean()/mean, 1e-13)
	assert.InDelta(t, 1, got.Variance()/vari, 1e-12)
}

// TestSumDiscreteAsSum: off the integers (a lattice of step 0.25 with
// different origins, a negative one among them) and off any lattice (the
// atoms paired, as Sum pairs them), SumDiscrete gives Sum's law (direct
// pairwise convolution): the same atoms within AtomMergeTolerance and the
// same masses within 1e-14 relative.
func TestSumDiscreteAsSum(t *testing.T) {
	cases := map[string][]dist.Discrete{
		"lattice 0.25": {
			dist.MustDiscrete([]float64{1.25, 1.5, 2.25}, []float64{0.2, 0.5, 0.3}),
			dist.MustDiscrete([]float64{-0.5, 0, 0.75, 1}, []float64{0.1, 0.2, 0.3, 0.4}),
			dist.MustPointMass(3),
		},
		"no lattice": {
			dist.MustDiscrete([]float64{0, 1, math.Sqrt2}, []float64{0.2, 0.5, 0.3}),
			dist.MustDiscrete([]float64{0, math.Pi}, []float64{0.6, 0.4}),
		},
		"point masses": {dist.MustPointMass(2), dist.MustPointMass(-0.5)},
	}
	for name, laws := range cases {
		got, err := dist.SumDiscrete(laws...)
		require.NoError(t, err, name)
		terms := make([]dist.Law, len(laws))
		for i, l := range laws {
			terms[i] = l
		}
		ref, err := dist.Sum(terms...)
		require.NoError(t, err, name)
		want := ref.(dist.Atomic).Atoms()
		require.Len(t, got.Atoms(), len(want), name)
		for i, a := range got.Atoms() {
			assert.InDelta(t, want[i].Value, a.Value, 1e-12*math.Max(1, math.Abs(a.Value)), "%s: atom %d", name, i)
			assert.InDelta(t, 1, a.Mass/want[i].Mass, 1e-14, "%s: atom %d", name, i)
		}
	}
}

// TestSumDiscreteBadInput: no laws, a zero Discrete, and a sum of more
// than MaxSumAtoms atoms (two laws of 1100 atoms off any lattice) are
// errors wrapping ErrParam.
func TestSumDiscreteBadInput(t *testing.T) {
	_, err := dist.SumDiscrete()
	assert.ErrorIs(t, err, dist.ErrParam)
	_, err = dist.SumDiscrete(dist.MustPointMass(1), dist.Discrete{})
	assert.ErrorIs(t, err, dist.ErrParam)
	assert.ErrorContains(t, err, "laws[1]")
	if testing.Short() {
		t.Skip("the atom cap: sorting 1.2 million pairs, a second on the 2-core machine")
	}
	big := func(c float64) dist.Discrete {
		v := make([]float64, 1100)
		p := make([]float64, 1100)
		for i := range v {
			v[i], p[i] = math.Sqrt(float64(i)+c), 1.0/1100
		}
		return dist.MustDiscrete(v, p)
	}
	_, err = dist.SumDiscrete(big(0), big(0.5))
	assert.ErrorIs(t, err, dist.ErrParam)
}

// ExampleSumDiscrete: the failed nodes of three groups (binomial counts
// of different sizes and probabilities), summed exactly.
func ExampleSumDiscrete() {
	total, err := dist.SumDiscrete(binomialLaw(60, 0.01), binomialLaw(180, 0.02), binomialLaw(24, 0.05))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.2f, P(none) %.4f, P(more than 8) %.2e\n", total.Mean(), total.CDF(0), total.Survival(8))
	// Output:
	// mean 5.40, P(none) 0.0042, P(more than 8) 9.46e-02
}
