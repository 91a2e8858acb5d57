package energy

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// demoStage is an invented node (demo data, not a measured device): wake,
// a sensing burst of random length, then, with a configuration shared by the
// transmission and the receive windows, an uplink, retransmissions and
// either a downlink or two empty windows.
func demoStage(t testing.TB) Stage {
	t.Helper()
	const v = 3.3
	wake := MustFixedState("wake", 5*MilliAmp, v, 2*Millisecond)
	sense := MustState("sense", dist.MustUniform(1*MilliAmp, 2*MilliAmp), v, dist.MustExponential(1/(10*Millisecond)))
	cfg := dist.MustDiscrete([]float64{7, 9, 12}, []float64{0.5, 0.3, 0.2})
	radio, err := Configured(cfg, func(sf float64) (Stage, error) {
		air := 0.05 * math.Pow(2, sf-7) // s, invented airtime doubling per step
		tx := MustState("tx", dist.MustDiscrete([]float64{38 * MilliAmp, 44 * MilliAmp}, []float64{0.6, 0.4}), v, dist.MustPointMass(air))
		rx := MustFixedState("rx", 11*MilliAmp, v, air/2)
		idle := MustFixedState("rx-timeout", 11*MilliAmp, v, 0.01*sf)
		windows := MustChoice([]float64{0.3, 0.7}, []Stage{rx, MustSequence(idle, idle)})
		retx := MustRepeat(dist.MustDiscrete([]float64{0, 1, 2}, []float64{0.8, 0.15, 0.05}), MustSequence(tx, idle))
		return Sequence(tx, retx, windows)
	})
	require.NoError(t, err)
	return MustSequence(wake, sense, radio)
}

// TestMomentsAgainstSampling checks the exact moments and breakdown of a
// composed stage against sampling from its structure (a Monte Carlo path
// that shares no formula with the moment recursion). Tolerances: 5 standard
// errors, each estimated from the samples (central limit theorem).
func TestMomentsAgainstSampling(t *testing.T) {
	const floor = 2 * MicroAmp * 3.3
	s := demoStage(t)
	m := s.moments(floor)
	r := rand.New(rand.NewPCG(1, 2))
	const n = 200_000
	names := []string{"wake", "sense", "tx", "rx", "rx-timeout"}
	xs := make([]float64, n)
	ts := make([]float64, n)
	cs := map[string][]float64{}
	for _, nm := range names {
		cs[nm] = make([]float64, n)
	}
	for i := range n {
		xs[i], ts[i] = s.sample(r, floor, func(name string, e float64) { cs[name][i] += e })
	}
	mx, vx := meanVar(xs)
	mt, vt := meanVar(ts)
	assert.InDelta(t, m.meanX, mx, 5*math.Sqrt(vx/n), "mean energy")
	assert.InDelta(t, m.meanT, mt, 5*math.Sqrt(vt/n), "mean active time")
	assert.InDelta(t, m.varX, vx, 5*seVar(xs), "variance of energy")
	assert.InDelta(t, m.varT, vt, 5*seVar(ts), "variance of active time")
	require.Len(t, m.parts, len(names))
	covSum := 0.0
	for _, nm := range names {
		k := m.find(nm)
		require.GreaterOrEqual(t, k, 0, nm)
		p := m.parts[k]
		mc, vc := meanVar(cs[nm])
		assert.InDelta(t, p.excess, mc, 5*math.Sqrt(vc/n)+1e-15, "mean of %s", nm)
		prod := make([]float64, n)
		for i := range prod {
			prod[i] = (cs[nm][i] - mc) * (xs[i] - mx)
		}
		mp, vp := meanVar(prod)
		assert.InDelta(t, p.cov, mp, 5*math.Sqrt(vp/n)+1e-15, "Cov(%s, X)", nm)
		covSum += p.cov
	}
	// The parts' covariances add to the variance exactly: Σ_s Cov(C_s, X) = Var X.
	assert.InDelta(t, m.varX, covSum, 1e-12*m.varX)
}

