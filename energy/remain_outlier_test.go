package energy_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/backlog"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// outlierFleet is the validation fleet (invented) with its two traffic
// profiles as two settings of the model, each a share of the nodes: a
// cycle every 15 minutes whose active energy has the profile's daily
// mean and variance (Poisson counts of the kinds' mean costs: Σ λ_k·e_k²
// a day) over 96.
func outlierFleet(t testing.TB) valFleet {
	t.Helper()
	f := newValFleet(t, true)
	floorP := f.gen.FloorPower
	var settings []energy.NodeSetting
	for _, p := range f.gen.Profiles {
		mean, vr := 0.0, 0.0
		for k, n := range p.PerDay {
			e := f.gen.Kinds[k].Energy
			mean += n * e
			vr += n * e * e // counted energy: counts × mean costs
		}
		mu, k2 := mean/96, vr/96
		// energy = (1 mW + floor) × duration − floor × duration: the
		// duration's law (s) carries the cycle's mean and variance; a small
		// power keeps the cell's voltage under load on its curve.
		const p0 = 1e-3
		d := dist.MustGamma(mu*mu/k2, p0*mu/k2)
		st, err := energy.NewPowerState("report", dist.MustPointMass(p0+floorP), d)
		require.NoError(t, err)
		cyc, err := energy.NewCycle(st, dist.MustPointMass(15*energy.Minute), floorP)
		require.NoError(t, err)
		settings = append(settings, energy.NodeSetting{Weight: p.Weight, Cycle: cyc})
	}
	f.spec.Settings = settings
	return f
}

// outlierModel returns the outlier fleet and its model, the generator's
// end depth set to the model's.
func outlierModel(t testing.TB) (valFleet, energy.DeviceModel) {
	t.Helper()
	f := outlierFleet(t)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	require.NoError(t, err)
	f.gen.EndDepth = m.EndDepth()
	return f, m
}

// TestOutlierFalseAlarms: devices drawn from the model itself
// (internal/backlog, an independent generator of the same fleet) at ages
// up to three years, daily readings: the number flagged at level 0.05 by
// each test must not exceed the binomial acceptance bound at 1e-6 of n
// devices at rate 0.05 (testref.BinomialInterval, exact binomial tails).
// TestOutlierFlagsAnomalies shows that the tests are not always 1.
func TestOutlierFalseAlarms(t *testing.T) {
	f, m := outlierModel(t)
	r := rand.New(rand.NewPCG(21, 15))
	const level = 0.05
	n, act, rd, both := 0, 0, 0, 0
	for range 500 {
		dev, err := f.gen.Draw(r)
		require.NoError(t, err)
		age := (0.1 + 2.9*r.Float64()) * energy.Year
		tl, death := feedLog(t, f, m, r, dev, 0, age, -1, 1)
		if death <= age {
			continue
		}
		o, err := m.Outlier(tl, age)
		require.NoError(t, err)
		n++
		if o.Activity <= level {
			act++
		}
		if o.Reading <= level {
			rd++
		}
		if o.Flag(level) {
			both++
		}
	}
	lo, hi := testref.BinomialInterval(n, level, 1e-6)
	t.Logf("%d devices, level %g: %d flagged by activity, %d by the newest reading, %d by both combined; binomial 1e-6 bounds [%d, %d]", n, level, act, rd, both, lo, hi)
	require.Greater(t, n, 300)
	require.LessOrEqual(t, act, hi)
	require.LessOrEqual(t, rd, hi)
	require.LessOrEqual(t, both, hi)
}

// TestOutlierFlagsAnomalies plants two anomalies in devices of the same
// fleet: a retransmission loop (every count tripled over the last 30 days
// of a year) and a board that draws ten times the median floor from the
// start (a floor factor the group's log-sd of 0.5 puts 4.6 standard
// deviations out). Both must be flagged at 1e-4 by the test that sees
// them, and an ordinary device of the same draw must not be.
func TestOutlierFlagsAnomalies(t *testing.T) {
	f, m := outlierModel(t)
	r := rand.New(rand.NewPCG(22, 15))
	dev := backlog.Device{C: 1, A: 1, F: 1, Profile: 0}
	const age = 365 * energy.Day

	tl, _ := feedLog(t, f, m, r, dev, 0, age, -1, 1)
	plain, err := m.Outlier(tl, age)
	require.NoError(t, err)

	tl, _ = feedLog(t, f, m, r, dev, 0, age, 335, 3)
	loop, err := m.Outlier(tl, age)
	require.NoError(t, err)

	hot := dev
	hot.F = 10
	const hotAge = 700 * energy.Day
	tl, death := feedLog(t, f, m, r, hot, 0, hotAge, -1, 1)
	require.Greater(t, death, hotAge)
	hotTest, err := m.Outlier(tl, hotAge)
	require.NoError(t, err)

	t.Logf("ordinary: %+v; retransmission loop: %+v; hot board: %+v", plain, loop, hotTest)
	require.False(t, plain.Flag(1e-4))
	require.Less(t, loop.Activity, 1e-4)
	require.True(t, loop.Flag(1e-4))
	require.Less(t, hotTest.Reading, 1e-4)
	require.True(t, hotTest.Flag(1e-4))
	require.InDelta(t, hotTest.P, 2*normSurvRef(hotTest.Z), 1e-12+1e-9*hotTest.P)
}

// normSurvRef is Φ̄ from gonum's standard normal (distuv.UnitNormal.Survival
// is 1 − CDF, fine away from the far tail; here via erfc).
func normSurvRef(z float64) float64 { return 0.5 * math.Erfc(z/math.Sqrt2) }
