package energy_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"sort"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/energy"
)

// A node with a fixed cycle: a 100 ms, 40 mA transmission every 10 min
// and a floor of 10 µA, at 3.6 V (invented demo values).
func fixedCycle(t *testing.T) energy.Cycle {
	t.Helper()
	tx, err := energy.NewFixedState("tx", 40*energy.MilliAmp, 3.6, 0.1)
	require.NoError(t, err)
	c, err := energy.NewCycle(energy.MustSequence(tx), dist.MustPointMass(600), 10e-6*3.6)
	require.NoError(t, err)
	return c
}

func cellNoLeak(t *testing.T) energy.Battery {
	t.Helper()
	spec := energy.TypicalER14505()
	spec.SelfDischargePerYear = 0
	b, err := energy.NewBattery(spec)
	require.NoError(t, err)
	return b
}

// With a deterministic cycle (mean power P) and a normal capacity factor
// N(1, σ), the node dies when c·C = P·t: its lifetime is c·C/P, normal, so
// its p-quantile is C·(1 + σ·z_p)/P exactly (closed form; z_p from gonum's
// distuv.UnitNormal).
func TestNodeLifetimeNormalCapacityClosedForm(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	const sigma = 0.05
	l, err := energy.NewNodeLifetime(energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
		Spread: energy.NodeSpread{Capacity: sigma}}, energy.Environment{})
	require.NoError(t, err)
	p := c.MeanPower()
	for _, q := range []float64{1e-9, 1e-6, 0.05, 0.5, 0.95, 1 - 1e-6} {
		want := b.UsableEnergy() * (1 + sigma*distuv.UnitNormal.Quantile(q)) / p
		assert.InDelta(t, 1, l.Quantile(q)/want, 1e-9, "quantile %g", q)
		assert.InDelta(t, q, l.CDF(want), 1e-9*math.Max(q, 1e-3), "CDF at the %g-quantile", q)
	}
	// Upper tail directly: P(L > t) = Φ̄((tP/C − 1)/σ).
	tt := b.UsableEnergy() * (1 + 6*sigma) / p
	assert.InDelta(t, 1, l.Survival(tt)/distuv.UnitNormal.Survival(6), 1e-7)
	require.NoError(t, disttest.Check(l))
}

// Only the floor varies (lognormal, median 1, log-sd s): the node dies at
// t = C/(P_a + f·P_f), so P(L <= t) = P(f >= (C/t − P_a)/P_f), the
// lognormal survival (closed form; gonum distuv.LogNormal).
func TestNodeLifetimeLognormalFloorClosedForm(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	const s = 0.4
	l, err := energy.NewNodeLifetime(energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
		Spread: energy.NodeSpread{Floor: s}}, energy.Environment{})
	require.NoError(t, err)
	pf := c.FloorPower()
	pa := c.MeanPower() - pf
	ln := distuv.LogNormal{Mu: 0, Sigma: s}
	for _, yrs := range []float64{5, 10, 14, 16, 20} {
		tt := yrs * energy.Year
		f := (b.UsableEnergy()/tt - pa) / pf
		assert.InDelta(t, ln.Survival(f), l.CDF(tt), 1e-12, "CDF at %g years", yrs)
		assert.InDelta(t, ln.CDF(f), l.Survival(tt), 1e-12, "Survival at %g years", yrs)
	}
}

// Normal capacity, normal active scale and lognormal floor together: the
// law against a direct double integral by gonum's fixed Gauss–Legendre rule
// (2000 points over the floor factor's normal variable), an independent
// quadrature.
func TestNodeLifetimeAllSpreadsAgainstGonumQuadrature(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	sp := energy.NodeSpread{Capacity: 0.05, Floor: 0.4, Active: 0.08}
	l, err := energy.NewNodeLifetime(energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b, Spread: sp},
		energy.Environment{})
	require.NoError(t, err)
	pf := c.FloorPower()
	pa := c.MeanPower() - pf
	C := b.UsableEnergy()
	acc := l.Accuracy()
	assert.Less(t, acc.CDFAbs, 1e-6)
	for _, yrs := range []float64{6, 10, 14, 18, 25} {
		tt := yrs * energy.Year
		// Alive iff c·C − a·pa·t − f·pf·t >= 0; given f the left side is
		// normal with mean C − pa·t − f·pf·t and variance (σc·C)² + (σa·pa·t)².
		sd := math.Hypot(sp.Capacity*C, sp.Active*pa*tt)
		want := quad.Fixed(func(z float64) float64 {
			f := math.Exp(sp.Floor * z)
			return distuv.UnitNormal.Prob(z) * distuv.UnitNormal.Survival((f*pf*tt-(C-pa*tt))/sd)
		}, -12, 12, 2000, quad.Legendre{}, 0)
		// The stated error bounds the true one.
		assert.InDelta(t, want, l.Survival(tt), acc.CDFAbs, "Survival at %g years", yrs)
	}
}

