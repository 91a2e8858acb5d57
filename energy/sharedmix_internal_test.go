package energy

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

// The mixtures' quantiles try the corners' bracket first and fall back to
// all components' where it does not hold. Checked on a mixture of five
// normals (means 10 to 50, weights of a 5-node Gauss–Hermite rule) against
// its CDF by gonum's distuv.Normal (the mixture's CDF at the answer is p,
// and just below it less: an answer to 1e-12 relative), with the corners
// at the ends (they bracket), in the middle (they do not: the fallback),
// and none.
func TestSharedMixtureQuantileCorners(t *testing.T) {
	w, laws, cdf, surv := fiveNormals()
	for _, c := range []struct {
		name    string
		corners []int
	}{{"corners at the ends", []int{0, 4}}, {"corners in the middle", []int{2, 3}}, {"no corners", nil},
		{"a first and last corner that do not always bracket", []int{1, 0, 4, 3}}} {
		m := newSharedMixture("test", w, laws)
		m.corners = c.corners
		for _, p := range []float64{1e-9, 0.01, 0.3, 0.5, 0.9, 0.999} {
			checkMixtureQuantiles(t, m, cdf, surv, p, c.name)
		}
	}
	// An answer at an atom that every corner reaches (a calendar limit):
	// normals mixed with a point mass at 45 holding 0.6; the 0.5 point is
	// the atom (closed form: the normals below 45 hold less than 0.5).
	atomLaws := []dist.Law{dist.MustNormal(10, 3), dist.MustPointMass(45), dist.MustPointMass(45)}
	am := newSharedMixture("atom", []float64{0.4, 0.3, 0.3}, atomLaws)
	am.corners = []int{1, 2}
	assert.Equal(t, 45.0, am.Quantile(0.5))
	assert.Equal(t, 45.0, am.UpperQuantile(0.5))
	assert.InDelta(t, 10.0, am.Quantile(0.2), 1e-9, "the normal's median: 0.4·Φ(0) = 0.2")

	// Where the corners bracket, they are used: the answer needs their two
	// quantiles, not all five (counted through the components).
	n := 0
	counted := make([]dist.Law, len(laws))
	for i, l := range laws {
		counted[i] = quantileCounter{l, &n}
	}
	m := newSharedMixture("test", w, counted)
	m.corners = []int{0, 4}
	m.Quantile(0.3)
	assert.Equal(t, 2, n, "component quantiles asked")

	// Four corners: the first and the last (means 20 and 40) bracket the
	// 0.3 point, so two are asked; not the 1e-9 point (about −6.8, from the
	// mean-10 component: 0.011·Φ((x − 10)/3) = 1e-9), so all four are.
	m.corners = []int{1, 0, 4, 3}
	for _, c := range []struct {
		p    float64
		want int
	}{{0.3, 2}, {1e-9, 4}} {
		n = 0
		x := m.Quantile(c.p)
		assert.Equal(t, c.want, n, "component quantiles asked for the %g point", c.p)
		assert.InDelta(t, c.p, cdf(x), 1e-9*c.p, "CDF at Quantile(%g)", c.p)
	}
}

// checkMixtureQuantiles checks m's Quantile(p) and UpperQuantile(p)
// against the mixture's CDF and survival by an oracle (cdf, surv): the
// answer's CDF (survival) is p to 1e-9 relative and, 1e-10 relative
// below it, less than p (more than p): the smallest such point, to the
// searches' 1e-12 relative.
func checkMixtureQuantiles(t *testing.T, m sharedMixture, cdf, surv func(float64) float64, p float64, name string) {
	t.Helper()
	x := m.Quantile(p)
	assert.InDelta(t, p, cdf(x), 1e-9*p+1e-15, "%s: CDF at Quantile(%g)", name, p)
	assert.Less(t, cdf(x-1e-10*math.Abs(x)), p, "%s: Quantile(%g) is the smallest", name, p)
	u := m.UpperQuantile(p)
	assert.InDelta(t, p, surv(u), 1e-9*p+1e-15, "%s: Survival at UpperQuantile(%g)", name, p)
	assert.Greater(t, surv(u-1e-10*math.Abs(u)), p, "%s: UpperQuantile(%g) is the smallest", name, p)
}

