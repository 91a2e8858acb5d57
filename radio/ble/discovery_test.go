package ble_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/ble"
)

// discoveryCase is an invented advertiser and scanner pair.
type discoveryCase struct {
	name    string
	adv     ble.Advertiser
	scan    ble.Scanner
	success float64
	horizon float64
}

func discoveryCases() []discoveryCase {
	cur := ble.ExampleCurrents()
	return []discoveryCase{
		{"beacon 100 ms, scan 30/100 ms", ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 20, Interval: 0.1, Currents: cur},
			ble.Scanner{Window: 0.03, Interval: 0.1}, 1, 3},
		{"ADV_IND 152.5 ms, scan 11.25/60 ms, collisions", ble.Advertiser{Type: ble.AdvInd, AdvData: 31, Interval: 0.1525, Gap: 2e-3, Currents: cur},
			ble.Scanner{Window: 0.01125, Interval: 0.06}, 0.8, 5},
		{"one channel 1 s, scan 100 ms/1.28 s", ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 8, Interval: 1, Channels: []int{38}, Currents: cur},
			ble.Scanner{Window: 0.1, Interval: 1.28}, 1, 60},
	}
}

// firstEventCDF is the exact probability that the first event is heard
// and its received PDU ends by t: the forward recurrence density of the
// first start (1/μ on [0, a], then linear to 0 on [a, a + 10 ms]) times
// the reception probability, integrated piece by piece between every point
// where a PDU enters or leaves a window (the integrand is polynomial of
// degree ≤ 1 on each piece: the midpoint rule is exact there). Written
// independently of the package's grid.
func firstEventCDF(c discoveryCase, tl ble.AdvTimeline, t float64) float64 {
	a, w := c.adv.Interval, ble.AdvDelayMax
	mu := a + w/2
	dens := func(s float64) float64 {
		if s < a {
			return 1 / mu
		}
		return (a + w - s) / (w * mu)
	}
	cyc := 3 * c.scan.Interval
	fits := func(start float64, ch int) bool {
		ph := math.Mod(start, cyc)
		k := math.Floor(ph / c.scan.Interval)
		return int(k) == ch-37 && ph-k*c.scan.Interval+tl.PDU <= c.scan.Window
	}
	// Breakpoints: every s where s + j·Spacing crosses a window edge (or the
	// edge less the PDU), and a.
	cuts := []float64{0, a, a + w}
	for j := range tl.Channels {
		shift := float64(j) * tl.Spacing
		for k := 0.0; k*c.scan.Interval < a+w+shift+c.scan.Interval; k++ {
			for _, e := range []float64{k * c.scan.Interval, k*c.scan.Interval + c.scan.Window - tl.PDU} {
				if s := e - shift; s > 0 && s < a+w {
					cuts = append(cuts, s)
				}
			}
		}
		if s := t - shift - tl.PDU; s > 0 && s < a+w {
			cuts = append(cuts, s)
		}
	}
	sort.Float64s(cuts)
	total := 0.0
	for i := 0; i+1 < len(cuts); i++ {
		x0, x1 := cuts[i], cuts[i+1]
		if x1 <= x0 {
			continue
		}
		mid := (x0 + x1) / 2
		missed := 1.0
		for j, ch := range tl.Channels {
			start := mid + float64(j)*tl.Spacing
			if fits(start, ch) {
				if start+tl.PDU <= t {
					total += (x1 - x0) * dens(mid) * missed * c.success
				}
				missed *= 1 - c.success
			}
		}
	}
	return total
}

// TestDiscoveryFirstEvent checks the law below advInterval, where only the
// first event can be heard, against the exact piecewise integral
// firstEventCDF, within the law's stated accuracy.
func TestDiscoveryFirstEvent(t *testing.T) {
	for _, c := range discoveryCases() {
		d, err := ble.NewDiscovery(c.adv, c.scan, c.success, c.horizon)
		require.NoError(t, err, c.name)
		tl, err := c.adv.Timeline()
		require.NoError(t, err)
		acc := d.Accuracy().CDFAbs
		worst := 0.0
		for i := 1; i <= 200; i++ {
			x := c.adv.Interval * float64(i) / 200
			want := firstEventCDF(c, tl, x)
			worst = math.Max(worst, math.Abs(d.CDF(x)-want))
		}
		t.Logf("%s: first-event CDF error %.3g, stated %.3g", c.name, worst, acc)
		assert.LessOrEqual(t, worst, acc, c.name)
	}
}

