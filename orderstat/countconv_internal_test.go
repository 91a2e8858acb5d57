package orderstat

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// exactBinomMass returns P(Bin(n, a/d) = j) = C(n, j)·a^j·(d−a)^(n−j)/d^n
// (closed form, common practice): the numerator an exact integer, the
// quotient in 256-bit arithmetic.
func exactBinomMass(n, j, a, d int64) *big.Float {
	num := new(big.Int).Binomial(n, j)
	num.Mul(num, new(big.Int).Exp(big.NewInt(a), big.NewInt(j), nil))
	num.Mul(num, new(big.Int).Exp(big.NewInt(d-a), big.NewInt(n-j), nil))
	den := new(big.Int).Exp(big.NewInt(d), big.NewInt(n), nil)
	return new(big.Float).SetPrec(256).Quo(new(big.Float).SetPrec(256).SetInt(num), new(big.Float).SetPrec(256).SetInt(den))
}

func ratFloat(r *big.Float) float64 { f, _ := r.Float64(); return f }

func newExact() *big.Float { return new(big.Float).SetPrec(256) }

// binomRun against the exact binomial masses in rational arithmetic, every
// value within the stated binomValueRel, over the whole support of
// Bin(300, 1/4) (masses from 1e-181 up) and a stretch of Bin(20000, 3/8)
// 70 standard deviations wide; and against gonum's distuv.Binomial (its
// log-gamma form, about 1e-11 relative at these sizes).
func TestBinomRunExact(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ n, a, d, from, to int64 }{{300, 1, 4, 0, 300}, {5000, 3, 8, 1600, 2150}, {5000, 3, 8, 1200, 1600}} {
		p := float64(tc.a) / float64(tc.d)
		lo, pmf, rel := binomRun(binom{n: float64(tc.n), p: p, q: 1 - p}, float64(tc.from), float64(tc.to), 0, nil)
		require.NotEmpty(t, pmf)
		worst := 0.0
		for j := tc.from; j <= tc.to; j += 1 + (tc.to-tc.from)/40 {
			want := ratFloat(exactBinomMass(tc.n, j, tc.a, tc.d))
			i := int(j - int64(lo))
			if want < runCut {
				assert.True(t, i < 0 || i >= len(pmf), "n=%d j=%d: %g below the cut kept", tc.n, j, want)
				continue
			}
			require.True(t, i >= 0 && i < len(pmf), "n=%d j=%d (%g) missing", tc.n, j, want)
			worst = math.Max(worst, testref.RelErr(pmf[i], want))
		}
		assert.LessOrEqual(t, worst, rel, "n=%d", tc.n)
		t.Logf("Bin(%d, %g) on [%d, %d]: worst relative error %.2g against exact arithmetic (stated %.2g)", tc.n, p, tc.from, tc.to, worst, rel)
	}
	b := distuv.Binomial{N: 1000, P: 0.3}
	lo, pmf, _ := binomRun(binom{n: 1000, p: 0.3, q: 0.7}, 0, 1000, 0, nil)
	for i, v := range pmf {
		if want := b.Prob(lo + float64(i)); want > 1e-250 {
			assert.LessOrEqual(t, testref.RelErr(v, want), 1e-10, "j=%g", lo+float64(i))
		}
	}
}

// The two-group count against its closed form P(C = j) = Σ_i P(B₁ = i)·
// P(B₂ = j − i) in exact rational arithmetic (B₁ ~ Bin(30, 1/4), B₂ ~
// Bin(50, 3/8)): both tails at every m, from the fast path, within the
// stated relative error; every atom of PoissonBinomial within its Accuracy.
func TestSplitConvTwoGroupsClosedForm(t *testing.T) {
	const n1, n2 = 30, 50
	mass := make([]*big.Float, n1+n2+1)
	for j := range mass {
		mass[j] = newExact()
	}
	for i := int64(0); i <= n1; i++ {
		a := exactBinomMass(n1, i, 1, 4)
		for k := int64(0); k <= n2; k++ {
			mass[i+k].Add(mass[i+k], newExact().Mul(a, exactBinomMass(n2, k, 3, 8)))
		}
	}
	cm := newCountModel([]binom{{n: n1, p: 0.25, q: 0.75}, {n: n2, p: 0.375, q: 0.625}})
	fast := 0
	for m := 0; m < n1+n2; m++ {
		le, gt := exactTails(mass, m)
		gotLE, gotGT, rel, ok := cm.splitConv(float64(m))
		if !ok {
			continue
		}
		fast++
		assert.LessOrEqual(t, testref.RelErr(gotLE, le), rel, "P(C <= %d)", m)
		assert.LessOrEqual(t, testref.RelErr(gotGT, gt), rel, "P(C > %d)", m)
	}
	assert.Equal(t, n1+n2, fast, "every split by the fast path")
	c, err := PoissonBinomial([]float64{0.25, 0.375}, []int64{n1, n2})
	require.NoError(t, err)
	rel := c.Accuracy().SurvivalRel
	for _, a := range c.Atoms() {
		assert.LessOrEqual(t, testref.RelErr(a.Mass, ratFloat(mass[int(a.Value)])), rel, "P(C = %g)", a.Value)
	}
	assert.Len(t, c.Atoms(), n1+n2+1)
}

