package lora_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// Example builds the energy cycle of a confirmed class A node in an
// invented scenario: 2000 soil sensors spread over a 3 km disk around one
// gateway, each reporting 12 bytes every 15 minutes, and prints the law of
// its energy per cycle. The currents are typical values, from memory; use
// your radio's data sheet. Planning figures, not certification: local
// regulations and the current Regional Parameters govern.
func Example() {
	eu := lora.EU868()
	disk, _ := lora.NewDisk(3000)
	link := lora.Link{
		Distance:    disk,
		PathLoss:    lora.PathLoss{Reference: 128, RefDistance: 1000, Exponent: 3.3, Shadowing: 7},
		GatewayGain: 2, NoiseFigure: 6, Margin: 10,
	}
	adr, err := lora.SettleADR(eu, link, lora.ADRConfig{PowerSteps: 4})
	if err != nil {
		fmt.Println(err)
		return
	}
	settings, _ := adr.Reachable()
	fmt.Printf("out of reach: %.2f %%\n", 100*adr.OutOfReach())
	drs, _ := adr.DataRateLaw()
	for _, a := range drs.Atoms() {
		fmt.Printf("DR%d: %.3f\n", int(a.Value), a.Mass)
	}

	// Collisions per data rate, then the acknowledgement windows.
	col, err := lora.UplinkCollisions(eu, settings, lora.Traffic{Nodes: 2000, Interval: 900, Channels: 3, App: 12, Frames: 1.2})
	if err != nil {
		fmt.Println(err)
		return
	}
	windows := map[int]lora.Windows{}
	for _, c := range col {
		windows[c.DR], _ = lora.DownlinkWindows(c.Success, 1, 0.9, 0.95, 0.99)
	}
	node := lora.ClassA{
		Region: eu, Currents: lora.TypicalCurrents(), App: 12,
		Settings: settings, Confirmed: true, NbTrans: 8,
		DownlinkByDR: windows, ClockMargin: 5e-3,
		Before: energy.MustFixedState("sense", 4e-3, 3.3, 0.2),
	}
	cycle, err := node.Cycle(dist.MustPointMass(900))
	if err != nil {
		fmt.Println(err)
		return
	}
	e := cycle.Energy()
	fmt.Printf("energy per cycle: mean %.2f mJ, median %.2f mJ, 99th percentile %.1f mJ\n",
		e.Mean()/energy.MilliJoule, e.Quantile(0.5)/energy.MilliJoule, e.UpperQuantile(0.01)/energy.MilliJoule)
	fmt.Printf("average current: %.1f µA\n", cycle.MeanCurrent(3.3)/energy.MicroAmp)

	// The same model sampled from its structure, with a fixed seed.
	r := rand.New(rand.NewPCG(2024, 6))
	sum := 0.0
	const n = 20000
	for range n {
		sum += cycle.Rand(r)
	}
	fmt.Printf("sampled mean of %d cycles: %.1f mJ\n", n, sum/n/energy.MilliJoule)
	// Output:
	// out of reach: 19.01 %
	// DR0: 0.113
	// DR1: 0.130
	// DR2: 0.136
	// DR3: 0.131
	// DR4: 0.116
	// DR5: 0.373
	// energy per cycle: mean 171.83 mJ, median 75.62 mJ, 99th percentile 1066.4 mJ
	// average current: 57.9 µA
	// sampled mean of 20000 cycles: 170.6 mJ
}
