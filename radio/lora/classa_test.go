package lora_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// TestTruncatedGeometric checks the attempt law against its closed-form
// mean (1 − (1 − q)^m)/q (sum of a finite geometric series) and its edge
// cases.
func TestTruncatedGeometric(t *testing.T) {
	for _, tc := range []struct {
		q float64
		m int
	}{{0.3, 8}, {0.9, 8}, {1e-9, 15}, {0.5, 1}} {
		d, err := lora.TruncatedGeometric(tc.q, tc.m)
		require.NoError(t, err)
		want := -math.Expm1(float64(tc.m)*math.Log1p(-tc.q)) / tc.q
		assert.InEpsilon(t, want, d.Mean(), 1e-12, "q=%g m=%d", tc.q, tc.m)
		// P(N = m) = (1 − q)^(m−1).
		assert.InEpsilon(t, math.Pow(1-tc.q, float64(tc.m-1)), d.Survival(float64(tc.m)-0.5), 1e-12)
	}
	d, err := lora.TruncatedGeometric(0, 8)
	require.NoError(t, err)
	assert.Equal(t, "PointMass(8)", d.String())
	d, err = lora.TruncatedGeometric(1, 8)
	require.NoError(t, err)
	assert.Equal(t, "PointMass(1)", d.String())
	_, err = lora.TruncatedGeometric(1.5, 8)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.TruncatedGeometric(0.5, 0)
	assert.ErrorIs(t, err, lora.ErrParam)
}

// TestTruncatedGeometricCap: issue 13. m = MaxInt panicked (make with a
// negative size after the product overflowed) and m = 1e9 allocated 16 GB;
// m is now capped at MaxAttempts, named in the error. At the cap the law is
// still built, its attempts beyond the underflow of (1 − q)^(k−1) left out;
// oracle: the closed-form mean (1 − (1 − q)^m)/q.
func TestTruncatedGeometricCap(t *testing.T) {
	for _, m := range []int{math.MaxInt, 1e9, lora.MaxAttempts + 1} {
		_, err := lora.TruncatedGeometric(0.5, m)
		require.ErrorIs(t, err, lora.ErrParam, "m = %d", m)
		assert.Contains(t, err.Error(), "MaxAttempts", "m = %d", m)
	}
	for _, q := range []float64{0.5, 1e-4} {
		d, err := lora.TruncatedGeometric(q, lora.MaxAttempts)
		require.NoError(t, err)
		want := -math.Expm1(float64(lora.MaxAttempts)*math.Log1p(-q)) / q
		assert.InEpsilon(t, want, d.Mean(), 1e-12, "q = %g", q)
	}
}

func TestDownlinkWindows(t *testing.T) {
	w, err := lora.DownlinkWindows(0.9, 1, 0.8, 0.95, 0.99)
	require.NoError(t, err)
	assert.InDelta(t, 0.9*0.8*0.95, w.RX1, 1e-15)
	assert.InDelta(t, 0.9*0.2*0.99, w.RX2, 1e-15)
	_, err = lora.DownlinkWindows(0.9, 1, 1.2, 0.95, 0.99)
	assert.ErrorIs(t, err, lora.ErrParam)
	_, err = lora.DownlinkWindows(0.9, -1, 0.8, 0.95, 0.99)
	assert.ErrorIs(t, err, lora.ErrParam)
}

// testBenchLink is testLink's scenario (6 dB shadowing) for any testing.TB.
func testBenchLink(t testing.TB) lora.Link {
	disk, err := lora.NewDisk(3500)
	require.NoError(t, err)
	return lora.Link{Distance: disk, PathLoss: lora.PathLoss{Reference: 128.95, RefDistance: 1000, Exponent: 3.5, Shadowing: 6},
		GatewayGain: 3, NoiseFigure: 6, Margin: 10}
}

// settle is SettleADR in EU863-870 with 4 power levels.
func settle(link lora.Link) (lora.Settled, error) {
	return lora.SettleADR(lora.EU868(), link, lora.ADRConfig{PowerSteps: 4})
}

