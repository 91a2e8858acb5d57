// Command beacons plans a building of Bluetooth Low Energy beacons that
// send non-connectable advertising events on the three primary channels
// (package radio/ble), how soon a phone-like passive scanner hears one, and
// how long their coin cells last (packages energy and orderstat).
//
// Every number in it is invented demo data: the building, the beacon count,
// the two kinds of beacon and their intervals, the neighbours a scanner
// hears, the scanner's window and interval, and the spreads. The radio
// currents and the cell are typical values recalled from memory
// (ble.ExampleCurrents, energy.TypicalCR2032): use your radio's and your
// cell's data sheets.
//
// What it prints, per kind of beacon: the time on air and the energy of an
// advertising event, the mean current, the chance a PDU escapes collision
// with the neighbours, and the law of the time the scanner takes to hear the
// beacon (median, 90 % range, the share not heard within a horizon). Then
// the law of one beacon's life (median and 90 % interval), the first flat
// cell among the building's beacons, and the share flat before a horizon
// with the 90 % range of their count.
//
// Cautions: these are planning figures, not certification. Channel use,
// transmit power and duty limits at 2.4 GHz are set by local regulations (in
// Europe ETSI EN 300 328, in the United States FCC Part 15, elsewhere the
// national regulator) and by the current edition of the Bluetooth Core
// Specification; check them before relying on any figure. Coin cells must be
// kept from children and handled, stored and disposed of as their maker
// says.
//
// Run it with
//
//	go run ./examples/beacons
package main

import (
	"fmt"
	"io"
	"os"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/examples/internal/lifereport"
	"github.com/joulelaw/joulelaw/radio/ble"
)

// The invented building.
const (
	beacons    = 150  // beacons in the building
	heard      = 30   // other beacons a scanner hears at once
	advData    = 24   // octets of advertising data
	scanWindow = 0.06 // s, the scanner's scanWindow
	scanEvery  = 0.1  // s, the scanner's scanInterval
	findWithin = 10.0 // s, the horizon of the discovery law
	horizon    = 2    // years: the share flat before this date
)

// kinds are the two invented kinds of beacon: corridor beacons that
// advertise every 250 ms (quick to find) and room beacons every second.
var kinds = []struct {
	name     string
	share    float64 // share of the building's beacons
	interval float64 // advInterval, s
}{
	{"corridor", 0.3, 0.25},
	{"room", 0.7, 1.0},
}

func main() {
	if err := run(os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "beacons:", err)
		os.Exit(1)
	}
}

func run(w io.Writer) error {
	fmt.Fprintf(w, "A building of %d BLE beacons, a scanner listening %.0f ms of every %.0f ms (invented demo data)\n\n",
		beacons, scanWindow*1e3, scanEvery*1e3)
	cur := ble.ExampleCurrents()
	scanner := ble.Scanner{Window: scanWindow, Interval: scanEvery}

	// The neighbours' mean interval: the building's mix of the two kinds.
	var meanInterval float64
	for _, k := range kinds {
		meanInterval += k.share * k.interval
	}
	// advInterval must be a whole number of 0.625 ms steps.
	meanInterval = float64(int(meanInterval/ble.AdvIntervalStep+0.5)) * ble.AdvIntervalStep

	var settings []energy.NodeSetting
	for _, k := range kinds {
		b := ble.Advertiser{
			Type: ble.AdvNonconnInd, AdvData: advData, Interval: k.interval, Startup: 300e-6, Currents: cur,
			Before: energy.MustFixedState("wake and read", 1e-3, cur.Voltage, 2e-3),
		}
		tl, err := b.Timeline()
		if err != nil {
			return err
		}
		cy, err := b.Cycle()
		if err != nil {
			return err
		}
		ok, err := ble.PDUSuccess(tl.PDU, ble.Neighbours{Count: heard, PDU: tl.PDU, Interval: meanInterval})
		if err != nil {
			return err
		}
		found, err := ble.NewDiscovery(b, scanner, ok, findWithin)
		if err != nil {
			return err
		}
		lo, hi, err := dist.EqualTailed(found, 0.9)
		if err != nil {
			return err
		}
		gap, err := b.IntervalLaw()
		if err != nil {
			return err
		}
		active := cy.Energy().Mean() - cur.Floor*cur.Voltage*gap.Mean() // J per event above the sleep floor
		fmt.Fprintf(w, "%-8s beacons (%2.0f %%), every %.2f s: PDU %.0f µs, event %.2f ms, %.2f µJ per event above sleep, mean current %.2f µA\n",
			k.name, 100*k.share, k.interval, tl.PDU*1e6, tl.Event*1e3, active*1e6, cy.MeanCurrent(cur.Voltage)*1e6)
		fmt.Fprintf(w, "         PDU escapes collision with %d neighbours: %.4f\n", heard, ok)
		fmt.Fprintf(w, "         heard within 1 s: %.3f; median %.2f s, 90 %% between %.2f and %.2f s; not within %.0f s: %.1e (stated CDF error %.0e)\n",
			found.CDF(1), found.Quantile(0.5), lo, hi, findWithin, found.Undiscovered(), found.Accuracy().CDFAbs)
		settings = append(settings, energy.NodeSetting{Weight: k.share, Cycle: cy})
	}

	cell, err := energy.NewBattery(energy.TypicalCR2032())
	if err != nil {
		return err
	}
	spec := energy.NodeSpec{
		Name: "beacon", Settings: settings, Battery: cell,
		Spread:       energy.NodeSpread{Capacity: 0.03, Floor: 0.3, Active: 0.05},
		CalendarLife: 10 * energy.Year,
	}
	return lifereport.Print(w, spec, "beacon", beacons, horizon*energy.Year, 37)
}
