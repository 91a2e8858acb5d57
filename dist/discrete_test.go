package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestDiscreteAtAndBetweenAtoms: CDF and Survival of {1: 0.2, 2: 0.5,
// 5: 0.3} at, just below and between the atoms, by hand.
func TestDiscreteAtAndBetweenAtoms(t *testing.T) {
	d := dist.MustDiscrete([]float64{5, 1, 2}, []float64{0.3, 0.2, 0.5}) // unsorted on purpose
	tests := []struct {
		x, cdf float64
	}{
		{math.Inf(-1), 0}, {0, 0}, {math.Nextafter(1, 0), 0},
		{1, 0.2}, {1.5, 0.2}, {math.Nextafter(2, 0), 0.2},
		{2, 0.7}, {4.999, 0.7}, {math.Nextafter(5, 0), 0.7},
		{5, 1}, {6, 1}, {math.Inf(1), 1},
	}
	for _, tc := range tests {
		assert.InDelta(t, tc.cdf, d.CDF(tc.x), 1e-15, "CDF(%v)", tc.x)
		assert.InDelta(t, 1-tc.cdf, d.Survival(tc.x), 1e-15, "Survival(%v)", tc.x)
	}
	for _, tc := range []struct{ p, want float64 }{
		{0, 1}, {1e-300, 1}, {0.2, 1}, {math.Nextafter(0.2, 1), 2}, {0.7, 2}, {0.71, 5}, {1, 5},
	} {
		assert.Equal(t, tc.want, d.Quantile(tc.p), "Quantile(%v)", tc.p)
	}
	for _, tc := range []struct{ q, want float64 }{
		{1, 1}, {0.8, 1}, {0.5, 2}, {0.3, 2}, {0.29, 5}, {1e-300, 5}, {0, 5},
	} {
		assert.Equal(t, tc.want, d.UpperQuantile(tc.q), "UpperQuantile(%v)", tc.q)
	}
	assert.InDelta(t, 2.7, d.Mean(), 1e-15)      // 0.2 + 1 + 1.5
	assert.InDelta(t, 2.41, d.Variance(), 1e-14) // 9.7 - 2.7²
	assert.Equal(t, 3, d.Len())
	lo, hi := d.Support()
	assert.Equal(t, [2]float64{1, 5}, [2]float64{lo, hi})
	assert.Equal(t, []dist.Atom{{Value: 1, Mass: 0.2}, {Value: 2, Mass: 0.5}, {Value: 5, Mass: 0.3}}, d.Atoms())
}

// TestDiscreteUpperTailIsDirect: a 1e-20 top atom keeps its survival
// exactly, where 1 - CDF would give 0.
func TestDiscreteUpperTailIsDirect(t *testing.T) {
	d := dist.MustDiscrete([]float64{0, 1, 2}, []float64{0.5, 0.5, 1e-20})
	assert.LessOrEqual(t, testref.RelErr(d.Survival(1.5), 1e-20), 1e-15)
	assert.LessOrEqual(t, testref.RelErr(d.Survival(1), 1e-20), 1e-15)
	assert.Equal(t, 1.0, d.CDF(1.5))
	assert.Equal(t, 2.0, d.UpperQuantile(1e-21))
	assert.Equal(t, 1.0, d.UpperQuantile(2e-20))
}

// TestDiscreteBinomialAgainstBeta: the CDF and Survival of a
// Binomial(60, 0.3) built atom by atom against testref.BinomialTails
// (Loader 2000 masses summed outward from the tail's end nearest the mode;
// checked there against exact big-integer sums), including the far upper
// tail P(C >= 55) ≈ 1e-24.
func TestDiscreteBinomialAgainstBeta(t *testing.T) {
	const n, p = 60, 0.3
	d := binomialLaw(n, p)
	for _, k := range []int{0, 5, 18, 30, 45, 54, 59} {
		atMost, _ := testref.BinomialTails(n, k, p)
		_, above := testref.BinomialTails(n, k+1, p)
		assert.LessOrEqual(t, testref.RelErr(d.CDF(float64(k)), atMost), 1e-12, "CDF(%d)", k)
		assert.LessOrEqual(t, testref.RelErr(d.Survival(float64(k)), above), 1e-11, "Survival(%d)", k)
	}
	assert.InDelta(t, n*p, d.Mean(), 1e-12)
	assert.InDelta(t, n*p*(1-p), d.Variance(), 1e-11)
}

// TestDiscreteInputOrder: NewDiscrete takes sorted values with distinct
// neighbours straight into its tables and sorts and merges any others;
// Binomial(60, 0.3)'s masses given in order, reversed and with a zero
// mass between every two give the same atoms bit for bit, and each law's
// tails match testref.BinomialTails (Loader 2000 masses, checked there
// against exact big-integer sums) as in TestDiscreteBinomialAgainstBeta.
func TestDiscreteInputOrder(t *testing.T) {
	const n, p = 60, 0.3
	vs, ps := binomialMasses(n, p)
	sorted := dist.MustDiscrete(vs, ps).Atoms()
	var rvs, rps, zvs, zps []float64
	for i, v := range vs {
		j := len(vs) - 1 - i
		rvs, rps = append(rvs, vs[j]), append(rps, ps[j])
		zvs, zps = append(zvs, v, v+0.5), append(zps, ps[i], 0)
	}
	for _, tc := range []struct {
		name          string
		values, probs []float64
	}{{"sorted", vs, ps}, {"reversed", rvs, rps}, {"zero masses between", zvs, zps}} {
		d, err := dist.NewDiscrete(tc.values, tc.probs)
		require.NoError(t, err, tc.name)
		assert.Equal(t, sorted, d.Atoms(), tc.name)
		for _, k := range []int{0, 18, 45, 59} {
			atMost, _ := testref.BinomialTails(n, k, p)
			_, above := testref.BinomialTails(n, k+1, p)
			assert.LessOrEqual(t, testref.RelErr(d.CDF(float64(k)), atMost), 1e-12, "%s: CDF(%d)", tc.name, k)
			assert.LessOrEqual(t, testref.RelErr(d.Survival(float64(k)), above), 1e-11, "%s: Survival(%d)", tc.name, k)
		}
	}
}

// TestAffineDiscrete: an affine map of a Discrete is the Discrete of the
// mapped atoms, by hand: a negative scale reverses their order (−2·X + 1
// of {1: 0.2, 2: 0.3, 3: 0.5} is {−5: 0.5, −3: 0.3, −1: 0.2}), and atoms
// the map brings within dist.AtomMergeTolerance merge (X + 10^6 of
// {1: 0.5, 1 + 10^-11: 0.5}: the two sums round to the same float64).
func TestAffineDiscrete(t *testing.T) {
	for _, tc := range []struct {
		name          string
		values, probs []float64
		scale, shift  float64
		want          []dist.Atom
	}{
		{"negative scale", []float64{1, 2, 3}, []float64{0.2, 0.3, 0.5}, -2, 1,
			[]dist.Atom{{Value: -5, Mass: 0.5}, {Value: -3, Mass: 0.3}, {Value: -1, Mass: 0.2}}},
		{"merged by the shift", []float64{1, 1 + 1e-11}, []float64{0.5, 0.5}, 1, 1e6,
			[]dist.Atom{{Value: 1e6 + 1, Mass: 1}}},
	} {
		l, err := dist.Affine(dist.MustDiscrete(tc.values, tc.probs), tc.scale, tc.shift)
		require.NoError(t, err, tc.name)
		d, ok := l.(dist.Discrete)
		require.True(t, ok, tc.name)
		got := d.Atoms()
		require.Len(t, got, len(tc.want), tc.name)
		for i, a := range got {
			assert.Equal(t, tc.want[i].Value, a.Value, tc.name)
			assert.InDelta(t, tc.want[i].Mass, a.Mass, 1e-16, tc.name)
		}
	}
}

// TestDiscreteMerging: values within dist.AtomMergeTolerance (relative)
// merge into one atom at their mass-weighted mean; farther ones do not;
// zero-probability values are dropped.
func TestDiscreteMerging(t *testing.T) {
	tests := []struct {
		name   string
		values []float64
		probs  []float64
		want   []dist.Atom
	}{
		{"exact duplicates", []float64{2, 2, 3}, []float64{0.25, 0.25, 0.5},
			[]dist.Atom{{Value: 2, Mass: 0.5}, {Value: 3, Mass: 0.5}}},
		{"within 1e-13 relative", []float64{1, 1 + 1e-13, 2}, []float64{0.25, 0.25, 0.5},
			[]dist.Atom{{Value: 1 + 0.5e-13, Mass: 0.5}, {Value: 2, Mass: 0.5}}},
		{"large values within tolerance", []float64{1e6, 1e6 + 1e-7}, []float64{0.5, 0.5},
			[]dist.Atom{{Value: 1e6 + 0.5e-7, Mass: 1}}},
		{"1e-11 relative apart stays two", []float64{1, 1 + 1e-11}, []float64{0.5, 0.5},
			[]dist.Atom{{Value: 1, Mass: 0.5}, {Value: 1 + 1e-11, Mass: 0.5}}},
		{"0 and 1e-300 stay two", []float64{0, 1e-300}, []float64{0.5, 0.5},
			[]dist.Atom{{Value: 0, Mass: 0.5}, {Value: 1e-300, Mass: 0.5}}},
		{"zero probability dropped", []float64{1, 2, 3}, []float64{0.5, 0, 0.5},
			[]dist.Atom{{Value: 1, Mass: 0.5}, {Value: 3, Mass: 0.5}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d, err := dist.NewDiscrete(tc.values, tc.probs)
			require.NoError(t, err)
			got := d.Atoms()
			require.Len(t, got, len(tc.want))
			for i := range got {
				assert.InDelta(t, tc.want[i].Value, got[i].Value, 1e-15*math.Max(1, math.Abs(tc.want[i].Value)))
				assert.InDelta(t, tc.want[i].Mass, got[i].Mass, 1e-16)
			}
		})
	}
}

// TestDiscreteProbSum: probabilities must sum to 1 within
// dist.ProbSumTolerance = 1e-12; accepted ones are renormalised.
func TestDiscreteProbSum(t *testing.T) {
	for _, tc := range []struct {
		off float64
		ok  bool
	}{{0, true}, {5e-13, true}, {-5e-13, true}, {2e-12, false}, {-2e-12, false}, {-0.1, false}, {0.5, false}} {
		d, err := dist.NewDiscrete([]float64{0, 1}, []float64{0.5, 0.5 + tc.off})
		if !tc.ok {
			assertParamError(t, err, "NewDiscrete", "probs")
			assert.Contains(t, err.Error(), "sum")
			continue
		}
		require.NoError(t, err, "sum 1%+g", tc.off)
		s := 0.0
		for _, a := range d.Atoms() {
			s += a.Mass
		}
		assert.InDelta(t, 1, s, 2e-16, "renormalised, sum 1%+g", tc.off)
	}
}

func TestNewDiscreteBadInput(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name          string
		values, probs []float64
		param         string
	}{
		{"empty", nil, nil, "values"},
		{"length mismatch", []float64{1, 2}, []float64{1}, "probs"},
		{"NaN value", []float64{1, nan}, []float64{0.5, 0.5}, "values[1]"},
		{"infinite value", []float64{-inf, 1}, []float64{0.5, 0.5}, "values[0]"},
		{"negative probability", []float64{1, 2, 3}, []float64{0.5, 0.7, -0.2}, "probs[2]"},
		{"NaN probability", []float64{1, 2}, []float64{nan, 1}, "probs[0]"},
		{"infinite probability", []float64{1, 2}, []float64{inf, 0}, "probs[0]"},
		{"all zero", []float64{1, 2}, []float64{0, 0}, "probs"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := dist.NewDiscrete(tc.values, tc.probs)
			assertParamError(t, err, "NewDiscrete", tc.param)
			assert.Panics(t, func() { dist.MustDiscrete(tc.values, tc.probs) })
		})
	}
}

