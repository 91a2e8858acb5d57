package energy_test

import (
	"math"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// TestLifetimeIndependentOfHistory: a Lifetime caches the K-fold values it
// has computed and computes its moments and accuracy on first use; its
// quantile searches once started from cached points, so their result
// followed what had been asked before. Every answer must now have the same
// bits on a fresh lifetime (the question asked first), on one warmed by
// other questions and on one shared by 8 goroutines asking in different
// orders, for each K-fold path: closed form (gamma), exact three energies,
// the bounded saddlepoint (six energies) and tilted inversion (the soil
// node with a uniform sensing time).
func TestLifetimeIndependentOfHistory(t *testing.T) {
	t.Parallel()
	gammaCycle := func(t testing.TB) energy.Cycle {
		st, err := energy.NewPowerState("burst", dist.MustPointMass(1), dist.MustGamma(2, 1))
		require.NoError(t, err)
		return energy.MustCycle(st, dist.MustPointMass(60), 0.001)
	}
	soil := func(t testing.TB) energy.Cycle {
		c, err := soilNode(dist.MustDiscrete([]float64{7, 10, 12}, []float64{0.6, 0.3, 0.1}))
		require.NoError(t, err)
		return c
	}
	for _, tc := range []struct {
		name   string
		cycle  func(testing.TB) energy.Cycle
		cycles float64
	}{
		{"gamma", gammaCycle, 5000},
		{"three energies", threeEnergyCycle, 3000},
		{"six energies", sixEnergyCycle, 20_000},
		{"soil node", soil, 2000},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := tc.cycle(t)
			cell := energy.MustBattery(energy.BatterySpec{Energy: tc.cycles * c.MeanEnergy(), NominalVoltage: 3.6, UsableFraction: 1})
			build := func() energy.Lifetime { return energy.MustLifetime(c, cell) }
			probes := func(l energy.Lifetime) []func() float64 {
				med := 0.98 * tc.cycles * l.Step()
				return []func() float64{
					func() float64 { return l.Quantile(1e-9) },
					func() float64 { return l.Quantile(0.3) },
					func() float64 { return l.UpperQuantile(1e-12) },
					func() float64 { return l.CDF(med) },
					func() float64 { return l.Survival(1.01 * med) },
					func() float64 { return l.Mean() },
					func() float64 { return l.Variance() },
					func() float64 { return l.MomentError() },
					func() float64 { return l.Accuracy().CDFAbs },
				}
			}
			n := len(probes(build()))
			fresh := make([]uint64, n)
			for i := range n {
				fresh[i] = math.Float64bits(probes(build())[i]())
			}
			warm := build()
			for _, p := range []float64{1e-15, 1e-4, 0.05, 0.5, 0.77, 0.999} {
				warm.Quantile(p)
				warm.UpperQuantile(p)
			}
			for i, p := range probes(warm) {
				require.Equal(t, fresh[i], math.Float64bits(p()), "probe %d after other calls", i)
			}
			shared := probes(build())
			var wg sync.WaitGroup
			got := make([][]uint64, 8)
			for g := range got {
				got[g] = make([]uint64, n)
				wg.Add(1)
				go func() {
					defer wg.Done()
					for j := range n {
						i := (j + 3*g) % n
						if g%2 == 1 {
							i = n - 1 - i
						}
						got[g][i] = math.Float64bits(shared[i]())
					}
				}()
			}
			wg.Wait()
			for g := range got {
				require.Equal(t, fresh, got[g], "goroutine %d", g)
			}
		})
	}
}
