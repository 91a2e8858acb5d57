// Command floorsensors plans one floor of IEEE 802.15.4 sensors that report
// to a single coordinator on one 2.4 GHz channel, by unslotted CSMA-CA with
// acknowledgements (package radio/ieee802154), and turns each node's energy
// cycle into battery lifetimes with packages energy and orderstat.
//
// Every number in it is invented demo data: the floor, the node count, the
// reporting interval, the share of nodes far from the coordinator, their
// acknowledgement losses and the spreads. The radio currents and the cell are
// typical values recalled from memory (ieee802154.TypicalCurrents,
// energy.TypicalER14505): use your radio's and your cell's data sheets.
//
// What it prints: the channel-busy probability that the offered load of the
// floor gives (BusyFromTraffic, a documented lower estimate), the fate of a
// frame and the energy per report for the near and the far nodes, then the
// law of one node's life (median and 90 % interval), the first battery to go
// flat among the floor's nodes, and the share of nodes flat before a horizon
// with the 90 % range of their count.
//
// Cautions: these are planning figures, not guarantees. Channels, transmit
// power and duty cycle at 2.4 GHz are set by local regulations (in Europe
// ETSI EN 300 328, in the United States FCC Part 15, elsewhere the national
// regulator); check them for the place of installation. Lithium cells must
// be handled, stored and disposed of as their maker says.
//
// Run it with
//
//	go run ./examples/floorsensors
package main

import (
	"fmt"
	"io"
	"os"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/examples/internal/lifereport"
	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// The invented floor.
const (
	nodes    = 48   // sensors on the floor, all on one channel
	interval = 30.0 // s between one node's reports
	payload  = 16   // octets of reading per report
	farShare = 0.25 // share of nodes far from the coordinator
	nearLoss = 0.02 // transmissions without acknowledgement, near nodes
	farLoss  = 0.15 // transmissions without acknowledgement, far nodes
	horizon  = 5    // years: the share flat before this date
	railVolt = 3.0  // V, the regulated rail the radio runs on
)

func main() {
	if err := run(os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "floorsensors:", err)
		os.Exit(1)
	}
}

// node returns the invented sensor with the given acknowledgement loss: it
// wakes, reads its sensor for 15 ms at 2 mA, and sends one acknowledged
// frame with the standard's default MAC attributes, the radio idle during
// backoffs.
func node(ackLoss float64) ieee802154.Node {
	cur := ieee802154.TypicalCurrents()
	cur.Voltage = railVolt
	return ieee802154.Node{
		PHY: ieee802154.OQPSK2450(), CSMA: ieee802154.DefaultCSMA(), Currents: cur,
		Payload: payload, AckRequest: true, AckLoss: ackLoss,
		Before: energy.MustFixedState("read sensor", 2e-3, railVolt, 15e-3),
	}
}

func run(w io.Writer) error {
	fmt.Fprintf(w, "A floor of %d IEEE 802.15.4 sensors, one report every %.0f s (invented demo data)\n\n", nodes, interval)

	// The channel: the load model takes every node alike, so every node is
	// taken to retransmit as often as a far one. That overstates the load a
	// little, on the safe side of BusyFromTraffic, which is a lower
	// estimate of the busy share a channel simulation measures.
	busy, err := node(farLoss).BusyFromTraffic(ieee802154.Traffic{Nodes: nodes, Interval: interval})
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "channel busy at a CCA: %.5f (offered-load model, a lower estimate)\n", busy)

	kinds := []struct {
		name  string
		share float64
		loss  float64
	}{{"near", 1 - farShare, nearLoss}, {"far", farShare, farLoss}}
	period := dist.MustPointMass(interval)
	sleep := node(0).Currents.Sleep * railVolt * interval // J per period at the sleep current
	var settings []energy.NodeSetting
	for _, k := range kinds {
		n := node(k.loss)
		n.Busy = busy
		tl, err := n.Timeline()
		if err != nil {
			return err
		}
		cy, err := n.Cycle(period)
		if err != nil {
			return err
		}
		o := tl.Outcomes
		fmt.Fprintf(w, "%-4s nodes (%2.0f %%): frame %d octets, %.0f µs on air; delivered %.6f, dropped %.1e\n",
			k.name, 100*k.share, tl.FrameOctets, tl.Frame*1e6, o.Delivered, o.AccessFailure+o.RetryLimit)
		e := cy.Energy()
		fmt.Fprintf(w, "     energy per report above the sleep floor: mean %.1f µJ, 99th percentile %.1f µJ; mean current %.2f µA\n",
			(e.Mean()-sleep)*1e6, (e.UpperQuantile(0.01)-sleep)*1e6, cy.MeanCurrent(railVolt)*1e6)
		settings = append(settings, energy.NodeSetting{Weight: k.share, Cycle: cy})
	}

	// A coin cell behind a low-dropout regulator, and the spreads from
	// board to board (invented, of the size common practice reports).
	cell, err := energy.NewBattery(energy.TypicalCR2032())
	if err != nil {
		return err
	}
	ldo, err := energy.LinearRegulator(railVolt, 1e-6)
	if err != nil {
		return err
	}
	spec := energy.NodeSpec{
		Name: "floor sensor", Settings: settings, Battery: cell, Supply: ldo,
		Spread:       energy.NodeSpread{Capacity: 0.03, Floor: 0.3, Active: 0.05},
		CalendarLife: 10 * energy.Year,
	}
	return lifereport.Print(w, spec, "sensor", nodes, horizon*energy.Year, 2450)
}
