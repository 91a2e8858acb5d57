package orderstat

import (
	"math"
	"math/big"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// dyadicTerm is Bin(n, a/2^b): p and q = 1 − p both exact in float64.
type dyadicTerm struct{ n, a, b int64 }

func (d dyadicTerm) binom() binom {
	p := float64(d.a) / math.Ldexp(1, int(d.b))
	return binom{n: float64(d.n), p: p, q: float64((int64(1)<<d.b)-d.a) / math.Ldexp(1, int(d.b))}
}

// exactCountMasses returns P(C = j), j = 0 … Σ n, of C = Σ Bin(n_i, a_i/2^b_i)
// by convolving the exact binomial masses C(n, j)·a^j·(2^b − a)^(n−j)/2^(bn)
// (integers, the quotient in 256-bit arithmetic) in 256-bit arithmetic: an
// oracle independent of the package's kernels (closed form of the binomial
// law, common practice).
func exactCountMasses(ds []dyadicTerm) []*big.Float {
	acc := []*big.Float{newExact().SetInt64(1)}
	for _, d := range ds {
		a := big.NewInt(d.a)
		den := new(big.Int).Lsh(big.NewInt(1), uint(d.b))
		rest := new(big.Int).Sub(den, a)
		pm := make([]*big.Float, d.n+1)
		for j := range pm {
			num := new(big.Int).Binomial(d.n, int64(j))
			num.Mul(num, new(big.Int).Exp(a, big.NewInt(int64(j)), nil))
			num.Mul(num, new(big.Int).Exp(rest, big.NewInt(d.n-int64(j)), nil))
			f := newExact().SetInt(num)
			pm[j] = f.SetMantExp(f, -int(d.b*d.n))
		}
		next := make([]*big.Float, len(acc)+int(d.n))
		for i := range next {
			next[i] = newExact()
		}
		tmp := newExact()
		for i, x := range acc {
			for j, y := range pm {
				next[i+j].Add(next[i+j], tmp.Mul(x, y))
			}
		}
		acc = next
	}
	return acc
}

// exactCounts are the counts of TestSplitErrExact: two to five groups,
// probabilities from 2^-40 to 1 − 2^-6.
var exactCounts = [][]dyadicTerm{
	{{30, 1, 2}, {50, 3, 3}},
	{{200, 1, 4}, {150, 5, 4}, {100, 1, 10}},
	{{400, 63, 6}, {100, 1, 1}},
	{{120, 1, 40}, {80, 1, 3}, {60, 7, 3}, {40, 1, 20}, {30, 1, 6}},
	{{600, 1, 8}, {3, 1, 1}},
}

// binomsOf returns the terms as binom values.
func binomsOf(ds []dyadicTerm) []binom {
	var ts []binom
	for _, d := range ds {
		ts = append(ts, d.binom())
	}
	return ts
}

// exactTails returns P(C <= m) and P(C > m) from the exact masses.
func exactTails(mass []*big.Float, m int) (le, gt float64) {
	l, g := newExact(), newExact()
	for j, v := range mass {
		if j <= m {
			l.Add(l, v)
		} else {
			g.Add(g, v)
		}
	}
	return ratFloat(l), ratFloat(g)
}

// relTo is |got − want|/want (0 when both are 0).
func relTo(got, want float64) float64 {
	if got == want {
		return 0
	}
	return math.Abs(got-want) / want
}

// The count's tails with their stated relative errors (splitErr: the
// convolution's, the one-term Beta law's, and splitTransformErr's for the
// tilted transform, which is also checked on its own at every m) against
// the exact masses in 256-bit arithmetic, on counts of two to five groups
// with probabilities from 2^-40 to 1 − 2^-6, at every m where the tail is
// at least 1e-300: every value within its stated bound.
func TestSplitErrExact(t *testing.T) {
	t.Parallel()
	for _, tc := range exactCounts {
		mass := exactCountMasses(tc)
		cm := newCountModel(binomsOf(tc))
		var worst, worstT, stated, statedT float64
		for m := 0; m < len(mass)-1; m++ {
			wle, wgt := exactTails(mass, m)
			le, gt, rle, rgt := cm.splitErr(float64(m), true)
			tle, tgt, trle, trgt := cm.splitTransformErr(float64(m))
			for _, c := range []struct {
				name           string
				got, want, rel float64
				tr             bool
			}{{"le", le, wle, rle, false}, {"gt", gt, wgt, rgt, false}, {"transform le", tle, wle, trle, true}, {"transform gt", tgt, wgt, trgt, true}} {
				if c.want < 1e-300 {
					continue
				}
				require.False(t, math.IsNaN(c.rel), "%v m=%d %s", tc, m, c.name)
				assert.LessOrEqual(t, relTo(c.got, c.want), c.rel, "%v m=%d %s: %g, exact %g", tc, m, c.name, c.got, c.want)
				if c.tr {
					worstT, statedT = math.Max(worstT, relTo(c.got, c.want)), math.Max(statedT, c.rel)
				} else {
					worst, stated = math.Max(worst, relTo(c.got, c.want)), math.Max(stated, c.rel)
				}
			}
		}
		t.Logf("%v: split worst %.2g (largest stated %.2g); transform worst %.2g (largest stated %.2g)", tc, worst, stated, worstT, statedT)
	}
}

// brokenSplits are kernels a careless change could leave behind, each
// returning P(C <= m) and P(C > m): the upper tail as 1 − the lower (the
// cancellation the package avoids), and the convolution of gonum's
// binomial masses (distuv.Binomial.Prob, a log-gamma form) in place of
// internal/binom's walk.
var brokenSplits = map[string]func(ts []binom, cm countModel, m float64) (le, gt float64){
	"upper tail as 1 - lower": func(_ []binom, cm countModel, m float64) (float64, float64) {
		le, _ := cm.split(m)
		return le, 1 - le
	},
	"log-gamma binomial masses": func(ts []binom, _ countModel, m float64) (float64, float64) {
		acc := []float64{1}
		for _, t := range ts {
			b := distuv.Binomial{N: t.n, P: t.p}
			next := make([]float64, len(acc)+int(t.n))
			for j := 0; j <= int(t.n); j++ {
				pj := b.Prob(float64(j))
				for i, a := range acc {
					next[i+j] += a * pj
				}
			}
			acc = next
		}
		var le, gt float64
		for j, v := range acc {
			if float64(j) <= m {
				le += v
			} else {
				gt += v
			}
		}
		return le, gt
	},
}

// The stated bounds are tight enough to tell the kernel from the broken
// ones: each broken kernel is outside the bound that splitErr states at
// some m (while the kernel is within it at every m, as TestSplitErrExact
// checks) — the cancelled upper tail on the first two counts of
// TestSplitErrExact, the log-gamma masses on the second (450 nodes; on the
// first, 80 nodes, they are within the bound).
func TestSplitErrCatchesBroken(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		ds     []dyadicTerm
		broken []string
	}{
		{exactCounts[0], []string{"upper tail as 1 - lower"}},
		{exactCounts[1], []string{"upper tail as 1 - lower", "log-gamma binomial masses"}},
	} {
		ts := binomsOf(tc.ds)
		mass := exactCountMasses(tc.ds)
		cm := newCountModel(ts)
		for _, name := range tc.broken {
			broken := brokenSplits[name]
			caught, worst := 0, 0.0
			for m := 0; m < len(mass)-1; m++ {
				wle, wgt := exactTails(mass, m)
				_, _, rle, rgt := cm.splitErr(float64(m), true)
				le, gt := broken(ts, cm, float64(m))
				for _, c := range [][3]float64{{le, wle, rle}, {gt, wgt, rgt}} {
					if c[1] < 1e-300 {
						continue
					}
					if e := relTo(c[0], c[1]); e > c[2] {
						caught++
						worst = math.Max(worst, e/c[2])
					}
				}
			}
			assert.Positive(t, caught, "%v: %s not caught", tc.ds, name)
			t.Logf("%v: %s outside the stated bound at %d tails, up to %.3g times it", tc.ds, name, caught, worst)
		}
	}
}

