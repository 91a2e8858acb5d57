package lifesim_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/lifesim"
)

// Ten nodes on a 50 mAh cell (invented demo values): a daily 60 mA, 4 s
// transmission over an 8 µA floor, with per-node and shared spreads. One
// fleet is played to the end of every battery.
func ExamplePlayer_Fleet() {
	tx, _ := energy.NewFixedState("tx", 60*energy.MilliAmp, 3.6, 4)
	c, _ := energy.NewCycle(energy.MustSequence(tx), dist.MustPointMass(energy.Day), 8*energy.MicroAmp*3.6)
	b, _ := energy.NewBattery(energy.BatterySpec{Charge: 50 * energy.MilliAmpHour, NominalVoltage: 3.6, UsableFraction: 0.9})
	p, err := lifesim.NewPlayer(energy.SiteSpec{
		Shared: energy.SharedSpread{Batch: 0.03},
		Groups: []energy.SiteGroup{{Name: "meters", Count: 10, Node: energy.NodeSpec{
			Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
			Spread: energy.NodeSpread{Capacity: 0.04, Floor: 0.3, Active: 0.05}}}},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	f, err := p.Fleet(rand.New(rand.NewPCG(1, 2)))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("batch factor %.3f\n", f.BatchFactor)
	fmt.Printf("first flat battery after %.0f days\n", energy.Days(f.FirstFailure()))
	fmt.Printf("flat after 180 days: %d of %d\n", f.FailedBy(180*energy.Day), len(f.Nodes))
	// Output:
	// batch factor 1.011
	// first flat battery after 113 days
	// flat after 180 days: 6 of 10
}
