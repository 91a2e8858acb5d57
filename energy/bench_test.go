package energy_test

import (
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// BenchmarkBaselineSort is the machine-speed reference that BENCHMARKS.md
// divides by: sorting 10 000 pseudo-random float64 values (testref.SortBaseline).
func BenchmarkBaselineSort(b *testing.B) { testref.SortBaseline(b) }

func benchSoil(b testing.TB, sf []float64) energy.Cycle {
	b.Helper()
	c, err := soilNode(dist.MustDiscrete([]float64{7, 10, 12}, sf))
	if err != nil {
		b.Fatal(err)
	}
	return c
}

// BenchmarkCycleLaw builds the per-cycle law of the soil node of the
// Examples (three spreading factors, receive-window choice, a uniform
// sensing time).
func BenchmarkCycleLaw(b *testing.B) {
	sf := dist.MustDiscrete([]float64{7, 10, 12}, []float64{0.6, 0.3, 0.1})
	for b.Loop() {
		if _, err := soilNode(sf); err != nil {
			b.Fatal(err)
		}
	}
}

// lifetimeWork builds the lifetime law and asks the questions a planner
// asks of it: median, 5 % and 95 % points, 1e-4 point, the CDF at the median.
func lifetimeWork(b *testing.B, c energy.Cycle, cell energy.Battery) {
	l, err := energy.NewLifetime(c, cell)
	if err != nil {
		b.Fatal(err)
	}
	m := l.Quantile(0.5)
	_ = l.Quantile(0.05) + l.UpperQuantile(0.05) + l.Quantile(1e-4) + l.CDF(m)
}

// BenchmarkLifetime1e6 is the target case: about 10^6 cycles (a cell
// sized for 10^6 cycles of the soil node; 15-minute reports for 20 years are
// 700 800), on the numerical K-fold path. Its CPU time per operation is
// reported as cpu-ns/op (the machine is shared: wall time moves with the
// load).
func BenchmarkLifetime1e6(b *testing.B) {
	c := benchSoil(b, []float64{0.6, 0.3, 0.1})
	cell := energy.MustBattery(energy.BatterySpec{Name: "1e6 cycles", Energy: 1e6 * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1, SelfDischargePerYear: 0.01})
	defer testref.ReportCPU(b)()
	for b.Loop() {
		lifetimeWork(b, c, cell)
	}
}

// BenchmarkLifetimeGamma1e6 is the same work on the Gamma cycle whose
// accuracy TestLifetimeNumeric checks against the Erlang–Poisson oracle.
func BenchmarkLifetimeGamma1e6(b *testing.B) {
	st, _ := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustGamma(2, 1))
	c := energy.MustCycle(st, dist.MustPointMass(60), 0.001)
	cell := energy.MustBattery(energy.BatterySpec{Energy: 1e6 * 2.058, NominalVoltage: 3, UsableFraction: 1})
	for b.Loop() {
		lifetimeWork(b, c, cell)
	}
}

// BenchmarkLifetimeDiscrete1e6: a purely discrete cycle (six energies) on
// the saddlepoint path, 10^6 cycles.
func BenchmarkLifetimeDiscrete1e6(b *testing.B) {
	c := sixEnergyCycle(b)
	cell := energy.MustBattery(energy.BatterySpec{Energy: 1e6 * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
	for b.Loop() {
		lifetimeWork(b, c, cell)
	}
}

// fleetCycles returns 60 distinct soil-node cycles (60 spreading-factor
// mixes), built once outside the timed loop.
func fleetCycles(b testing.TB) []energy.Cycle {
	var cs []energy.Cycle
	for i := range 60 {
		p12 := 0.01 + 0.6*float64(i)/59
		p10 := (1 - p12) * (0.2 + 0.5*float64(i%7)/6)
		cs = append(cs, benchSoil(b, []float64{1 - p12 - p10, p10, p12}))
	}
	return cs
}

// BenchmarkFleet60: 10 000 nodes in 60 distinct groups on the example
// bobbin cell: the groups' lifetime laws, the first-failure law with its
// median and 10 % point, and the law of the number failed at the fleet's
// median first-failure date with its mean and 90 % interval. Its CPU time
// per operation is reported as cpu-ns/op (the machine is shared: wall time
// moves with the load).
func BenchmarkFleet60(b *testing.B) {
	gs := fleet60Groups(b)
	defer testref.ReportCPU(b)()
	for b.Loop() {
		f, err := energy.NewFleet(gs)
		if err != nil {
			b.Fatal(err)
		}
		ff, err := f.FirstFailure()
		if err != nil {
			b.Fatal(err)
		}
		t := ff.Quantile(0.5)
		_ = ff.Quantile(0.1)
		c, err := f.FailedBy(t)
		if err != nil {
			b.Fatal(err)
		}
		_, _, _ = dist.EqualTailed(c, 0.9)
		_ = c.Mean()
	}
}
