package energy_test

import (
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// What it takes: the shortest reading interval, and the best of two cells
// and two batch sizes, for which at most 1 % of an invented node's cells
// are flat before 5 years; then the replacement policies of a site of
// such nodes over 8 years. Invented numbers, for the demonstration only.
func ExampleSearchDesign() {
	cells := []float64{8e3, 16e3} // J usable
	build := func(c energy.DesignChoice) (energy.Candidate, error) {
		b, err := energy.NewBattery(energy.BatterySpec{Name: "cell", Energy: cells[c.Cell], NominalVoltage: 3.6, UsableFraction: 1})
		if err != nil {
			return energy.Candidate{}, err
		}
		// 40 mA for 0.1 s per transmission plus 2 ms per reading carried.
		tx, err := energy.NewFixedState("uplink", 40*energy.MilliAmp, 3.6, 0.1*float64(c.Link.Transmissions)+0.002*float64(c.Batch))
		if err != nil {
			return energy.Candidate{}, err
		}
		cyc, err := energy.NewCycle(tx, dist.MustPointMass(c.UplinkPeriod()), 10e-6)
		if err != nil {
			return energy.Candidate{}, err
		}
		return energy.Candidate{Node: energy.NodeSpec{Settings: []energy.NodeSetting{{Weight: 1, Cycle: cyc}}, Battery: b,
			Spread: energy.NodeSpread{Capacity: 0.04, Floor: 0.3}, CalendarLife: 12 * energy.Year}}, nil
	}
	d, err := energy.SearchDesign(energy.DesignProblem{
		Space: energy.DesignSpace{MinInterval: 10, MaxInterval: 86400, Cells: []string{"8 kJ", "16 kJ"},
			Links: []energy.Link{{Transmissions: 1}}, Batches: []int{1, 4}, Windows: []string{"default"}},
		Target: energy.Target{Kind: energy.NodeFlat, Date: 5 * energy.Year, Level: 0.01},
		Shared: energy.SharedSpread{Batch: 0.02},
		Build:  build,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range d.Results {
		fmt.Printf("%-5s × %d per uplink: every %4.0f s (p = %.4f, binds: %s)\n", []string{"8 kJ", "16 kJ"}[r.Choice.Cell], r.Choice.Batch,
			r.Choice.Interval, r.Probability, r.Binds)
	}
	best := d.Results[d.Best].Choice
	fmt.Printf("best: %s, %d readings per uplink, a reading every %.0f s\n", []string{"8 kJ", "16 kJ"}[best.Cell], best.Batch, best.Interval)

	// A site of 40 such nodes at the best choice, over 8 years.
	cand, err := build(best)
	if err != nil {
		fmt.Println(err)
		return
	}
	site, err := energy.NewSite(energy.SiteSpec{Shared: energy.SharedSpread{Batch: 0.02},
		Groups: []energy.SiteGroup{{Name: "meters", Node: cand.Node, Count: 40}}})
	if err != nil {
		fmt.Println(err)
		return
	}
	every, err := site.Schedule(0.05, 8*energy.Year, false)
	if err != nil {
		fmt.Println(err)
		return
	}
	pc, err := site.ComparePolicies([]energy.Policy{energy.ReplaceAll(every[0]), energy.ReplaceAll(2 * every[0])},
		8*energy.Year, 0.05, energy.Costs{Visit: 500, Cell: 20})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, o := range pc.Outcomes {
		fmt.Printf("%s: P(any flat) = %.3f, cells per year %.1f, cost %.0f\n", o.Policy.Name, o.AnyFlat, o.CellsPerYear.Mean, o.Cost.Mean)
	}
	fmt.Println("cheapest at 5 % risk:", pc.Outcomes[pc.Cheapest].Policy.Name)
	// Output:
	// 8 kJ  × 1 per uplink: every  498 s (p = 0.0100, binds: energy)
	// 8 kJ  × 4 per uplink: every  132 s (p = 0.0100, binds: energy)
	// 16 kJ × 1 per uplink: every  190 s (p = 0.0099, binds: energy)
	// 16 kJ × 4 per uplink: every   50 s (p = 0.0099, binds: energy)
	// best: 16 kJ, 4 readings per uplink, a reading every 50 s
	// replace all every 4 years: P(any flat) = 0.000, cells per year 5.0, cost 1300
	// replace all every 8 years: P(any flat) = 1.000, cells per year 0.0, cost 0
	// cheapest at 5 % risk: replace all every 4 years
}
