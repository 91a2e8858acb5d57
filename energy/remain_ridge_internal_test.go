package energy

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/quad"
)

// TestStudentT4Quantile checks the closed-form quantile of Student's t
// with 4 degrees of freedom against gonum's distuv.StudentsT (regularised
// incomplete beta inversion), and its symmetry.
func TestStudentT4Quantile(t *testing.T) {
	ref := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: 4}
	for _, p := range []float64{1e-12, 1e-6, 0.001, 0.01, 0.05, 0.2, 0.4, 0.5, 0.6, 0.8, 0.95, 0.99, 0.999} {
		got, want := studentT4Quantile(p), ref.Quantile(p)
		require.InDelta(t, want, got, 1e-9*math.Max(1, math.Abs(want)), "p = %g", p)
	}
}

// TestCellMass checks the log-linear cell's mass against adaptive
// quadrature (internal/quad) of its density, and cellPoint as the
// inverse of the partial mass (the closed form on [0, t]) with the
// density there (the closed form).
func TestCellMass(t *testing.T) {
	for _, tc := range []struct{ h0, h1, h float64 }{
		{0, 0, 0.01}, {-1, 0, 0.005}, {0, -30, 0.002}, {-700, -690, 0.01}, {-5, -5 + 1e-12, 0.3}, {-2, -1, 1}, {-60, -2, 0.01}, {-760, -2, 0.01},
	} {
		got := cellMass(tc.h0, tc.h1, tc.h)
		if tc.h0 > -745 {
			want, err := quad.Adaptive(func(s float64) float64 {
				return math.Exp(tc.h0 + (tc.h1-tc.h0)*s/tc.h)
			}, 0, tc.h, quad.Options{AbsTol: 0, RelTol: 1e-13})
			require.NoError(t, err)
			require.InDelta(t, 1, got/want.Value, 1e-10, "%+v", tc)
		} else {
			// e^h0 underflows: the mass is e^h1·h/(h1 − h0) to double
			// precision (closed form).
			require.InDelta(t, 1, got/(math.Exp(tc.h1)*tc.h/(tc.h1-tc.h0)), 1e-14, "%+v", tc)
		}
		for _, frac := range []float64{0, 0.1, 0.5, 0.9, 1} {
			r := frac * got
			x, dens := cellPoint(tc.h0, tc.h1, math.Exp(tc.h0), math.Exp(tc.h1), tc.h, r, got)
			require.GreaterOrEqual(t, x, 0.0)
			require.LessOrEqual(t, x, tc.h)
			hx := tc.h0 + (tc.h1-tc.h0)*x/tc.h
			part := cellMass(tc.h0, hx, x)
			require.InDelta(t, r, part, 1e-9*got, "%+v frac %g", tc, frac)
			// the density within 1e-9 of itself, or 1e-15 of the cell's
			// top where it underflows (rounding of e1 − b·r')
			top := math.Exp(math.Max(tc.h0, tc.h1))
			require.InDelta(t, math.Exp(hx), dens, 1e-9*math.Exp(hx)+1e-15*top, "%+v frac %g", tc, frac)
		}
	}
	require.Zero(t, cellMass(math.Inf(-1), 0, 1))
	// A mass asked past the cell's by rounding gives the cell's far end
	// (closed form), never NaN.
	for _, tc := range []struct{ h0, h1 float64 }{{0, -40}, {-40, 0}} {
		cm := cellMass(tc.h0, tc.h1, 0.01)
		x, dens := cellPoint(tc.h0, tc.h1, math.Exp(tc.h0), math.Exp(tc.h1), 0.01, cm*(1+1e-15), cm)
		require.Equal(t, 0.01, x, "%+v", tc)
		require.InDelta(t, math.Exp(tc.h1), dens, 1e-15, "%+v", tc)
	}
}

// ridgeSpec is the validation fleet's group (remain_validation_test.go)
// for the internal tests: invented figures, demo only.
func ridgeSpec(t *testing.T) (NodeSpec, []EventCost) {
	t.Helper()
	const v = 3.6
	bs := TypicalER14505()
	bs.Charge = 2400 * MilliAmpHour
	bs.NominalVoltage = v
	bs.UsableFraction = 0.9
	bs.SelfDischargePerYear = 0.01
	bs.TemperatureDerating = 0
	bs.PulseCurrent = 0
	bat, err := NewBattery(bs)
	require.NoError(t, err)
	floorP := 30 * MicroWatt
	perReport := (0.6*96*0.15 + 0.4*48*0.35 + 0.6*4*0.005 + 0.4*2*0.005) / 96
	st, err := NewFixedState("report", perReport/(v*2)+floorP/v, v, 2)
	require.NoError(t, err)
	cyc, err := NewCycle(st, dist.MustPointMass(15*Minute), floorP)
	require.NoError(t, err)
	curve := TypicalBobbinCurve()
	spec := NodeSpec{Name: "validation", Settings: []NodeSetting{{Weight: 1, Cycle: cyc}}, Battery: bat,
		Spread: NodeSpread{Capacity: 0.03, Active: 0.05, Floor: 0.5}, Voltage: &curve, Brownout: 3.0}
	costs := []EventCost{
		{Name: "fast", Energy: dist.MustNormal(0.15, 0.01)},
		{Name: "slow", Energy: dist.MustNormal(0.35, 0.02)},
		{Name: "down", Energy: dist.MustNormal(0.005, 0.001)},
	}
	return spec, costs
}

