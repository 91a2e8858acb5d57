package lora_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// obsNode is an invented class A node (demo figures): EU863-870, 10-byte
// payload every 15 minutes at DR5 and TXPower 1, the typical currents, a
// perfect clock, an AA-size bobbin cell with its typical voltage curve.
func obsNode(t testing.TB, nbTrans int) (lora.ClassA, energy.NodeSpec) {
	t.Helper()
	c := lora.ClassA{
		Region: lora.EU868(), Currents: lora.TypicalCurrents(), App: 10,
		Settings: []lora.Setting{{DR: 5, TXPower: 1, Prob: 1}}, NbTrans: nbTrans,
	}
	cyc, err := c.Cycle(dist.MustPointMass(15 * energy.Minute))
	require.NoError(t, err)
	bat, err := energy.NewBattery(energy.TypicalER14505())
	require.NoError(t, err)
	curve := energy.TypicalBobbinCurve()
	spec := energy.NodeSpec{
		Settings: []energy.NodeSetting{{Weight: 1, Cycle: cyc}},
		Battery:  bat, Voltage: &curve, Brownout: 2.8,
		Spread: energy.NodeSpread{Capacity: 0.03, Active: 0.05, Floor: 0.5},
	}
	return c, spec
}

// TestObserverCosts checks the energy one uplink costs against a hand
// computation: the LoRa time on air (Augustin et al. 2016, "A Study of
// LoRa", Sensors 16(9):1466, eq. for T_packet) of a 23-byte PHY payload at
// SF7/125 kHz is (8 + 4.25 + 48)·1.024 ms = 61.696 ms (8 + ⌈(8·23 − 28 +
// 28 + 16)/28⌉·5 = 48 payload symbols); the empty windows listen 6 symbols
// each (common practice, from memory): RX1 at DR5 (SF7, 1.024 ms symbols)
// and RX2 at EU863-870's default DR0 (SF12, 32.768 ms symbols); currents
// above the 2 µA floor at 3.3 V (45 mA transmit at 14 dBm, 12 mA receive).
func TestObserverCosts(t *testing.T) {
	c, spec := obsNode(t, 1)
	o, err := lora.NewObserver(c, spec, energy.Environment{}, lora.ObserverOptions{})
	require.NoError(t, err)
	d, err := o.NewDevice(0)
	require.NoError(t, err)
	d, err = o.Uplink(d, lora.Uplink{Time: 10, FCnt: 0, DR: 5, TXPower: 1})
	require.NoError(t, err)
	const v, floor = 3.3, 2e-6
	want := (45e-3-floor)*v*0.061696 + (12e-3-floor)*v*(6*1.024e-3+6*32.768e-3)
	got, _ := d.Tally.ActiveEnergy()
	require.InDelta(t, want, got, 1e-12*want)
	// A downlink: an empty frame (12-byte PHY payload, no payload CRC
	// downstream: LoRaWAN 1.0.3 §4) received whole instead of the 6-symbol
	// listen. RX1 at DR5: 8 + ⌈(96 − 28 + 28)/28⌉·5 = 28 payload symbols,
	// (8 + 4.25 + 28)·1.024 ms = 41.216 ms, and RX2 not opened; RX2 at DR0
	// (SF12, low data rate optimisation): 8 + ⌈(96 − 48 + 28)/40⌉·5 = 18,
	// (12.25 + 18)·32.768 ms = 991.232 ms after RX1's empty listen.
	for w, want := range map[int]float64{
		1: (12e-3 - floor) * v * (41.216e-3 - 6*1.024e-3 - 6*32.768e-3),
		2: (12e-3 - floor) * v * (991.232e-3 - 6*32.768e-3),
	} {
		dd, err := o.Downlink(d, 11, w)
		require.NoError(t, err)
		e, _ := dd.Tally.ActiveEnergy()
		require.InDelta(t, want, e-got, 1e-12*math.Abs(want), "RX%d", w)
	}
}

