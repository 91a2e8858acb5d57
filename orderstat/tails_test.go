package orderstat_test

import (
	"math"
	"sync"
	"sync/atomic"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/orderstat"
)

// twoTailed is a normal law that gives both tails at once (as a lifetime
// law does) and counts its quantile calls.
type twoTailed struct {
	dist.Normal
	quant *atomic.Int64
}

func (l twoTailed) Tails(x float64) (float64, float64) { return l.CDF(x), l.Survival(x) }
func (l twoTailed) Quantile(p float64) float64 {
	l.quant.Add(1)
	return l.Normal.Quantile(p)
}
func (l twoTailed) UpperQuantile(q float64) float64 {
	l.quant.Add(1)
	return l.Normal.UpperQuantile(q)
}

var _ orderstat.TwoTails = twoTailed{}

// productLog is the oracle: log P(min > x) = Σ n·log S (or with max
// log P(max <= x) = Σ n·log F), each parent tail taken from its smaller
// side.
func productLog(gs []orderstat.Group, x float64, max bool) float64 {
	var lg float64
	for _, g := range gs {
		f, s := g.Law.CDF(x), g.Law.Survival(x)
		switch {
		case max && f < 0.5:
			lg += float64(g.Count) * math.Log(f)
		case max:
			lg += float64(g.Count) * math.Log1p(-s)
		case s < 0.5:
			lg += float64(g.Count) * math.Log(s)
		default:
			lg += float64(g.Count) * math.Log1p(-f)
		}
	}
	return lg
}

// Groups whose laws give both tails at once are built without a parent
// quantile (no median is needed to choose a side), and their laws equal
// the explicit product of the parents' tails in log space,
// Π S_i(x)^{n_i} and Π F_i(x)^{n_i} (the definition of the extremes of
// independent groups; the parents are closed-form normals checked against
// gonum in package dist), to 1e-14 relative in both tails, and the plain
// groups' quantiles to 1e-13.
func TestTwoTailsGroups(t *testing.T) {
	t.Parallel()
	var quant atomic.Int64
	plain := hundredGroups()[:30]
	wrapped := make([]orderstat.Group, len(plain))
	for i, g := range plain {
		wrapped[i] = orderstat.Group{Law: twoTailed{Normal: g.Law.(dist.Normal), quant: &quant}, Count: g.Count}
	}
	tests := []struct {
		name  string
		build func([]orderstat.Group) (dist.Law, error)
		max   bool
	}{
		{"MinOfGroups", orderstat.MinOfGroups, false},
		{"MaxOfGroups", orderstat.MaxOfGroups, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			quant.Store(0)
			l, err := tc.build(wrapped)
			require.NoError(t, err)
			ref, err := tc.build(plain)
			require.NoError(t, err)
			for x := 0.004; x <= 0.026; x += 0.0005 {
				lg := productLog(plain, x, tc.max)
				in, out := math.Exp(lg), -math.Expm1(lg) // the extreme inside and beyond x
				gotIn, gotOut := l.Survival(x), l.CDF(x)
				if tc.max {
					gotIn, gotOut = l.CDF(x), l.Survival(x)
				}
				if in > 1e-300 {
					assert.LessOrEqual(t, testref.RelErr(gotIn, in), 1e-14, "x=%g inside", x)
				}
				if out > 1e-300 {
					assert.LessOrEqual(t, testref.RelErr(gotOut, out), 1e-14, "x=%g beyond", x)
				}
			}
			assert.Zero(t, quant.Load(), "parent quantile calls while building and evaluating")
			for _, p := range []float64{1e-9, 0.01, 0.5, 0.99} {
				assert.LessOrEqual(t, testref.RelErr(l.Quantile(p), ref.Quantile(p)), 1e-13, "p=%g", p)
			}
			require.NoError(t, disttest.Check(l))
			// The medians asked on first use change no answer: a fresh law,
			// and fresh laws asked from eight goroutines at once, give the
			// same bits as the law used above.
			for _, p := range []float64{1e-9, 0.5} {
				want := math.Float64bits(l.Quantile(p))
				fresh, err := tc.build(wrapped)
				require.NoError(t, err)
				assert.Equal(t, want, math.Float64bits(fresh.Quantile(p)), "fresh p=%g", p)
				shared, err := tc.build(wrapped)
				require.NoError(t, err)
				got := make([]uint64, 8)
				var wg sync.WaitGroup
				for i := range got {
					wg.Add(1)
					go func() {
						defer wg.Done()
						got[i] = math.Float64bits(shared.Quantile(p))
					}()
				}
				wg.Wait()
				for i, g := range got {
					assert.Equal(t, want, g, "goroutine %d p=%g", i, p)
				}
			}
		})
	}
}