func meanVar(xs []float64) (m, v float64) {
	for _, x := range xs {
		m += x
	}
	m /= float64(len(xs))
	for _, x := range xs {
		v += (x - m) * (x - m)
	}
	return m, v / float64(len(xs)-1)
}

// seVar is the standard error of the sample variance, sqrt((m4 - s⁴)/n).
func seVar(xs []float64) float64 {
	m, v := meanVar(xs)
	m4 := 0.0
	for _, x := range xs {
		d := x - m
		m4 += d * d * d * d
	}
	m4 /= float64(len(xs))
	return math.Sqrt((m4 - v*v) / float64(len(xs)))
}

// A fixed state's excess energy is built without the intermediate laws
// (fixedExcess); the oracle is package dist's general path, the power
// shifted by the floor (dist.Affine) times the duration (dist.Product):
// the same law, field for field, for every case of that path (no floor,
// an excess of exactly 1 and exactly 0 J/s, and ordinary values).
func TestFixedExcessSameAsDist(t *testing.T) {
	cases := []struct{ p, t, floor float64 }{
		{0.132, 0.05, 0}, {0.132, 0.05, 5e-6 * 3.6}, {0.0033, 1.25, 1e-5}, {1.5, 0.2, 0.5},
		{2e-5, 0.7, 2e-5}, {0.04 * 3.6, 0, 1e-5}, {7.25, 3.5e-3, 0.25},
	}
	for _, c := range cases {
		power, duration := dist.MustPointMass(c.p), dist.MustPointMass(c.t)
		got, ok := fixedExcess(power, duration, c.floor)
		require.True(t, ok, "%+v", c)
		var p dist.Law = power
		if c.floor != 0 {
			var err error
			p, err = dist.Affine(power, 1, -c.floor)
			require.NoError(t, err)
		}
		want, err := dist.Product(p, duration)
		require.NoError(t, err)
		assert.Equal(t, want, got, "%+v", c)
	}
	// Not a fixed state: the general path.
	_, ok := fixedExcess(dist.MustDiscrete([]float64{0.1, 0.2}, []float64{0.5, 0.5}), dist.MustPointMass(1), 0)
	assert.False(t, ok)
	_, ok = fixedExcess(dist.MustPointMass(0.1), dist.MustUniform(1, 2), 0)
	assert.False(t, ok)
}

// appendStates walks a stage's kinds itself (Cycle.visitStates); the
// oracle is the stage's own visit: the same states, by name, in the order
// of first appearance, for the demo stage and for each kind alone and
// nested (a repeat in a choice in a sequence, with nothing and a repeated
// state).
func TestAppendStatesVisitOrder(t *testing.T) {
	a := MustFixedState("a", 0.01, 3.3, 0.1)
	b := MustFixedState("b", 0.02, 3.3, 0.2)
	c := MustFixedState("c", 0.03, 3.3, 0.3)
	rep := MustRepeat(dist.MustDiscrete([]float64{0, 1, 2}, []float64{0.2, 0.5, 0.3}), MustSequence(c, a))
	stages := []Stage{demoStage(t), a, Nothing(), MustSequence(a, b, a),
		MustChoice([]float64{0.5, 0.5}, []Stage{b, MustSequence(Nothing(), rep)}),
		MustSequence(b, MustChoice([]float64{0.3, 0.7}, []Stage{rep, a}), c)}
	for i, s := range stages {
		var want []State
		s.visit(func(x State) {
			for _, y := range want {
				if y.name == x.name {
					return
				}
			}
			want = append(want, x)
		})
		got := appendStates(nil, s)
		require.Equal(t, len(want), len(got), "stage %d", i)
		for j := range want {
			assert.Equal(t, want[j].name, got[j].name, "stage %d, state %d", i, j)
		}
	}
}