// simulateDiscovery is the test's own event-level sampler of the model:
// it lays out the scanner's windows explicitly and walks the advertiser's
// events, drawing advDelay and each PDU's collision.
func simulateDiscovery(r *rand.Rand, c discoveryCase, tl ble.AdvTimeline) float64 {
	a, w := c.adv.Interval, ble.AdvDelayMax
	// Equilibrium start (renewal theory): the interval covering time 0 is
	// length-biased, density ∝ x·f(x), drawn by rejection; time 0 falls
	// uniformly within it.
	var x float64
	for {
		x = a + w*r.Float64()
		if r.Float64()*(a+w) < x {
			break
		}
	}
	s := x * r.Float64()
	for ; s < c.horizon; s += a + w*r.Float64() {
		for j, ch := range tl.Channels {
			start := s + float64(j)*tl.Spacing
			end := start + tl.PDU
			m := math.Floor(start / c.scan.Interval) // the window that could hold it
			if int(m)%3 != ch-37 || end > m*c.scan.Interval+c.scan.Window {
				continue
			}
			if r.Float64() < c.success {
				return math.Min(end, c.horizon)
			}
		}
	}
	return c.horizon
}

// TestDiscoverySampler checks the whole law against the event-level
// sampler by a Kolmogorov–Smirnov distance within the DKW–Massart bound at
// level 1e-6 plus the law's stated accuracy, fixed seeds; and runs the
// conformance checker (whose sampling checks compare Rand, the package's
// own model sampler, with the grid law).
func TestDiscoverySampler(t *testing.T) {
	for i, c := range discoveryCases() {
		d, err := ble.NewDiscovery(c.adv, c.scan, c.success, c.horizon)
		require.NoError(t, err, c.name)
		tl, err := c.adv.Timeline()
		require.NoError(t, err)
		const n = 200000
		r := rand.New(rand.NewPCG(uint64(i), 31))
		xs := make([]float64, n)
		for k := range xs {
			xs[k] = simulateDiscovery(r, c, tl)
		}
		ks := testref.KSStatistic(xs, d.CDF)
		bound := testref.KSCritical(n, 1e-6) + d.Accuracy().CDFAbs
		t.Logf("%s: %v; KS %.4f (bound %.4f), accuracy %v", c.name, d, ks, bound, d.Accuracy())
		assert.Less(t, ks, bound, c.name)
		require.NoError(t, disttest.Check(d, disttest.WithSeed(uint64(40+i)), disttest.WithSamples(5000)), c.name)
	}
}

// TestDiscoveryNever: with almost every PDU lost (success 1e-9) the law is
// nearly the point mass at the horizon: the undiscovered mass is
// 1 − (expected receptions)·1e-9 to first order.
func TestDiscoveryNever(t *testing.T) {
	adv := ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 31, Interval: 0.1, Currents: ble.ExampleCurrents()}
	d, err := ble.NewDiscovery(adv, ble.Scanner{Window: 2.5e-3, Interval: 2.5e-3}, 1, 2)
	require.NoError(t, err)
	assert.Less(t, d.Undiscovered(), 1.0, "2.5 ms windows hold a 376 µs PDU")
	adv.AdvData = 0
	d, err = ble.NewDiscovery(adv, ble.Scanner{Window: 2.5e-3, Interval: 10.24}, 1e-9, 1)
	require.NoError(t, err)
	assert.InDelta(t, 1, d.Undiscovered(), 1e-8)
	require.NoError(t, disttest.Check(d, disttest.WithSeed(9), disttest.WithSamples(2000)))
}