// sense is the node's own stage in the tests: 5 mA for 50 ms at 3.3 V.
func sense() energy.Stage { return energy.MustFixedState("sense", 5e-3, 3.3, 0.05) }

// testNode is an invented scenario for the checks: EU863-870, 10-byte
// confirmed reports, the ADR law of testLink with 4 power levels (6 data
// rates × 4 powers), NbTrans = 8, collision-dependent windows per data
// rate.
func testNode(t testing.TB, nodes float64) lora.ClassA {
	eu := lora.EU868()
	s, err := settle(testBenchLink(t))
	require.NoError(t, err)
	set, err := s.Reachable()
	require.NoError(t, err)
	col, err := lora.UplinkCollisions(eu, set, lora.Traffic{Nodes: nodes, Interval: 600, Channels: 3, App: 10, Frames: 1.5})
	require.NoError(t, err)
	byDR := map[int]lora.Windows{}
	for _, c := range col {
		w, err := lora.DownlinkWindows(c.Success, 1, 0.8, 0.95, 0.99)
		require.NoError(t, err)
		byDR[c.DR] = w
	}
	return lora.ClassA{
		Region: eu, Currents: lora.TypicalCurrents(), App: 10,
		Settings: set, Confirmed: true, NbTrans: 8,
		DownlinkByDR: byDR, ClockMargin: 5e-3,
		Before: sense(),
	}
}

// TestTimeline checks one setting's timeline against airtimes worked by
// hand from the formula of TestAirtime: uplink DR5 with a 23-byte PHY
// payload (200/28 → 8 blocks; 48 symbols): 60.25·1.024 ms = 61.696 ms;
// a bare 12-byte downlink (no CRC) at DR5: (96−28+28)/28 → 4; 28 symbols:
// 40.25·1.024 ms = 41.216 ms; at DR0 (optimised): 76/40 → 2; 18 symbols:
// 30.25·32.768 ms = 991.232 ms. Empty windows listen 6 symbols plus the
// margin; RX1 opens at RECEIVE_DELAY1 − margin, RX2 at RECEIVE_DELAY2 −
// margin (RP002-1.0.3: 1 s and 2 s).
func TestTimeline(t *testing.T) {
	c := lora.ClassA{Region: lora.EU868(), Currents: lora.TypicalCurrents(), App: 10,
		Settings: []lora.Setting{{DR: 5, TXPower: 2, Prob: 1}}, ClockMargin: 5e-3,
		Downlink: lora.Windows{RX1: 0.3, RX2: 0.1}, NbTrans: 3}
	tls, err := c.Timelines()
	require.NoError(t, err)
	require.Len(t, tls, 1)
	tl := tls[0]
	assert.InEpsilon(t, 61.696e-3, tl.Uplink, 1e-13)
	assert.Equal(t, 5, tl.RX1DR)
	assert.Equal(t, 0, tl.RX2DR)
	assert.Equal(t, 12.0, tl.Setting.EIRP)
	assert.InEpsilon(t, 0.995, tl.WaitRX1, 1e-15)
	assert.InEpsilon(t, 5e-3+6*1.024e-3, tl.RX1Listen, 1e-13)
	assert.InEpsilon(t, 5e-3+41.216e-3, tl.RX1Receive, 1e-13)
	assert.InEpsilon(t, 2-5e-3-(1+6*1.024e-3), tl.WaitRX2, 1e-13)
	assert.InEpsilon(t, 5e-3+6*32.768e-3, tl.RX2Listen, 1e-13)
	assert.InEpsilon(t, 5e-3+991.232e-3, tl.RX2Receive, 1e-13)
	assert.InEpsilon(t, (1-math.Pow(0.6, 3))/0.4, tl.Attempts.Mean(), 1e-13)
}

