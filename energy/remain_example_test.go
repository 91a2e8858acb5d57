package energy_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// A back-end's view of one device: a day-by-day count of its uplinks and
// downlinks and a daily voltage reading, summed into a Tally one event at
// a time, and the remaining-life law re-estimated from it. The device and
// its figures are invented (demo only); the cell's curve is the typical
// bobbin shape of TypicalBobbinCurve (from memory).
//
// Caution: predicted lives are planning figures; replace and dispose of
// primary lithium cells as their maker instructs and local rules require.
func ExampleDeviceModel() {
	const v = 3.6
	bs := energy.TypicalER14505()
	bs.TemperatureDerating, bs.PulseCurrent = 0, 0
	bat := energy.MustBattery(bs)
	floorP := 30 * energy.MicroWatt
	// The planned cycle: a 2 s report at 22 mA every 15 minutes.
	cyc := energy.MustCycle(energy.MustFixedState("report", 22*energy.MilliAmp, v, 2),
		dist.MustPointMass(15*energy.Minute), floorP)
	curve := energy.TypicalBobbinCurve()
	spec := energy.NodeSpec{
		Settings: []energy.NodeSetting{{Weight: 1, Cycle: cyc}},
		Battery:  bat, Voltage: &curve, Brownout: 3.0,
		Spread: energy.NodeSpread{Capacity: 0.03, Active: 0.05, Floor: 0.5},
	}
	costs := []energy.EventCost{
		{Name: "uplink", Energy: dist.MustNormal(0.15, 0.01)},     // J per uplink
		{Name: "downlink", Energy: dist.MustNormal(0.005, 0.001)}, // J per downlink
	}
	m, err := energy.NewDeviceModel(spec, energy.Environment{}, costs, energy.DeviceOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	tally, _ := m.NewTally(0)
	r := rand.New(rand.NewPCG(1, 2))
	for day := 1; day <= 4*365; day++ {
		at := float64(day) * energy.Day
		tally, _ = m.Observe(tally, energy.Event{Time: at, Kind: 0, Count: 96})
		if r.IntN(4) == 0 {
			tally, _ = m.Observe(tally, energy.Event{Time: at, Kind: 1})
		}
		// The device reports its cell at rest to the nearest 10 mV: on
		// the plateau first, then sliding into the knee.
		volts := 3.64
		if day > 3*365 {
			volts = 3.60
		}
		tally, _ = m.Read(tally, energy.Reading{Time: at, Low: volts - 0.005, High: volts + 0.005, Noise: 0.02})
	}
	p, err := m.Posterior(tally, tally.Newest())
	if err != nil {
		fmt.Println(err)
		return
	}
	rem := p.Remaining()
	lo, hi, _ := dist.EqualTailed(rem, 0.9)
	fmt.Printf("remaining life: median %.0f days, 90 %% in [%.0f, %.0f] days\n",
		energy.Days(rem.Quantile(0.5)), energy.Days(lo), energy.Days(hi))
	fmt.Printf("floor current: median %.1f µA\n", p.FloorCurrent().Quantile(0.5)/energy.MicroAmp)
	// Output:
	// remaining life: median 242 days, 90 % in [168, 371] days
	// floor current: median 6.0 µA
}
