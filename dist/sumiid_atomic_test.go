package dist_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestSumIIDDiscretePaths: SumIID of a finite discrete law takes, by the
// number of values and of k-fold atoms, the exact listing, the exact
// binomial and three-value paths, the lattice FFT or the bounded
// saddlepoint; each reports itself in Accuracy().Method (or is a listed
// Discrete), and IIDSums gives the same values at (k, x) where it takes
// the same path (and values within rounding where it takes the exact two-
// or three-value path and SumIID lists the atoms).
func TestSumIIDDiscretePaths(t *testing.T) {
	incomm3 := dist.MustDiscrete([]float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3}, []float64{0.6, 0.3, 0.1})
	incomm5 := dist.MustDiscrete([]float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3, 0.31 * math.E / 2, 0.4 * math.Sqrt(7)}, []float64{0.5, 0.3, 0.1, 0.07, 0.03})
	two := dist.MustDiscrete([]float64{0.06, 0.09}, []float64{0.8, 0.2})
	for _, tc := range []struct {
		name   string
		d      dist.Discrete
		k      int
		method string // "" for a listed Discrete
	}{
		{"two values, 1000-fold: listed", two, 1000, ""},
		{"two values, 10^6-fold: binomial", two, 1_000_000, "binomial"},
		{"three values, 43-fold: listed", incomm3, 43, ""},
		{"three values, 10^5-fold: exact", incomm3, 100_000, "exact: binomial tails"},
		{"five values, 12-fold: listed", incomm5, 12, ""},
		{"five values, 2000-fold: saddlepoint", incomm5, 2000, "saddlepoint"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			l, err := dist.SumIID(tc.d, tc.k)
			require.NoError(t, err)
			if tc.method == "" {
				_, ok := l.(dist.Discrete)
				require.True(t, ok, "%T", l)
			} else {
				require.Contains(t, l.(dist.Estimated).Accuracy().Method, tc.method)
				_, atomic := l.(dist.Atomic)
				assert.False(t, atomic)
			}
			assert.InEpsilon(t, float64(tc.k)*tc.d.Mean(), l.Mean(), 1e-12)
			assert.InEpsilon(t, float64(tc.k)*tc.d.Variance(), l.Variance(), 1e-12)
			s, err := dist.NewIIDSums(tc.d)
			require.NoError(t, err)
			m, sd := l.Mean(), math.Sqrt(l.Variance())
			for z := -5.0; z <= 5; z += 0.5 {
				x := m + z*sd + 1e-9*math.Sqrt2
				if tc.method == "" && tc.k == 12 {
					// IIDSums lists at most 1024 atoms; the five-value law
					// at k = 12 (1820 atoms) takes its saddlepoint there
					continue
				}
				if tc.method == "" {
					// the listed atoms against IIDSums' exact two- and
					// three-value paths: rounding apart
					assert.InDelta(t, l.CDF(x), s.CDF(tc.k, x), 1e-13, "z=%g", z)
					assert.InEpsilon(t, l.Survival(x), s.Survival(tc.k, x), 1e-12, "z=%g", z)
					continue
				}
				assert.Equal(t, l.CDF(x), s.CDF(tc.k, x), "z=%g", z)
				assert.Equal(t, l.Survival(x), s.Survival(tc.k, x), "z=%g", z)
			}
		})
	}
}

// TestSumIIDBinomialPath: the two-value path against the binomial tails of
// internal/testref (Loader 2000 masses summed outward), both tails relative
// to their size, at k = 10^5 and 10^7 over ±12 standard deviations; and
// the shared conformance checker (samples drawn as binomial counts).
func TestSumIIDBinomialPath(t *testing.T) {
	const v0, v1, p = 0.061, 0.0937, 0.031
	d := dist.MustDiscrete([]float64{v0, v1}, []float64{1 - p, p})
	for _, k := range []int{100_000, 10_000_000} {
		l, err := dist.SumIID(d, k)
		require.NoError(t, err)
		acc := l.(dist.Estimated).Accuracy()
		mj, sj := float64(k)*p, math.Sqrt(float64(k)*p*(1-p))
		var worst float64
		for z := -12.0; z <= 12; z += 0.5 {
			j := int(math.Floor(mj + z*sj))
			x := float64(k)*v0 + (float64(j)+0.5)*(v1-v0) // half a step above atom j
			want, _ := testref.BinomialTails(k, j, p)
			_, wantAbove := testref.BinomialTails(k, j+1, p)
			got, gotAbove := l.CDF(x), l.Survival(x)
			assert.LessOrEqual(t, math.Abs(got-want), acc.CDFAbs+1e-12*want, "k=%d j=%d", k, j)
			for _, pr := range [][2]float64{{got, want}, {gotAbove, wantAbove}} {
				if pr[1] >= acc.TailFloor {
					r := testref.RelErr(pr[0], pr[1])
					worst = math.Max(worst, r)
					assert.LessOrEqual(t, r, acc.SurvivalRel+1e-11, "k=%d j=%d", k, j)
				}
			}
		}
		t.Logf("k = %d: worst relative tail error %.2g (stated %.2g)", k, worst, acc.SurvivalRel)
	}
	l, err := dist.SumIID(d, 100_000)
	require.NoError(t, err)
	require.NoError(t, disttest.Check(l, disttest.WithSamples(5000)))
}