// boundedNormal is a normal law with closed-form tail bounds (Chernoff's:
// P(X <= μ − d) <= exp(−d²/(2σ²)), the same above, from
// E[exp(θX)] = exp(θμ + θ²σ²/2)), counting its tail calls.
type boundedNormal struct {
	dist.Normal
	calls *atomic.Int64
}

func (l boundedNormal) CDF(x float64) float64 {
	l.calls.Add(1)
	return l.Normal.CDF(x)
}
func (l boundedNormal) Survival(x float64) float64 {
	l.calls.Add(1)
	return l.Normal.Survival(x)
}
func (l boundedNormal) LowerBoundPoint(logP float64) float64 {
	return l.Mean() - math.Sqrt(-2*logP*l.Variance())
}
func (l boundedNormal) UpperBoundPoint(logP float64) float64 {
	return l.Mean() + math.Sqrt(-2*logP*l.Variance())
}

var _ orderstat.TailBounded = boundedNormal{}

// Groups whose laws bound their tails are left out where the bounds put
// them below 1e-16 of the answer: the minimum and maximum of 30 groups
// spread over 120 standard deviations equal the explicit products of the
// parents' tails (as TestTwoTailsGroups) to 1e-14 relative plus the
// rounding of the sum of logs (8ε·|log|: the oracle adds them in another
// order) in both tails at every point, call the far groups' tails far less
// often than once per group and point, and state the leaving out in their
// accuracy.
func TestTailBoundedGroups(t *testing.T) {
	t.Parallel()
	var calls atomic.Int64
	var plain, bounded []orderstat.Group
	for i := range 30 {
		n := dist.MustNormal(float64(i)*4, 1+0.02*float64(i))
		plain = append(plain, orderstat.Group{Law: n, Count: int64(20 + i)})
		bounded = append(bounded, orderstat.Group{Law: boundedNormal{Normal: n, calls: &calls}, Count: int64(20 + i)})
	}
	tests := []struct {
		name  string
		build func([]orderstat.Group) (dist.Law, error)
		max   bool
		xs    []float64
	}{
		{"MinOfGroups", orderstat.MinOfGroups, false, []float64{-12, -8, -5, -3, -2, -1, 0, 1, 2, 4}},
		{"MaxOfGroups", orderstat.MaxOfGroups, true, []float64{108, 112, 114, 116, 117, 118, 120, 122, 126, 130}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			l, err := tc.build(bounded)
			require.NoError(t, err)
			calls.Store(0)
			for _, x := range tc.xs {
				lg := productLog(plain, x, tc.max)
				in, out := math.Exp(lg), -math.Expm1(lg)
				gotIn, gotOut := l.Survival(x), l.CDF(x)
				if tc.max {
					gotIn, gotOut = l.CDF(x), l.Survival(x)
				}
				tol := 1e-14 + 8*0x1p-52*math.Abs(lg)
				if in > 1e-300 {
					assert.LessOrEqual(t, testref.RelErr(gotIn, in), tol, "x=%g inside", x)
				}
				if out > 1e-300 {
					assert.LessOrEqual(t, testref.RelErr(gotOut, out), tol, "x=%g beyond", x)
				}
			}
			// two calls per point (CDF and Survival), each once per group
			// without the bounds
			assert.Less(t, calls.Load(), int64(2*len(tc.xs)*len(bounded)/3), "parent tail calls")
			t.Logf("%d parent tail calls for %d points (%d without the bounds)", calls.Load(), 2*len(tc.xs), 2*len(tc.xs)*len(bounded))
			acc := l.(dist.Estimated).Accuracy()
			assert.GreaterOrEqual(t, acc.CDFAbs, 1e-16)
			assert.Contains(t, acc.Method, "left out")
			require.NoError(t, disttest.Check(l))
		})
	}
}

