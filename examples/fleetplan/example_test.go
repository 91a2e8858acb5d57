package main

import (
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// Example_walkthrough is the README's walk-through: a class A node, its
// per-cycle law, its battery lifetime and a replacement plan for a fleet of
// such nodes. The numbers are invented; the currents and the cell are typical
// values from memory (use your data sheets).
func Example_walkthrough() {
	eu := lora.EU868()

	// Where ADR leaves nodes spread uniformly over a 2 km disk around a gateway.
	disk, err := lora.NewDisk(2000)
	if err != nil {
		panic(err) // panic-ok: example
	}
	link := lora.Link{
		Distance:    disk,
		PathLoss:    lora.PathLoss{Reference: 40, RefDistance: 1, Exponent: 2.7, Shadowing: 6},
		GatewayGain: 3, NoiseFigure: 6, Margin: 10,
	}
	adr, err := lora.SettleADR(eu, link, lora.ADRConfig{})
	if err != nil {
		panic(err) // panic-ok: example
	}
	drs, err := adr.DataRateLaw()
	if err != nil {
		panic(err) // panic-ok: example
	}
	fmt.Printf("share of nodes at DR5: %.3f, out of reach: %.4f\n", 1-drs.CDF(4.5), adr.OutOfReach())

	// A node that ADR left at a given data rate and full power: 12-byte
	// unconfirmed uplinks every 15 minutes, a downlink in 2 % of RX1 windows.
	nodeAt := func(dr int) energy.Cycle {
		node := lora.ClassA{
			Region:   eu,
			Currents: lora.TypicalCurrents(),
			App:      12,
			Settings: []lora.Setting{{DR: dr, TXPower: 0, Prob: 1}},
			Downlink: lora.Windows{RX1: 0.02},
		}
		cycle, err := node.Cycle(dist.MustPointMass(15 * energy.Minute))
		if err != nil {
			panic(err) // panic-ok: example
		}
		return cycle
	}
	near, far := nodeAt(5), nodeAt(0)
	for _, c := range []energy.Cycle{near, far} {
		e := c.Energy()
		fmt.Printf("energy per cycle: mean %.2f mJ, 99th percentile %.2f mJ\n", e.Mean()/energy.MilliJoule, e.Quantile(0.99)/energy.MilliJoule)
	}

	// Lifetimes on a lithium–thionyl chloride AA cell behind a 3.3 V linear
	// regulator (the currents above are given at the 3.3 V rail), through
	// an invented temperate year, with the spreads that do not average out:
	// per node the cell's capacity, the board's sleep current and active
	// energy; shared by the fleet the cell batch and the year's temperature.
	cell := energy.MustBattery(energy.TypicalER14505())
	ldo, err := energy.LinearRegulator(3.3, 1*energy.MicroAmp)
	if err != nil {
		panic(err) // panic-ok: example
	}
	climate, err := energy.NewSeasonalClimate(10, 8, 6, 7) // mean 10 °C, ±8 °C, warmest in July, 7 °C daily swing
	if err != nil {
		panic(err) // panic-ok: example
	}
	thermal := energy.TypicalThermal()
	spec := func(c energy.Cycle) energy.NodeSpec {
		return energy.NodeSpec{
			Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}},
			Battery:  cell, Supply: ldo, Thermal: &thermal,
			Spread:       energy.NodeSpread{Capacity: 0.04, Floor: 0.35, Active: 0.04},
			CalendarLife: 15 * energy.Year, StorageTime: energy.Year / 2,
		}
	}
	site, err := energy.NewSite(energy.SiteSpec{
		Climate: &climate,
		Shared:  energy.SharedSpread{Batch: 0.02, Temperature: 1},
		Groups: []energy.SiteGroup{
			{Name: "near (DR5)", Node: spec(near), Count: 180},
			{Name: "far (DR0)", Node: spec(far), Count: 20},
		},
	})
	if err != nil {
		panic(err) // panic-ok: example
	}
	life, err := site.NodeLifetime(1)
	if err != nil {
		panic(err) // panic-ok: example
	}
	lo, hi, err := dist.EqualTailed(life, 0.9)
	if err != nil {
		panic(err) // panic-ok: example
	}
	shares, err := site.VarianceShares(1)
	if err != nil {
		panic(err) // panic-ok: example
	}
	fmt.Printf("lifetime at DR0: 90 %% in [%.2f, %.2f] years\n", energy.Years(lo), energy.Years(hi))
	fmt.Printf("its variance: capacity %.0f %%, active energy %.0f %%, batch %.0f %%, temperature %.0f %%\n",
		100*shares.Capacity, 100*shares.Active, 100*shares.Batch, 100*shares.Temperature)
	fmt.Printf("near nodes: energy ends %.1f %% of lives, the 14.5-year calendar limit the rest\n", 100*site.EnergyBinds(0))

	// The fleet's first flat battery and a replacement plan at 5 % risk.
	first, err := site.FirstFailure()
	if err != nil {
		panic(err) // panic-ok: example
	}
	plan, err := site.ReplacementPlan(0.05)
	if err != nil {
		panic(err) // panic-ok: example
	}
	flo, fhi, err := dist.EqualTailed(first, 0.9)
	if err != nil {
		panic(err) // panic-ok: example
	}
	fmt.Printf("first flat battery: 90 %% in [%.2f, %.2f] years\n", energy.Years(flo), energy.Years(fhi))
	fmt.Printf("replace all by %.2f years for a 5 %% risk of any flat battery\n", energy.Years(plan.FleetReplaceBy))
	// Output:
	// share of nodes at DR5: 0.910, out of reach: 0.0006
	// energy per cycle: mean 32.16 mJ, 99th percentile 32.29 mJ
	// energy per cycle: mean 462.35 mJ, 99th percentile 485.55 mJ
	// lifetime at DR0: 90 % in [1.49, 1.81] years
	// its variance: capacity 45 %, active energy 43 %, batch 11 %, temperature 0 %
	// near nodes: energy ends 0.0 % of lives, the 14.5-year calendar limit the rest
	// first flat battery: 90 % in [1.39, 1.57] years
	// replace all by 1.39 years for a 5 % risk of any flat battery
}