func TestClassAErrors(t *testing.T) {
	good := func() lora.ClassA {
		return lora.ClassA{Region: lora.EU868(), Currents: lora.TypicalCurrents(), App: 10,
			Settings: []lora.Setting{{DR: 5, Prob: 1}}}
	}
	tests := []struct {
		name string
		mod  func(c *lora.ClassA)
		says string
	}{
		{"zero region", func(c *lora.ClassA) { c.Region = lora.Region{} }, "EU868"},
		{"no settings", func(c *lora.ClassA) { c.Settings = nil }, "Settings"},
		{"sum", func(c *lora.ClassA) { c.Settings[0].Prob = 0.5 }, "sum"},
		{"DR lacking", func(c *lora.ClassA) { c.Settings[0].DR = 9 }, "LR-FHSS"},
		{"payload", func(c *lora.ClassA) { c.Settings[0].DR = 0; c.App = 60 }, "at most 51"},
		{"power index", func(c *lora.ClassA) { c.Settings[0].TXPower = 8 }, "0 … 7"},
		{"no TX current", func(c *lora.ClassA) { c.Currents.TX = c.Currents.TX[:1]; c.Settings[0].TXPower = 3 }, "no current for 10 dBm"},
		{"NbTrans", func(c *lora.ClassA) { c.NbTrans = 16 }, "1 … 15"},
		{"windows", func(c *lora.ClassA) { c.Downlink = lora.Windows{RX1: 0.7, RX2: 0.4} }, "RX1 + RX2"},
		{"windows by DR", func(c *lora.ClassA) { c.DownlinkByDR = map[int]lora.Windows{5: {RX1: -1}} }, "DownlinkByDR[5]"},
		{"voltage", func(c *lora.ClassA) { c.Currents.Voltage = 0 }, "Voltage"},
		{"wait below floor", func(c *lora.ClassA) { c.Currents.Wait = 1e-6 }, "Wait"},
		{"margin overlap", func(c *lora.ClassA) { c.Settings[0].DR = 0; c.ClockMargin = 0.95 }, "overlap"},
		{"margin cap", func(c *lora.ClassA) { c.ClockMargin = 1.1 }, "MaxClockMargin"},
		{"join", func(c *lora.ClassA) { c.JoinEvery = -1 }, "JoinEvery"},
		{"RX2 frequency", func(c *lora.ClassA) { c.RX2 = lora.RX2Window{Frequency: -1, DR: 3} }, "RX2.Frequency"},
		{"RX2 data rate", func(c *lora.ClassA) { c.RX2 = lora.RX2Window{Frequency: 869.525e6, DR: 8} }, "RX2.DR"},
		{"offset", func(c *lora.ClassA) { c.RX1DROffset = 6 }, "RX1DROffset"},
		{"downlink too long", func(c *lora.ClassA) { c.DownlinkBytes = 100 }, "DownlinkBytes"},
		{"gap", func(c *lora.ClassA) { c.RetryGap = dist.MustNormal(0, 1) }, "RetryGap"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := good()
			tc.mod(&c)
			_, err := c.Stage()
			require.ErrorIs(t, err, lora.ErrParam)
			assert.Contains(t, err.Error(), tc.says)
		})
	}
}

// wald returns the mean energy of a ClassA cycle by Wald's identity (Wald,
// 1944): the attempts stop at a stopping time N, so
// E[Σ_{i≤N} X_i] = E[N]·E[X], with N − 1 retry gaps — an independent
// route to the mean from the timelines.
func wald(t *testing.T, c lora.ClassA, period, gapMean float64) float64 {
	tls, err := c.Timelines()
	require.NoError(t, err)
	cur := c.Currents
	v, f := cur.Voltage, cur.Floor
	ex := func(i, d float64) float64 { return (i - f) * v * d }
	mean := f * v * period
	for _, tl := range tls {
		itx := 0.0
		for _, x := range cur.TX {
			if x.EIRP == tl.Setting.EIRP {
				itx = x.Current
			}
		}
		p1, p2 := tl.Windows.RX1, tl.Windows.RX2
		attempt := ex(itx, tl.Uplink) + ex(cur.Wait, tl.WaitRX1) + p1*ex(cur.RX, tl.RX1Receive) +
			(1-p1)*(ex(cur.RX, tl.RX1Listen)+ex(cur.Wait, tl.WaitRX2)) + p2*ex(cur.RX, tl.RX2Receive) +
			(1-p1-p2)*ex(cur.RX, tl.RX2Listen)
		n := tl.Attempts.Mean()
		before := ex(5e-3, 0.05)
		mean += tl.Setting.Prob * (before + n*attempt + (n-1)*ex(cur.Wait, gapMean))
	}
	return mean
}

