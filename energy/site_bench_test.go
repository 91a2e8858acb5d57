package energy_test

import (
	"fmt"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// benchSiteSpec is an invented four-group site: twelve settings a group,
// per-node and shared spreads, a seasonal climate and a calendar life.
func benchSiteSpec(tb testing.TB, shared energy.SharedSpread) energy.SiteSpec {
	return benchSiteSpecN(tb, shared, 4, 80)
}

// benchSiteSpecN is benchSiteSpec with groups groups of count nodes each
// (the groups' reporting periods 900 s, 1800 s, … cycle through four).
func benchSiteSpecN(tb testing.TB, shared energy.SharedSpread, groups int, count int64) energy.SiteSpec {
	b := energy.MustBattery(energy.TypicalER14505())
	th := energy.TypicalThermal()
	clim, err := energy.NewSeasonalClimate(10, 8, 6, 8)
	require.NoError(tb, err)
	var gs []energy.SiteGroup
	for g := range groups {
		var sets []energy.NodeSetting
		for j := range 12 {
			tx := energy.MustFixedState("tx", 40*energy.MilliAmp, 3.6, 0.05*float64(j+1))
			rx := energy.MustState("rx", dist.MustPointMass(10*energy.MilliAmp), 3.6, dist.MustDiscrete([]float64{0.01, 0.2}, []float64{0.95, 0.05}))
			c := energy.MustCycle(energy.MustSequence(tx, rx), dist.MustPointMass(900*float64(g+1)), 5e-6*3.6)
			sets = append(sets, energy.NodeSetting{Weight: 1.0 / 12, Cycle: c})
		}
		gs = append(gs, energy.SiteGroup{Name: fmt.Sprint("g", g), Count: count, Node: energy.NodeSpec{Settings: sets, Battery: b, Thermal: &th,
			Spread: energy.NodeSpread{Capacity: 0.05, Floor: 0.4, Active: 0.03}, CalendarLife: 20 * energy.Year, StorageTime: energy.Year}})
	}
	return energy.SiteSpec{Climate: &clim, Shared: shared, Groups: gs}
}

// BenchmarkSite builds a site and asks what a plan asks: each group's node
// law quantiles, the first failure, the 1 %, 10 % and 50 % flat dates.
func BenchmarkSite(b *testing.B) {
	for _, c := range []struct {
		name   string
		shared energy.SharedSpread
	}{{"no-shared", energy.SharedSpread{}}, {"shared", energy.SharedSpread{Batch: 0.03, Temperature: 1.5}}} {
		spec := benchSiteSpec(b, c.shared)
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				s, err := energy.NewSite(spec)
				if err != nil {
					b.Fatal(err)
				}
				for i := range s.Groups() {
					l, _ := s.NodeLifetime(i)
					l.Quantile(0.05)
					l.Quantile(0.5)
					l.Quantile(0.95)
				}
				ff, _ := s.FirstFailure()
				ff.Quantile(0.5)
				for _, q := range []float64{0.01, 0.1, 0.5} {
					f, _ := s.FractionFailed(q)
					f.Quantile(0.5)
				}
			}
		})
	}
}

// BenchmarkSiteScaling is the cost curve of a site's plan (as
// BenchmarkSite asks it) against its size: 80, 800 and 8000 nodes a group
// (the cost should not move: every law is computed from per-group laws and
// counts) and 1, 2, 4 and 8 groups of 80 (the cost should grow about in
// proportion: every group has a reporting period of its own, 900 s times
// its number, so that no two share a table), with the shared factors. Its CPU time per operation is
// reported as cpu-ns/op (the machine is shared: wall time moves with the
// load).
func BenchmarkSiteScaling(b *testing.B) {
	shared := energy.SharedSpread{Batch: 0.03, Temperature: 1.5}
	for _, c := range []struct {
		groups int
		count  int64
	}{{4, 80}, {4, 800}, {4, 8000}, {1, 80}, {2, 80}, {8, 80}} {
		spec := benchSiteSpecN(b, shared, c.groups, c.count)
		b.Run(fmt.Sprintf("groups=%d/nodes=%d", c.groups, int64(c.groups)*c.count), func(b *testing.B) {
			defer testref.ReportCPU(b)()
			for b.Loop() {
				s, err := energy.NewSite(spec)
				if err != nil {
					b.Fatal(err)
				}
				for i := range s.Groups() {
					l, _ := s.NodeLifetime(i)
					l.Quantile(0.5)
				}
				ff, _ := s.FirstFailure()
				ff.Quantile(0.5)
				f, _ := s.FractionFailed(0.1)
				f.Quantile(0.5)
			}
		})
	}
}
