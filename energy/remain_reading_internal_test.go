package energy

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// truncatedKappa4 returns the fourth cumulant of N(0, 1) restricted to
// [a, b], from its moments by adaptive quadrature (internal/quad) of
// gonum's normal density: an oracle independent of logBin.
func truncatedKappa4(t *testing.T, a, b float64) float64 {
	t.Helper()
	std := distuv.Normal{Mu: 0, Sigma: 1}
	lo, hi := math.Max(a, -12), math.Min(b, 12)
	if a > 0 {
		hi = math.Min(b, a+40/(1+a)) // the tail beyond is below e^-40 of the mass
	}
	if b < 0 {
		lo = math.Max(a, b-40/(1-b))
	}
	shift := 0.0 // divide the density by its value at the bin's nearest point to 0
	switch {
	case a > 0:
		shift = a
	case b < 0:
		shift = b
	}
	mom := func(k int, mu float64) float64 {
		r, err := quad.Adaptive(func(x float64) float64 {
			return math.Exp(std.LogProb(x)+0.5*shift*shift) * math.Pow(x-mu, float64(k))
		}, lo, hi, quad.Options{AbsTol: 1e-14, RelTol: 1e-12})
		require.NoError(t, err)
		return r.Value
	}
	m0 := mom(0, 0)
	mu := mom(1, 0) / m0
	v := mom(2, mu) / m0
	return mom(4, mu)/m0 - 3*v*v
}

// TestReadingTable checks the reading term's lattice (see likelihood): the
// bound |κ₄| <= 0.382·σ⁴ on the fourth cumulant of a normal law truncated
// to a bin, over a scan of bins (quadrature of gonum's normal density),
// and the interpolated term against log(Φ(zh) − Φ(zl)) from gonum's
// normal CDF and survival (within 6σ of the bin, where gonum's survival is
// accurate) to within the stated 2.3e-4.
func TestReadingTable(t *testing.T) {
	worst := 0.0
	for a := -8.0; a <= 8; a += 0.25 {
		for _, w := range []float64{0.05, 0.5, 1, 2, 3, 3.5, 4, 4.25, 4.5, 5, 6, 8, math.Inf(1)} {
			k := truncatedKappa4(t, a, a+w)
			worst = math.Max(worst, math.Abs(k))
			require.LessOrEqual(t, math.Abs(k), 0.382, "bin [%g, %g]", a, a+w)
		}
	}
	t.Logf("largest |κ₄|/σ⁴ over the scanned bins: %.4f (bound 0.382)", worst)
	curve := TypicalBobbinCurve()
	std := distuv.Normal{Mu: 0, Sigma: 1}
	for _, c := range []struct {
		name                string
		drop, lo, hi, sigma float64
	}{
		{"fine bin on the plateau", 0, 3.635, 3.645, 0.02},
		{"bin 4σ wide (κ₄'s worst)", 0.01, 3.46, 3.54, 0.02},
		{"coarse level step", 0, 3.40, 3.60, 0.005},
		{"open below", 0.05, math.Inf(-1), 3.0, 0.03},
		{"open above", 0, 3.55, math.Inf(1), 0.01},
		{"exact reading, small noise", 0, 3.5, 3.5001, 0.002},
	} {
		vs := make([]float64, len(curve.DepthOfDischarge))
		for j := range vs {
			vs[j] = curve.OpenCircuit[j] - c.drop*curve.Resistance[j]
		}
		tab := newReadingTable(vs, c.lo, c.hi, c.sigma)
		require.NotZero(t, tab.steps, c.name)
		maxErr := 0.0
		for i := 0; i <= 20000; i++ {
			x := tab.v0 + float64(tab.steps)*tab.h*float64(i)/20000
			zl, zh := (c.lo-x)/c.sigma, (c.hi-x)/c.sigma
			if zl > 6 || zh < -6 {
				continue
			}
			var p float64
			if zl > 0 {
				p = std.Survival(zl) - std.Survival(zh)
			} else {
				p = std.CDF(zh) - std.CDF(zl)
			}
			maxErr = math.Max(maxErr, math.Abs(tab.at(x)-math.Log(p)))
		}
		require.LessOrEqual(t, maxErr, 2.3e-4, c.name)
		t.Logf("%s: largest error %.2g (bound 2.3e-4)", c.name, maxErr)
	}
}

