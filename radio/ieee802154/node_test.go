package ieee802154_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// testNode is an invented node for the checks: 2.4 GHz, default MAC
// attributes, 20 octets of payload, acknowledged, 30 % busy CCAs, 20 %
// of transmissions unacknowledged, typical currents (from memory).
func testNode() ieee802154.Node {
	return ieee802154.Node{
		PHY: ieee802154.OQPSK2450(), CSMA: ieee802154.DefaultCSMA(), Currents: ieee802154.TypicalCurrents(),
		Payload: 20, AckRequest: true, Busy: 0.3, AckLoss: 0.2,
	}
}

// variants are the nodes the sampler checks: the test node and edits that
// reach every branch of the frame's stage.
func variants() []struct {
	name string
	node ieee802154.Node
} {
	type v = struct {
		name string
		node ieee802154.Node
	}
	var out []v
	add := func(name string, edit func(*ieee802154.Node)) {
		n := testNode()
		edit(&n)
		out = append(out, v{name, n})
	}
	add("default", func(*ieee802154.Node) {})
	add("sleeping backoffs with a wake", func(n *ieee802154.Node) {
		n.Backoff, n.Wake = ieee802154.BackoffSleep, 0.5e-3
		n.CSMA.MinBE = 0
	})
	add("no acknowledgement", func(n *ieee802154.Node) { n.AckRequest, n.Busy = false, 0.6 })
	add("busy channel, 7 retries", func(n *ieee802154.Node) {
		n.Busy, n.AckLoss, n.CSMA.MaxFrameRetries, n.CSMA.MaxCSMABackoffs, n.CSMA.MaxBE = 0.7, 0.6, 7, 1, 4
	})
	add("BPSK 868, no backoff retry", func(n *ieee802154.Node) {
		n.PHY, n.CSMA.MaxCSMABackoffs, n.Payload, n.AckWait = ieee802154.BPSK868(), 0, 60, 8e-3
	})
	add("every acknowledgement lost", func(n *ieee802154.Node) { n.Busy, n.AckLoss = 0, 1 })
	add("always busy", func(n *ieee802154.Node) { n.Busy = 1 })
	return out
}

// TestFrameAgainstSampler compares the package's laws with the packet-level
// sampler simFrame (independent code written from the standard's
// description): the frame-energy law by a Kolmogorov–Smirnov distance
// within the DKW–Massart bound at level 1e-6 (Massart, Ann. Probab.
// 18(3), 1990), the fates and the CCAs of the first run by exact binomial
// bounds at level 1e-6 each, the first run's backoff by KS; fixed seeds.
func TestFrameAgainstSampler(t *testing.T) {
	const n = 100000
	for i, tc := range variants() {
		law, err := tc.node.FrameEnergy()
		require.NoError(t, err, tc.name)
		_, exact := law.(dist.Atomic)
		assert.True(t, exact, tc.name)
		tl, err := tc.node.Timeline()
		require.NoError(t, err)
		ccaLaw, err := tc.node.CSMA.CCAs(tc.node.Busy)
		require.NoError(t, err)
		boLaw, err := tc.node.CSMA.BackoffPeriods(tc.node.Busy)
		require.NoError(t, err)

		r := rand.New(rand.NewPCG(uint64(i), 802154))
		xs := make([]float64, n)
		bo := make([]float64, n)
		rts := make([]float64, n)
		fates := make([]int, 3)
		ccas := make([]int, tc.node.CSMA.MaxCSMABackoffs+2)
		for j := range xs {
			o := simFrame(r, tc.node)
			xs[j] = o.energy
			bo[j] = float64(o.backoff1) + 1 // shifted: KSWithSlack wants positive samples
			rts[j] = o.run1
			fates[o.fate]++
			ccas[o.ccas1]++
			assert.LessOrEqual(t, o.active, tl.MaxFrameTime*(1+1e-12), "MaxFrameTime bounds every frame")
		}
		crit := testref.KSCritical(n, 1e-6)
		d := testref.KSWithSlack(xs, law.CDF, 1e-9)
		assert.Less(t, d, crit, "%s: frame energy KS", tc.name)
		t.Logf("%s: KS %.4f (bound %.4f), mean %.6g J, sampled %.6g J", tc.name, d, crit, law.Mean(), mean(xs))
		rtLaw, err := tc.node.CSMA.RunTime(tc.node.PHY, tc.node.Busy)
		require.NoError(t, err)
		shifted, err := dist.Affine(boLaw, 1, 1)
		require.NoError(t, err)
		assert.Less(t, testref.KSWithSlack(bo, shifted.CDF, 1e-9), crit, "%s: backoff KS", tc.name)
		assert.Less(t, testref.KSWithSlack(rts, rtLaw.CDF, 1e-9), crit, "%s: run time KS", tc.name)
		o := tl.Outcomes
		for f, p := range []float64{o.Delivered, o.AccessFailure, o.RetryLimit} {
			lo, hi := testref.BinomialInterval(n, p, 1e-6)
			assert.True(t, fates[f] >= lo && fates[f] <= hi, "%s: fate %d: %d not in [%d, %d]", tc.name, f, fates[f], lo, hi)
		}
		for k := 1; k < len(ccas); k++ {
			p := ccaLaw.CDF(float64(k)) - ccaLaw.CDF(float64(k)-0.5)
			lo, hi := testref.BinomialInterval(n, p, 1e-6)
			assert.True(t, ccas[k] >= lo && ccas[k] <= hi, "%s: %d CCAs: %d not in [%d, %d]", tc.name, k, ccas[k], lo, hi)
		}
	}
}