// The groups left out all at once (from a position of the order on, by
// the smallest of their bound points at a level computed once, when first
// needed) are a cache of the laws' bounds: the minimum and maximum of 30
// bounded groups (as TestTailBoundedGroups, whose oracle checks the
// values) give the same bits at 41 points from a fresh law per point,
// from one law asked in the reverse order after other points, and from
// one fresh law asked by eight goroutines at once, each from another
// point on.
func TestTailBoundedRestDeterministic(t *testing.T) {
	t.Parallel()
	var calls atomic.Int64
	var gs []orderstat.Group
	for i := range 30 {
		n := dist.MustNormal(float64(i)*4, 1+0.02*float64(i))
		gs = append(gs, orderstat.Group{Law: boundedNormal{Normal: n, calls: &calls}, Count: int64(20 + i)})
	}
	tests := []struct {
		name   string
		build  func([]orderstat.Group) (dist.Law, error)
		x0, x1 float64
	}{
		{"MinOfGroups", orderstat.MinOfGroups, -12, 4},
		{"MaxOfGroups", orderstat.MaxOfGroups, 108, 130},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var xs []float64
			for i := range 41 {
				xs = append(xs, tc.x0+(tc.x1-tc.x0)*float64(i)/40)
			}
			bits := func(l dist.Law, x float64) [2]uint64 {
				return [2]uint64{math.Float64bits(l.CDF(x)), math.Float64bits(l.Survival(x))}
			}
			want := make([][2]uint64, len(xs))
			for i, x := range xs {
				l, err := tc.build(gs)
				require.NoError(t, err)
				want[i] = bits(l, x)
			}
			after, err := tc.build(gs)
			require.NoError(t, err)
			for i := len(xs) - 1; i >= 0; i-- {
				assert.Equal(t, want[i], bits(after, xs[i]), "after other points, x=%g", xs[i])
			}
			shared, err := tc.build(gs)
			require.NoError(t, err)
			got := make([][][2]uint64, 8)
			var wg sync.WaitGroup
			for g := range got {
				got[g] = make([][2]uint64, len(xs))
				wg.Add(1)
				go func() {
					defer wg.Done()
					for j := range xs {
						i := (j + 5*g) % len(xs)
						got[g][i] = bits(shared, xs[i])
					}
				}()
			}
			wg.Wait()
			for g := range got {
				assert.Equal(t, want, got[g], "goroutine %d", g)
			}
		})
	}
}

// A Statistic gives both tails from one evaluation (Tails, TwoTails): the
// same bits as CDF and Survival at every point of the conformance cases'
// laws (NaN, NaN for NaN), and for the minimum of n Exp(λ), which is
// Exp(n·λ) (common practice), both tails within 1e-12 relative of
// −expm1(−nλx) and e^{−nλx}.
func TestStatisticTails(t *testing.T) {
	for _, tc := range conformanceCases() {
		l, err := tc.build()
		require.NoError(t, err, tc.name)
		st, ok := l.(orderstat.TwoTails)
		require.True(t, ok, "%s: a Statistic is a TwoTails law", tc.name)
		lo, hi := l.Quantile(1e-9), l.UpperQuantile(1e-9)
		for i := -2; i <= 42; i++ {
			x := lo + (hi-lo)*float64(i)/40
			cdf, sf := st.Tails(x)
			assert.Equal(t, math.Float64bits(l.CDF(x)), math.Float64bits(cdf), "%s: CDF(%v)", tc.name, x)
			assert.Equal(t, math.Float64bits(l.Survival(x)), math.Float64bits(sf), "%s: Survival(%v)", tc.name, x)
		}
		cdf, sf := st.Tails(math.NaN())
		assert.True(t, math.IsNaN(cdf) && math.IsNaN(sf), "%s: NaN in, NaN out", tc.name)
	}
	const n, lambda = 1e6, 2.0
	mn, err := orderstat.Min(dist.MustExponential(lambda), n)
	require.NoError(t, err)
	for _, x := range []float64{1e-9, 1e-7, 1e-6, 1e-5} {
		cdf, sf := mn.(orderstat.TwoTails).Tails(x)
		assert.InDelta(t, 0, testref.RelErr(cdf, -math.Expm1(-n*lambda*x)), 1e-12, "CDF(%v)", x)
		assert.InDelta(t, 0, testref.RelErr(sf, math.Exp(-n*lambda*x)), 1e-12, "Survival(%v)", x)
	}
}
