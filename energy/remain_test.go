package energy_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// feedDays feeds a tally 'days' days of the first profile of the
// validation fleet (96 fast uplinks and 4 downlinks a day), with a reading
// of volts every day when volts > 0.
func feedDays(t testing.TB, m energy.DeviceModel, tl energy.Tally, from float64, days int, volts float64) energy.Tally {
	t.Helper()
	var err error
	for d := range days {
		at := from + float64(d+1)*energy.Day
		tl, err = m.Observe(tl, energy.Event{Time: at, Kind: 0, Count: 96})
		require.NoError(t, err)
		tl, err = m.Observe(tl, energy.Event{Time: at, Kind: 2, Count: 4})
		require.NoError(t, err)
		if volts > 0 {
			tl, err = m.Read(tl, energy.Reading{Time: at, Low: volts - 0.005, High: volts + 0.005, Noise: 0.02})
			require.NoError(t, err)
		}
	}
	return tl
}

// TestPosteriorLawConformance runs the law contract checker on the laws of
// a posterior with and without informative readings.
func TestPosteriorLawConformance(t *testing.T) {
	f := newValFleet(t, true)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	require.NoError(t, err)
	tl, err := m.NewTally(0)
	require.NoError(t, err)
	for _, tc := range []struct {
		name  string
		days  int
		volts float64
	}{{"a year of counts", 365, 0}, {"deep in the knee", 1500, 3.50}} {
		t.Run(tc.name, func(t *testing.T) {
			tt := feedDays(t, m, tl, 0, tc.days, tc.volts)
			p, err := m.Posterior(tt, tt.Newest())
			require.NoError(t, err)
			for _, l := range []dist.Law{p.Remaining(), p.Spent(), p.Capacity(), p.FloorCurrent()} {
				require.NoError(t, disttest.Check(l), "%v", l)
			}
		})
	}
}

// TestPosteriorStatedError checks the stated CDF error of the remaining
// life against an oracle: the same model on 2^16 nodes (whose own stated
// error is far smaller), at the law's 5 %, 25 %, 50 %, 75 % and 95 %
// points, for 54 devices: ages of 300 to 1600 days, counts only or four
// daily readings from the plateau (3.66 V) to the end of the knee
// (3.30 V), many of them improbable under the model (a knee voltage at
// 300 days), where the laws must say that they are not resolved; and six
// border devices found by a finer sweep (ages 1000 to 1700 days, readings
// 5 mV apart), where a proposal fitted to the prior's few effective nodes
// missed the upper tail (1600 days at 3.62 V: 95 % point 343 days against
// the oracle's 425, measured error 0.187 against a stated 0.179) or the
// stages left few effective without saying so (1650 days at 3.665 V:
// measured 0.89 against a stated 0.41). The stated error must exceed the
// measured one by the oracle's own stated error. The end-of-knee devices
// (3.30 V at 800 to 1600 days, 3.35 V at 1000 days: readings deeper than
// the cell's end, where being alive bounds the depth) must be resolved,
// stating less than 0.2: their ridge stage reaches the voltage at the
// cell's end (they had stated 1 on fewer than 64 effective nodes while
// measuring 0.07 to 0.95).
func TestPosteriorStatedError(t *testing.T) {
	f := newValFleet(t, true)
	var models [2]energy.DeviceModel
	for i, nodes := range []int{256, 1 << 16} {
		m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{Nodes: nodes})
		require.NoError(t, err)
		models[i] = m
	}
	type device struct {
		days  int
		volts float64
	}
	var devices []device
	for _, days := range []int{300, 800, 1200, 1400, 1500, 1600} {
		for _, volts := range []float64{0, 3.66, 3.62, 3.58, 3.54, 3.50, 3.45, 3.40, 3.30} {
			devices = append(devices, device{days, volts})
		}
	}
	devices = append(devices, device{1600, 3.625}, device{1650, 3.635}, device{1650, 3.645},
		device{1650, 3.665}, device{1700, 3.665}, device{1000, 3.35})
	cases, skipped, knee, ends := 0, 0, 0.0, 0
	for _, dv := range devices {
		days, volts := dv.days, dv.volts
		{
			var laws [2]energy.PosteriorLaw
			for i, m := range models {
				tl, err := m.NewTally(0)
				require.NoError(t, err)
				tl = feedDays(t, m, tl, 0, days, volts)
				p, err := m.Posterior(tl, tl.Newest())
				require.NoError(t, err)
				laws[i] = p.Remaining()
			}
			stated := laws[0].Accuracy().CDFAbs
			oracleErr := laws[1].Accuracy().CDFAbs
			worst := 0.0
			for _, q := range []float64{0.05, 0.25, 0.5, 0.75, 0.95} {
				x := laws[0].Quantile(q)
				worst = math.Max(worst, math.Abs(laws[0].CDF(x)-laws[1].CDF(x)))
			}
			if days == 1500 && volts == 3.50 {
				knee = stated
				t.Logf("knee readings (1500 days, 3.50 V): stated %.3g, measured %.3g (oracle's own stated %.3g)", stated, worst, oracleErr)
			}
			if days == 1500 && (volts == 0 || volts == 3.62) {
				t.Logf("%d days, %.2f V: stated %.3g, measured %.3g", days, volts, stated, worst)
			}
			if oracleErr > 0.05 {
				// Readings so improbable that 2^16 nodes do not resolve
				// them either: no oracle.
				t.Logf("%d days, %.3f V: no oracle (its stated error %.3g); stated %.3g", days, volts, oracleErr, stated)
				skipped++
				continue
			}
			if days == 1600 && volts == 3.62 {
				t.Logf("border (1600 days, 3.62 V): stated %.3g, measured %.3g; 95 %% point %.0f d against the oracle's %.0f d",
					stated, worst, laws[0].Quantile(0.95)/energy.Day, laws[1].Quantile(0.95)/energy.Day)
			}
			require.LessOrEqual(t, worst+oracleErr, stated, "%d days, %.3f V", days, volts)
			cases++
			if (volts == 3.30 && days >= 800) || (volts == 3.35 && days == 1000) {
				t.Logf("end of the knee (%d days, %.2f V): stated %.3g, measured %.3g", days, volts, stated, worst)
				require.Less(t, stated, 0.2, "%d days, %.3f V", days, volts)
				ends++
			}
		}
	}
	require.Equal(t, 60, cases+skipped)
	require.Equal(t, 6, ends)
	require.LessOrEqual(t, skipped, 6)
	require.Less(t, knee, 0.2) // was 0.38 before the heavier-tailed stages
}