// TestDiscoveryBadInput: scan parameters outside the specification's ranges
// and bad model settings are errors naming the parameter and its range.
func TestDiscoveryBadInput(t *testing.T) {
	adv := ble.Advertiser{Type: ble.AdvNonconnInd, AdvData: 10, Interval: 0.1, Currents: ble.ExampleCurrents()}
	scan := ble.Scanner{Window: 0.03, Interval: 0.1}
	for _, tc := range []struct {
		name    string
		scan    ble.Scanner
		success float64
		horizon float64
		param   string
		rule    string
	}{
		{"window longer than interval", ble.Scanner{Window: 0.2, Interval: 0.1}, 1, 2, "Scanner.Window", "<= scanInterval"},
		{"interval off grid", ble.Scanner{Window: 0.03, Interval: 0.1001}, 1, 2, "Scanner.Interval", "0.625 ms"},
		{"window below 2.5 ms", ble.Scanner{Window: 1.875e-3, Interval: 0.1}, 1, 2, "Scanner.Window", "2.5 ms … 10.24 s"},
		{"interval above 10.24 s", ble.Scanner{Window: 0.03, Interval: 10.240625}, 1, 2, "Scanner.Interval", "2.5 ms … 10.24 s"},
		{"success 0", scan, 0, 2, "success", "(0, 1]"},
		{"success NaN", scan, math.NaN(), 2, "success", "(0, 1]"},
		{"horizon 0", scan, 1, 0, "horizon", "MaxDiscoveryHorizon"},
		{"horizon too long", scan, 1, 301, "horizon", "MaxDiscoveryHorizon"},
	} {
		_, err := ble.NewDiscovery(adv, tc.scan, tc.success, tc.horizon)
		require.ErrorIs(t, err, ble.ErrParam, tc.name)
		assert.Contains(t, err.Error(), tc.param, tc.name)
		assert.Contains(t, err.Error(), tc.rule, tc.name)
	}
	adv.Interval = 0.01
	_, err := ble.NewDiscovery(adv, scan, 1, 2)
	require.ErrorIs(t, err, ble.ErrParam)
	assert.Contains(t, err.Error(), "advInterval")
	var zero ble.Discovery
	assert.True(t, math.IsNaN(zero.CDF(1)) && math.IsNaN(zero.Mean()))
}

// TestDiscoveryWithin: a tolerance tighter than DiscoveryTolerance refines
// the grid until the stated error meets it, and the stated error still
// bounds the true one against the exact first-event integral; at
// DiscoveryTolerance it is NewDiscovery, bit for bit; a tolerance no grid
// allowed can meet, and one outside (0, 1), are errors naming tol.
func TestDiscoveryWithin(t *testing.T) {
	c := discoveryCases()[0]
	tl, err := c.adv.Timeline()
	require.NoError(t, err)
	d, err := ble.NewDiscoveryWithin(c.adv, c.scan, c.success, c.horizon, 7e-5)
	require.NoError(t, err)
	acc := d.Accuracy().CDFAbs
	assert.LessOrEqual(t, acc, 7e-5)
	assert.Less(t, ble.DiscoveryCell(d), ble.AdvIntervalStep/16, "refined below the first grid")
	worst := 0.0
	for i := 1; i <= 200; i++ {
		x := c.adv.Interval * float64(i) / 200
		worst = math.Max(worst, math.Abs(d.CDF(x)-firstEventCDF(c, tl, x)))
	}
	t.Logf("tol 7e-5: %.4g µs cells, first-event CDF error %.3g, stated %.3g", ble.DiscoveryCell(d)*1e6, worst, acc)
	assert.LessOrEqual(t, worst, acc)

	def, err := ble.NewDiscovery(c.adv, c.scan, c.success, c.horizon)
	require.NoError(t, err)
	at, err := ble.NewDiscoveryWithin(c.adv, c.scan, c.success, c.horizon, ble.DiscoveryTolerance)
	require.NoError(t, err)
	assert.Equal(t, def.Accuracy(), at.Accuracy())
	for _, x := range []float64{0.05, 0.5, 1, 2.5} {
		assert.Equal(t, def.CDF(x), at.CDF(x))
	}

	for _, tol := range []float64{1e-9, 0, 1, math.NaN(), -1} {
		_, err := ble.NewDiscoveryWithin(c.adv, c.scan, c.success, 0.3, tol)
		require.ErrorIs(t, err, ble.ErrParam, "tol %g", tol)
		assert.Contains(t, err.Error(), "tol", "tol %g", tol)
	}
	_, err = ble.NewDiscoveryWithin(c.adv, c.scan, c.success, 0.3, 1e-9)
	assert.ErrorContains(t, err, "cannot be met")
}