// simulate draws one cycle energy from the protocol itself (independent of
// package energy): setting, attempts, windows, gaps.
func simulate(r *rand.Rand, c lora.ClassA, tls []lora.Timeline, period float64, gap dist.Law) float64 {
	cur := c.Currents
	v, f := cur.Voltage, cur.Floor
	ex := func(i, d float64) float64 { return (i - f) * v * d }
	u := r.Float64()
	k := 0
	for acc := tls[0].Setting.Prob; u >= acc && k < len(tls)-1; {
		k++
		acc += tls[k].Setting.Prob
	}
	tl := tls[k]
	itx := 0.0
	for _, x := range cur.TX {
		if x.EIRP == tl.Setting.EIRP {
			itx = x.Current
		}
	}
	e := f*v*period + ex(5e-3, 0.05)
	for a := 1; ; a++ {
		e += ex(itx, tl.Uplink) + ex(cur.Wait, tl.WaitRX1)
		w := r.Float64()
		if w < tl.Windows.RX1 {
			return e + ex(cur.RX, tl.RX1Receive)
		}
		e += ex(cur.RX, tl.RX1Listen) + ex(cur.Wait, tl.WaitRX2)
		if w < tl.Windows.RX1+tl.Windows.RX2 {
			return e + ex(cur.RX, tl.RX2Receive)
		}
		e += ex(cur.RX, tl.RX2Listen)
		if a == c.NbTrans {
			return e
		}
		e += ex(cur.Wait, gap.Rand(r))
	}
}

// ksGridDistance returns max |F_n − F| over every step-th order statistic
// (both sides): a lower bound of the KS distance, so the same DKW bound
// applies, for laws whose CDF is costly.
func ksGridDistance(l dist.Law, xs []float64, step int) float64 {
	sort.Float64s(xs)
	n := float64(len(xs))
	d := 0.0
	for i := step / 2; i < len(xs); i += step {
		x := xs[i]
		hi := sort.SearchFloat64s(xs, math.Nextafter(x, math.Inf(1)))
		lo := sort.SearchFloat64s(xs, x)
		d = math.Max(d, math.Abs(float64(hi)/n-l.CDF(x+1e-9*math.Abs(x))))
		d = math.Max(d, math.Abs(float64(lo)/n-l.CDF(x-1e-9*math.Abs(x))))
	}
	return d
}

// ksBound is the Dvoretzky–Kiefer–Wolfowitz bound with Massart's constant
// (Ann. Probab. 18(3), 1990): P(sup |F_n − F| > ε) ≤ 2·exp(−2nε²), valid for
// any F (discrete included), here at level 1e-6, plus the law's own stated
// CDF error.
func ksBound(l dist.Law, n int) float64 {
	b := math.Sqrt(math.Log(2/1e-6) / (2 * float64(n)))
	if e, ok := l.(dist.Estimated); ok {
		b += e.Accuracy().CDFAbs
	}
	return b
}

// TestClassACycle checks the cycle law of the 6 × 4-setting confirmed node
// against (1) Wald's identity for its mean, (2) sampling from the energy
// structure (Cycle.Rand), (3) a direct simulation of the protocol, both by
// a Kolmogorov–Smirnov distance at level 1e-6, fixed seeds.
func TestClassACycle(t *testing.T) {
	c := testNode(t, 3000)
	const period = 600.0
	cy, err := c.Cycle(dist.MustPointMass(period))
	require.NoError(t, err)
	assert.InEpsilon(t, wald(t, c, period, 2), cy.MeanEnergy(), 1e-12)
	law := cy.Energy()
	_, exact := law.(dist.Atomic)
	assert.True(t, exact, "waits at the floor current keep the law exact")
	assert.InEpsilon(t, cy.MeanEnergy(), law.Mean(), 1e-12)

	const n = 100000
	r := rand.New(rand.NewPCG(6, 6))
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = cy.Rand(r)
	}
	assert.Less(t, testref.KSWithSlack(xs, law.CDF, 1e-9), ksBound(law, n), "against Cycle.Rand")

	tls, err := c.Timelines()
	require.NoError(t, err)
	gap := dist.MustUniform(1, 3)
	r = rand.New(rand.NewPCG(1, 1970))
	for i := range xs {
		xs[i] = simulate(r, c, tls, period, gap)
	}
	assert.Less(t, testref.KSWithSlack(xs, law.CDF, 1e-9), ksBound(law, n), "against the protocol simulation")
}

