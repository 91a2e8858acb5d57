package energy_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/orderstat"
)

// fleet60Groups is the fleet of BenchmarkFleet60: 10 000 nodes of the soil
// node in 60 groups of radio settings (fleetCycles) on the example bobbin
// cell (invented demo data).
func fleet60Groups(tb testing.TB) []energy.FleetGroup {
	tb.Helper()
	cell := energy.MustBattery(energy.TypicalER14505())
	var gs []energy.FleetGroup
	for i, c := range fleetCycles(tb) {
		n := int64(10000 / 60)
		if i < 10000%60 {
			n++
		}
		gs = append(gs, energy.FleetGroup{Cycle: c, Battery: cell, Count: n})
	}
	return gs
}

// TestFirstFailure60Stated: the 60-group fleet of BenchmarkFirstFailure60
// (10 000 nodes; each group's P(S_k <= C) from dist.PointTails). Its
// first-failure law states a CDF error of at most 1e-8, and at 50 dates
// over its 0.1–99.9 % range it is within that of the oracle
// Π_g P(S_k <= C_g)^{n_g}, each factor from the single tilted inversion
// (dist.IIDSums.Tails, no shared transform values; tested in dist against
// gonum's incomplete gamma and the Erlang law) taken in log space.
func TestFirstFailure60Stated(t *testing.T) {
	t.Parallel()
	gs := fleet60Groups(t)
	f, ff := firstFailure(t, gs)
	acc := ff.(dist.Estimated).Accuracy()
	assert.LessOrEqual(t, acc.CDFAbs, 1e-8, "stated first-failure CDF error")
	type group struct {
		sums        dist.IIDSums
		capJ, step  float64
		n           float64
		lo, hi, mu  float64
		prunedBelow float64
	}
	var g []group
	for i := range gs {
		l, _, _ := f.Lifetime(i)
		s, err := dist.NewIIDSums(l.CycleEnergy())
		require.NoError(t, err)
		g = append(g, group{sums: s, capJ: l.Capacity(), step: l.Step(), n: float64(gs[i].Count)})
	}
	lo, hi := ff.Quantile(1e-3), ff.Quantile(1-1e-3)
	var worst float64
	for i := range 50 {
		d := lo + (hi-lo)*float64(i)/49
		sum := 0.0
		for _, gg := range g {
			k := math.Floor(d/gg.step) + 1
			b, a := gg.sums.Tails(int(k), gg.capJ)
			if a < 0.5 {
				sum += gg.n * math.Log1p(-a)
			} else {
				sum += gg.n * math.Log(b)
			}
		}
		want := math.Exp(sum)
		got := ff.Survival(d)
		worst = math.Max(worst, math.Abs(got-want))
		assert.LessOrEqual(t, math.Abs(got-want), acc.CDFAbs, "date %g s: %g, oracle %g", d, got, want)
	}
	t.Logf("first failure: stated CDF error %.2e, largest difference from the oracle %.2e", acc.CDFAbs, worst)
}

var _ orderstat.TwoTails = energy.Lifetime{}

// Lifetime.Tails gives CDF and Survival from one K-fold evaluation: the
// same values (bit for bit) as the two methods, at dates from before the
// support to past the bulk, for two groups of the 60-group fleet (values
// from dist.PointTails' shared panels), and NaN for a NaN date or a zero
// Lifetime.
func TestLifetimeTails(t *testing.T) {
	t.Parallel()
	gs := fleet60Groups(t)
	f, _ := firstFailure(t, gs[58:])
	for i := range 2 {
		l, _, _ := f.Lifetime(i)
		m, sd := l.Mean(), math.Sqrt(l.Variance())
		for _, z := range []float64{math.Inf(-1), -1e9, -40, -6, -1, 0, 0.5, 3, 40, math.Inf(1)} {
			d := m + z*sd
			if z == math.Inf(-1) {
				d = -1
			}
			cdf, sf := l.Tails(d)
			assert.Equal(t, math.Float64bits(l.CDF(d)), math.Float64bits(cdf), "group %d z=%g CDF", i, z)
			assert.Equal(t, math.Float64bits(l.Survival(d)), math.Float64bits(sf), "group %d z=%g Survival", i, z)
		}
		cdf, sf := l.Tails(math.NaN())
		assert.True(t, math.IsNaN(cdf) && math.IsNaN(sf), "NaN date")
	}
	var zero energy.Lifetime
	cdf, sf := zero.Tails(1)
	assert.True(t, math.IsNaN(cdf) && math.IsNaN(sf), "zero Lifetime")
}

var _ orderstat.TailBounded = energy.Lifetime{}

// The bound points hold against the law itself: for the groups of the
// 60-group fleet nearest its first failures, CDF(t) at LowerBoundPoint and
// Survival(t) at UpperBoundPoint are at most the level asked (Hoeffding's
// and Bernstein's inequalities against the K-fold values, which
// TestFirstFailure60Stated checks against the single inversion), and the
// points move outwards as the level falls.
func TestLifetimeBoundPoints(t *testing.T) {
	t.Parallel()
	gs := fleet60Groups(t)
	f, _ := firstFailure(t, gs[55:])
	for i := range 5 {
		l, _, _ := f.Lifetime(i)
		prevLo, prevHi := math.Inf(1), math.Inf(-1)
		for _, lp := range []float64{-2, -10, -46, -92, -300, -690} {
			t0, t1 := l.LowerBoundPoint(lp), l.UpperBoundPoint(lp)
			require.False(t, math.IsInf(t0, 0) || math.IsInf(t1, 0), "group %d logP=%g: %g, %g", i, lp, t0, t1)
			assert.LessOrEqual(t, l.CDF(t0), math.Exp(lp), "group %d logP=%g lower", i, lp)
			assert.LessOrEqual(t, l.Survival(t1), math.Exp(lp), "group %d logP=%g upper", i, lp)
			assert.Less(t, t0, prevLo)
			assert.Greater(t, t1, prevHi)
			prevLo, prevHi = t0, t1
		}
		assert.True(t, math.IsInf(l.LowerBoundPoint(0), -1) && math.IsInf(l.UpperBoundPoint(math.NaN()), 1))
	}
}

// hidden is a law with only the dist.Law methods (no Tails, no bounds).
type hidden struct{ dist.Law }

// The 60-group first-failure law, which leaves out the groups its bounds
// put below 1e-16 of the answer (those far from its first failures), equals
// the law of the same groups without the bounds to 1e-14 relative in both
// tails at 50 dates over its 0.1–99.9 % range.
func TestFirstFailure60Pruned(t *testing.T) {
	t.Parallel()
	gs := fleet60Groups(t)
	f, ff := firstFailure(t, gs)
	var plain []orderstat.Group
	for i := range gs {
		l, _, _ := f.Law(i)
		plain = append(plain, orderstat.Group{Law: hidden{l}, Count: gs[i].Count})
	}
	ref, err := orderstat.MinOfGroups(plain)
	require.NoError(t, err)
	lo, hi := ff.Quantile(1e-3), ff.Quantile(1-1e-3)
	for i := range 50 {
		d := lo + (hi-lo)*float64(i)/49
		assert.LessOrEqual(t, testref.RelErr(ff.CDF(d), ref.CDF(d)), 1e-14, "date %g CDF", d)
		assert.LessOrEqual(t, testref.RelErr(ff.Survival(d), ref.Survival(d)), 1e-14, "date %g survival", d)
	}
}
