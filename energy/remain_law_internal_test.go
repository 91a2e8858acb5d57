package energy

import (
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestSearchFloats checks the posterior law's bisection against the
// standard library's (sort.SearchFloat64s for the first value >= x,
// sort.Search for the first > x) on sorted values with repeats, at every
// value, between values and beyond both ends.
func TestSearchFloats(t *testing.T) {
	for _, xs := range [][]float64{
		nil,
		{1},
		{-2, -1, -1, 0, 0, 0, 3.5, 7, 7, 1e300},
		{math.Inf(-1), -5, 2, 2, math.Inf(1)},
	} {
		var probes []float64
		for _, v := range xs {
			probes = append(probes, v, math.Nextafter(v, math.Inf(-1)), math.Nextafter(v, math.Inf(1)))
		}
		probes = append(probes, -1e308, 1e308, 0.5)
		for _, x := range probes {
			require.Equal(t, sort.SearchFloat64s(xs, x), searchFloats(xs, x, false), "%v >= %g", xs, x)
			require.Equal(t, sort.Search(len(xs), func(k int) bool { return xs[k] > x }), searchFloats(xs, x, true), "%v > %g", xs, x)
		}
	}
}

// TestNewtonQuantile checks Quantile's Halley steps (newtonQuantile)
// against the library's bracketing search (internal/root's Illinois
// regula falsi on the same CDF, the path Quantile took before): on the
// remaining-life laws of knee devices (3.50 V and 3.45 V, 400 to 1400
// days: the kernels overlap at most levels, and where they are apart the
// steps start from the node's own kernel) at 199 levels each, the two
// answers agree within the two searches' resolutions (the steps' tol,
// 1e-10 of the larger of |x| and smax/2, and root's 1e-10 of its
// bracket's scale, which may reach (kernelReach+2)·smax beyond the node:
// both are right ends of brackets that narrow, so they differ by at most
// the sum of the two widths), and the returned x obeys the contract:
// CDF(x) >= p > CDF(x − tol). The steps must be taken at most levels
// (else this checks nothing).
func TestNewtonQuantile(t *testing.T) {
	spec, costs := ridgeSpec(t)
	m, err := NewDeviceModel(spec, Environment{}, costs, DeviceOptions{})
	require.NoError(t, err)
	taken, levels := 0, 0
	for _, days := range []int{400, 900, 1400} {
		for _, v := range []float64{3.50, 3.45} {
			tl := dailyTally(t, m, days, []float64{v, v, v, v})
			p, err := m.Posterior(tl, tl.Newest())
			require.NoError(t, err)
			l := p.Remaining()
			pl := l.p
			for i := 1; i < 200; i++ {
				prob := float64(i) / 200
				k := sort.Search(len(pl.m), func(k int) bool { return pl.below[k+1] >= prob })
				k = min(k, len(pl.m)-1)
				x, ok := pl.newtonQuantile(k, prob)
				levels++
				if !ok {
					continue
				}
				taken++
				y := pl.root(k, func(x float64) float64 { return l.CDF(x) - prob })
				tol := 1e-10 * math.Max(math.Abs(x), 0.5*pl.smax)
				require.InDelta(t, y, x, tol+1e-10*(math.Abs(y)+(kernelReach+2)*pl.smax), "%d days, %.2f V, p=%g", days, v, prob)
				require.GreaterOrEqual(t, l.CDF(x), prob, "%d days, %.2f V, p=%g", days, v, prob)
				require.Less(t, l.CDF(x-tol), prob, "%d days, %.2f V, p=%g", days, v, prob)
				require.Equal(t, x, l.Quantile(prob))
			}
		}
	}
	t.Logf("Halley steps taken at %d of %d levels", taken, levels)
	require.Greater(t, taken, levels*3/4)
}

// TestSortKeys checks the law's radix sort against the standard library's
// sort (slices.Sort) on distinct keys built as newPostLaw builds them
// (a value's order-preserving bits, the low 16 replaced by the index, in
// index order): values spread over many decades, clustered within a few
// units in the last place (ties in the top 48 bits, which the radix sort
// leaves in index order), negative and positive, descending, at sizes
// around the radix sort's threshold and up to MaxPosteriorNodes.
func TestSortKeys(t *testing.T) {
	r := rand.New(rand.NewPCG(15, 7))
	for _, n := range []int{1, 2, 63, 64, 65, 256, 1024, 4096, MaxPosteriorNodes} {
		for _, gen := range []func(int) float64{
			func(int) float64 { return math.Exp(40 * (r.Float64() - 0.5)) },
			func(int) float64 { return 3e7 + float64(r.IntN(5))*1e-8 },
			func(int) float64 { return r.NormFloat64() * 1e5 },
			func(k int) float64 { return float64(n - k) },
		} {
			keys := make([]uint64, n)
			for k := range keys {
				keys[k] = orderBits(gen(k))&^0xffff | uint64(k)
			}
			want := slices.Clone(keys)
			slices.Sort(want)
			sortKeys(keys, make([]uint64, n))
			require.Equal(t, want, keys, "n=%d", n)
		}
	}
}

// TestLifeMonth checks life's month search (deviceData.month: a guess
// from the remainder's share of the year, moved to the first month whose
// end passes it) against a scan from the first month (the search it
// replaced, written out here), bit for bit: on nodes with monthly floor
// and self-discharge factors that vary (0.2 to 3; and with both negative
// in one month, where month scans), H's parts from 0 to 2 (one negative in an
// eighth of the cases), remainders from −0.1 to 1.1 years' worth and NaN.
func TestLifeMonth(t *testing.T) {
	spec, costs := ridgeSpec(t)
	m, err := NewDeviceModel(spec, Environment{}, costs, DeviceOptions{})
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(15, 9))
	for _, negative := range []bool{false, true} {
		d := *m.d
		n := *d.n
		months := *n.months
		n.months = &months
		d.n = &n
		for i := range 12 {
			n.months.floorRate[i], n.months.sdFactor[i] = 0.2+2.8*r.Float64(), 0.2+2.8*r.Float64()
			if negative && i == 5 {
				n.months.floorRate[i], n.months.sdFactor[i] = -3, -3 // H falls in month 5
			}
			n.months.floorCum[i+1] = n.months.floorCum[i] + Month*n.months.floorRate[i]
			n.months.sdCum[i+1] = n.months.sdCum[i] + Month*n.months.sdFactor[i]
		}
		d.monthsUp = !negative
		for j := range 20000 {
			part := [3]float64{2 * r.Float64(), 2 * r.Float64() / Year, 2 * r.Float64()}
			if j%8 == 0 {
				part[j/8%3] = -part[j/8%3]
			}
			cs, lin, fp := part[0], part[1], part[2]
			hy := cs*n.months.sdCum[12] + lin*Year + fp*n.months.floorCum[12]
			rem := hy * (1.2*r.Float64() - 0.1)
			if j%1000 == 0 {
				rem = math.NaN()
			}
			wantI, wantPrev := 11, 0.0
			for i := range 12 {
				next := cs*n.months.sdCum[i+1] + lin*Month*float64(i+1) + fp*n.months.floorCum[i+1]
				if rem < next {
					wantI = i
					break
				}
				wantPrev = next
			}
			if wantI == 11 {
				wantPrev = cs*n.months.sdCum[11] + lin*Month*11 + fp*n.months.floorCum[11]
			}
			gotI, gotPrev := d.month(rem, hy, cs, lin, fp)
			require.Equal(t, wantI, gotI, "rem=%g hy=%g parts %v negative=%v", rem, hy, part, negative)
			require.Equal(t, math.Float64bits(wantPrev), math.Float64bits(gotPrev))
		}
	}
}
