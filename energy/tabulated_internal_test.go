package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	gquad "gonum.org/v1/gonum/integrate/quad"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// tabTestCycle is an invented cycle (test input, not a measured device): a
// fixed transmission and a receive window of two lengths.
func tabTestCycle(period, floorCurrent, txTime float64) Cycle {
	tx := MustFixedState("tx", 60*MilliAmp, 3.6, txTime)
	rx := MustState("rx", dist.MustPointMass(15*MilliAmp), 3.6, dist.MustDiscrete([]float64{0.2, 3}, []float64{0.7, 0.3}))
	return MustCycle(MustSequence(tx, rx), dist.MustPointMass(period), floorCurrent*3.6)
}

// tabTestSpec is an invented site (test input): three groups of small
// cells whose lives of a year or so cross a dozen month boundaries of a
// seasonal climate, one of them with a calendar limit inside its law.
func tabTestSpec(t testing.TB) SiteSpec {
	t.Helper()
	clim, err := NewSeasonalClimate(12, 10, 6, 8)
	require.NoError(t, err)
	th, err := NewThermal(TypicalThermal())
	require.NoError(t, err)
	b, err := NewBattery(BatterySpec{Charge: 100 * MilliAmpHour, NominalVoltage: 3.6, UsableFraction: 0.95, SelfDischargePerYear: 0.05})
	require.NoError(t, err)
	sw, err := SwitchingRegulator(3.0, 0.85, 1*MicroAmp)
	require.NoError(t, err)
	lin, err := LinearRegulator(3.0, 0.5*MicroAmp)
	require.NoError(t, err)
	h := Hour
	return SiteSpec{Climate: &clim, Shared: SharedSpread{Batch: 0.03, Temperature: 2},
		Groups: []SiteGroup{
			{Name: "A", Count: 8, Node: NodeSpec{Settings: []NodeSetting{{Weight: 1, Cycle: tabTestCycle(24*h, 8*MicroAmp, 4)}},
				Battery: b, Thermal: &th, StorageTime: 0.25 * Year, Spread: NodeSpread{Capacity: 0.04, Floor: 0.15, Active: 0.05}}},
			{Name: "B", Count: 8, Node: NodeSpec{Settings: []NodeSetting{{Weight: 0.6, Cycle: tabTestCycle(24*h, 6*MicroAmp, 4)}, {Weight: 0.4, Cycle: tabTestCycle(16*h, 6*MicroAmp, 2)}},
				Battery: b, Thermal: &th, Supply: sw, StartMonth: 3, Spread: NodeSpread{Capacity: 0.03, Floor: 0.2, Active: 0.05}}},
			{Name: "C", Count: 8, Node: NodeSpec{Settings: []NodeSetting{{Weight: 1, Cycle: tabTestCycle(24*h, 5*MicroAmp, 4)}},
				Battery: b, Thermal: &th, Supply: lin, StartMonth: 9, CalendarLife: 1.65 * Year, StorageTime: 0.5 * Year,
				Spread: NodeSpread{Capacity: 0.04, Floor: 0.15, Active: 0.04}}},
		}}
}

// The table against direct evaluation of the law it interpolates (the
// oracle: NodeLifetime's CDF and Survival computed afresh at each time),
// on a grid of 4000 times across the table and at both sides of every
// month boundary, where the calendar model has kinks: the table's stated
// part of the error must bound what is measured. Before the kinks were
// knots, the table straddled them and erred by 5.5e-3 against a stated
// 3.7e-4.
//
// The tables are built from each setting's own table (tabulated_setting.go);
// the seven-setting group (tabManySpec), whose settings' lives lie months
// to years apart, puts bumps into the mixture's probit, and its settings'
// tables are loose where their laws are small beside the mixture's
// (tabLooseMax): the stated error at each time (errAt) must bound what is
// measured there too.
func TestTabulatedAgainstDirect(t *testing.T) {
	spec := tabTestSpec(t)
	many, _ := tabManySpec(t)
	groups := append(append([]SiteGroup(nil), spec.Groups...), SiteGroup{Name: "seven", Count: 8, Node: many})
	for _, cond := range []Conditions{{BatchFactor: 1}, {BatchFactor: 0.95, TemperatureOffset: -6}, {BatchFactor: 1.04, TemperatureOffset: 5}} {
		for _, g := range groups {
			t.Run(fmt.Sprintf("%s b=%g dT=%+g", g.Name, cond.BatchFactor, cond.TemperatureOffset), func(t *testing.T) {
				l, err := NewNodeLifetime(g.Node, Environment{Climate: spec.Climate, Conditions: cond})
				require.NoError(t, err)
				tb := tabulate(l)
				require.Positive(t, tb.kinks, "the law crosses month boundaries")
				ts := tableTestTimes(tb.t[0], tb.t[len(tb.t)-1], 4000)
				worst, rel := tableAgainstDirect(tb, l, ts)
				ratio := 0.0 // the largest error over the stated one
				for _, x := range ts {
					d := math.Abs(tb.CDF(x) - l.CDF(x))
					assert.LessOrEqual(t, d, tb.errAt(x), "the stated error at %g y", x/Year)
					if e := tb.errAt(x); e > 0 {
						ratio = math.Max(ratio, d/e)
					}
				}
				if g.Name == "seven" {
					assert.Positive(t, tb.looseRel, "settings' tables loose where their laws are small beside the mixture's")
				}
				assert.LessOrEqual(t, worst, tb.tabCDF, "CDF: the table's stated part")
				assert.LessOrEqual(t, rel, tb.tabRel, "relative tails down to 1e-12: the table's stated part")
				assert.Positive(t, tb.tabCDF)
				t.Logf("%d points, %d kinks: CDF error %.2g (stated %.2g), relative tail error %.2g (stated %.2g); at each time at most %.2g of the stated error", len(tb.t), tb.kinks, worst, tb.tabCDF, rel, tb.tabRel, ratio)
			})
		}
	}
}

