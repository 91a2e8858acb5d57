package energy_test

import (
	"errors"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestHorizonDeterministic: a deterministic 15-minute cycle spends exactly
// 96 cycle energies a day and 35 064 a Julian year (hand arithmetic).
func TestHorizonDeterministic(t *testing.T) {
	st := energy.MustFixedState("tx", 40*energy.MilliAmp, 3.3, 0.1)
	c := energy.MustCycle(st, dist.MustPointMass(900), 2*energy.MicroAmp*3.3)
	e := c.MeanEnergy()
	assert.InDelta(t, 0.04*3.3*0.1+2e-6*3.3*899.9, e, 1e-15)
	d, err := c.Day()
	require.NoError(t, err)
	assert.EqualValues(t, 96, d.Cycles)
	assert.InDelta(t, 96*e, d.Energy.Quantile(0.5), 1e-12)
	y, err := c.Year()
	require.NoError(t, err)
	assert.EqualValues(t, 35064, y.Cycles)
	assert.InDelta(t, 35064*e, y.Energy.Mean(), 1e-9)
	_, err = c.Cycles(0)
	assert.True(t, errors.Is(err, energy.ErrParam))
	_, err = c.Over(-1)
	assert.True(t, errors.Is(err, energy.ErrParam))
}

// TestAverageCurrentCoverage: the 95 % interval of the average current over
// a day of demoCycle covers the day-averages of simulated days (summed from
// Cycle.Rand) with a frequency inside the binomial acceptance interval at
// level 1e-6 (testref.BinomialInterval).
func TestAverageCurrentCoverage(t *testing.T) {
	c := demoCycle(t, dist.MustPointMass(900))
	ci, err := c.AverageCurrent(energy.Day, volts, 0.95)
	require.NoError(t, err)
	assert.InDelta(t, c.MeanPower()/volts, ci.Mean, 1e-18)
	require.Less(t, ci.Lo, ci.Mean)
	require.Greater(t, ci.Hi, ci.Mean)
	r := rand.New(rand.NewPCG(5, 6))
	const n = 4000
	in := 0
	for range n {
		s := 0.0
		for range 96 {
			s += c.Rand(r)
		}
		i := s / (volts * energy.Day)
		if i >= ci.Lo && i <= ci.Hi {
			in++
		}
	}
	lo, hi := testref.BinomialInterval(n, 0.95, 1e-6)
	assert.GreaterOrEqual(t, in, lo)
	assert.LessOrEqual(t, in, hi)
	_, err = c.AverageCurrent(energy.Day, 0, 0.95)
	assert.True(t, errors.Is(err, energy.ErrParam))
	_, err = c.AverageCurrent(energy.Day, volts, 1)
	assert.True(t, errors.Is(err, energy.ErrParam))
}

// TestPulseCheck: a 120 mA transmit pulse exceeds the example bobbin cell's
// 100 mA rating and both example coin-cell figures; a 10 mA node passes the
// bobbin cell.
func TestPulseCheck(t *testing.T) {
	hi := energy.MustFixedState("tx", 120*energy.MilliAmp, 3.6, 0.05)
	lo := energy.MustFixedState("rx", 10*energy.MilliAmp, 3.6, 0.05)
	c := energy.MustCycle(energy.MustSequence(hi, lo), dist.MustPointMass(600), 0)
	er := energy.MustBattery(energy.TypicalER14505())
	w := er.PulseCheck(c)
	require.Len(t, w, 1)
	assert.Equal(t, "tx", w[0].State)
	assert.InDelta(t, 0.12, w[0].Peak, 1e-15)
	assert.Contains(t, w[0].String(), "120 mA")
	cr := energy.MustBattery(energy.TypicalCR2032())
	assert.Len(t, cr.PulseCheck(c), 1, "10 mA is within the coin cell's 15 mA")
	ok := energy.MustCycle(lo, dist.MustPointMass(600), 0)
	assert.Empty(t, er.PulseCheck(ok))
	// A power-described state is converted at the nominal voltage.
	p, err := energy.NewPowerState("pa", dist.MustPointMass(0.5), dist.MustPointMass(0.01))
	require.NoError(t, err)
	w = er.PulseCheck(energy.MustCycle(p, dist.MustPointMass(600), 0))
	require.Len(t, w, 1)
	assert.InDelta(t, 0.5/3.6, w[0].Peak, 1e-15)
	// A Lifetime keeps only the stage and the cell's two figures: its
	// warnings are the battery's check of the cycle.
	for _, b := range []energy.Battery{er, cr} {
		for _, cy := range []energy.Cycle{c, ok} {
			assert.Equal(t, b.PulseCheck(cy), energy.MustLifetime(cy, b).PulseWarnings())
		}
	}
}

// TestHorizonDiscrete: day and year laws of a purely discrete cycle (six
// energies, far too many k-fold atoms to list): exact moments, the
// conformance checker on the day law, and the day law against summed
// simulated days (KS at level 1e-6 on 100 sample quantiles, plus the
// reported bound).
func TestHorizonDiscrete(t *testing.T) {
	c := sixEnergyCycle(t)
	d, err := c.Day()
	require.NoError(t, err)
	assert.EqualValues(t, 144, d.Cycles)
	assert.InDelta(t, 144*c.MeanEnergy(), d.Energy.Mean(), 1e-12*d.Energy.Mean())
	assert.InDelta(t, 144*c.EnergyVariance(), d.Energy.Variance(), 1e-9*d.Energy.Variance())
	acc := d.Energy.(dist.Estimated).Accuracy()
	r := rand.New(rand.NewPCG(61, 62))
	const n = 5000
	xs := make([]float64, n)
	for i := range xs {
		for range 144 {
			xs[i] += c.Rand(r)
		}
	}
	assert.Less(t, gridKS(xs, d.Energy.CDF, 100), testref.KSCritical(n, 1e-6)+acc.CDFAbs)
	y, err := c.Year()
	require.NoError(t, err)
	assert.Less(t, y.Energy.(dist.Estimated).Accuracy().CDFAbs, 1e-5)
	ci, err := c.AverageCurrent(energy.Year, 3.6, 0.95)
	require.NoError(t, err)
	assert.Less(t, ci.Lo, ci.Mean)
	assert.Greater(t, ci.Hi, ci.Mean)
	require.NoError(t, disttest.Check(d.Energy, disttest.WithSeed(4)))
}
