package energy_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/internal/workers"
)

// BenchmarkDeviceObserve: one event into one device's Tally.
func BenchmarkDeviceObserve(b *testing.B) {
	f := newValFleet(b, true)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	if err != nil {
		b.Fatal(err)
	}
	tl, _ := m.NewTally(0)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		tl, err = m.Observe(tl, energy.Event{Time: float64(i), Kind: i % 3, Count: 1})
		if err != nil {
			b.Fatal(err)
		}
	}
}

// benchTallies returns n tallies of devices at ages from 100 to 1500
// days, fed weekly; with volts > 0 a reading every week of the last 60
// days (the newest MaxReadings are kept).
func benchTallies(m energy.DeviceModel, n int, volts float64) []energy.Tally {
	r := rand.New(rand.NewPCG(3, 4))
	out := make([]energy.Tally, n)
	for i := range out {
		tl, _ := m.NewTally(0)
		days := 100 + r.IntN(1400)
		for d := 1; d <= days; d += 7 {
			at := float64(d) * energy.Day
			tl, _ = m.Observe(tl, energy.Event{Time: at, Kind: 0, Count: 7 * 96})
			if volts > 0 && d > days-60 {
				tl, _ = m.Read(tl, energy.Reading{Time: at, Low: volts - 0.005, High: volts + 0.005, Noise: 0.02})
			}
		}
		out[i] = tl
	}
	return out
}

// BenchmarkDeviceRemainingFleet: one device's posterior, remaining-life
// law, median and 90 % interval, for devices drawn from the validation
// fleet (internal/backlog: hidden factors, daily readings, every device
// pooled as EstimateSpread pools them, cut at three years): the mix a
// back-end sees, from the plateau to the knee and devices gone flat
// (refused by their counts).
func BenchmarkDeviceRemainingFleet(b *testing.B) {
	f := newValFleet(b, true)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	if err != nil {
		b.Fatal(err)
	}
	const today = 3 * energy.Year
	ts := poolTallies(b, f, 12, today)
	b.ReportAllocs()
	defer testref.ReportCPU(b)()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		p, err := m.Posterior(ts[i%len(ts)], today)
		if err != nil {
			continue
		}
		rem := p.Remaining()
		_ = rem.Quantile(0.5) + rem.Quantile(0.05) + rem.Quantile(0.95)
	}
}

// BenchmarkDeviceRemaining: one device's posterior, remaining-life law,
// median and 90 % interval: counts only, readings on the plateau (3.64 V),
// readings in the knee (3.50 V, which sets off the adaptive stages).
func BenchmarkDeviceRemaining(b *testing.B) {
	for _, nodes := range []int{256, 1024} {
		for _, rd := range []struct {
			name  string
			volts float64
		}{{"counts", 0}, {"plateau", 3.64}, {"knee", 3.50}} {
			b.Run(fmt.Sprintf("nodes=%d/%s", nodes, rd.name), func(b *testing.B) {
				f := newValFleet(b, true)
				m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{Nodes: nodes})
				if err != nil {
					b.Fatal(err)
				}
				ts := benchTallies(m, 64, rd.volts)
				b.ReportAllocs()
				defer testref.ReportCPU(b)()
				b.ResetTimer()
				for i := 0; i < b.N; i++ {
					tl := ts[i%len(ts)]
					p, err := m.Posterior(tl, tl.Newest())
					if err != nil {
						continue // flat by its counts: refused
					}
					rem := p.Remaining()
					_ = rem.Quantile(0.5) + rem.Quantile(0.05) + rem.Quantile(0.95)
				}
			})
		}
	}
}

// BenchmarkDeviceFleet: 10^5 devices' remaining-life laws (median and 90 %
// interval) on GOMAXPROCS goroutines through internal/workers, the
// library's one pool (run with -cpu 1,2 for the scaling with cores), in
// tasks of fleetChunk devices; the per-device result is the same whatever
// the goroutine count (TestDeviceFleetSameBits). The devices are the 64
// plateau devices of BenchmarkDeviceRemaining, repeated: in a fleet most
// devices' readings sit on the flat part of the curve.
func BenchmarkDeviceFleet(b *testing.B) {
	f := newValFleet(b, true)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	if err != nil {
		b.Fatal(err)
	}
	base := benchTallies(m, 64, 3.64)
	const n = 100000
	out := make([][3]float64, n)
	defer testref.ReportCPU(b)()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := fleetRemaining(m, base, out, runtime.GOMAXPROCS(0)); err != nil {
			b.Fatal(err)
		}
	}
}