// TestClassAExact checks the exact (finite discrete) law against an
// enumeration of every branch: setting, number of attempts, window of the
// downlink (or none).
func TestClassAExact(t *testing.T) {
	c := testNode(t, 3000)
	const period = 600.0
	cy, err := c.Cycle(dist.MustPointMass(period))
	require.NoError(t, err)
	law, ok := cy.Energy().(dist.Atomic)
	require.True(t, ok, "waits at the floor current give a discrete law")

	tls, err := c.Timelines()
	require.NoError(t, err)
	cur := c.Currents
	v, f := cur.Voltage, cur.Floor
	ex := func(i, d float64) float64 { return (i - f) * v * d }
	var atoms []dist.Atom
	for _, tl := range tls {
		itx := 0.0
		for _, x := range cur.TX {
			if x.EIRP == tl.Setting.EIRP {
				itx = x.Current
			}
		}
		base := f*v*period + ex(5e-3, 0.05)
		head := ex(itx, tl.Uplink) + ex(cur.Wait, tl.WaitRX1)
		fail := head + ex(cur.RX, tl.RX1Listen) + ex(cur.Wait, tl.WaitRX2) + ex(cur.RX, tl.RX2Listen)
		ok1 := head + ex(cur.RX, tl.RX1Receive)
		ok2 := head + ex(cur.RX, tl.RX1Listen) + ex(cur.Wait, tl.WaitRX2) + ex(cur.RX, tl.RX2Receive)
		p1, p2 := tl.Windows.RX1, tl.Windows.RX2
		pf := 1 - p1 - p2
		for k := 1; k <= c.NbTrans; k++ {
			prior := float64(k-1) * (fail + ex(cur.Wait, 2))
			w := tl.Setting.Prob * math.Pow(pf, float64(k-1))
			atoms = append(atoms, dist.Atom{Value: base + prior + ok1, Mass: w * p1}, dist.Atom{Value: base + prior + ok2, Mass: w * p2})
			if k == c.NbTrans {
				atoms = append(atoms, dist.Atom{Value: base + prior + fail, Mass: w * pf})
			}
		}
	}
	for _, a := range law.Atoms() {
		want := 0.0
		for _, b := range atoms {
			if b.Value <= a.Value*(1+1e-9) {
				want += b.Mass
			}
		}
		assert.InDelta(t, want, cy.Energy().CDF(a.Value*(1+1e-9)), 1e-9, "CDF at %g J", a.Value)
	}
}

// TestClassATrend checks the planner's trend: as the network grows,
// collisions rise and fewer downlinks arrive, so the energy per cycle of
// unconfirmed traffic falls (fewer downlink receptions, which cost more than
// listening for a preamble) while that of confirmed traffic rises (more
// retransmissions).
func TestClassATrend(t *testing.T) {
	mean := func(nodes float64, confirmed bool) float64 {
		c := testNode(t, nodes)
		c.Confirmed = confirmed
		if !confirmed {
			c.NbTrans = 1
			for dr, w := range c.DownlinkByDR { // the network answers 10 % of unconfirmed uplinks
				c.DownlinkByDR[dr] = lora.Windows{RX1: 0.1 * w.RX1, RX2: 0.1 * w.RX2}
			}
		}
		cy, err := c.Cycle(dist.MustPointMass(600))
		require.NoError(t, err)
		return cy.MeanEnergy()
	}
	assert.Less(t, mean(5000, false), mean(500, false))
	assert.Greater(t, mean(5000, true), mean(500, true))
}