// TestObserverFrameCounter plays a stream through the frame-counter rules
// and counts what each record was read as.
func TestObserverFrameCounter(t *testing.T) {
	for _, tc := range []struct {
		name                             string
		nbTrans                          int
		wantTX                           int64
		frames, unheard, resets, rejoins int
	}{
		// f0, f1, f1 again, f4 (2 unheard), f2 (back: restart), join, f0 (rejoin)
		{"NbTrans 1", 1, 1 + 1 + 1 + 2 + 1 + 1 + 1, 5, 2, 1, 1},
		// NbTrans 3: f0 got a downlink (no more repetitions), f1 seen twice
		// (one more charged at f4), 2 unheard × 3, f4 seen once (2 more at
		// the restart), f2 seen once (2 more at the join).
		{"NbTrans 3", 3, 1 + 1 + 1 + 1 + 6 + 1 + 2 + 1 + 2 + 1, 5, 2, 1, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, spec := obsNode(t, tc.nbTrans)
			o, err := lora.NewObserver(c, spec, energy.Environment{}, lora.ObserverOptions{})
			require.NoError(t, err)
			d, err := o.NewDevice(0)
			require.NoError(t, err)
			step := func(f func() (lora.Device, error)) {
				t.Helper()
				nd, err := f()
				require.NoError(t, err)
				d = nd
			}
			up := func(at float64, fc uint32) func() (lora.Device, error) {
				return func() (lora.Device, error) {
					return o.Uplink(d, lora.Uplink{Time: at, FCnt: fc, DR: 5, TXPower: 1})
				}
			}
			step(up(100, 0))
			step(func() (lora.Device, error) { return o.Downlink(d, 101, 1) })
			step(up(200, 1))
			step(up(201, 1))
			step(up(500, 4))
			step(up(600, 2))
			step(func() (lora.Device, error) { return o.Join(d, 700, 5) })
			step(up(800, 0))
			k, ok := o.UplinkKind(5, 1)
			require.True(t, ok)
			require.Equal(t, tc.wantTX, d.Tally.Count(k))
			require.Equal(t, int64(tc.frames), d.Frames)
			require.Equal(t, int64(tc.unheard), d.Unheard)
			require.Equal(t, tc.resets, d.Resets)
			require.Equal(t, tc.rejoins, d.Rejoins)
		})
	}
}

