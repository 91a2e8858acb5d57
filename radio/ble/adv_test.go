package ble_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/ble"
)

// testBeacon is an invented advertiser for the checks: scannable
// connectable ADV_IND with 20 octets of AdvData and 25 of ScanRspData every
// 152.5 ms, a request after 30 % of PDUs, 200 µs start-up.
func testBeacon() ble.Advertiser {
	return ble.Advertiser{
		Type: ble.AdvInd, AdvData: 20, ScanRspData: 25, Interval: 0.1525,
		Startup: 200e-6, ScanRequest: 0.3, Currents: ble.ExampleCurrents(),
	}
}

// TestAdvTimeline checks the timeline against the specification's figures
// worked by hand: PDU (1+4+2+6+20+3)·8 µs = 288 µs, SCAN_REQ 176 µs, SCAN_RSP
// (1+4+2+6+25+3)·8 µs = 328 µs (v5.3 Vol 6 Part B §2.1, §2.3), T_IFS 150 µs
// (§4.1.1), an empty listen T_IFS + 2 µs + 40 µs.
func TestAdvTimeline(t *testing.T) {
	tl, err := testBeacon().Timeline()
	require.NoError(t, err)
	assert.InDelta(t, 288e-6, tl.PDU, 1e-15)
	assert.InDelta(t, 192e-6, tl.Listen, 1e-15)
	assert.InDelta(t, 326e-6, tl.Request, 1e-15)
	assert.InDelta(t, 150e-6, tl.Turnaround, 1e-15)
	assert.InDelta(t, 328e-6, tl.Response, 1e-15)
	assert.Equal(t, ble.DefaultChannelGap, tl.Gap)
	assert.InDelta(t, 288e-6+192e-6+0.5e-3, tl.Spacing, 1e-15)
	assert.Equal(t, []int{37, 38, 39}, tl.Channels)
	assert.InDelta(t, 200e-6+3*(288e-6+192e-6)+2*0.5e-3, tl.Event, 1e-15)

	non := ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 31, Interval: 1, Channels: []int{37, 39}, Gap: 1e-3, Currents: ble.ExampleCurrents()}
	tl, err = non.Timeline()
	require.NoError(t, err)
	assert.InDelta(t, 376e-6, tl.PDU, 1e-15)
	assert.Zero(t, tl.Listen)
	assert.InDelta(t, 2*376e-6+1e-3, tl.Event, 1e-15)
	dir := ble.Advertiser{Type: ble.AdvDirectInd, Interval: 0.02, Currents: ble.ExampleCurrents()}
	tl, err = dir.Timeline()
	require.NoError(t, err)
	assert.InDelta(t, 176e-6, tl.PDU, 1e-15) // AdvA + TargetA
}

// beaconEnergy returns the closed form of the beacon's cycle law: with K ~
// Binomial(3, p) answered requests and T ~ Uniform(a, a + 10 ms) the
// energy is V·(I_f·T + X_0 + K·Δ) with X_0 the excess over the floor of an
// event without requests and Δ what one answered request adds: a binomial
// mixture of uniforms. It returns the CDF and the survival (each summed
// directly).
func beaconEnergy(a ble.Advertiser, tl ble.AdvTimeline) (cdf, surv func(float64) float64) {
	c := a.Currents
	v, f := c.Voltage, c.Floor
	x0 := v * ((c.Idle-f)*a.Startup + 3*(c.TX-f)*tl.PDU + 3*(c.RX-f)*tl.Listen + 2*(c.Idle-f)*tl.Gap)
	delta := v * ((c.RX-f)*(tl.Request-tl.Listen) + (c.Idle-f)*tl.Turnaround + (c.TX-f)*tl.Response)
	p := a.ScanRequest
	w := [4]float64{(1 - p) * (1 - p) * (1 - p), 3 * p * (1 - p) * (1 - p), 3 * p * p * (1 - p), p * p * p}
	lo, width := v*f*a.Interval, v*f*ble.AdvDelayMax
	u := func(k int, x float64) float64 { // P(uniform part ≤ x − shift_k)
		return math.Min(math.Max((x-x0-float64(k)*delta-lo)/width, 0), 1)
	}
	cdf = func(x float64) float64 {
		s := 0.0
		for k := range w {
			s += w[k] * u(k, x)
		}
		return s
	}
	surv = func(x float64) float64 {
		s := 0.0
		for k := range w {
			s += w[k] * math.Min(math.Max((lo+width+x0+float64(k)*delta-x)/width, 0), 1)
		}
		return s
	}
	return cdf, surv
}

// TestAdvCycle checks the advertising cycle's energy law against (1) the
// closed form of beaconEnergy (a binomial mixture of uniforms), (2) the
// renewal-reward mean, (3) the conformance checker, (4) an own event-level
// sampler of the advertising event by a Kolmogorov–Smirnov distance at
// level 1e-6 (DKW–Massart), fixed seed.
func TestAdvCycle(t *testing.T) {
	a := testBeacon()
	tl, err := a.Timeline()
	require.NoError(t, err)
	cy, err := a.Cycle()
	require.NoError(t, err)
	law := cy.Energy()
	cdf, surv := beaconEnergy(a, tl)
	lo, hi := law.Support()
	for i := 0; i <= 400; i++ {
		x := lo + (hi-lo)*float64(i)/400
		assert.InDelta(t, cdf(x), law.CDF(x), 1e-12, "CDF at %g", x)
		s := surv(x)
		assert.InDelta(t, s, law.Survival(x), 1e-12+1e-9*s, "survival at %g", x)
	}
	require.NoError(t, disttest.Check(law, disttest.WithSeed(17)))
	il, err := a.IntervalLaw()
	require.NoError(t, err)
	require.NoError(t, disttest.Check(il, disttest.WithSeed(18)))

	const n = 100000
	r := rand.New(rand.NewPCG(17, 2))
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = simulateAdvEvent(r, a, tl)
	}
	assert.Less(t, testref.KSWithSlack(xs, law.CDF, 1e-9), testref.KSCritical(n, 1e-6))
}