func mean(xs []float64) float64 {
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return s / float64(len(xs))
}

// TestFrameEnergyByHand: with an idle channel and no loss the frame is
// one run of one backoff (uniform on 0 … 7 periods), one CCA, the
// turnaround, the PPDU and the acknowledgement: eight atoms of mass 1/8,
// worked by hand from the 2.4 GHz timing (16 µs symbols; a 31-octet MPDU,
// 37 octets on air = 1.184 ms; the acknowledgement 192 + 352 µs).
func TestFrameEnergyByHand(t *testing.T) {
	n := testNode()
	n.Busy, n.AckLoss = 0, 0
	law, err := n.FrameEnergy()
	require.NoError(t, err)
	at := law.(dist.Atomic).Atoms()
	require.Len(t, at, 8)
	c := n.Currents
	fixed := 3 * (19e-3*128e-6 + 19e-3*192e-6 + 17e-3*1.184e-3 + 19e-3*(192e-6+352e-6))
	for u, a := range at {
		want := fixed + 3*c.Idle*float64(u)*320e-6
		assert.InEpsilon(t, want, a.Value, 1e-14, "backoff %d", u)
		assert.InEpsilon(t, 0.125, a.Mass, 1e-15)
	}
}

// TestCycleAgainstSampler compares Node.Cycle's energy law with the sampler
// plus the node's own stage and the floor, E = P_sleep·T + Σ (P − P_sleep)·t
// (energy.Cycle's accounting), by KS at level 1e-6, and runs the
// conformance checker on it and on the frame-energy law of every variant.
func TestCycleAgainstSampler(t *testing.T) {
	nd := testNode()
	sense := energy.MustFixedState("sense", 3e-3, 3, 20e-3)
	nd.Before = sense
	const period = 60.0
	cy, err := nd.Cycle(dist.MustPointMass(period))
	require.NoError(t, err)
	law := cy.Energy()
	assert.NoError(t, disttest.Check(law, checkOptions(law, 7)...))
	floor := nd.Currents.Sleep * nd.Currents.Voltage
	const n = 100000
	r := rand.New(rand.NewPCG(5, 5))
	xs := make([]float64, n)
	for j := range xs {
		o := simFrame(r, nd)
		xs[j] = floor*period + (o.energy - floor*o.active) + (3e-3*3-floor)*20e-3
	}
	assert.Less(t, testref.KSWithSlack(xs, law.CDF, 1e-9), testref.KSCritical(n, 1e-6))
	assert.InEpsilon(t, cy.MeanEnergy(), law.Mean(), 1e-12)
	for i, tc := range variants() {
		fe, err := tc.node.FrameEnergy()
		require.NoError(t, err)
		assert.NoError(t, disttest.Check(fe, checkOptions(fe, uint64(100+i))...), tc.name)
	}
}

