package dist

import (
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestPointTailsExponentialIsErlang forces the shared-panel path on an
// exponential term (IIDSums itself takes the gamma closed form there): the
// k-fold sum of Exp(1) is Gamma(k, 1), so P(S_k <= x) = P(Poisson(x) >= k)
// (any probability text). Oracle: testref.ErlangTails, the smaller tail
// summed outward from Loader's Poisson masses (independent of this
// package's transforms). Over k from 8 renewal standard deviations below
// the point's mean crossing to 8 above, every value is within 1e-12 of the
// oracle relative to the smaller tail and within its own error estimate
// (measured: at most 0.3 of it; 4.8e-13 at 10^6 terms), and from a panel
// for all but a few k.
func TestPointTailsExponentialIsErlang(t *testing.T) {
	p := IIDSums{l: MustExponential(1), tr: gammaTransform(1, 1), mu: 1, v: 1, ok: true, lo: 0, hi: math.Inf(1)}
	for _, tc := range []struct {
		x        float64
		maxWorst float64
	}{
		{1000.5, 1e-12},
		{20000.25, 1e-12},
		{150000.75, 1e-12},
		{1e6 + 0.5, 1e-12},
	} {
		q, err := p.AtPoint(tc.x)
		require.NoError(t, err)
		require.True(t, q.Shared())
		sd := math.Sqrt(tc.x)
		var worst, ratio float64
		single := 0
		n := 0
		for z := -8.0; z <= 8; z += 0.04 {
			k := int(math.Round(tc.x + z*sd))
			f, s, rel, err := q.Evaluate(k)
			require.NoError(t, err)
			wf, ws := testref.ErlangTails(k, tc.x)
			small, got := wf, f
			if ws < wf {
				small, got = ws, s
			}
			e := math.Abs(got-small) / small
			worst = math.Max(worst, e)
			ratio = math.Max(ratio, e/rel)
			assert.LessOrEqual(t, e, rel+1e-15, "x=%g k=%d: %g against %g (estimate %g)", tc.x, k, got, small, rel)
			assert.InDelta(t, 1, f+s, 1e-15)
			if _, _, _, ok := q.st.shared1(k); !ok {
				single++
			}
			n++
		}
		assert.LessOrEqual(t, worst, tc.maxWorst, "x=%g", tc.x)
		assert.LessOrEqual(t, single, n/20, "x=%g: values left to the single inversion", tc.x)
		t.Logf("x=%g: block %d, %d panels, worst relative error %.2e (error/estimate at most %.2f), %d of %d values by the single inversion", tc.x, q.st.block, len(q.st.panels), worst, ratio, single, n)
	}
}

// TestPointTailsSidesSumToOne: the upper tail from an upper panel and the
// lower tail from a lower panel, at the same k, sum to 1 (a law's two
// tails; the oracle is that identity) within 2e-13, at the k within 300 of
// the mean crossing of a law with atoms beside a uniform term at 1.5·10^5
// terms. The law's six masses sum to 1 + 2.2e-16 in floating point; before
// the transform was normalised (massDefect) the tails summed to
// 1 + 3.3e-11 here.
func TestPointTailsSidesSumToOne(t *testing.T) {
	d := MustDiscrete([]float64{2.5, 2.61, 20, 20.88, 80, 83.52}, []float64{0.06, 0.54, 0.03, 0.27, 0.01, 0.09})
	l, err := Sum(d, MustUniform(0.35, 0.52))
	require.NoError(t, err)
	p, err := NewIIDSums(l)
	require.NoError(t, err)
	require.NotZero(t, p.massDefect(), "the test law should carry a mass defect")
	x := 1.5e5 * p.mu
	q, err := p.AtPoint(x)
	require.NoError(t, err)
	st := q.st
	var worst float64
	for _, b := range []int64{-1, 0} {
		up, low := st.newPanel(b, 1), st.newPanel(b, -1)
		lo, hi := st.blockRange(b)
		// the k within 300 (about half a renewal standard deviation) of
		// the crossing, where both sides' panels' sums meet PointTailsRel
		lo, hi = math.Max(lo, float64(st.cross-300)), math.Min(hi, float64(st.cross+300))
		for k := lo; k <= hi; k += 7 {
			y := x - k*p.mu
			vu, _, ok1 := up.value(k, y, st.supTop(k, 1))
			vl, _, ok2 := low.value(k, -y, st.supTop(k, -1))
			require.True(t, ok1 && ok2, "k=%g", k)
			worst = math.Max(worst, math.Abs(vu+vl-1))
			assert.InDelta(t, 1, vu+vl, 2e-13, "k=%g: upper %g + lower %g", k, vu, vl)
		}
	}
	t.Logf("largest |upper + lower − 1| %.2e", worst)
}

// TestTiltedOneStatesExponentRounding: the single tilted inversion that
// IIDSums.Evaluate takes (tiltedOne) states the rounding of the exponent
// k·log M in its estimate (iidExpRound), as PointTails' panels state it.
// The term is Uniform(1, 1.001), whose mean is far from 0 against its
// spread, so that k·log M(θ) at 10^8 to 10^10 terms is some 10^8 to 10^9
// and its rounding moves a tail by 1e-8 to 4e-7 relative, far above the
// sum's own rounding (1e-14). Oracle: the Edgeworth expansion of the
// standardised k-fold sum of a symmetric term to order 1/k² (Petrov 1975,
// Sums of Independent Random Variables, ch. VI; Hall 1992, The Bootstrap
// and Edgeworth Expansion, §2.2),
//
//	S(z) = Q(z) + φ(z)·[κ4/(24k)·He3(z) + κ6/(720k²)·He5(z) + κ4²/(1152k²)·He7(z)],
//
// with the uniform law's standardised cumulants κ4 = −6/5 and κ6 = 48/7
// (its cumulants are B_n·w^n/n, Bernoulli numbers B_n, w the width: any
// probability handbook). The next terms are of order k^-3·z^12, below
// 1e-14 relative at z <= 10 and k >= 10^8; the point's distance from the
// exact mean k·(1 + 1.001)/2 is formed in 200-bit arithmetic. By symmetry
// the lower tail at −z has the same value.
func TestTiltedOneStatesExponentRounding(t *testing.T) {
	const a, b = 1.0, 1.001
	u := MustUniform(a, b)
	p, err := NewIIDSums(u)
	require.NoError(t, err)
	require.True(t, p.ok, "the tilted inversion path")
	he := func(n int, z float64) float64 { // probabilists' Hermite polynomials
		h0, h1 := 1.0, z
		for i := 1; i < n; i++ {
			h0, h1 = h1, z*h1-float64(i)*h0
		}
		return h1
	}
	exceeded := 0
	for _, k := range []int{1e8, 1e9, 1e10} {
		fk := float64(k)
		sd := (b - a) / math.Sqrt(12) * math.Sqrt(fk)
		mean := new(big.Float).SetPrec(200).SetFloat64(a)
		mean.Add(mean, new(big.Float).SetPrec(200).SetFloat64(b))
		mean.Mul(mean, new(big.Float).SetPrec(200).SetFloat64(fk/2))
		for _, z := range []float64{5, 8, 10} {
			for _, sg := range []float64{1, -1} {
				x, _ := new(big.Float).SetPrec(200).Add(mean, big.NewFloat(sg*z*sd)).Float64()
				y := new(big.Float).SetPrec(200).SetFloat64(x)
				yf, _ := y.Sub(y, mean).Float64()
				zz := math.Abs(yf) / sd
				phi := math.Exp(-zz*zz/2) / math.Sqrt(2*math.Pi)
				const k4, k6 = -6.0 / 5, 48.0 / 7
				want := math.Erfc(zz/math.Sqrt2)/2 + phi*(k4/(24*fk)*he(3, zz)+k6/(720*fk*fk)*he(5, zz)+k4*k4/(1152*fk*fk)*he(7, zz))
				f, s, rel := p.tiltedOne(k, x)
				got := s
				if sg < 0 {
					got = f
				}
				e := math.Abs(got/want - 1)
				th := zz / sd // the normal approximation's tilt, for the report
				t.Logf("k=%g z=%+g: error %.3g, stated %.3g (exponent term near %.3g)", fk, sg*z, e, rel, iidExpRound(p.tr, p.mu, fk)(sg*th))
				assert.LessOrEqual(t, e, rel+1e-13, "k=%g z=%+g", fk, sg*z)
				if e > 1e-10 {
					exceeded++ // far beyond the sum's own rounding (1e-14)
				}
			}
		}
	}
	// The check has teeth: most values carry an exponent rounding that the
	// estimate without it (1e-14 + the sum's rounding) would not cover.
	assert.GreaterOrEqual(t, exceeded, 12)
}

// TestPointTailsCheck: Check's three transform values tell a term whose
// transform is a centred log-transform at the panels' starting tilt from
// one that is not, where the values themselves fail (NaN) or would be
// wrong. Oracles: Jensen's inequality (K(θ) >= 0 for a centred law) and
// Hoeffding's lemma (K(θ) <= θ²·(b − a)²/8 on a support [a, b]), any
// probability text. A uniform term passes (and its values are
// probabilities); a transform that is NaN off 0 fails Check and its values
// are NaN; one negative at real tilts (log M(s) = μs − s², not a
// log-transform) and one too large for the support (a normal transform
// claimed on [1, 2]) fail Check.
func TestPointTailsCheck(t *testing.T) {
	u := MustUniform(1, 2)
	good, err := NewIIDSums(u)
	require.NoError(t, err)
	const x = 1000.25
	q, err := good.AtPoint(x)
	require.NoError(t, err)
	require.True(t, q.Shared())
	for _, k := range []int{1, 600, 667, 700, 5000} {
		assert.NoError(t, q.Check(k), "k=%d", k)
	}
	b, a := q.Tails(667)
	assert.True(t, isProb(b) && isProb(a))
	for _, tc := range []struct {
		name    string
		logm    func(s complex128) complex128
		nanVals bool
	}{
		{"NaN off 0", func(s complex128) complex128 {
			if s == 0 {
				return 0
			}
			return complex(math.NaN(), 0)
		}, true},
		{"negative at real tilts", func(s complex128) complex128 { return 1.5*s - s*s }, false},
		{"beyond Hoeffding's bound", func(s complex128) complex128 { return 1.5*s + s*s }, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := IIDSums{l: u, tr: transform{logm: tc.logm, lo: math.Inf(-1), hi: math.Inf(1)}, mu: 1.5, v: 1.0 / 12, ok: true, lo: 1, hi: 2}
			q, err := p.AtPoint(x)
			require.NoError(t, err)
			require.True(t, q.Shared())
			err = q.Check(667)
			require.Error(t, err)
			assert.ErrorIs(t, err, ErrParam)
			if tc.nanVals {
				b, a := q.Tails(667)
				assert.True(t, math.IsNaN(b) && math.IsNaN(a), "the values fail too: %v %v", b, a)
			}
		})
	}
	var zero PointTails
	assert.ErrorIs(t, zero.Check(3), ErrParam)
	assert.ErrorIs(t, q.Check(0), ErrParam)
	assert.ErrorIs(t, q.Check(MaxSumIIDTerms+1), ErrParam)
}
