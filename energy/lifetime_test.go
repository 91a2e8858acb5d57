package energy_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// poissonTails returns P(Poisson(m) >= k) and P(Poisson(m) < k), each by
// summing the probability mass function term by term over its own side, so
// that both tails keep their relative accuracy; independent of any
// incomplete gamma function. Each term is computed in the deviance form of
// Loader (2000), "Fast and accurate computation of binomial probabilities":
//
//	log p_j = −(j·log(j/m) + m − j) − ½·log(2πj) − δ(j)
//
// with the Stirling series δ(j) = 1/(12j) − 1/(360j³) + 1/(1260j⁵) − 1/(1680j⁷)
// (Abramowitz & Stegun 6.1.41), whose terms stay small, so a term near the
// mode of Poisson(10^6) keeps about 1e-14 relative accuracy (the plain
// j·log m − m − lgamma(j+1) loses 1e-9 to cancellation).
func poissonTails(m float64, k int64) (atLeast, fewer float64) {
	logp := func(j float64) float64 {
		if j < 20 {
			lg, _ := math.Lgamma(j + 1)
			return j*math.Log(m) - m - lg
		}
		x := (j - m) / m
		dev := j*math.Log1p(x) - (j - m) // j·log(j/m) − (j − m)
		j2 := j * j
		delta := 1/(12*j) - 1/(360*j*j2) + 1/(1260*j*j2*j2) - 1/(1680*j*j2*j2*j2)
		return -dev - 0.5*math.Log(2*math.Pi*j) - delta
	}
	span := 60*math.Sqrt(m) + 60
	for j := float64(k); j <= m+span || j <= float64(k)+60; j++ {
		atLeast += math.Exp(logp(j))
	}
	for j := float64(k) - 1; j >= 0 && (j >= m-span || j >= float64(k)-60); j-- {
		fewer += math.Exp(logp(j))
	}
	return atLeast, fewer
}

// exponentialLifetime is a node whose cycle energy is exponential with mean
// 1/λ J (a 1 W state lasting an exponential time), on a cell of usable
// energy c J without self-discharge.
func exponentialLifetime(t *testing.T, lambda, c float64) energy.Lifetime {
	t.Helper()
	st, err := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustExponential(lambda))
	require.NoError(t, err)
	cy, err := energy.NewCycle(st, dist.MustPointMass(60), 0)
	require.NoError(t, err)
	b, err := energy.NewBattery(energy.BatterySpec{Name: "test", Energy: c, NominalVoltage: 3, UsableFraction: 1})
	require.NoError(t, err)
	l, err := energy.NewLifetime(cy, b)
	require.NoError(t, err)
	return l
}

// TestLifetimePoisson: with exponential cycle energies of rate λ the number
// of complete cycles before a capacity C is exhausted is exactly
// Poisson(λC) (the cycle energies are the gaps of a Poisson process of rate
// λ on the energy axis; any probability text, e.g. Ross, Stochastic
// Processes, §2.2). Checked for λC from 1 to 10^6.
func TestLifetimePoisson(t *testing.T) {
	for _, m := range []float64{1, 10, 1e3, 1e6} {
		l := exponentialLifetime(t, 2, m/2)
		sd := math.Sqrt(m)
		for _, z := range []float64{-8, -5, -2, -0.5, 0, 0.5, 2, 5, 8} {
			k := int64(math.Round(m + z*sd))
			if k < 1 {
				continue
			}
			want, wantFewer := poissonTails(m, k)
			got, fewer := l.Cycles(k)
			// Absolute error ≤ 1e-12 everywhere; relative 2e-5 in the tails
			// (gonum's regularised incomplete gamma loses about 5e-6 relative
			// at shape 10^6, 5 sd out: measured here against this oracle).
			assert.InDelta(t, want, got, 1e-12+2e-5*want, "λC=%g k=%d P(M>=k)", m, k)
			assert.InDelta(t, wantFewer, fewer, 1e-12+2e-5*wantFewer, "λC=%g k=%d P(M<k)", m, k)
			// The law in seconds: P(lifetime > (k-1)·T) = P(M >= k).
			assert.InDelta(t, want, l.Survival(float64(k-1)*60), 1e-12+2e-5*want)
		}
		assert.InDelta(t, m*60, l.Mean(), 1e-6*m*60+1e-9, "λC=%g mean = λC periods", m)
		assert.InDelta(t, m*3600, l.Variance(), 1e-4*m*3600, "λC=%g variance = λC periods²", m)
		// Quantiles in cycles are Poisson quantiles.
		for _, p := range []float64{0.01, 0.5, 0.99} {
			k := int64(l.Quantile(p) / 60)
			_, le := poissonTails(m, k+1) // P(M <= k)
			assert.GreaterOrEqual(t, le, p-1e-9, "λC=%g p=%g", m, p)
			if k > 0 {
				_, lt := poissonTails(m, k) // P(M < k)
				assert.Less(t, lt, p+1e-9, "λC=%g p=%g", m, p)
			}
		}
	}
}

// TestLifetimeDeterministic: a deterministic cycle lasts capacity ÷ average
// power (common practice); with self-discharge modelled as a constant drain
// δ·E_nom/year the closed form is L = C_usable / (P + δ·E_nom/year)
// (derived in Battery.DeterministicLifetime). The exact law counts whole
// cycles, so it sits within one period below the closed form.
func TestLifetimeDeterministic(t *testing.T) {
	const v = 3.6
	tx := energy.MustFixedState("tx", 40*energy.MilliAmp, v, 0.1)
	sense := energy.MustFixedState("sense", 2*energy.MilliAmp, v, 0.5)
	st := energy.MustSequence(tx, sense)
	period := 15 * energy.Minute
	cy := energy.MustCycle(st, dist.MustPointMass(period), 3*energy.MicroAmp*v)
	spec := energy.TypicalER14505()
	b := energy.MustBattery(spec)
	l := energy.MustLifetime(cy, b)
	want := b.DeterministicLifetime(cy.MeanPower())
	med := l.Quantile(0.5)
	assert.LessOrEqual(t, med, want)
	assert.Greater(t, med, want-period)
	assert.Equal(t, med, l.Quantile(0.001))
	assert.Equal(t, med, l.UpperQuantile(0.001))
	// Independent check of the closed form: discharge the cell day by day.
	left, days := b.UsableEnergy(), 0.0
	perDay := cy.MeanPower()*energy.Day + b.SelfDischargePower()*energy.Day
	for left > perDay {
		left -= perDay
		days++
	}
	days += left / perDay
	assert.InDelta(t, days*energy.Day, want, 1e-6*want)
}