// checkOptions are the conformance checker's options for an exact
// discrete law: the seed, and for a law of more than 2048 atoms a moment
// tolerance of 1e-6. The checker integrates CDF and Survival with
// breakpoints at no more than 2048 atoms (512 sampled ones beyond), so
// the staircase between them is integrated approximately (relative error
// 1e-7 measured on 26 009 atoms); the mean of such laws is checked exactly
// against Wald's identity in TestFrameEnergyMean instead.
func checkOptions(l dist.Law, seed uint64) []disttest.Option {
	opts := []disttest.Option{disttest.WithSeed(seed)}
	if a, ok := l.(dist.Atomic); ok && len(a.Atoms()) > 2048 {
		opts = append(opts, disttest.WithMomentTolerance(1e-6))
	}
	return opts
}

// TestFrameEnergyMean checks the mean of the frame-energy law against
// Wald's identity written out from the algorithm: a run's backoff i (mean
// (2^BE(i) − 1)/2 periods, a wake with probability 1 − 2^−BE(i) when
// backoffs sleep) and CCA i happen iff the first i CCAs were busy
// (probability b^i); a run succeeds with probability 1 − b^(m+1), then
// the turnaround, the PPDU and the acknowledgement (received with
// probability 1 − a, else the full wait); attempt j happens with
// probability L^(j−1), L = (1 − b^(m+1))·a.
func TestFrameEnergyMean(t *testing.T) {
	for _, tc := range variants() {
		n := tc.node
		law, err := n.FrameEnergy()
		require.NoError(t, err)
		want := waldMean(t, n)
		assert.InEpsilon(t, want, law.Mean(), 1e-12, tc.name)
		at := law.(dist.Atomic).Atoms()
		sum := 0.0
		for _, a := range at {
			sum += a.Value * a.Mass
		}
		assert.InEpsilon(t, want, sum, 1e-12, "%s: the atoms' own mean", tc.name)
	}
}

// waldMean is the frame's mean energy by Wald's identity, as
// TestFrameEnergyMean describes (J).
func waldMean(t *testing.T, n ieee802154.Node) float64 {
	p, c, cur := n.PHY, n.CSMA, n.Currents
	v, b := cur.Voltage, n.Busy
	boI := cur.Idle
	if n.Backoff == ieee802154.BackoffSleep {
		boI = cur.Sleep
	}
	run := 0.0
	for i := 0; i <= c.MaxCSMABackoffs; i++ {
		size := math.Ldexp(1, c.BE(i))
		reach := math.Pow(b, float64(i))
		run += reach * (boI*p.UnitBackoffPeriod()*(size-1)/2 + cur.RX*p.CCATime())
		if n.Backoff == ieee802154.BackoffSleep {
			run += reach * (1 - 1/size) * cur.Idle * n.Wake
		}
	}
	ok := 1 - math.Pow(b, float64(c.MaxCSMABackoffs+1))
	frame, err := p.PPDUTime(11 + n.Payload)
	require.NoError(t, err)
	attempt := run + ok*(cur.Turnaround*p.TurnaroundTime()+cur.TX*frame)
	attempts := 1.0
	if n.AckRequest {
		wait := p.AckWaitDuration()
		if n.AckWait > 0 {
			wait = n.AckWait
		}
		attempt += ok * cur.RX * ((1-n.AckLoss)*(p.TurnaroundTime()+p.AckTime()) + n.AckLoss*wait)
		attempts = 0
		for j := 0; j <= c.MaxFrameRetries; j++ {
			attempts += math.Pow(ok*n.AckLoss, float64(j))
		}
	}
	return v * attempt * attempts
}