// KthOfGroups over uniform laws on [0, 1], [0, 2] and [0, 4] (CDF x, x/2
// and x/4, survivals exact at dyadic x: the parents add no error), at
// dyadic points from the lower end of the support to the upper: CDF within
// the stated CDFAbs and Survival within the stated SurvivalRel (where it is
// at least TailFloor) of P(X_(k) <= x) = P(C(x) >= k) in 256-bit
// arithmetic (exactCountMasses); and a law whose Survival is 1 − CDF is
// outside the statement at some point.
func TestKthOfGroupsStatedExact(t *testing.T) {
	t.Parallel()
	ends := []int64{1, 2, 4} // the uniform laws' upper ends, 2^0, 2^1, 2^2
	counts := []int64{40, 60, 100}
	var gs []Group
	for i, e := range ends {
		u, err := dist.NewUniform(0, float64(e))
		require.NoError(t, err)
		gs = append(gs, Group{Law: u, Count: counts[i]})
	}
	var xs []float64
	for e := 1; e <= 40; e += 3 {
		xs = append(xs, math.Ldexp(1, -e), 4-math.Ldexp(1, -e))
	}
	for _, x := range []float64{0.375, 0.75, 1.25, 1.75, 2.5, 3, 3.5} {
		xs = append(xs, x)
	}
	for _, k := range []int64{1, 5, 100, 150, 195, 200} {
		l, err := KthOfGroups(gs, k)
		require.NoError(t, err)
		acc := l.(dist.Estimated).Accuracy()
		var worstAbs, worstRel float64
		brokenOut := 0
		for _, x := range xs {
			// C(x) = Σ Bin(n_i, x/e_i): the groups whose end is at or
			// below x count for certain.
			var ds []dyadicTerm
			var sure int64
			for i, e := range ends {
				f := x / float64(e)
				switch {
				case f >= 1:
					sure += counts[i]
				case f > 0:
					mant, exp := math.Frexp(f) // f = mant·2^exp, mant in [0.5, 1)
					a, b := int64(math.Ldexp(mant, 53)), int64(53-exp)
					for a%2 == 0 {
						a, b = a/2, b-1
					}
					ds = append(ds, dyadicTerm{n: counts[i], a: a, b: b})
				}
			}
			mass := exactCountMasses(ds)
			wantSF, wantCDF := 1.0, 0.0 // P(C < k), P(C >= k)
			if m := int(k - 1 - sure); m >= 0 && m < len(mass)-1 {
				wantSF, wantCDF = exactTails(mass, m)
			} else if m >= len(mass)-1 {
				wantSF, wantCDF = 1, 0
			} else {
				wantSF, wantCDF = 0, 1
			}
			cdf, sf := l.CDF(x), l.Survival(x)
			worstAbs = math.Max(worstAbs, math.Abs(cdf-wantCDF))
			assert.LessOrEqual(t, math.Abs(cdf-wantCDF), acc.CDFAbs, "k=%d x=%g CDF %g, exact %g", k, x, cdf, wantCDF)
			if wantSF >= acc.TailFloor {
				worstRel = math.Max(worstRel, relTo(sf, wantSF))
				assert.LessOrEqual(t, relTo(sf, wantSF), acc.SurvivalRel, "k=%d x=%g survival %g, exact %g", k, x, sf, wantSF)
				if relTo(1-cdf, wantSF) > acc.SurvivalRel {
					brokenOut++
				}
			}
		}
		if k == 5 {
			assert.Positive(t, brokenOut, "k=%d: a survival as 1 - CDF not caught", k)
		}
		t.Logf("k=%d: stated CDF %.2g, survival %.2g relative; measured %.2g, %.2g; 1 - CDF outside at %d points", k, acc.CDFAbs, acc.SurvivalRel, worstAbs, worstRel, brokenOut)
	}
}

