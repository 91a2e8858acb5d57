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

	// Lifetimes on a lithium–thionyl chloride AA cell.
	cell := energy.MustBattery(energy.TypicalER14505())
	life, err := energy.NewLifetime(far, cell)
	if err != nil {
		panic(err) // panic-ok: example
	}
	lo, hi, err := dist.EqualTailed(life.InYears(), 0.9)
	if err != nil {
		panic(err) // panic-ok: example
	}
	fmt.Printf("lifetime at DR0: 90 %% in [%.3f, %.3f] years\n", lo, hi)

	// A fleet of 180 near and 20 far nodes, and a replacement plan at 5 % risk.
	fleet, err := energy.NewFleet([]energy.FleetGroup{
		{Name: "near (DR5)", Cycle: near, Battery: cell, Count: 180},
		{Name: "far (DR0)", Cycle: far, Battery: cell, Count: 20},
	})
	if err != nil {
		panic(err) // panic-ok: example
	}
	first, err := fleet.FirstFailure()
	if err != nil {
		panic(err) // panic-ok: example
	}
	plan, err := fleet.ReplacementPlan(0.05)
	if err != nil {
		panic(err) // panic-ok: example
	}
	fmt.Printf("first flat battery: median %.3f years\n", energy.Years(first.Quantile(0.5)))
	fmt.Printf("replace all by %.3f years for a 5 %% risk of any flat battery\n", energy.Years(plan.FleetReplaceBy))
	// Output:
	// share of nodes at DR5: 0.910, out of reach: 0.0006
	// energy per cycle: mean 32.16 mJ, 99th percentile 32.29 mJ
	// energy per cycle: mean 462.35 mJ, 99th percentile 485.55 mJ
	// lifetime at DR0: 90 % in [1.882, 1.883] years
	// first flat battery: median 1.882 years
	// replace all by 1.882 years for a 5 % risk of any flat battery
}