// TestNodeBadInput: every bad field is an error wrapping ErrParam that
// names it.
func TestNodeBadInput(t *testing.T) {
	for _, tc := range []struct {
		name string
		edit func(*ieee802154.Node)
	}{
		{"SymbolRate", func(n *ieee802154.Node) { n.PHY = ieee802154.PHY{} }},
		{"macMaxBE", func(n *ieee802154.Node) { n.CSMA = ieee802154.CSMA{} }},
		{"macMinBE", func(n *ieee802154.Node) { n.CSMA.MinBE = 6 }},
		{"Currents.Voltage", func(n *ieee802154.Node) { n.Currents.Voltage = 0 }},
		{"Currents.Sleep", func(n *ieee802154.Node) { n.Currents.Sleep = math.NaN() }},
		{"Currents.TX", func(n *ieee802154.Node) { n.Currents.TX = 1e-7 }},
		{"Currents.Idle", func(n *ieee802154.Node) { n.Currents.Idle = math.Inf(1) }},
		{"payload", func(n *ieee802154.Node) { n.Payload = 117 }},
		{"payload", func(n *ieee802154.Node) { n.Payload = -1 }},
		{"Busy", func(n *ieee802154.Node) { n.Busy = 1.5 }},
		{"AckLoss", func(n *ieee802154.Node) { n.AckLoss = math.NaN() }},
		{"Backoff", func(n *ieee802154.Node) { n.Backoff = 2 }},
		{"Wake", func(n *ieee802154.Node) { n.Wake = 1e-3 }}, // with BackoffIdle
		{"Wake", func(n *ieee802154.Node) { n.Backoff, n.Wake = ieee802154.BackoffSleep, 2 }},
		{"macAckWaitDuration", func(n *ieee802154.Node) { n.AckWait = 500e-6 }}, // shorter than 544 µs
		{"macAckWaitDuration", func(n *ieee802154.Node) { n.AckWait = 2 }},
	} {
		n := testNode()
		tc.edit(&n)
		_, err := n.Timeline()
		require.ErrorIs(t, err, ieee802154.ErrParam, tc.name)
		assert.Contains(t, err.Error(), tc.name)
		_, err = n.FrameEnergy()
		assert.ErrorIs(t, err, ieee802154.ErrParam, tc.name)
		_, err = n.Cycle(dist.MustPointMass(60))
		assert.ErrorIs(t, err, ieee802154.ErrParam, tc.name)
	}
}

// TestNodeDeterministic: the same node gives the same law, bit for bit,
// whether built serially or from several goroutines at once.
func TestNodeDeterministic(t *testing.T) {
	nd := testNode()
	ref, err := nd.FrameEnergy()
	require.NoError(t, err)
	want := fmt.Sprint(ref.(dist.Atomic).Atoms())
	done := make(chan string, 2)
	for range 2 {
		go func() {
			l, err := nd.FrameEnergy()
			if err != nil {
				done <- err.Error()
				return
			}
			done <- fmt.Sprint(l.(dist.Atomic).Atoms())
		}()
	}
	for range 2 {
		assert.Equal(t, want, <-done)
	}
}