func TestPointMass(t *testing.T) {
	d := dist.MustPointMass(-7.5)
	assert.Equal(t, 0.0, d.CDF(math.Nextafter(-7.5, -8)))
	assert.Equal(t, 1.0, d.CDF(-7.5))
	assert.Equal(t, 1.0, d.Survival(math.Nextafter(-7.5, -8)))
	assert.Equal(t, 0.0, d.Survival(-7.5))
	assert.Equal(t, -7.5, d.Quantile(0.3))
	assert.Equal(t, -7.5, d.Mean())
	assert.Equal(t, 0.0, d.Variance())
	assert.Equal(t, "PointMass(-7.5)", d.String())
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		_, err := dist.NewPointMass(v)
		assertParamError(t, err, "NewPointMass", "v")
		assert.Panics(t, func() { dist.MustPointMass(v) })
	}
}

// TestDiscreteTransforms: CF Σ p·e^{itv} and CGF log Σ p·e^{sv} (common
// practice) for a fair coin on {0, 1}: φ(π) = 0, K(1) = log((1+e)/2), and
// the CGF stays finite where e^{sv} overflows.
func TestDiscreteTransforms(t *testing.T) {
	d := dist.MustDiscrete([]float64{0, 1}, []float64{0.5, 0.5})
	assert.InDelta(t, 0, real(d.CF(math.Pi)), 1e-16)
	assert.InDelta(t, 0, imag(d.CF(math.Pi)), 1e-16)
	assert.InDelta(t, math.Log((1+math.E)/2), d.CGF(1), 1e-15)
	assert.InDelta(t, 1000-math.Ln2, d.CGF(1000), 1e-12)
	assert.InDelta(t, -math.Ln2, d.CGF(-1000), 1e-12)
}
