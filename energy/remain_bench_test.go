package energy_test

import (
	"fmt"
	"math/rand/v2"
	"runtime"
	"sync"
	"testing"

	"github.com/joulelaw/joulelaw/energy"
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

// BenchmarkDeviceFleet: 10^4 devices' remaining-life laws (median and 90 %
// interval) on 1, 2 … GOMAXPROCS goroutines, one device per task; the
// per-device result is the same whatever the goroutine count.
func BenchmarkDeviceFleet(b *testing.B) {
	f := newValFleet(b, true)
	m, err := energy.NewDeviceModel(f.spec, energy.Environment{}, f.costs, energy.DeviceOptions{})
	if err != nil {
		b.Fatal(err)
	}
	base := benchTallies(m, 64, 3.64)
	const n = 10000
	for g := 1; g <= runtime.GOMAXPROCS(0); g *= 2 {
		b.Run(fmt.Sprintf("goroutines=%d", g), func(b *testing.B) {
			out := make([]float64, n)
			for i := 0; i < b.N; i++ {
				var wg sync.WaitGroup
				for w := range g {
					wg.Add(1)
					go func() {
						defer wg.Done()
						for j := w; j < n; j += g {
							tl := base[j%len(base)]
							p, err := m.Posterior(tl, tl.Newest())
							if err != nil {
								continue
							}
							out[j] = p.Remaining().Quantile(0.5)
						}
					}()
				}
				wg.Wait()
			}
		})
	}
}