// TestDeviceBadInput checks the documented behaviour on bad input: each
// is an error wrapping ErrParam and leaves the tally as it was.
func TestDeviceBadInput(t *testing.T) {
	f := newValFleet(t, true)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	require.NoError(t, err)
	tl, err := m.NewTally(1000)
	require.NoError(t, err)
	tl, err = m.Observe(tl, energy.Event{Time: 1000 + energy.Day, Kind: 0, Count: 10})
	require.NoError(t, err)
	for _, tc := range []struct {
		name string
		do   func() (energy.Tally, error)
	}{
		{"kind out of range", func() (energy.Tally, error) { return m.Observe(tl, energy.Event{Time: 2e5, Kind: 3}) }},
		{"negative count", func() (energy.Tally, error) { return m.Observe(tl, energy.Event{Time: 2e5, Kind: 0, Count: -1}) }},
		{"NaN time", func() (energy.Tally, error) { return m.Observe(tl, energy.Event{Time: math.NaN()}) }},
		{"before installation", func() (energy.Tally, error) { return m.Observe(tl, energy.Event{Time: 999}) }},
		{"time going backwards by more than MaxLateness", func() (energy.Tally, error) {
			return m.Observe(tl, energy.Event{Time: 1000 + energy.Day - 2*energy.Hour})
		}},
		{"reading with Low >= High", func() (energy.Tally, error) {
			return m.Read(tl, energy.Reading{Time: 2e5, Low: 3.6, High: 3.6, Noise: 0.01})
		}},
		{"reading above the scale", func() (energy.Tally, error) {
			return m.Read(tl, energy.Reading{Time: 2e5, Low: 360, High: 361, Noise: 0.01})
		}},
		{"reading without noise", func() (energy.Tally, error) {
			return m.Read(tl, energy.Reading{Time: 2e5, Low: 3.6, High: 3.61, Noise: 0})
		}},
		{"reading open at both ends", func() (energy.Tally, error) {
			return m.Read(tl, energy.Reading{Time: 2e5, Low: math.Inf(-1), High: math.Inf(1), Noise: 0.01})
		}},
		{"zero tally", func() (energy.Tally, error) { return m.Observe(energy.Tally{}, energy.Event{Time: 1}) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := tc.do()
			require.ErrorIs(t, err, energy.ErrParam)
			var pe *energy.ParamError
			require.True(t, errors.As(err, &pe))
			require.Equal(t, tl.Events(), got.Events()+boolInt(tc.name == "zero tally")*tl.Events())
		})
	}
	// A late event within MaxLateness is counted at the newest time.
	late, err := m.Observe(tl, energy.Event{Time: 1000 + energy.Day - 10, Kind: 0})
	require.NoError(t, err)
	require.Equal(t, tl.Events()+1, late.Events())
	require.Equal(t, tl.Newest(), late.Newest())
	// Posterior before the newest event is refused.
	_, err = m.Posterior(tl, 1000)
	require.ErrorIs(t, err, energy.ErrParam)
}