// TestClassAContinuous checks a node whose waits draw more than the floor,
// so that the uniform retry gap (ACK_TIMEOUT, 1 … 3 s) makes the law
// continuous in part: mean by Wald's identity, distribution by a
// Kolmogorov–Smirnov grid at level 1e-6 against the protocol simulation
// and against Cycle.Rand.
func TestClassAContinuous(t *testing.T) {
	c := lora.ClassA{Region: lora.EU868(), Currents: lora.TypicalCurrents(), App: 10,
		Settings:  []lora.Setting{{DR: 2, TXPower: 1, Prob: 1}},
		Confirmed: true, NbTrans: 3, ClockMargin: 5e-3, Before: sense(),
		Downlink: lora.Windows{RX1: 0.5, RX2: 0.2},
		RetryGap: dist.MustUniform(1, 3)} // given: used as it is, off-time or not
	c.Currents.Wait = 1.5e-3 // microcontroller awake while waiting
	const period = 300.0
	cy, err := c.Cycle(dist.MustPointMass(period))
	require.NoError(t, err)
	assert.InEpsilon(t, wald(t, c, period, 2), cy.MeanEnergy(), 1e-12)
	law := cy.Energy()
	tls, err := c.Timelines()
	require.NoError(t, err)
	const n = 20000
	xs := make([]float64, n)
	r := rand.New(rand.NewPCG(3, 14))
	gap := dist.MustUniform(1, 3)
	for i := range xs {
		xs[i] = simulate(r, c, tls, period, gap)
	}
	// The numerical CDF costs tens of milliseconds here: 50 grid points.
	assert.Less(t, ksGridDistance(law, xs, 400), ksBound(law, n), "against the protocol simulation")
	for i := range xs {
		xs[i] = cy.Rand(r)
	}
	assert.Less(t, ksGridDistance(law, xs, 400), ksBound(law, n), "against Cycle.Rand")
}

// TestLawsConformance runs the shared law checker on the other laws this
// package returns: the attempt law, the data-rate law of ADR and the exact
// cycle-energy law of the test node.
func TestLawsConformance(t *testing.T) {
	g, err := lora.TruncatedGeometric(0.35, 8)
	require.NoError(t, err)
	assert.NoError(t, disttest.Check(g, disttest.WithSeed(1)))
	s, err := settle(testBenchLink(t))
	require.NoError(t, err)
	drl, err := s.DataRateLaw()
	require.NoError(t, err)
	assert.NoError(t, disttest.Check(drl, disttest.WithSeed(2)))
	cy, err := testNode(t, 3000).Cycle(dist.MustPointMass(600))
	require.NoError(t, err)
	assert.NoError(t, disttest.Check(cy.Energy(), disttest.WithSeed(3)))
}

// TestRetryGapDefault checks the default gap between attempts: ACK_TIMEOUT
// (uniform 1 … 3 s, RP002-1.0.3) after a confirmed frame, none between
// unconfirmed repetitions, either way at least the rest of the sub-band's
// off-time (airtime/d from the frame's start, SubBand.OffTime). In a region
// without duty-cycle sub-bands (IN865-867) the rest is 0; with waits above
// the floor the confirmed cycle's mean grows by E[N − 1]·(I_wait − I_floor)·V·2 s
// over the unconfirmed one (Wald's identity).
func TestRetryGapDefault(t *testing.T) {
	cur := lora.TypicalCurrents()
	for i := range cur.TX {
		cur.TX[i].EIRP += 14 // IN865-867 powers are 30 − 2i dBm
	}
	c := lora.ClassA{Region: lora.IN865(), Currents: cur, App: 10,
		Settings: []lora.Setting{{DR: 3, TXPower: 0, Prob: 1}}, NbTrans: 4, ClockMargin: 5e-3,
		Downlink: lora.Windows{RX1: 0.4, RX2: 0.1}}
	c.Currents.Wait = 1e-3
	names := func(cy energy.Cycle) map[string]bool {
		out := map[string]bool{}
		for _, s := range cy.States() {
			out[s.Name()] = true
		}
		return out
	}
	un, err := c.Cycle(dist.MustPointMass(300))
	require.NoError(t, err)
	assert.False(t, names(un)["retry wait"])
	c.Confirmed = true
	co, err := c.Cycle(dist.MustPointMass(300))
	require.NoError(t, err)
	assert.True(t, names(co)["retry wait"])
	g, err := lora.TruncatedGeometric(0.5, 4)
	require.NoError(t, err)
	extra := (g.Mean() - 1) * (1e-3 - 2e-6) * 3.3 * 2
	assert.InEpsilon(t, extra, co.MeanEnergy()-un.MeanEnergy(), 1e-9)
}