// tableTestTimes returns n + 1 even times across [lo, hi] and, at every
// month boundary in it, the boundary and times on both sides of it, where
// the calendar model has kinks.
func tableTestTimes(lo, hi float64, n int) []float64 {
	var ts []float64
	for i := 0; i <= n; i++ {
		ts = append(ts, lo+(hi-lo)*float64(i)/float64(n))
	}
	for m := math.Ceil(lo / Month); m*Month < hi; m++ {
		x := m * Month
		ts = append(ts, x*(1-1e-9), x, x*(1+1e-9), x-0.01*Month, x+0.01*Month)
	}
	return ts
}

// tableAgainstDirect returns the largest CDF difference between the table
// and the law evaluated directly at the times ts, and the largest
// relative difference of either tail down to 1e-12.
func tableAgainstDirect(tb tabulated, l NodeLifetime, ts []float64) (worst, rel float64) {
	for _, x := range ts {
		worst = math.Max(worst, math.Abs(tb.CDF(x)-l.CDF(x)))
		if s := l.Survival(x); s >= 1e-12 {
			rel = math.Max(rel, math.Abs(tb.Survival(x)/s-1))
		}
		if c := l.CDF(x); c >= 1e-12 {
			rel = math.Max(rel, math.Abs(tb.CDF(x)/c-1))
		}
	}
	return worst, rel
}