// quantileCounter counts the calls of Quantile.
type quantileCounter struct {
	dist.Law
	n *int
}

func (q quantileCounter) Quantile(p float64) float64 { *q.n++; return q.Law.Quantile(p) }

// A seed (sharedMixture.seed) starts the quantile search; every step is
// checked on the mixture, so a seed off by much, or on the wrong side,
// still gives the answer, and one that fails leaves the corners'. Checked
// on the five normals of TestSharedMixtureQuantileCorners against their
// CDF by gonum's distuv.Normal (the answer to 1e-12 relative, as there):
// seeds from the mixture's own probit shifted by 0, ±0.01 and ±2 (in time)
// with slopes 0.5 to 2 times the true one, and a seed that fails. A seed
// that holds asks no component quantile (counted: Quantile's).
func TestSharedMixtureQuantileSeeded(t *testing.T) {
	w, laws, cdf, surv := fiveNormals()
	n := 0
	for i, l := range laws {
		laws[i] = quantileCounter{l, &n}
	}
	base := newSharedMixture("test", w, laws)
	base.corners = []int{0, 4}
	for _, c := range []struct {
		shift, slope float64 // the seed's error in time and its slope's factor
		fail         bool
	}{{0, 1, false}, {0.01, 0.5, false}, {-0.01, 2, false}, {2, 1, false}, {-2, 0.7, false}, {0, 1, true}} {
		m := base
		m.seed = func(target float64) (float64, float64, bool) {
			if c.fail {
				return 0, 0, false
			}
			x := base.solve(-100, 200, target) // the mixture's own answer (the corners' fallback)
			h := 1e-6 * x
			return x + c.shift, c.slope * (base.probit(x+h) - base.probit(x-h)) / (2 * h), true
		}
		for _, p := range []float64{1e-9, 0.01, 0.3, 0.5, 0.9, 0.999} {
			n = 0
			checkMixtureQuantiles(t, m, cdf, surv, p, fmt.Sprintf("seed %+v", c))
			if c.fail {
				assert.Equal(t, 2, n, "seed %+v: the corners' quantiles at %g (Quantile's, counted)", c, p)
			} else {
				assert.Zero(t, n, "seed %+v: component quantiles asked at %g", c, p)
			}
		}
	}
}

// With cornersFirst a mixture tries the corners' bracket before its seed,
// and the seed where the corners do not bracket. Checked on the five
// normals of TestSharedMixtureQuantileCorners against their CDF by gonum's
// distuv.Normal (the answer to 1e-12 relative, as there), with a seed
// that counts its calls: corners at the ends (they bracket: no seed
// asked) and in the middle (means 30 and 40: at the 0.01 point, below
// both of their quantiles, and the 0.999 point, above, they do not: the
// seed is asked, and holds), and a seed that fails there (the answer from
// all five components).
func TestSharedMixtureQuantileCornersFirst(t *testing.T) {
	w, laws, cdf, surv := fiveNormals()
	for _, c := range []struct {
		name    string
		corners []int
		fail    bool
	}{
		{"corners at the ends", []int{0, 4}, false},
		{"corners in the middle", []int{2, 3}, false},
		{"corners in the middle, the seed fails", []int{2, 3}, true},
	} {
		m := newSharedMixture("test", w, laws)
		m.corners, m.cornersFirst = c.corners, true
		seeds := 0
		m.seed = func(target float64) (float64, float64, bool) {
			seeds++
			if c.fail {
				return 0, 0, false
			}
			x := m.solve(-100, 200, target)
			h := 1e-6 * x
			return x, (m.probit(x+h) - m.probit(x-h)) / (2 * h), true
		}
		for _, p := range []float64{0.01, 0.3, 0.5, 0.9, 0.999} {
			// Whether the corners bracket, from gonum's quantiles and CDF.
			zp := distuv.UnitNormal.Quantile(p)
			lo := 10 + 10*float64(c.corners[0]) + 3*zp
			hi := 10 + 10*float64(c.corners[1]) + 3*zp
			want := 0
			if !(cdf(lo-1e-9) < p && cdf(hi) >= p) { // just below the lowest, as cornerSolve
				want++
			}
			if !(surv(lo-6*zp-1e-9) > p && surv(hi-6*zp) <= p) { // the upper quantiles, mean − 3·zp
				want++
			}
			if c.corners[0] == 2 && (p == 0.01 || p == 0.999) {
				assert.Equal(t, 2, want, "%s: the corners do not bracket at %g", c.name, p)
			}
			seeds = 0
			checkMixtureQuantiles(t, m, cdf, surv, p, c.name)
			assert.Equal(t, want, seeds, "%s: seeds asked at %g", c.name, p)
		}
	}
}