// Monte Carlo from the structure on counts the tilted transform serves
// (three groups of 1000 nodes, normal, exponential and uniform laws; k =
// 300 and 1500): each of 2000 replicates draws every node from its own law
// with a fixed seed and takes the k-th smallest; at the law's quantiles of
// levels 0.05 to 0.95 the fraction of replicates at or below equals CDF
// within 5 binomial standard deviations (a miss about 6e-7 likely per
// point) plus the stated CDFAbs.
func TestKthOfGroupsMonteCarlo(t *testing.T) {
	t.Parallel()
	nrm, ex, un := dist.MustNormal(1, 0.5), dist.MustExponential(1), dist.MustUniform(0, 2)
	gs := []Group{{Law: nrm, Count: 1000}, {Law: ex, Count: 1000}, {Law: un, Count: 1000}}
	const reps = 2000
	r := rand.New(rand.NewPCG(12, 2026))
	ks := []int64{300, 1500}
	samples := make([][]float64, len(ks))
	vals := make([]float64, 3000)
	for range reps {
		i := 0
		for _, g := range gs {
			for range g.Count {
				vals[i] = g.Law.Rand(r)
				i++
			}
		}
		sort.Float64s(vals)
		for j, k := range ks {
			samples[j] = append(samples[j], vals[k-1])
		}
	}
	for j, k := range ks {
		l, err := KthOfGroups(gs, k)
		require.NoError(t, err)
		s, _ := AsStatistic(l)
		cm := s.c.countModel(nil, l.Quantile(0.5), false)
		_, _, _, conv := cm.splitConv(float64(k - 1))
		assert.False(t, conv, "k=%d: the median by the transform", k)
		acc := l.(dist.Estimated).Accuracy()
		for _, p := range []float64{0.05, 0.25, 0.5, 0.75, 0.95} {
			x := l.Quantile(p)
			n := 0
			for _, v := range samples[j] {
				if v <= x {
					n++
				}
			}
			cdf := l.CDF(x)
			tol := 5*math.Sqrt(cdf*(1-cdf)/reps) + acc.CDFAbs
			assert.InDelta(t, cdf, float64(n)/reps, tol, "k=%d x=%g", k, x)
		}
		t.Logf("k=%d: stated CDF %.2g, survival %.2g relative", k, acc.CDFAbs, acc.SurvivalRel)
	}
}