// A table's moments (Mean, Variance) against an independent integration
// of the same law: gonum's fixed 60-point Gauss–Legendre rule
// (integrate/quad.Fixed) on [0, t_0] and on every interval of the table
// (where the law is a smooth function of t), and the tail beyond the
// table's end along its end slope in closed form
// (∫_0^∞ Φ̄(z + d·x) dx = (φ(z) − z·Φ̄(z))/d,
// ∫_0^∞ 2x·Φ̄(z + d·x) dx = ((1 + z²)·Φ̄(z) − z·φ(z))/d²). The stated
// moment errors (momentError) must bound the difference.
func TestTabulatedMomentsAgainstFixedRule(t *testing.T) {
	spec := tabTestSpec(t)
	many, _ := tabManySpec(t)
	groups := append(append([]SiteGroup(nil), spec.Groups...), SiteGroup{Name: "seven", Count: 8, Node: many})
	for _, g := range groups {
		t.Run(g.Name, func(t *testing.T) {
			l, err := NewNodeLifetime(g.Node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
			require.NoError(t, err)
			tb := tabulate(l)
			fixed := func(f func(float64) float64, a, b float64) float64 {
				return gquad.Fixed(f, a, b, 60, gquad.Legendre{}, 0)
			}
			lo, hi := tb.t[0], tb.t[len(tb.t)-1]
			m1 := fixed(tb.Survival, 0, lo)
			m2 := fixed(func(x float64) float64 { return 2 * x * tb.Survival(x) }, 0, lo)
			for i := 0; i+1 < len(tb.t); i++ {
				m1 += fixed(tb.Survival, tb.t[i], tb.t[i+1])
				m2 += fixed(func(x float64) float64 { return 2 * x * tb.Survival(x) }, tb.t[i], tb.t[i+1])
			}
			if hi < tb.cal {
				z, d := tb.z[len(tb.z)-1], tb.d1[len(tb.d1)-1]
				i0 := (normPDF(z) - z*normSurv(z)) / d
				i1 := ((1+z*z)*normSurv(z) - z*normPDF(z)) / (d * d)
				m1 += i0
				m2 += 2*hi*i0 + i1
			}
			vari := m2 - m1*m1
			em, ev := tb.momentError()
			assert.LessOrEqual(t, math.Abs(tb.Mean()-m1), em, "mean (s)")
			assert.LessOrEqual(t, math.Abs(tb.Variance()-vari), ev, "variance (s²)")
			assert.Less(t, em, 1e-9*m1, "the mean's stated error is small")
			t.Logf("mean %.6g s: error %.2g (stated %.2g); variance %.6g s²: error %.2g (stated %.2g)",
				m1, math.Abs(tb.Mean()-m1), em, vari, math.Abs(tb.Variance()-vari), ev)
		})
	}
}

// The table's faster readers give the same bits as the plain ones: zAtD2
// as zAtD on either side (at the table's points, where the sides differ,
// and between them), zAtNear and survivalNear as zAt and Survival whatever
// interval the hint holds.
func TestTableReadersAsPlain(t *testing.T) {
	spec := tabTestSpec(t)
	many, _ := tabManySpec(t)
	for _, node := range []NodeSpec{spec.Groups[2].Node, many} {
		l, err := NewNodeLifetime(node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
		require.NoError(t, err)
		tb := tabulate(l)
		lo, hi := tb.t[0], tb.t[len(tb.t)-1]
		ts := append([]float64{0, lo / 2, hi * 1.5}, tb.t...)
		for i := 0; i <= 3000; i++ {
			ts = append(ts, lo+(hi-lo)*float64((i*1237)%3001)/3000)
		}
		hint := 0
		for _, x := range ts {
			z, dl, dr := tb.zAtD2(x)
			zl, wl := tb.zAtD(x, false)
			zr, wr := tb.zAtD(x, true)
			require.Equal(t, zl, z, "t = %g", x)
			require.Equal(t, zr, z, "t = %g", x)
			require.Equal(t, wl, dl, "t = %g", x)
			require.Equal(t, wr, dr, "t = %g", x)
			h := hint
			require.Equal(t, tb.zAt(x), tb.zAtNear(x, &hint), "t = %g", x)
			require.Equal(t, tb.Survival(x), tb.survivalNear(x, &h), "t = %g", x)
		}
	}
}

// momentMaxHe's bounds on max_x |He_k(x)|·φ(x) (the derivatives of the
// normal survival, which bound the moment rule's error) against the
// maximum over a grid of step 1e-4 on [−12, 12], the polynomials by their
// three-term recurrence He_{k+1} = x·He_k − k·He_{k−1} (Abramowitz and
// Stegun 22.7.14, probabilists' form): each bound at least the grid's
// maximum, and within 1e-3 of it relative (rounded up in its fourth digit).
func TestMomentMaxHe(t *testing.T) {
	for k := range 8 {
		most := 0.0
		for i := -120000; i <= 120000; i++ {
			x := float64(i) * 1e-4
			a, b := 1.0, x // He_0, He_1
			for n := 1; n < k; n++ {
				a, b = b, x*b-float64(n)*a
			}
			h := a
			if k > 0 {
				h = b
			}
			most = math.Max(most, math.Abs(h)*normPDF(x))
		}
		assert.GreaterOrEqual(t, momentMaxHe(k), most, "k = %d", k)
		assert.InEpsilon(t, most, momentMaxHe(k), 1e-3, "k = %d", k)
	}
}

// bellBounds78 is bellBound(7, …) and bellBound(8, …) bit for bit, from one
// set of powers; with only D1 (z linear) each is its single term,
// momentMaxHe(n − 1)·D1^n (Faà di Bruno: B_{n,n}(z′) = z′^n).
func TestBellBounds78(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	cases := [][3]float64{{0, 0, 0}, {1, 0, 0}, {0, 1, 0}, {0, 0, 1}, {1e-300, 1e300, 1}, {3.5, 0.25, 17}}
	for range 200 {
		cases = append(cases, [3]float64{math.Exp(r.NormFloat64() * 5), math.Exp(r.NormFloat64() * 5), math.Exp(r.NormFloat64() * 5)})
	}
	for _, c := range cases {
		f7, f8 := bellBounds78(c[0], c[1], c[2])
		assert.Equal(t, math.Float64bits(bellBound(7, c[0], c[1], c[2])), math.Float64bits(f7), "%v", c)
		assert.Equal(t, math.Float64bits(bellBound(8, c[0], c[1], c[2])), math.Float64bits(f8), "%v", c)
	}
	f7, f8 := bellBounds78(2, 0, 0)
	assert.Equal(t, momentMaxHe(6)*128, f7)
	assert.Equal(t, momentMaxHe(7)*256, f8)
}