// fiveNormals returns the mixture of TestSharedMixtureQuantileCorners:
// normals of sd 3 at 10 to 50 with the weights of a 5-node Gauss–Hermite
// rule, and its CDF and survival by gonum's distuv.Normal.
func fiveNormals() (w []float64, laws []dist.Law, cdf, surv func(float64) float64) {
	means := []float64{10, 20, 30, 40, 50}
	w = []float64{0.0113, 0.2221, 0.5333, 0.2221, 0.0113}
	tot := 0.0
	for _, x := range w {
		tot += x
	}
	laws = make([]dist.Law, len(means))
	for i, m := range means {
		w[i] /= tot
		laws[i] = dist.MustNormal(m, 3)
	}
	sum := func(f func(distuv.Normal) float64) float64 {
		s := 0.0
		for i, m := range means {
			s += w[i] * f(distuv.Normal{Mu: m, Sigma: 3})
		}
		return s
	}
	cdf = func(x float64) float64 { return sum(func(d distuv.Normal) float64 { return d.CDF(x) }) }
	surv = func(x float64) float64 { return sum(func(d distuv.Normal) float64 { return d.Survival(x) }) }
	return w, laws, cdf, surv
}

// componentTolShares shares the mixture's moment tolerance out by weight:
// factors proportional to w^(−2/3) (a light component gets a looser
// target, a heavy one a tighter), the weighted sums of the components'
// targets (Σ w·c·p, and Σ w·k·c·p) no larger than with every factor 1,
// the tighter of the two equal to it, every factor at most maxTolShare, 1
// for equal weights. Checked on the weights of a 7-node Gauss–Hermite rule
// (gonum's, through hermiteNodes), times 1/6, 2/3, 1/6 (a 3-node rule's),
// as a Site's product rule has them, and on cases made up for the edges.
func TestComponentTolShares(t *testing.T) {
	_, w7 := hermiteNodes(1, 7)
	var prod []float64
	for _, a := range []float64{1.0 / 6, 2.0 / 3, 1.0 / 6} {
		for _, b := range w7 {
			prod = append(prod, a*b)
		}
	}
	ones := func(n int, v float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = v
		}
		return x
	}
	ramp := func(n int, a, b float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = a + (b-a)*float64(i)/float64(n-1)
		}
		return x
	}
	for _, tc := range []struct {
		name    string
		w, p, k []float64
	}{
		{"equal weights", ones(4, 0.25), ones(4, 1e8), ones(4, 4e8)},
		{"product rule, equal scales", prod, ones(len(prod), 1e8), ones(len(prod), 4e8)},
		{"product rule, rising scales", prod, ramp(len(prod), 0.8e8, 1.2e8), ramp(len(prod), 5e8, 3e8)},
		{"a zero weight", []float64{0.5, 0.5, 0}, ones(3, 1), ones(3, 1)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := componentTolShares(nil, tc.w, tc.p, tc.k)
			assert.Len(t, c, len(tc.w))
			var a, a1, b, b1 float64
			for e := range tc.w {
				assert.LessOrEqual(t, c[e], maxTolShare)
				assert.Greater(t, c[e], 0.0)
				a += tc.w[e] * c[e] * tc.p[e]
				a1 += tc.w[e] * tc.p[e]
				b += tc.w[e] * tc.k[e] * c[e] * tc.p[e]
				b1 += tc.w[e] * tc.k[e] * tc.p[e]
				if tc.w[e] == 0 {
					assert.Equal(t, maxTolShare, c[e], "a zero weight")
					continue
				}
				// proportional to w^(−2/3), capped
				if c[e] < maxTolShare {
					assert.InEpsilon(t, c[0]*math.Pow(tc.w[0]/tc.w[e], 2.0/3), c[e], 1e-12, "component %d", e)
				}
			}
			assert.LessOrEqual(t, a, a1*(1+1e-12), "Σ w·c·p")
			assert.LessOrEqual(t, b, b1*(1+1e-12), "Σ w·k·c·p")
			assert.True(t, math.Abs(a-a1) <= 1e-12*a1 || math.Abs(b-b1) <= 1e-12*b1, "the tighter sum is met")
			if tc.name == "equal weights" {
				for e := range c {
					assert.InDelta(t, 1, c[e], 1e-12)
				}
			}
		})
	}
}

