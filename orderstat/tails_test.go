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
				// log P(min > x) = Σ n·log S, log P(max <= x) = Σ n·log F,
				// each parent tail taken from its smaller side
				var lg float64
				for _, g := range plain {
					f, s := g.Law.CDF(x), g.Law.Survival(x)
					if tc.max {
						if f < 0.5 {
							lg += float64(g.Count) * math.Log(f)
						} else {
							lg += float64(g.Count) * math.Log1p(-s)
						}
					} else if s < 0.5 {
						lg += float64(g.Count) * math.Log(s)
					} else {
						lg += float64(g.Count) * math.Log1p(-f)
					}
				}
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