// TestFrameEnergyEnumeration checks the frame-energy law atom by atom
// against every path of the packet-level state machine (playFrame driven
// by an enumeration of all its draws instead of a random source): the
// paths' energies, merged where they agree to 1e-12 relative, must be the
// law's atoms (values to 1e-12 relative, masses to 1e-14).
func TestFrameEnergyEnumeration(t *testing.T) {
	small := func(edit func(*ieee802154.Node)) ieee802154.Node {
		n := testNode()
		n.CSMA = ieee802154.CSMA{MinBE: 1, MaxBE: 3, MaxCSMABackoffs: 2, MaxFrameRetries: 2}
		edit(&n)
		return n
	}
	for _, n := range []ieee802154.Node{
		small(func(*ieee802154.Node) {}),
		small(func(n *ieee802154.Node) { n.Backoff, n.Wake, n.CSMA.MinBE = ieee802154.BackoffSleep, 0.4e-3, 0 }),
		small(func(n *ieee802154.Node) { n.AckRequest = false }),
		small(func(n *ieee802154.Node) { n.CSMA.MaxFrameRetries, n.CSMA.MaxCSMABackoffs, n.Busy = 7, 0, 0.5 }),
	} {
		law, err := n.FrameEnergy()
		require.NoError(t, err)
		var paths []dist.Atom
		total := 0.0
		enumFrames(n, func(o simOut, p float64) {
			if p > 0 {
				paths = append(paths, dist.Atom{Value: o.energy, Mass: p})
				total += p
			}
		})
		assert.InDelta(t, 1, total, 1e-9, "a naive sum of up to 1.2e6 path probabilities: rounding below n·ε ≈ 2.6e-10")
		sort.Slice(paths, func(i, j int) bool { return paths[i].Value < paths[j].Value })
		var want []dist.Atom
		for _, a := range paths {
			if k := len(want) - 1; k >= 0 && a.Value-want[k].Value <= 1e-12*a.Value {
				want[k].Mass += a.Mass
				continue
			}
			want = append(want, a)
		}
		got := law.(dist.Atomic).Atoms()
		require.Len(t, got, len(want), "%d paths", len(paths))
		for i := range got {
			assert.InEpsilon(t, want[i].Value, got[i].Value, 1e-12)
			assert.InDelta(t, want[i].Mass, got[i].Mass, 1e-14)
		}
		t.Logf("%d paths, %d atoms", len(paths), len(got))

		// The first run's duration against CSMA.RunTime.
		runs := map[float64]float64{}
		enumFrames(n, func(o simOut, p float64) { runs[math.Round(o.run1*1e9)/1e9] += p })
		rt, err := n.CSMA.RunTime(n.PHY, n.Busy)
		require.NoError(t, err)
		rta := rt.(dist.Atomic).Atoms()
		require.Len(t, rta, len(runs))
		for _, a := range rta {
			assert.InDelta(t, runs[math.Round(a.Value*1e9)/1e9], a.Mass, 1e-13, "run time %g s", a.Value)
		}
	}
}

// TestFrameEnergyFarTail: the largest frame energy without an
// acknowledgement request is a run of macMaxCSMABackoffs + 1 CCAs, the
// last idle, every backoff at its largest, then the transmission: its
// probability b^m·(1 − b)·Π_i 2^−BE(i) (the algorithm's draws written out)
// is the law's survival just below it, to 1e-12 relative even when it is
// 1e-19 (the branch probabilities are computed directly, not as 1 − the
// others).
func TestFrameEnergyFarTail(t *testing.T) {
	for _, b := range []float64{1e-3, 0.3, 0.9} {
		n := testNode()
		n.AckRequest, n.Busy = false, b
		law, err := n.FrameEnergy()
		require.NoError(t, err)
		c := n.CSMA
		want := math.Pow(b, float64(c.MaxCSMABackoffs)) * (1 - b)
		for i := 0; i <= c.MaxCSMABackoffs; i++ {
			want /= math.Ldexp(1, c.BE(i))
		}
		_, top := law.Support()
		assert.InEpsilon(t, want, law.Survival(math.Nextafter(top, 0)), 1e-12, "b = %g", b)
		assert.Equal(t, top, law.UpperQuantile(want/2), "b = %g", b)
	}
}