// TestRetryGapOffTime: in EU863-870 the default channels lie in the 1 %
// sub-band, so after a frame of airtime a the node stays silent until a/d =
// 100·a after its start. The rest after RX2 closes is
// c = a/d − (a + RECEIVE_DELAY2 − margin + RX2 listen); the gap is c for an
// unconfirmed repetition and max(U(1, 3), c) for a confirmed retry, whose
// mean is the closed form ((c − 1)·c + (9 − c²)/2)/2 for 1 < c < 3 and c
// above 3. With waits above the floor each gap costs (I_wait − I_floor)·V
// per second (Wald's identity over E[N − 1] gaps).
func TestRetryGapOffTime(t *testing.T) {
	base := lora.ClassA{Region: lora.EU868(), Currents: lora.TypicalCurrents(),
		NbTrans: 4, ClockMargin: 5e-3, Downlink: lora.Windows{RX1: 0.4, RX2: 0.1}}
	base.Currents.Wait = 1e-3
	g, err := lora.TruncatedGeometric(0.5, 4)
	require.NoError(t, err)
	tests := []struct {
		name     string
		dr, app  int
		cLo, cHi float64 // where the rest c must lie
	}{
		{"SF7/250 kHz, 25 bytes: 1 < c < 3", 6, 25, 1, 3},
		{"SF9, 10 bytes: c > 3", 3, 10, 3, 1e9},
		{"SF12, 51 bytes: c ≈ 274 s", 0, 51, 270, 280},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := base
			c.App = tc.app
			c.Settings = []lora.Setting{{DR: tc.dr, TXPower: 0, Prob: 1}}
			tls, err := c.Timelines()
			require.NoError(t, err)
			tl := tls[0]
			assert.Equal(t, 0.01, tl.DutyCycle)
			want := tl.Uplink/0.01 - (tl.Uplink + 2 - 5e-3 + tl.RX2Listen)
			assert.InDelta(t, want, tl.OffTimeGap, 1e-12)
			require.Greater(t, tl.OffTimeGap, tc.cLo)
			require.Less(t, tl.OffTimeGap, tc.cHi)
			un, err := c.Cycle(dist.MustPointMass(3600))
			require.NoError(t, err)
			c.Confirmed = true
			co, err := c.Cycle(dist.MustPointMass(3600))
			require.NoError(t, err)
			// Gaps at Wait: compare each cycle with the same cycle at a wait of the floor.
			flat := func(cc lora.ClassA) float64 {
				cc.Currents.Wait = cc.Currents.Floor
				cy, err := cc.Cycle(dist.MustPointMass(3600))
				require.NoError(t, err)
				return cy.MeanEnergy()
			}
			perSecond := (1e-3 - 2e-6) * 3.3
			x := tl.OffTimeGap
			meanGap := x
			if x < 3 {
				meanGap = ((x-1)*x + (9-x*x)/2) / 2
			}
			c.Confirmed = false
			gapsUn := un.MeanEnergy() - flat(c) - attemptWaits(t, c, perSecond)
			assert.InEpsilon(t, (g.Mean()-1)*perSecond*x, gapsUn, 1e-9, "unconfirmed")
			c.Confirmed = true
			gapsCo := co.MeanEnergy() - flat(c) - attemptWaits(t, c, perSecond)
			assert.InEpsilon(t, (g.Mean()-1)*perSecond*meanGap, gapsCo, 1e-9, "confirmed")
		})
	}
}