// Monte Carlo by the structure, independent of the law: each node draws its
// factors once, then spends cycle after cycle (drawn by Cycle.Rand) until
// its cell is empty. A small cell (0.5 % of an AA bobbin cell) keeps a life
// to a few thousand cycles. Kolmogorov–Smirnov distance against the DKW
// bound at level 1e-6 (Massart 1990): sqrt(ln(2/1e-6)/(2n)).
func TestNodeLifetimeMonteCarlo(t *testing.T) {
	rx, err := energy.NewState("rx", dist.MustPointMass(12*energy.MilliAmp), 3.6, dist.MustDiscrete([]float64{0.02, 0.3}, []float64{0.9, 0.1}))
	require.NoError(t, err)
	tx, err := energy.NewFixedState("tx", 40*energy.MilliAmp, 3.6, 0.1)
	require.NoError(t, err)
	c, err := energy.NewCycle(energy.MustSequence(tx, rx), dist.MustPointMass(600), 10e-6*3.6)
	require.NoError(t, err)
	spec := energy.TypicalER14505()
	spec.SelfDischargePerYear = 0
	spec.Charge = 12 * energy.MilliAmpHour
	b, err := energy.NewBattery(spec)
	require.NoError(t, err)
	sp := energy.NodeSpread{Capacity: 0.05, Floor: 0.5, Active: 0.05}
	l, err := energy.NewNodeLifetime(energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b, Spread: sp},
		energy.Environment{})
	require.NoError(t, err)

	r := rand.New(rand.NewPCG(11, 12))
	const n = 3000
	floorE := c.FloorPower() * 600
	lives := make([]float64, n)
	for i := range lives {
		cap := b.UsableEnergy() * (1 + sp.Capacity*r.NormFloat64())
		a := 1 + sp.Active*r.NormFloat64()
		f := math.Exp(sp.Floor * r.NormFloat64())
		used, k := 0.0, 0
		for {
			e := a*(c.Rand(r)-floorE) + f*floorE
			if used+e > cap {
				// Dies during cycle k+1: at the fraction of it the energy lasts.
				lives[i] = 600 * (float64(k) + (cap-used)/e)
				break
			}
			used += e
			k++
		}
	}
	sort.Float64s(lives)
	d := 0.0
	for i, x := range lives {
		F := l.CDF(x)
		d = math.Max(d, math.Max(math.Abs(F-float64(i+1)/n), math.Abs(F-float64(i)/n)))
	}
	bound := math.Sqrt(math.Log(2/1e-6) / (2 * n))
	assert.Less(t, d, bound, "KS distance %g, bound %g", d, bound)
}

// The calendar limit: a 10-year calendar life after one year of storage
// caps a node that would last 16 years at 9 years, with an atom holding the
// nodes whose energy outlasts it.
func TestNodeLifetimeCalendarLimit(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	l, err := energy.NewNodeLifetime(energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
		Spread: energy.NodeSpread{Capacity: 0.05}, CalendarLife: 10 * energy.Year, StorageTime: energy.Year}, energy.Environment{})
	require.NoError(t, err)
	assert.Equal(t, 9*energy.Year, l.Calendar())
	assert.Equal(t, 9*energy.Year, l.Quantile(0.5))
	assert.Equal(t, 1.0, l.CDF(9*energy.Year))
	assert.Less(t, l.EnergyBinds(), 1e-12)
	atoms := l.Atoms()
	require.Len(t, atoms, 1)
	assert.InDelta(t, 1, atoms[0].Mass, 1e-12)
	assert.LessOrEqual(t, l.Mean(), 9*energy.Year)
}