// simulateAdvEvent draws one event's energy (J) by walking the event as the
// radio does: start-up, per channel the PDU, then a listen that hears a
// request with probability ScanRequest (and answers it) or times out, the
// gap; the floor current for the rest of advInterval + advDelay.
func simulateAdvEvent(r *rand.Rand, a ble.Advertiser, tl ble.AdvTimeline) float64 {
	c := a.Currents
	period := a.Interval + ble.AdvDelayMax*r.Float64()
	busy, charge := a.Startup, c.Idle*a.Startup
	for i := range tl.Channels {
		if i > 0 {
			busy += tl.Gap
			charge += c.Idle * tl.Gap
		}
		busy += tl.PDU
		charge += c.TX * tl.PDU
		if r.Float64() < a.ScanRequest {
			busy += tl.Request + tl.Turnaround + tl.Response
			charge += c.RX*tl.Request + c.Idle*tl.Turnaround + c.TX*tl.Response
		} else {
			busy += tl.Listen
			charge += c.RX * tl.Listen
		}
	}
	return c.Voltage * (charge + c.Floor*(period-busy))
}

// TestAdvMeanCurrent checks the mean current of a non-connectable beacon
// against the renewal-reward figure worked by hand: charge per event
// 3·TX·376 µs + 2·Idle·0.5 ms + Floor·(rest of the mean interval), over the
// mean interval a + 5 ms.
func TestAdvMeanCurrent(t *testing.T) {
	c := ble.ExampleCurrents()
	a := ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 31, Interval: 1.0, Currents: c}
	cy, err := a.Cycle()
	require.NoError(t, err)
	mean := 1.005
	busy := 3*376e-6 + 2*0.5e-3
	want := (3*c.TX*376e-6 + 2*c.Idle*0.5e-3 + c.Floor*(mean-busy)) / mean
	assert.InEpsilon(t, want, cy.MeanCurrent(c.Voltage), 1e-12)
	_, exact := cy.Energy().(dist.Atomic)
	assert.False(t, exact, "the uniform advDelay makes the law continuous")
}

// TestAdvBadInput: every field out of the specification's range is an
// error naming the field and its range.
func TestAdvBadInput(t *testing.T) {
	for _, tc := range []struct {
		name  string
		mod   func(*ble.Advertiser)
		param string
		rule  string
	}{
		{"interval below 20 ms", func(a *ble.Advertiser) { a.Interval = 0.019375 }, "Interval", "20 ms … 10.24 s"},
		{"interval above 10.24 s", func(a *ble.Advertiser) { a.Interval = 10.240625 }, "Interval", "20 ms … 10.24 s"},
		{"interval off the 0.625 ms grid", func(a *ble.Advertiser) { a.Interval = 0.1001 }, "Interval", "0.625 ms"},
		{"interval NaN", func(a *ble.Advertiser) { a.Interval = math.NaN() }, "Interval", "advInterval"},
		{"AdvData", func(a *ble.Advertiser) { a.AdvData = 32 }, "AdvData", "0 … 31"},
		{"ScanRspData", func(a *ble.Advertiser) { a.ScanRspData = -1 }, "ScanRspData", "0 … 31"},
		{"ScanRequest", func(a *ble.Advertiser) { a.ScanRequest = 1.5 }, "ScanRequest", "[0, 1]"},
		{"not scannable", func(a *ble.Advertiser) { a.Type = ble.AdvNonconnInd }, "ScanRequest", "not scannable"},
		{"type", func(a *ble.Advertiser) { a.Type = 9 }, "Type", "AdvScanInd"},
		{"channel order", func(a *ble.Advertiser) { a.Channels = []int{38, 37} }, "Channels", "increasing"},
		{"channel 40", func(a *ble.Advertiser) { a.Channels = []int{40} }, "Channels", "37, 38, 39"},
		{"no channel", func(a *ble.Advertiser) { a.Channels = []int{} }, "Channels", "1 … 3"},
		{"gap too long", func(a *ble.Advertiser) { a.Gap = 9.5e-3 }, "Gap", "10 ms"},
		{"negative gap", func(a *ble.Advertiser) { a.Gap = -1 }, "Gap", "> 0"},
		{"startup", func(a *ble.Advertiser) { a.Startup = math.Inf(1) }, "Startup", ">= 0"},
		{"TX below floor", func(a *ble.Advertiser) { a.Currents.TX = 1e-9 }, "Currents.TX", "Floor"},
		{"voltage", func(a *ble.Advertiser) { a.Currents.Voltage = 0 }, "Currents.Voltage", "> 0"},
		{"direct with data", func(a *ble.Advertiser) { a.Type, a.ScanRequest = ble.AdvDirectInd, 0 }, "AdvData", "must be 0"},
	} {
		a := testBeacon()
		tc.mod(&a)
		_, err := a.Cycle()
		require.ErrorIs(t, err, ble.ErrParam, tc.name)
		assert.Contains(t, err.Error(), tc.param, tc.name)
		assert.Contains(t, err.Error(), tc.rule, tc.name)
	}
	// The extremes of the range are accepted (v5.3 Vol 6 Part B §4.4.2.2).
	for _, iv := range []float64{0.02, 10.24} {
		a := ble.Advertiser{Type: ble.AdvNonconnInd, Interval: iv, Currents: ble.ExampleCurrents()}
		_, err := a.Cycle()
		assert.NoError(t, err, "interval %g", iv)
	}
}