// A Site's first failures take their components' moments at tolerances
// shared out by weight (componentTolShares); they must agree with every
// component at componentMomentTol within the two stated errors, and state
// no more than every component at that target would (its quadrature
// error at componentMomentTol of its scale, carried through the law of
// total variance: what the one tolerance allowed). Checked on the kinked
// two-factor site (a seasonal climate and a voltage curve: tables with
// kinks, and a temperature rule in two pieces, so weights far apart), for
// each group's first failure and the fleet's; the moments themselves
// are checked against gonum's quadrature in TestSiteMixtureMoments.
func TestSiteSharedMomentTolerance(t *testing.T) {
	s, err := NewSite(kinkedSiteSpec(t))
	require.NoError(t, err)
	// Each group's first failure, then the fleet's (i = len(s.names)).
	for i := 0; i <= len(s.names); i++ {
		l, err := s.FirstFailure()
		if i < len(s.names) {
			l, err = s.GroupFirstFailure(i)
		}
		require.NoError(t, err)
		m := l.(sharedMixture)
		require.NotNil(t, m.quick)
		n := len(m.laws)
		ms, vs, ems, evs := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		aems, aevs := make([]float64, n), make([]float64, n)
		for e := range m.laws {
			surv, lo, med, hi := m.quick(e)
			lo, med, hi = componentRange(m.laws[e], lo, med, hi)
			r := componentQuad(surv, lo, med, hi, componentMomentTol)
			ms[e], vs[e], ems[e], evs[e] = r.mean, r.vari, r.meanErr, r.varErr
			aems[e], aevs[e] = r.errorsAt(componentMomentTol * r.scale)
		}
		one, oneVar, oneErr, oneVarErr := m.combineMoments(ms, vs, ems, evs)
		_, _, allowed, allowedVar := m.combineMoments(ms, vs, aems, aevs)
		em, ev := m.MomentError()
		assert.InDelta(t, one, m.Mean(), em+oneErr, "law %d: mean", i)
		assert.InDelta(t, oneVar, m.Variance(), ev+oneVarErr, "law %d: variance", i)
		assert.LessOrEqual(t, em, allowed*(1+1e-9), "law %d: the mean's stated error", i)
		assert.LessOrEqual(t, ev, allowedVar*(1+1e-9), "law %d: the variance's stated error", i)
		t.Logf("law %d: mean moved %.2g s (stated ±%.2g, one tolerance ±%.2g, allowed %.2g), variance's stated %.2g (one tolerance %.2g, allowed %.2g)",
			i, m.Mean()-one, em, oneErr, allowed, ev, oneVarErr, allowedVar)
	}
}

