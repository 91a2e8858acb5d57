package ble_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/radio/ble"
)

// Example plans an invented building of beacons: each sends a
// non-connectable 20-octet advertisement every 500 ms on the three primary
// channels, among 40 alike neighbours; a phone-like scanner listens 30 ms
// of every 300 ms. It prints the per-event energy law, the mean current,
// the chance a PDU escapes collision and the discovery-time law, and draws
// a few discovery times from the model. The currents are typical values,
// from memory; use your radio's data sheet. Planning figures only: local
// regulations and the current Core Specification govern channel use and
// power.
func Example() {
	cur := ble.ExampleCurrents()
	beacon := ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 20, Interval: 0.5, Startup: 300e-6, Currents: cur}
	tl, err := beacon.Timeline()
	if err != nil {
		fmt.Println(err)
		return
	}
	cycle, err := beacon.Cycle()
	if err != nil {
		fmt.Println(err)
		return
	}
	e := cycle.Energy()
	fmt.Printf("PDU %.0f µs, event %.3f ms\n", tl.PDU*1e6, tl.Event*1e3)
	fmt.Printf("energy per event: mean %.2f µJ, 99th percentile %.2f µJ\n", e.Mean()*1e6, e.Quantile(0.99)*1e6)
	fmt.Printf("mean current: %.2f µA\n", cycle.MeanCurrent(cur.Voltage)*1e6)

	ok, err := ble.PDUSuccess(tl.PDU, ble.Neighbours{Count: 40, PDU: tl.PDU, Interval: 0.5})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("PDU escapes collision: %.4f\n", ok)

	found, err := ble.NewDiscovery(beacon, ble.Scanner{Window: 0.03, Interval: 0.3}, ok, 10)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("discovered within 1 s: %.3f, within 3 s: %.3f; median %.2f s\n",
		found.CDF(1), found.CDF(3), found.Quantile(0.5))
	lo, hi, _ := dist.EqualTailed(found, 0.9)
	fmt.Printf("90 %% of discoveries between %.2f s and %.2f s\n", lo, hi)
	r := rand.New(rand.NewPCG(1, 2))
	fmt.Printf("three simulated discoveries: %.3f s, %.3f s, %.3f s\n", found.Rand(r), found.Rand(r), found.Rand(r))
	// Output:
	// PDU 288 µs, event 2.164 ms
	// energy per event: mean 20.68 µJ, 99th percentile 20.70 µJ
	// mean current: 13.65 µA
	// PDU escapes collision: 0.9554
	// discovered within 1 s: 0.225, within 3 s: 0.431; median 3.61 s
	// 90 % of discoveries between 0.03 s and 8.72 s
	// three simulated discoveries: 6.301 s, 3.903 s, 9.008 s
}