// With equal probabilities the count is binomial: the fast path's lower
// tails against gonum's distuv.Binomial CDF (an incomplete beta, about
// 1e-10 relative where it is at least 1e-250), upper tails where they are
// at least 1e-3 (gonum's survival is 1 − CDF).
func TestSplitConvEqualIsBinomial(t *testing.T) {
	for _, tc := range []struct {
		p      float64
		counts []float64
	}{{0.3, []float64{20, 50, 130}}, {0.01, []float64{300, 300, 400}}, {0.9, []float64{10, 15}}, {1e-5, []float64{60, 180, 24, 40}}} {
		var terms []binom
		n := 0.0
		for _, c := range tc.counts {
			terms = append(terms, binom{n: c, p: tc.p, q: 1 - tc.p})
			n += c
		}
		cm := newCountModel(terms)
		b := distuv.Binomial{N: n, P: tc.p}
		fast := 0
		for m := 0.0; m < n; m += math.Max(1, math.Floor(n/97)) {
			le, gt, rel, ok := cm.splitConv(m)
			if !ok {
				continue
			}
			fast++
			require.LessOrEqual(t, rel, 1e-11)
			if want := b.CDF(m); want >= 1e-250 {
				assert.LessOrEqual(t, testref.RelErr(le, want), 1e-10, "p=%g m=%g lower", tc.p, m)
			}
			if want := b.Survival(m); want >= 1e-3 {
				assert.LessOrEqual(t, testref.RelErr(gt, want), 1e-10, "p=%g m=%g upper", tc.p, m)
			}
		}
		assert.Positive(t, fast, "p=%g", tc.p)
	}
}

// The fast path against the exact path (the tilted transform) on random
// counts of 2 to 8 groups, probabilities from 1e-12 to 1 − 1e-12: both
// tails agree within the two stated errors (the transform's 1e-11 and the
// convolution's own), down to tails of 1e-280.
func TestSplitConvMatchesTransform(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 1))
	fast, cases := 0, 0
	for c := 0; c < 40; c++ {
		g := 2 + r.IntN(7)
		terms := make([]binom, g)
		for i := range terms {
			p := math.Pow(10, -12*r.Float64())
			q := 1 - p
			if r.IntN(4) == 0 {
				p, q = q, p
			}
			terms[i] = binom{n: float64(1 + r.IntN(300)), p: p, q: q}
		}
		cm := newCountModel(terms)
		if len(cm.terms) < 2 {
			continue
		}
		for m := 0.0; m < cm.size; m += math.Max(1, math.Floor(cm.size/23)) {
			cases++
			le, gt, rel, ok := cm.splitConv(m)
			if !ok {
				continue
			}
			fast++
			wle, wgt := cm.splitTransform(m)
			tol := rel + 1e-11
			if wle >= 1e-280 {
				assert.LessOrEqual(t, testref.RelErr(le, wle), tol, "case %d m=%g lower %v", c, m, cm.terms)
			}
			if wgt >= 1e-280 {
				assert.LessOrEqual(t, testref.RelErr(gt, wgt), tol, "case %d m=%g upper %v", c, m, cm.terms)
			}
		}
	}
	t.Logf("%d of %d splits by the fast path", fast, cases)
	assert.Greater(t, fast, 50)
}

// convolve (the whole count law by direct convolution, its memory two
// arrays used in turn) against the exact convolution of the terms'
// binomial masses in rational arithmetic (exactBinomMass, closed form):
// every mass above 1e-290 within the stated relative error, for three
// terms (the odd one carried through a round, into the array the next
// round writes) and five, and with a term, Bin(100, 1/500), whose run
// (all 101 values, down to 1e-270) outgrows its estimated width
// (termWidth, 76), so that the arrays are allocated anew.
func TestConvolveExact(t *testing.T) {
	type term struct{ n, a, d int64 }
	long := term{100, 1, 500}
	p := float64(long.a) / float64(long.d)
	require.Greater(t, long.n+1, int64(math.Ceil(termWidth(binom{n: float64(long.n), p: p, q: 1 - p}))), "the run outgrows its estimate")
	for _, ts := range [][]term{
		{{30, 1, 4}, {40, 1, 10}, {12, 5, 8}},
		{{30, 1, 4}, long, {12, 5, 8}},
		{{7, 1, 2}, {40, 1, 10}, long, {25, 3, 5}, {9, 7, 8}},
	} {
		var terms []binom
		mass := []*big.Float{newExact().SetInt64(1)}
		for _, tm := range ts {
			q := float64(tm.a) / float64(tm.d)
			terms = append(terms, binom{n: float64(tm.n), p: q, q: 1 - q})
			next := make([]*big.Float, len(mass)+int(tm.n))
			for j := range next {
				next[j] = newExact()
			}
			for k := int64(0); k <= tm.n; k++ {
				b := exactBinomMass(tm.n, k, tm.a, tm.d)
				for i, m := range mass {
					next[i+int(k)].Add(next[i+int(k)], newExact().Mul(m, b))
				}
			}
			mass = next
		}
		cm := newCountModel(terms)
		require.Len(t, cm.terms, len(ts))
		lo, pmf, rel := cm.convolve()
		checked := 0
		for j, m := range mass {
			want := ratFloat(m)
			if want < 1e-290 {
				continue
			}
			i := j - int(lo)
			require.True(t, i >= 0 && i < len(pmf), "%d terms: P(C = %d) = %g missing", len(ts), j, want)
			assert.LessOrEqual(t, testref.RelErr(pmf[i], want), rel, "%d terms: P(C = %d)", len(ts), j)
			checked++
		}
		assert.Greater(t, checked, 80, "%d terms", len(ts))
	}
}