// The fleet's first failure integrates its moments between points read
// from the groups' tables (fleetRange) instead of its own 1e-15 quantiles:
// its CDF at lo and its survival at hi must be at most 1e-15 (by the
// order statistic's own CDF and Survival, orderstat's log-space path),
// so lo is at or below its 1e-15 quantile and hi at or above its 1e-15
// upper quantile (orderstat's searches, to their 1e-12 relative), and
// the range no more than twice as wide. Checked at every shared point of
// the kinked two-factor site (two groups, of 50 and 500 nodes).
func TestSiteFleetRange(t *testing.T) {
	s, err := NewSite(kinkedSiteSpec(t))
	require.NoError(t, err)
	ff, err := s.FirstFailure()
	require.NoError(t, err)
	m := ff.(sharedMixture)
	for e := range s.envs {
		l := m.laws[e]
		lo, hi := s.fleetRange(e)
		qlo, qhi := l.Quantile(1e-15), l.UpperQuantile(1e-15)
		assert.LessOrEqual(t, l.CDF(lo), 1e-15, "env %d: CDF at lo", e)
		assert.LessOrEqual(t, l.Survival(hi), 1e-15, "env %d: survival at hi", e)
		assert.LessOrEqual(t, lo, qlo*(1+1e-12), "env %d: lo", e)
		assert.GreaterOrEqual(t, hi, qhi*(1-1e-12), "env %d: hi", e)
		assert.Less(t, hi-lo, 2*(qhi-qlo), "env %d: the range's width", e)
		_, qmlo, _, qmhi := m.quick(e)
		assert.Equal(t, lo, qmlo, "env %d: the quick pieces' lo", e)
		assert.Equal(t, hi, qmhi, "env %d: the quick pieces' hi", e)
	}
}

// With bothTails the searches' probit reads each component's two tails
// from one evaluation: on a mixture of the 3rd smallest of 10 normals of
// sd 1 at 0, 1 and 3 (a Site's k-th failures are such counts), the
// mixture's two sums are the same bits as CDF and Survival, its probit
// (both sides) and its quantiles the same bits as without, and its CDF
// within 1e-10 of Σ w·P(Bin(10, Φ(t − μ)) >= 3), the order statistic's
// law by the binomial count (common practice), from gonum's
// distuv.Binomial and distuv.UnitNormal. A mixture with a component
// without Tails (a normal) falls back to the sums one by one.
func TestSharedMixtureBothTails(t *testing.T) {
	means, w := []float64{0, 1, 3}, []float64{0.25, 0.5, 0.25}
	laws := make([]dist.Law, len(means))
	for i, mu := range means {
		l, err := orderstat.Kth(dist.MustNormal(mu, 1), 3, 10)
		require.NoError(t, err)
		laws[i] = l
	}
	plain := newSharedMixture("test", w, laws)
	both := plain
	both.bothTails = true
	for i := -40; i <= 80; i++ {
		x := float64(i) / 10
		cdf, sf, ok := both.tails(x)
		require.True(t, ok)
		assert.Equal(t, math.Float64bits(plain.CDF(x)), math.Float64bits(cdf), "CDF(%v)", x)
		assert.Equal(t, math.Float64bits(plain.Survival(x)), math.Float64bits(sf), "Survival(%v)", x)
		assert.Equal(t, math.Float64bits(plain.probit(x)), math.Float64bits(both.probit(x)), "probit(%v)", x)
		assert.Equal(t, math.Float64bits(plain.probitAbove(x)), math.Float64bits(both.probitAbove(x)), "probitAbove(%v)", x)
		want := 0.0
		for j, mu := range means {
			b := distuv.Binomial{N: 10, P: distuv.UnitNormal.CDF(x - mu)}
			want += w[j] * (1 - b.CDF(2))
		}
		assert.InDelta(t, want, cdf, 1e-10, "CDF(%v) against the binomial count", x)
	}
	for _, p := range []float64{0.01, 0.3, 0.5, 0.9, 0.999} {
		assert.Equal(t, math.Float64bits(plain.quantile(p)), math.Float64bits(both.quantile(p)), "Quantile(%v)", p)
		assert.Equal(t, math.Float64bits(plain.upperQuantile(p)), math.Float64bits(both.upperQuantile(p)), "UpperQuantile(%v)", p)
	}
	mixed := both
	mixed.laws = []dist.Law{laws[0], dist.MustNormal(1, 1), laws[2]}
	_, _, ok := mixed.tails(1)
	assert.False(t, ok, "a component without Tails")
	unmixed := mixed
	unmixed.bothTails = false
	assert.Equal(t, math.Float64bits(unmixed.probit(1)), math.Float64bits(mixed.probit(1)))
	_, _, ok = plain.tails(1)
	assert.False(t, ok, "bothTails not set")
}