// TestObserverStatus: the DevStatusAns battery field (LoRaWAN L2 1.0.4,
// end-device status: 0 external power, 1 … 254 levels, 255 not measured),
// the level bins, millivolt readings and a suspected cell swap.
func TestObserverStatus(t *testing.T) {
	c, spec := obsNode(t, 1)
	scale := lora.LevelScale{Empty: 2.0, Full: 3.6, Noise: 0.02}
	lo, hi, err := scale.Bin(128)
	require.NoError(t, err)
	q := 1.6 / 253
	require.InDelta(t, 2+126.5*q, lo, 1e-15)
	require.InDelta(t, 2+127.5*q, hi, 1e-15)
	lo, _, err = scale.Bin(1)
	require.NoError(t, err)
	require.True(t, math.IsInf(lo, -1))
	_, hi, err = scale.Bin(254)
	require.NoError(t, err)
	require.True(t, math.IsInf(hi, 1))
	for _, bad := range []int{0, 255, -1, 300} {
		_, _, err = scale.Bin(bad)
		require.ErrorIs(t, err, lora.ErrParam, "level %d", bad)
	}

	o, err := lora.NewObserver(c, spec, energy.Environment{}, lora.ObserverOptions{Level: scale})
	require.NoError(t, err)
	d, err := o.NewDevice(0)
	require.NoError(t, err)
	d, err = o.Uplink(d, lora.Uplink{Time: 10, FCnt: 0, DR: 5, TXPower: 1})
	require.NoError(t, err)

	ext, err := o.Status(d, 20, 0)
	require.NoError(t, err)
	_, err = o.Model().Posterior(ext.Tally, 20)
	require.ErrorIs(t, err, energy.ErrParam, "external power has no battery life")
	back, err := o.Status(ext, 30, 255)
	require.NoError(t, err)
	require.Equal(t, 1, back.NotMeasured)
	_, err = o.Model().Posterior(back.Tally, 30)
	require.NoError(t, err)
	for _, bad := range []int{-1, 256} {
		_, err = o.Status(d, 40, bad)
		require.ErrorIs(t, err, lora.ErrParam)
	}
	_, err = o.Voltage(d, 40, 0)
	require.ErrorIs(t, err, lora.ErrParam)
	_, err = o.Voltage(d, 40, 200000)
	require.ErrorIs(t, err, lora.ErrParam)
	lv, err := o.Status(d, 40, 200)
	require.NoError(t, err)
	require.Equal(t, 1, lv.Tally.Readings())

	// A cell swap: low readings, a counter restart, a fresh reading.
	for _, tc := range []struct {
		name    string
		after   int // mV of the first reading after the restart
		suspect bool
	}{{"fresh cell after the restart", 3660, true}, {"same cell after the restart", 3410, false}} {
		t.Run(tc.name, func(t *testing.T) {
			s := d
			var err error
			s, err = o.Voltage(s, 100, 3400)
			require.NoError(t, err)
			s, err = o.Uplink(s, lora.Uplink{Time: 150, FCnt: 9, DR: 5, TXPower: 1})
			require.NoError(t, err)
			s, err = o.Uplink(s, lora.Uplink{Time: 200, FCnt: 0, DR: 5, TXPower: 1}) // back to 0: restart
			require.NoError(t, err)
			require.Equal(t, 1, s.Resets)
			s, err = o.Voltage(s, 300, tc.after)
			require.NoError(t, err)
			require.Equal(t, tc.suspect, s.SuspectSwap)
			sw, err := o.Swap(s, 400)
			require.NoError(t, err)
			require.Equal(t, 400.0, sw.Tally.Install())
			require.False(t, sw.SuspectSwap)
		})
	}

	// A downlink before any uplink, or in a window other than 1 and 2.
	fresh, err := o.NewDevice(0)
	require.NoError(t, err)
	_, err = o.Downlink(fresh, 1, 1)
	require.ErrorIs(t, err, lora.ErrParam)
	_, err = o.Downlink(d, 20, 3)
	require.ErrorIs(t, err, lora.ErrParam)
	_, err = o.Uplink(d, lora.Uplink{Time: 20, FCnt: 1, DR: 9, TXPower: 0})
	require.ErrorIs(t, err, lora.ErrParam)
}

// TestObserverRetryWait: the wait between a confirmed frame's attempts is
// charged in the radio's wait state. An invented node whose wait current
// (1 mA) lies far above its floor (2 µA), NbTrans 3 and a fixed 2 s
// RetryGap: each attempt after a frame's first costs (1 mA − 2 µA) · 3.3 V
// · 2 s above the floor (a hand computation); a node whose wait current
// equals its floor has no such event kind (the floor already pays).
func TestObserverRetryWait(t *testing.T) {
	c, spec := obsNode(t, 3)
	c.Confirmed = true
	c.RetryGap = dist.MustPointMass(2)
	plain, err := lora.NewObserver(c, spec, energy.Environment{}, lora.ObserverOptions{})
	require.NoError(t, err)
	for _, name := range plain.Model().Costs() {
		require.NotContains(t, name, "retry wait")
	}
	c.Currents.Wait = 1e-3
	o, err := lora.NewObserver(c, spec, energy.Environment{}, lora.ObserverOptions{})
	require.NoError(t, err)
	k := -1
	for i, name := range o.Model().Costs() {
		if name == "retry wait after DR5" {
			k = i
		}
	}
	require.GreaterOrEqual(t, k, 0)
	const want = (1e-3 - 2e-6) * 3.3 * 2
	require.InDelta(t, want, o.Model().CostMean(k), 1e-12*want)
	d, err := o.NewDevice(0)
	require.NoError(t, err)
	// f0 twice (one wait), f1 (f0's third attempt: one more wait), f3
	// (f1's two missing attempts, two waits; unheard f2: three
	// transmissions, two waits).
	for _, u := range []lora.Uplink{{Time: 100, FCnt: 0}, {Time: 105, FCnt: 0}, {Time: 1000, FCnt: 1}, {Time: 3000, FCnt: 3}} {
		u.DR, u.TXPower = 5, 1
		d, err = o.Uplink(d, u)
		require.NoError(t, err)
	}
	require.Equal(t, int64(6), d.Tally.Count(k))
}