// dailyTally is a device of the ridge tests' model: 96 uplinks a day for
// days days, with a supply reading on each of the last len(volts) days
// (volts[k] on day days − len(volts) + 1 + k), binned to ±5 mV with a
// noise of 0.02 V.
func dailyTally(t *testing.T, m DeviceModel, days int, volts []float64) Tally {
	t.Helper()
	tl, err := m.NewTally(0)
	require.NoError(t, err)
	first := days - len(volts) + 1
	for d := 1; d <= days; d++ {
		at := float64(d) * Day
		tl, err = m.Observe(tl, Event{Time: at, Kind: 0, Count: 96})
		require.NoError(t, err)
		if d >= first {
			v := volts[d-first]
			tl, err = m.Read(tl, Reading{Time: at, Low: v - 0.005, High: v + 0.005, Noise: 0.02})
			require.NoError(t, err)
		}
	}
	return tl
}

// TestRidgeStage: readings in the knee (3.55 and 3.50 V, four daily
// readings at 400 to 1400 days) leave few of the prior's nodes effective;
// the ridge stage must then resolve the posterior on the model's M nodes
// (at least M/4 effective, no stage of stageFactor·M points) except at
// 3.50 V after 400 days (a device a day or two from flat, where the alive
// term cuts the shell: the adaptive stages follow), and the remaining
// life's median must agree with the same model on 2^14 nodes within the
// stated CDF errors of both (the oracle's is small).
func TestRidgeStage(t *testing.T) {
	spec, costs := ridgeSpec(t)
	var ms [2]DeviceModel
	for i, n := range []int{256, 1 << 14} {
		m, err := NewDeviceModel(spec, Environment{}, costs, DeviceOptions{Nodes: n})
		require.NoError(t, err)
		ms[i] = m
	}
	for _, days := range []int{400, 900, 1400} {
		for _, volts := range []float64{3.55, 3.50} {
			var laws [2]PosteriorLaw
			var pds [2]*postData
			for i, m := range ms {
				tl := dailyTally(t, m, days, []float64{volts, volts, volts, volts})
				p, err := m.Posterior(tl, tl.Newest())
				require.NoError(t, err)
				pds[i], laws[i] = p.p, p.Remaining()
			}
			pd := pds[0]
			t.Logf("%d days, %.2f V: %d nodes, %.0f effective, %d stages; median %.1f d vs %.1f d on 2^14 nodes",
				days, volts, pd.nodes, pd.ess, pd.stages, laws[0].Quantile(0.5)/Day, laws[1].Quantile(0.5)/Day)
			if days != 400 || volts != 3.50 {
				require.Equal(t, 256, pd.nodes, "%d days, %.2f V", days, volts)
				require.GreaterOrEqual(t, pd.ess, 64.0, "%d days, %.2f V", days, volts)
			}
			x := laws[0].Quantile(0.5)
			require.InDelta(t, laws[1].CDF(x), 0.5, laws[0].Accuracy().CDFAbs+laws[1].Accuracy().CDFAbs, "%d days, %.2f V", days, volts)
			require.Less(t, laws[1].Accuracy().CDFAbs, 0.05)
		}
	}
}

// TestRidgeStageFallback: the ridge stage declines (and the adaptive
// stages serve) where its inverse of the loaded curve does not exist (a
// curve that rises again in the knee) or no reading has a closed bin (the
// reported range's ends); the posterior is then still built.
func TestRidgeStageFallback(t *testing.T) {
	spec, costs := ridgeSpec(t)
	bumpy := TypicalBobbinCurve()
	bumpy.OpenCircuit = append([]float64(nil), bumpy.OpenCircuit...)
	bumpy.OpenCircuit[4] = 3.61 // above the 3.60 at depth 0.8: not decreasing
	for _, tc := range []struct {
		name   string
		curve  VoltageCurve
		lo, hi float64
	}{
		{"curve not decreasing", bumpy, 3.495, 3.505},
		{"open bins only", TypicalBobbinCurve(), math.Inf(-1), 3.5},
	} {
		sp := spec
		c := tc.curve
		sp.Voltage = &c
		m, err := NewDeviceModel(sp, Environment{}, costs, DeviceOptions{})
		require.NoError(t, err, tc.name)
		tl, err := m.NewTally(0)
		require.NoError(t, err)
		for d := 1; d <= 900; d++ {
			at := float64(d) * Day
			tl, err = m.Observe(tl, Event{Time: at, Kind: 0, Count: 96})
			require.NoError(t, err)
			if d > 896 {
				tl, err = m.Read(tl, Reading{Time: at, Low: tc.lo, High: tc.hi, Noise: 0.02})
				require.NoError(t, err)
			}
		}
		ev := &evidence{}
		m.d.initEvidence(ev, &tl, tl.newest-tl.install)
		_, _, _, _, _, _, ok := ev.ridgeStage(len(m.d.c), nil, nil)
		require.False(t, ok, tc.name)
		p, err := m.Posterior(tl, tl.Newest())
		require.NoError(t, err, tc.name)
		med := p.Remaining().Quantile(0.5)
		require.False(t, math.IsNaN(med), tc.name)
		t.Logf("%s: %d nodes, %.0f effective, median %.1f d", tc.name, p.p.nodes, p.p.ess, med/Day)
	}
}