// eightExponentials is 8 groups of 50 nodes, exponential laws of rates 1
// to 8.
func eightExponentials() []Group {
	var gs []Group
	for i := range 8 {
		gs = append(gs, Group{Law: dist.MustExponential(float64(i + 1)), Count: 50})
	}
	return gs
}

// The probes cover the range: at 400 points evenly spread between the
// law's quantiles at the tail floor (or 1e-300) on both sides, the count
// kernel's own bound (splitErr) on either tail's absolute error, and on
// the survival's relative error where it is at least the floor, stays
// within what kthError states from its probes — for the uniform groups of
// TestKthOfGroupsStatedExact (convolution), the groups of
// TestKthOfGroupsMonteCarlo (tilted transform) and eight exponential
// groups.
func TestKthErrorCoversRange(t *testing.T) {
	t.Parallel()
	u1, u2, u4 := dist.MustUniform(0, 1), dist.MustUniform(0, 2), dist.MustUniform(0, 4)
	nrm, ex := dist.MustNormal(1, 0.5), dist.MustExponential(1)
	for _, tc := range []struct {
		gs []Group
		ks []int64
	}{
		{[]Group{{Law: u1, Count: 40}, {Law: u2, Count: 60}, {Law: u4, Count: 100}}, []int64{5, 100, 150, 195}},
		{[]Group{{Law: nrm, Count: 1000}, {Law: ex, Count: 1000}, {Law: u2, Count: 1000}}, []int64{300, 1500, 2900}},
		{eightExponentials(), []int64{2, 40, 200, 390}},
	} {
		for _, k := range tc.ks {
			l, err := KthOfGroups(tc.gs, k)
			require.NoError(t, err)
			s, _ := AsStatistic(l)
			floor := l.(dist.Estimated).Accuracy().TailFloor
			abs, rel := s.c.kthError(floor)
			lo, hi := l.Quantile(floor), l.UpperQuantile(floor)
			var worstAbs, worstRel float64
			for i := range 400 {
				x := lo + (hi-lo)*float64(i)/399
				le, gt, rle, rgt := s.c.countModel(nil, x, false).splitErr(float64(k-1), true)
				if gt > 0 {
					worstAbs = math.Max(worstAbs, rgt*gt)
				}
				if le > 0 {
					worstAbs = math.Max(worstAbs, rle*le)
				}
				if le >= floor {
					worstRel = math.Max(worstRel, rle)
				}
			}
			assert.LessOrEqual(t, worstAbs, abs, "k=%d absolute", k)
			assert.LessOrEqual(t, worstRel, rel, "k=%d relative", k)
			t.Logf("k=%d of %d: stated %.2g absolute, %.2g relative; largest per-value bounds between %.2g, %.2g", k, s.Count(), abs, rel, worstAbs, worstRel)
		}
	}
}