func boolInt(b bool) int64 {
	if b {
		return 1
	}
	return 0
}

// TestDeviceNoUplinksAndExternal: a device with no events yet gets the
// prior going forward at the planned power, so its remaining life at
// installation is the fresh-cell lifetime (NodeLifetime, an independent
// computation: the median within the two laws' stated errors); a device
// flagged as on external power is refused until the flag is cleared.
func TestDeviceNoUplinksAndExternal(t *testing.T) {
	f := newValFleet(t, false)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{Nodes: 4096})
	require.NoError(t, err)
	tl, err := m.NewTally(0)
	require.NoError(t, err)
	p, err := m.Posterior(tl, 0)
	require.NoError(t, err)
	rem := p.Remaining()
	fresh, err := energy.NewNodeLifetime(f.spec, energy.Environment{})
	require.NoError(t, err)
	for _, q := range []float64{0.1, 0.5, 0.9} {
		x := fresh.Quantile(q)
		tol := rem.Accuracy().CDFAbs + fresh.Accuracy().CDFAbs
		require.InDelta(t, q, rem.CDF(x), tol, "q=%g", q)
	}
	ext, err := m.SetExternal(tl, 10, true)
	require.NoError(t, err)
	_, err = m.Posterior(ext, 10)
	require.ErrorIs(t, err, energy.ErrParam)
	back, err := m.SetExternal(ext, 20, false)
	require.NoError(t, err)
	_, err = m.Posterior(back, 20)
	require.NoError(t, err)
}

// TestPlanService: devices with exponential remaining lives of one rate
// are flat within h with p = 1 − e^{−rate·h} each, so the number flat is
// Binomial(n, p) (exact tails from testref.BinomialTails); the order is
// by rate when the rates differ.
func TestPlanService(t *testing.T) {
	const n, rate, h = 40, 1 / (2 * energy.Year), 0.5 * energy.Year
	laws := make([]dist.Law, n)
	for i := range laws {
		laws[i] = dist.MustExponential(rate)
	}
	plan, err := energy.PlanService(laws, h)
	require.NoError(t, err)
	p := -math.Expm1(-rate * h)
	require.InDelta(t, n*p, plan.Expected, 1e-9)
	for _, k := range []int{3, 8, 10, 14, 20} {
		atMost, atLeast := testref.BinomialTails(n, k, p)
		require.InDelta(t, atMost, plan.Flat.CDF(float64(k)), 1e-12*math.Max(atMost, 1e-3), "k=%d", k)
		require.InDelta(t, atLeast, plan.Flat.Survival(float64(k)-0.5), 1e-12*math.Max(atLeast, 1e-3), "k=%d", k)
	}
	mixed := []dist.Law{dist.MustExponential(1 / energy.Year), dist.MustExponential(3 / energy.Year), dist.MustExponential(2 / energy.Year)}
	plan, err = energy.PlanService(mixed, h)
	require.NoError(t, err)
	require.Equal(t, []int{1, 2, 0}, []int{plan.Order[0].Index, plan.Order[1].Index, plan.Order[2].Index})
	for _, bad := range []struct {
		laws []dist.Law
		h    float64
	}{{nil, h}, {mixed, -1}, {mixed, math.NaN()}, {[]dist.Law{nil}, h}} {
		_, err := energy.PlanService(bad.laws, bad.h)
		require.ErrorIs(t, err, energy.ErrParam)
	}
}
