package energy_test

import (
	"errors"
	"math"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// FuzzDescribe builds a battery, a two-state cycle with a choice and a
// lifetime from arbitrary numbers: every failure must be an error wrapping
// energy.ErrParam, never a panic, and every success must give a finite
// mean energy and a lifetime median inside the law's support.
func FuzzDescribe(f *testing.F) {
	f.Add(0.04, 0.1, 0.011, 0.03, 0.3, 900.0, 2e-6, 2400.0, 1.0, 0.01)
	f.Add(-1.0, 0.1, 0.011, 0.03, 0.3, 900.0, 2e-6, 2400.0, 1.0, 0.01)
	f.Add(0.04, 0.1, 0.011, 0.03, 1.5, 900.0, 2e-6, 2400.0, 1.0, 0.01)
	f.Add(0.04, 0.1, 0.011, 0.03, 0.3, 0.05, 2e-6, 2400.0, 1.0, 0.01)
	f.Add(0.04, 0.1, 0.011, 0.03, 0.3, 900.0, 2e-6, 0.0, 1.0, 0.01)
	f.Add(0.04, 0.1, 0.011, 0.03, 0.3, 900.0, 2e-6, 2400.0, 0.0, 1.0)
	f.Add(math.NaN(), math.Inf(1), 0.011, 0.03, math.NaN(), 900.0, 2e-6, 2400.0, 1.0, 0.01)
	f.Fuzz(func(t *testing.T, i1, t1, i2, t2, p, period, floor, mah, usable, sd float64) {
		check := func(err error) bool {
			if err != nil && !errors.Is(err, energy.ErrParam) {
				t.Fatalf("error not wrapping ErrParam: %v", err)
			}
			return err == nil
		}
		tx, err := energy.NewFixedState("tx", i1, 3.3, t1)
		if !check(err) {
			return
		}
		rx, err := energy.NewFixedState("rx", i2, 3.3, t2)
		if !check(err) {
			return
		}
		st, err := energy.Choice([]float64{p, 1 - p}, []energy.Stage{tx, energy.MustSequence(tx, rx)})
		if !check(err) {
			return
		}
		per, err := dist.NewPointMass(period)
		if err != nil {
			return
		}
		c, err := energy.NewCycle(st, per, floor)
		if !check(err) {
			return
		}
		if !(c.MeanEnergy() >= 0) || math.IsInf(c.MeanEnergy(), 0) {
			t.Fatalf("mean energy %g", c.MeanEnergy())
		}
		b, err := energy.NewBattery(energy.BatterySpec{Charge: mah * energy.MilliAmpHour, NominalVoltage: 3.6, UsableFraction: usable, SelfDischargePerYear: sd})
		if !check(err) {
			return
		}
		if b.UsableEnergy()/c.MeanEnergy() > 1e9 {
			return // beyond the cycle counts of real nodes; skip for speed
		}
		l, err := energy.NewLifetime(c, b)
		if !check(err) {
			return
		}
		m := l.Quantile(0.5)
		lo, hi := l.Support()
		if !(m >= lo && m <= hi) {
			t.Fatalf("median %g outside [%g, %g]", m, lo, hi)
		}
	})
}