// TestSumIIDTermsCap: k above MaxSumIIDTerms is refused with an error that
// wraps ErrParam and names k, for every kind of term (an atom-plus-
// exponential mixture at k = MaxInt once ran for minutes), and IIDSums
// answers NaN there.
func TestSumIIDTermsCap(t *testing.T) {
	mix, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(1), dist.MustExponential(2)})
	require.NoError(t, err)
	for _, l := range []dist.Law{mix, dist.MustGamma(2, 1), dist.MustDiscrete([]float64{1, 2, 3}, []float64{0.2, 0.3, 0.5})} {
		for _, k := range []int{dist.MaxSumIIDTerms + 1, math.MaxInt} {
			_, err := dist.SumIID(l, k)
			require.Error(t, err)
			assert.True(t, errors.Is(err, dist.ErrParam))
			var pe *dist.ParamError
			require.ErrorAs(t, err, &pe)
			assert.Equal(t, "k", pe.Param)
			s, err := dist.NewIIDSums(l)
			require.NoError(t, err)
			assert.True(t, math.IsNaN(s.CDF(k, 1)))
			_, err = s.Accuracy(k)
			assert.ErrorIs(t, err, dist.ErrParam)
		}
	}
	_, err = dist.SumIID(dist.MustGamma(2, 1), dist.MaxSumIIDTerms)
	assert.NoError(t, err)
}

// TestIIDSumsAccuracy: IIDSums states, for each kind of term, the error of
// its values: closed forms none (a gamma by Temme's expansion its stated
// error), the exact discrete paths rounding, the
// saddlepoint its proven bound (which must cover its distance from the
// exact listed law, here at k = 40 where both exist: 12 341 atoms).
func TestIIDSumsAccuracy(t *testing.T) {
	g, err := dist.NewIIDSums(dist.MustGamma(2, 1))
	require.NoError(t, err)
	acc, err := g.Accuracy(100)
	require.NoError(t, err)
	assert.Equal(t, "closed form", acc.Method)
	assert.Zero(t, acc.CDFAbs)
	// shape 2000: Temme's expansion, with its stated error (gamma_temme.go)
	acc, err = g.Accuracy(1000)
	require.NoError(t, err)
	assert.Contains(t, acc.Method, "Temme")
	assert.Equal(t, 7e-15, acc.CDFAbs)

	d := dist.MustDiscrete([]float64{0.0134, 0.0521 * math.Sqrt2, 0.2467 * math.Pi / 3, 0.31 * math.E / 2}, []float64{0.5, 0.3, 0.15, 0.05})
	s, err := dist.NewIIDSums(d)
	require.NoError(t, err)
	const k = 40
	acc, err = s.Accuracy(k)
	require.NoError(t, err)
	assert.Contains(t, acc.Method, "saddlepoint")
	exact, err := dist.SumIID(d, k)
	require.NoError(t, err)
	ex, ok := exact.(dist.Discrete)
	require.True(t, ok, "%T", exact)
	worst := 0.0
	for _, at := range ex.Atoms() {
		for _, x := range []float64{at.Value, math.Nextafter(at.Value, 0)} {
			worst = math.Max(worst, math.Abs(s.CDF(k, x)-ex.CDF(x)))
		}
	}
	t.Logf("k = %d: largest error %.3g at the atoms, bound %.3g", k, worst, acc.CDFAbs)
	assert.LessOrEqual(t, worst, acc.CDFAbs)
	acc, err = s.Accuracy(5)
	require.NoError(t, err)
	assert.Contains(t, acc.Method, "exact k-fold atoms")
}

// TestSumIIDShiftedGamma: the k-fold sum of a shifted, scaled gamma
// a·G + b, G ~ Gamma(α, λ), is a·Gamma(kα, λ) + k·b (sums of independent
// gammas of one rate; any probability text, from memory), checked against
// gonum's distuv.Gamma at the shifted points (moderate shapes, where its
// regularised incomplete gamma is accurate to about 1e-14), and IIDSums
// (tilted inversion for an affine map) agrees within its stated error.
func TestSumIIDShiftedGamma(t *testing.T) {
	const alpha, lambda, a, b = 2.0, 1.5, 0.3, 0.06
	x, err := dist.Affine(dist.MustGamma(alpha, lambda), a, b)
	require.NoError(t, err)
	s, err := dist.NewIIDSums(x)
	require.NoError(t, err)
	for _, k := range []int{2, 30, 400} {
		l, err := dist.SumIID(x, k)
		require.NoError(t, err)
		_, numeric := l.(dist.Estimated)
		assert.False(t, numeric, "k=%d: %T", k, l)
		g := distuv.Gamma{Alpha: float64(k) * alpha, Beta: lambda}
		for _, z := range []float64{-3, -1, 0, 1, 3, 6} {
			y := g.Mean() + z*g.StdDev()
			if y <= 0 {
				continue
			}
			v := a*y + float64(k)*b
			assert.InDelta(t, g.CDF(y), l.CDF(v), 1e-13, "k=%d z=%g", k, z)
			assert.InDelta(t, g.Survival(y), l.Survival(v), 1e-13, "k=%d z=%g", k, z)
			acc, err := s.Accuracy(k)
			require.NoError(t, err)
			f, sv := s.Tails(k, v)
			assert.InDelta(t, l.CDF(v), f, acc.CDFAbs, "k=%d z=%g", k, z)
			assert.InDelta(t, l.Survival(v), sv, acc.CDFAbs, "k=%d z=%g", k, z)
		}
	}
}