// attemptWaits is the mean energy above the floor of the waits before the
// windows over a report: E[N]·(WaitRX1 + P(RX1 empty)·WaitRX2)·(I_wait − I_floor)·V.
func attemptWaits(t *testing.T, c lora.ClassA, perSecond float64) float64 {
	tls, err := c.Timelines()
	require.NoError(t, err)
	tl := tls[0]
	return tl.Attempts.Mean() * (tl.WaitRX1 + (1-tl.Windows.RX1)*tl.WaitRX2) * perSecond
}

// UniformAtLeast: max(U, c) for U uniform on [1, 3]; its mean against the
// closed form E = P(U < c)·c + ∫_c^3 u/2 du and its CDF against
// P(max ≤ x) = P(U ≤ x) for x ≥ c, 0 below.
func TestUniformAtLeast(t *testing.T) {
	for _, c := range []float64{0, 1, 1.5, 2.9, 3, 10} {
		l, err := lora.UniformAtLeast(1, 3, c)
		require.NoError(t, err)
		want := math.Max(c, 2)
		if c > 1 && c < 3 {
			want = (c-1)/2*c + (9-c*c)/4
		}
		assert.InDelta(t, want, l.Mean(), 1e-12, "c = %g", c)
		for _, x := range []float64{0.5, 1.2, 1.7, 2.5, 3.5} {
			cdf := 0.0
			if x >= c {
				cdf = math.Min(math.Max((x-1)/2, 0), 1)
			}
			assert.InDelta(t, cdf, l.CDF(x), 1e-12, "c = %g, x = %g", c, x)
		}
	}
	for _, bad := range [][3]float64{{-1, 3, 0}, {3, 1, 0}, {1, math.Inf(1), 0}, {1, 3, -1}, {1, 3, math.NaN()}} {
		_, err := lora.UniformAtLeast(bad[0], bad[1], bad[2])
		assert.ErrorIs(t, err, lora.ErrParam, "%v", bad)
	}
}

// TestRX2AndJoin: an RX2 window moved to DR3 (SF9/125 kHz) listens for the
// margin plus 6 symbols of 4.096 ms (2^9 / 125 kHz); a Join-request every
// report adds, at a wait current equal to the floor, the 23-byte frame at
// SF12/125 kHz — 45.25 symbols of 32.768 ms = 1.482752 s by the airtime
// formula (Augustin et al. 2016, eq. 3–4: 8 + ⌈(184 − 48 + 28 + 16)/40⌉·5 =
// 33 payload symbols) — and two empty join-accept windows; one every four
// reports adds a quarter of it.
func TestRX2AndJoin(t *testing.T) {
	c := lora.ClassA{Region: lora.EU868(), Currents: lora.TypicalCurrents(), App: 10,
		Settings: []lora.Setting{{DR: 0, TXPower: 0, Prob: 1}}, ClockMargin: lora.DefaultClockMargin}
	c.RX2 = lora.RX2Window{Frequency: 869.525e6, DR: 3}
	tls, err := c.Timelines()
	require.NoError(t, err)
	assert.Equal(t, 3, tls[0].RX2DR)
	assert.Equal(t, 869.525e6, tls[0].RX2Freq)
	assert.InDelta(t, 0.02+6*4.096e-3, tls[0].RX2Listen, 1e-15)
	c.RX2 = lora.RX2Window{}
	base, err := c.Cycle(dist.MustPointMass(600))
	require.NoError(t, err)
	l := 0.02 + 6*32.768e-3 // both join-accept windows at DR0 (RX1 = DR0 − 0)
	add := 3.3 * ((90e-3-2e-6)*1.482752 + (12e-3-2e-6)*2*l)
	for _, k := range []int{1, 4} {
		c.JoinEvery = k
		cy, err := c.Cycle(dist.MustPointMass(600))
		require.NoError(t, err)
		assert.InEpsilon(t, add/float64(k), cy.MeanEnergy()-base.MeanEnergy(), 1e-12, "JoinEvery %d", k)
	}
}