func TestNodeLifetimeBadInput(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	one := []energy.NodeSetting{{Weight: 1, Cycle: c}}
	for name, spec := range map[string]energy.NodeSpec{
		"capacity spread above cap": {Settings: one, Battery: b, Spread: energy.NodeSpread{Capacity: 0.2}},
		"negative floor spread":     {Settings: one, Battery: b, Spread: energy.NodeSpread{Floor: -0.1}},
		"NaN active spread":         {Settings: one, Battery: b, Spread: energy.NodeSpread{Active: math.NaN()}},
		"no settings":               {Battery: b},
		"weights not summing to 1":  {Settings: []energy.NodeSetting{{Weight: 0.5, Cycle: c}}, Battery: b},
		"zero cycle":                {Settings: []energy.NodeSetting{{Weight: 1}}, Battery: b},
		"zero battery":              {Settings: one},
		"storage beyond calendar":   {Settings: one, Battery: b, CalendarLife: energy.Year, StorageTime: 2 * energy.Year},
		"month 12":                  {Settings: one, Battery: b, StartMonth: 12},
	} {
		_, err := energy.NewNodeLifetime(spec, energy.Environment{})
		assert.True(t, errors.Is(err, energy.ErrParam), "%s: %v", name, err)
	}
	_, err := energy.NewSite(energy.SiteSpec{Shared: energy.SharedSpread{Temperature: 20},
		Groups: []energy.SiteGroup{{Node: energy.NodeSpec{Settings: one, Battery: b}, Count: 1}}})
	assert.True(t, errors.Is(err, energy.ErrParam), "temperature sd above cap: %v", err)
}

// A site with a shared batch factor: a node's marginal capacity factor is
// b·c with b ~ N(1, σb) and c ~ N(1, σc), so for a deterministic cycle
// P(L <= t) = E_b[Φ((tP/(b·C) − 1)/σc)], here by gonum's fixed
// Gauss–Legendre rule over b (an independent quadrature); the site's
// 7-node Gauss–Hermite mixture agrees to 2e-4.
func TestSiteSharedBatchAgainstQuadrature(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	const sc, sb = 0.05, 0.03
	site, err := energy.NewSite(energy.SiteSpec{Shared: energy.SharedSpread{Batch: sb}, Groups: []energy.SiteGroup{
		{Name: "a", Count: 100, Node: energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
			Spread: energy.NodeSpread{Capacity: sc}}}}})
	require.NoError(t, err)
	node, err := site.NodeLifetime(0)
	require.NoError(t, err)
	require.NoError(t, disttest.Check(node), "the shared mixture of tabulated laws")
	p, C := c.MeanPower(), b.UsableEnergy()
	for _, yrs := range []float64{14, 15.5, 16.4, 17.5, 19} {
		tt := yrs * energy.Year
		want := quad.Fixed(func(z float64) float64 {
			bb := 1 + sb*z
			return distuv.UnitNormal.Prob(z) * distuv.UnitNormal.CDF((tt*p/(bb*C)-1)/sc)
		}, -9, 9, 2000, quad.Legendre{}, 0)
		assert.InDelta(t, want, node.CDF(tt), 2e-4, "CDF at %g years", yrs)
	}
	// The first failure of 100 nodes sharing the batch:
	// P(first <= t) = E_b[1 − S(t | b)^100], the same quadrature.
	ff, err := site.FirstFailure()
	require.NoError(t, err)
	for _, yrs := range []float64{12, 13, 14} {
		tt := yrs * energy.Year
		want := quad.Fixed(func(z float64) float64 {
			bb := 1 + sb*z
			s := distuv.UnitNormal.Survival((tt*p/(bb*C) - 1) / sc)
			return distuv.UnitNormal.Prob(z) * -math.Expm1(100*math.Log(s))
		}, -9, 9, 2000, quad.Legendre{}, 0)
		stated := ff.(dist.Estimated).Accuracy().CDFAbs
		assert.Less(t, stated, 0.01, "stated error of the first failure")
		assert.InDelta(t, want, ff.CDF(tt), stated, "first failure CDF at %g years (within the stated error, which includes the shared rule's)", yrs)
	}
}