// fleetChunk is how many devices one task of fleetRemaining handles.
const fleetChunk = 256

// fleetRemaining fills out[j] with the median and the 5 % and 95 % points
// of device j's remaining life (the tallies repeated), NaN for a device
// refused, on the given number of goroutines.
func fleetRemaining(m energy.DeviceModel, base []energy.Tally, out [][3]float64, goroutines int) error {
	tasks := (len(out) + fleetChunk - 1) / fleetChunk
	return workers.Run(tasks, goroutines, func(i int) error {
		for j := i * fleetChunk; j < min(len(out), (i+1)*fleetChunk); j++ {
			tl := base[j%len(base)]
			p, err := m.Posterior(tl, tl.Newest())
			if err != nil {
				out[j] = [3]float64{math.NaN(), math.NaN(), math.NaN()}
				continue
			}
			rem := p.Remaining()
			out[j] = [3]float64{rem.Quantile(0.5), rem.Quantile(0.05), rem.Quantile(0.95)}
		}
		return nil
	}, nil)
}

// TestDeviceFleetSameBits: the fleet loop's per-device results are the
// same bits on one goroutine and on three (immutable model, no shared
// state), for 300 devices from the plateau to the knee.
func TestDeviceFleetSameBits(t *testing.T) {
	f := newValFleet(t, true)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	require.NoError(t, err)
	var base []energy.Tally
	for _, v := range []float64{0, 3.64, 3.55, 3.50} {
		base = append(base, benchTallies(m, 16, v)...)
	}
	var res [2][][3]float64
	for i, g := range []int{1, 3} {
		res[i] = make([][3]float64, 300)
		require.NoError(t, fleetRemaining(m, base, res[i], g))
	}
	for j := range res[0] {
		for q := range 3 {
			require.Equal(t, math.Float64bits(res[0][j][q]), math.Float64bits(res[1][j][q]), "device %d", j)
		}
	}
}

// BenchmarkEstimateSpread: a group's capacity spread learned from 100
// devices of the validation fleet (internal/backlog, cut at three years,
// daily readings, every device pooled) over 5 candidate spreads: each
// candidate weighs every device's evidence (a posterior with the whole
// stage set, DeviceModel.Posterior's thorough form). The device-candidate
// pairs per op are reported: CPU per op over them sets it beside
// BenchmarkDeviceRemainingFleet.
func BenchmarkEstimateSpread(b *testing.B) {
	f := newValFleet(b, true)
	f.gen.Capacity = 0.06
	const today = 3 * energy.Year
	ts := poolTallies(b, f, 12, today)[:100]
	cands := []float64{0.02, 0.04, 0.06, 0.08, 0.1}
	defer testref.ReportCPU(b)()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := energy.EstimateSpread(energy.CapacitySpread, f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{}, ts, today, cands); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(ts)*len(cands)), "device-candidates/op")
}

// BenchmarkPlanSharedService: the shared plan of 100 devices of the
// validation fleet (cut at three years, daily readings, every device
// pooled) with a batch spread of 0.03: 7 Gauss–Hermite batch nodes, then
// the refined batch grid (each node a model and every device's posterior
// and remaining-life law), the mixtures and the law of the count. The
// device-node pairs per op are reported.
func BenchmarkPlanSharedService(b *testing.B) {
	f := newValFleet(b, true)
	const today, horizon = 3 * energy.Year, 0.5 * energy.Year
	ts := poolTallies(b, f, 12, today)[:100]
	shared := energy.SharedSpread{Batch: 0.03}
	defer testref.ReportCPU(b)()
	b.ResetTimer()
	nodes := 0
	for i := 0; i < b.N; i++ {
		plan, err := energy.PlanSharedService(f.spec, energy.Environment{}, shared, f.costs, energy.DeviceOptions{}, ts, today, horizon)
		if err != nil {
			b.Fatal(err)
		}
		nodes += len(plan.Batch)
	}
	b.ReportMetric(float64(nodes*len(ts))/float64(b.N), "device-nodes/op")
}
