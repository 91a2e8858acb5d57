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

// ExampleConnection plans an invented peripheral that wakes every fourth
// connection interval of 500 ms (peripheral latency 3) and exchanges one to
// three encrypted packets of 20 octets. The currents are typical values,
// from memory; use your radio's data sheet.
func ExampleConnection() {
	link := ble.Connection{
		PHY: ble.LE1M, Interval: 0.5, PeripheralLatency: 3, SupervisionTimeout: 6,
		CentralSCA: 50, PeripheralSCA: 100,
		Exchanges:         dist.MustDiscrete([]float64{1, 2, 3}, []float64{0.75, 0.125, 0.125}),
		PeripheralPayload: 20, Encrypted: true, Startup: 150e-6,
		Currents: ble.ExampleCurrents(),
	}
	cycle, err := link.Cycle()
	if err != nil {
		fmt.Println(err)
		return
	}
	e := cycle.Energy()
	lo, hi, _ := dist.EqualTailed(e, 0.9)
	fmt.Printf("energy per wake-up: mean %.2f µJ, 90 %% in [%.2f, %.2f] µJ\n", e.Mean()*1e6, lo*1e6, hi*1e6)
	fmt.Printf("mean current: %.2f µA\n", cycle.MeanCurrent(link.Currents.Voltage)*1e6)
	r := rand.New(rand.NewPCG(3, 4))
	fmt.Printf("one sampled wake-up: %.2f µJ\n", e.Rand(r)*1e6)
	link.PeripheralLatency = 5 // (1 + 5)·0.5 s·2 = 6 s is not below the timeout
	_, err = link.Cycle()
	fmt.Println(err)
	// Output:
	// energy per wake-up: mean 23.33 µJ, 90 % in [16.38, 35.23] µJ
	// mean current: 3.89 µA
	// one sampled wake-up: 24.03 µJ
	// ble.Connection.Timeline: SupervisionTimeout = 6: must exceed (1 + connPeripheralLatency)·connInterval·2 = 6 s (v5.3 Vol 6 Part B §4.5.2)
}

// ExampleNewDiscoveryWithin asks for the discovery-time law of an invented
// beacon (advertising every 100 ms) and scanner (30 ms of every 100 ms) to
// a stated CDF error of 1e-4, finer than NewDiscovery's default.
func ExampleNewDiscoveryWithin() {
	beacon := ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 20, Interval: 0.1, Currents: ble.ExampleCurrents()}
	scan := ble.Scanner{Window: 0.03, Interval: 0.1}
	quick, err := ble.NewDiscovery(beacon, scan, 1, 3)
	if err != nil {
		fmt.Println(err)
		return
	}
	fine, err := ble.NewDiscoveryWithin(beacon, scan, 1, 3, 1e-4)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, d := range []ble.Discovery{quick, fine} {
		fmt.Printf("within 0.5 s: %.4f (stated CDF error %.1e)\n", d.CDF(0.5), d.Accuracy().CDFAbs)
	}
	_, err = ble.NewDiscoveryWithin(beacon, scan, 1, 3, 0)
	fmt.Println(err)
	// Output:
	// within 0.5 s: 0.4810 (stated CDF error 2.3e-04)
	// within 0.5 s: 0.4810 (stated CDF error 6.4e-05)
	// ble.NewDiscoveryWithin: tol = 0: must be in (0, 1)
}