// The same calls from 8 goroutines give the same bits as one call alone.
func TestSiteDeterministic(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	spec := energy.SiteSpec{Shared: energy.SharedSpread{Batch: 0.02}, Groups: []energy.SiteGroup{
		{Name: "a", Count: 50, Node: energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
			Spread: energy.NodeSpread{Capacity: 0.04, Floor: 0.3}}}}}
	s1, err := energy.NewSite(spec)
	require.NoError(t, err)
	n1, _ := s1.NodeLifetime(0)
	want := []float64{n1.Quantile(0.01), n1.Quantile(0.5), n1.Mean(), s1.NoFailureBefore(12 * energy.Year)}
	var wg sync.WaitGroup
	got := make([][]float64, 8)
	for g := range got {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s, err := energy.NewSite(spec)
			if err != nil {
				return
			}
			n, _ := s.NodeLifetime(0)
			got[g] = []float64{n.Quantile(0.01), n.Quantile(0.5), n.Mean(), s.NoFailureBefore(12 * energy.Year)}
		}()
	}
	wg.Wait()
	for g := range got {
		assert.Equal(t, want, got[g])
	}
}

// The variance split: with a deterministic cycle and only the capacity and
// batch factors spread, the lifetime is c·b·C/P, so the first-order
// variance shares are σc²/(σc² + σb²) and σb²/(σc² + σb²) exactly, and the
// first-order sd is C/P·sqrt(σc² + σb²) (closed form).
func TestVarianceSharesClosedForm(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	const sc, sb = 0.04, 0.03
	site, err := energy.NewSite(energy.SiteSpec{Shared: energy.SharedSpread{Batch: sb}, Groups: []energy.SiteGroup{
		{Name: "a", Count: 10, Node: energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
			Spread: energy.NodeSpread{Capacity: sc}}}}})
	require.NoError(t, err)
	v, err := site.VarianceShares(0)
	require.NoError(t, err)
	assert.InDelta(t, sc*sc/(sc*sc+sb*sb), v.Capacity, 1e-9)
	assert.InDelta(t, sb*sb/(sc*sc+sb*sb), v.Batch, 1e-9)
	assert.InDelta(t, b.UsableEnergy()/c.MeanPower()*math.Hypot(sc, sb), v.SD, 1e-6*v.SD)
	assert.Zero(t, v.PerCycle+v.Floor+v.Active+v.Temperature+v.Setting)
	_, err = site.VarianceShares(1)
	assert.True(t, errors.Is(err, energy.ErrParam))
}

// Temperatures: a climate beyond the cell's rated range is a warning; one
// beyond the derating table is an error naming the derating.
func TestNodeLifetimeTemperatureChecks(t *testing.T) {
	c := fixedCycle(t)
	b := cellNoLeak(t)
	th := energy.TypicalThermal()                       // rated −55 … +85 °C, derating table −55 … +85 °C
	hot, err := energy.NewSeasonalClimate(80, 4, 6, 10) // up to 84 + 5 = 89 °C in the hottest hours
	require.NoError(t, err)
	spec := energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b, Thermal: &th,
		Spread: energy.NodeSpread{Capacity: 0.05}}
	site, err := energy.NewSite(energy.SiteSpec{Climate: &hot, Groups: []energy.SiteGroup{{Name: "hot", Node: spec, Count: 3}}})
	require.NoError(t, err)
	assert.NotEmpty(t, site.Warnings(0), "above the rated range")

	th.Derating = []energy.DeratingPoint{{Temperature: -20, Fraction: 0.8}, {Temperature: 40, Fraction: 1}}
	th, err = energy.NewThermal(th)
	require.NoError(t, err)
	spec.Thermal = &th
	_, err = energy.NewNodeLifetime(spec, energy.Environment{Climate: &hot})
	require.Error(t, err)
	assert.True(t, errors.Is(err, energy.ErrParam))
	assert.Contains(t, err.Error(), "Derating")
}