// TestReadingTablesShared: the model's shared reading tables never change
// an answer. A device's remaining-life law (its 5 %, 50 % and 95 %
// points and the posterior's weights) has the same bits on a fresh model,
// on a model whose tables other devices filled first (readings on other
// bins, the same bins at other depths), on a model derived by WithSpread
// (sharing the tables), and on a model whose cache is full (each reading
// then gets a table of its own for the call).
func TestReadingTablesShared(t *testing.T) {
	spec, costs := ridgeSpec(t)
	points := func(m DeviceModel, tl Tally) []uint64 {
		p, err := m.Posterior(tl, tl.Newest())
		require.NoError(t, err)
		rem := p.Remaining()
		out := []uint64{math.Float64bits(rem.Quantile(0.05)), math.Float64bits(rem.Quantile(0.5)), math.Float64bits(rem.Quantile(0.95))}
		for _, w := range p.p.w {
			out = append(out, math.Float64bits(w))
		}
		return out
	}
	target := []float64{3.56, 3.55, 3.55, 3.54}
	fresh, err := NewDeviceModel(spec, Environment{}, costs, DeviceOptions{})
	require.NoError(t, err)
	want := points(fresh, dailyTally(t, fresh, 1300, target))

	warm, err := NewDeviceModel(spec, Environment{}, costs, DeviceOptions{})
	require.NoError(t, err)
	for _, other := range [][]float64{{3.55, 3.55, 3.55, 3.55}, {3.60, 3.58, 3.56, 3.54}, {3.64, 3.64, 3.63, 3.63}} {
		for _, days := range []int{600, 1100, 1400} {
			points(warm, dailyTally(t, warm, days, other))
		}
	}
	require.Equal(t, want, points(warm, dailyTally(t, warm, 1300, target)), "tables filled by other devices first")
	derived, err := warm.WithSpread(spec.Spread)
	require.NoError(t, err)
	require.Same(t, warm.d.tables, derived.d.tables)
	require.Equal(t, want, points(derived, dailyTally(t, derived, 1300, target)), "WithSpread's model")

	full, err := NewDeviceModel(spec, Environment{}, costs, DeviceOptions{})
	require.NoError(t, err)
	full.d.tables.points.Store(MaxCachedLattice)
	require.Equal(t, want, points(full, dailyTally(t, full, 1300, target)), "a full cache")
	n := 0
	full.d.tables.tables.Range(func(any, any) bool { n++; return true })
	require.Zero(t, n, "a full cache keeps no more tables")
}

// TestLogLikChunked: the likelihood weighed reading by reading over chunks
// of logLikChunk nodes, the depth's segment found from the model's depth
// cells, has the same bits as the plain formula node by node (the alive
// term, then each reading's table at the voltage interpolated on the
// segment a linear scan finds), on 1500 nodes (six chunks) whose depths
// at the readings run from the plateau to beyond 1 (clamped), with nodes
// of no capacity among them, for devices on the plateau, in the knee and
// at its end.
func TestLogLikChunked(t *testing.T) {
	spec, costs := ridgeSpec(t)
	m, err := NewDeviceModel(spec, Environment{}, costs, DeviceOptions{})
	require.NoError(t, err)
	d := m.d
	require.Equal(t, depthIndex(d.curve.DepthOfDischarge), d.cells)
	r := rand.New(rand.NewPCG(15, 31))
	const n = 1500
	for _, tc := range []struct {
		days  int
		volts []float64
	}{{900, []float64{3.64, 3.64, 3.63, 3.63}}, {1300, []float64{3.56, 3.55, 3.55, 3.54}}, {1500, []float64{3.40, 3.35, 3.32, 3.30}}} {
		tl := dailyTally(t, m, tc.days, tc.volts)
		var ev evidence
		d.initEvidence(&ev, &tl, tl.newest-tl.install)
		require.Equal(t, len(tc.volts), ev.nr)
		c, a, f, base := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		for k := range n {
			c[k], a[k], f[k] = 0.2+1.2*r.Float64(), 0.5+r.Float64(), math.Exp(3*r.NormFloat64())
			base[k] = r.NormFloat64()
			if k%97 == 0 {
				c[k] = 0
			}
		}
		got := slices.Clone(base)
		ev.logLik(c, a, f, got)
		ds := d.curve.DepthOfDischarge
		hi := 0
		for k := range n {
			one := []float64{base[k]}
			ev.aliveTerm(c[k:k+1], a[k:k+1], f[k:k+1], one)
			want := one[0]
			if !math.IsInf(want, -1) {
				for i := range ev.rsBuf[:ev.nr] {
					rt := &ev.rsBuf[i]
					dep := (a[k]*rt.active+f[k]*rt.fe+rt.q)*(1/(c[k]*d.n.nominal)) + rt.sdd
					if dep > 1 {
						dep, hi = 1, hi+1
					}
					j := searchAbove(ds, dep)
					v := rt.vs[len(ds)-1]
					if j < len(ds) {
						v = rt.vs[j-1] + (dep-ds[j-1])*rt.slope[j-1]
					}
					want += rt.tab.at(v)
				}
			}
			require.Equal(t, math.Float64bits(want), math.Float64bits(got[k]), "%d days, node %d", tc.days, k)
		}
		require.Positive(t, hi)
		t.Logf("%d days: %d of %d reading terms clamped at depth 1", tc.days, hi, n*ev.nr)
	}
}
