package dist_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// binomialByRatios returns the CDF and survival of Binomial(n, p) on the
// integers j in [lo, hi] (all but about 1e-300 of the mass), from the mass
// ratios P(j+1)/P(j) = (n-j)/(j+1)·p/(1-p) taken outward from the mode and
// normalised by their sum (the textbook recursion; no incomplete beta
// function, whose gonum implementation loses accuracy at n of 10^6 and
// more). Rounding grows with the number of steps: about 1e-12 here.
func binomialByRatios(n int, p float64) (lo int, cdf, surv []float64) {
	mode := int(math.Floor(float64(n+1) * p))
	sd := math.Sqrt(float64(n) * p * (1 - p))
	w := int(40*sd) + 10
	lo, hi := max(0, mode-w), min(n, mode+w)
	r := make([]float64, hi-lo+1)
	r[mode-lo] = 1
	odds := p / (1 - p)
	for j := mode; j < hi; j++ {
		r[j+1-lo] = r[j-lo] * float64(n-j) / float64(j+1) * odds
	}
	for j := mode; j > lo; j-- {
		r[j-1-lo] = r[j-lo] * float64(j) / (float64(n-j+1) * odds)
	}
	total := 0.0
	for _, v := range r {
		total += v
	}
	cdf, surv = make([]float64, len(r)), make([]float64, len(r))
	s := 0.0
	for i, v := range r {
		s += v / total
		cdf[i] = s
	}
	s = 0
	for i := len(r) - 1; i >= 0; i-- {
		surv[i] = s // P(C > lo+i)
		s += r[i] / total
	}
	return lo, cdf, surv
}

func TestSumIIDLatticeFFTIsBinomial(t *testing.T) {
	t.Parallel() // slow: runs beside the others (go test ≤ 90 s on two cores)
	if testing.Short() {
		t.Skip("slow oracle sweep: skipped under -short (go test -race -short ./...); CI runs it")
	}
	// k-fold sums of a law on a lattice v0 + m·δ far beyond the exact
	// convolution's atom limit. The terms Binomial(2, p), Binomial(3, p)
	// and Binomial(40, p) on the lattice: their k-fold sums are
	// Binomial(2k, p), Binomial(3k, p) and Binomial(40k, p) (a standard
	// result), the oracle computed by mass ratios (binomialByRatios). The
	// three-atom term takes SumIID's exact three-value path, the others the
	// lattice FFT.
	const p, v0, step = 0.3, 1.2, 0.37e-3
	three := dist.MustDiscrete([]float64{v0, v0 + step, v0 + 2*step}, []float64{(1 - p) * (1 - p), 2 * p * (1 - p), p * p})
	four := dist.MustDiscrete([]float64{v0, v0 + step, v0 + 2*step, v0 + 3*step},
		[]float64{(1 - p) * (1 - p) * (1 - p), 3 * p * (1 - p) * (1 - p), 3 * p * p * (1 - p), p * p * p})
	vs, ps := make([]float64, 41), make([]float64, 41)
	for j := range vs {
		vs[j] = float64(j)
		ps[j] = binomPMF(40, j, p)
	}
	forty := dist.MustDiscrete(vs, ps)
	cases := []struct {
		name     string
		term     dist.Law
		m, k     int // the k-fold sum is Binomial(m·k, p) on v0k + step·j
		v0, step float64
	}{
		{"three atoms k=1e5 (exact path)", three, 2, 100000, v0, step},
		{"three atoms k=1e6 (exact path)", three, 2, 1000000, v0, step},
		{"four atoms k=1e5", four, 3, 100000, v0, step},
		{"four atoms k=1e6", four, 3, 1000000, v0, step},
		{"41 atoms k=1e5", forty, 40, 100000, 0, 1},
	}
	for _, c := range cases {
		l, err := dist.SumIID(c.term, c.k)
		require.NoError(t, err, c.name)
		acc := l.(dist.Estimated).Accuracy()
		n := c.m * c.k
		lo, cdf, surv := binomialByRatios(n, p)
		sd := math.Sqrt(float64(n) * p * (1 - p))
		var worstAbs, worstRel float64
		for z := -12.0; z <= 12; z += 0.05 {
			j := int(math.Floor(float64(n)*p + z*sd))
			x := float64(c.k)*c.v0 + c.step*(float64(j)+0.5)
			got, gotS := l.CDF(x), l.Survival(x)
			worstAbs = math.Max(worstAbs, math.Abs(got-cdf[j-lo]))
			assert.LessOrEqual(t, math.Abs(got-cdf[j-lo]), acc.CDFAbs, "%s: CDF at j=%d", c.name, j)
			if s := surv[j-lo]; s >= acc.TailFloor {
				r := testref.RelErr(gotS, s)
				worstRel = math.Max(worstRel, r)
				assert.LessOrEqual(t, r, acc.SurvivalRel, "%s: survival at j=%d", c.name, j)
			}
		}
		t.Logf("%s: worst CDF abs %.2e, survival rel %.2e; %+v", c.name, worstAbs, worstRel, acc)
		// issue targets: CDF absolute error <= 1e-10, survival relative
		// error <= 1e-6 wherever the survival is >= 1e-14
		assert.LessOrEqual(t, worstAbs, testref.TolCDF, c.name)
		assert.LessOrEqual(t, worstRel, testref.TolTailRel, c.name)
		assert.LessOrEqual(t, acc.TailFloor, 1e-14, c.name)
		assert.InEpsilon(t, float64(c.k)*c.term.Mean(), l.Mean(), 1e-12)
		assert.InEpsilon(t, float64(c.k)*c.term.Variance(), l.Variance(), 1e-12)
	}
	l, err := dist.SumIID(four, 1000000)
	require.NoError(t, err)
	require.Contains(t, l.(dist.Estimated).Accuracy().Method, "lattice FFT")
	require.NoError(t, disttest.Check(l, disttest.WithSamples(5000)))
}

func TestSumIIDSparseLatticeStaysExact(t *testing.T) {
	// Atoms on a fine lattice (step 1e-7 of the span) whose k-fold sum has
	// few atoms: the exact convolution is used. Oracle: the multinomial
	// masses of two draws, written out.
	d := dist.MustDiscrete([]float64{0, 1e-7, 1}, []float64{0.5, 0.3, 0.2})
	l, err := dist.SumIID(d, 2)
	require.NoError(t, err)
	dd, ok := l.(dist.Discrete)
	require.True(t, ok, "got %T", l)
	require.Equal(t, 6, dd.Len())
	assert.InDelta(t, 0.25, dd.CDF(0), 1e-15)             // 0+0
	assert.InDelta(t, 0.25+0.3+0.09, dd.CDF(3e-7), 1e-15) // + (0,ε) twice and (ε,ε)
	assert.InDelta(t, 0.04, dd.Survival(1.5), 1e-15)      // 1+1
}
