package ieee802154_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// TestPrunedWithinStatedError: on settings small enough for the exact law,
// the law built by the pruned enumeration at tolerances that force pruning
// dominates the exact law (its CDF is nowhere above the exact one) and is
// within the stated ε (the pruned mass) of it in CDF at every atom of
// either law; the stated ε is the mass the kept paths miss (1 − Σ kept,
// computed independently of the compensated sum) and is what Accuracy
// reports.
func TestPrunedWithinStatedError(t *testing.T) {
	small := testNode()
	small.CSMA = ieee802154.CSMA{MinBE: 1, MaxBE: 3, MaxCSMABackoffs: 2, MaxFrameRetries: 2}
	asleep := small
	asleep.Backoff, asleep.Wake, asleep.CSMA.MinBE = ieee802154.BackoffSleep, 0.4e-3, 0
	defaults := testNode()
	for _, tc := range []struct {
		name string
		node ieee802154.Node
		tol  float64
	}{
		{"small, 1e-4", small, 1e-4},
		{"small, 1e-6", small, 1e-6},
		{"small asleep with a wake, 1e-5", asleep, 1e-5},
		{"default attributes, 1e-9", defaults, 1e-9},
	} {
		exact, err := tc.node.FrameEnergy()
		require.NoError(t, err, tc.name)
		_, stated := exact.(dist.Estimated)
		assert.False(t, stated, "%s: within the cap the law is exact", tc.name)
		pruned, eps, err := ieee802154.PrunedFrameEnergy(tc.node, tc.tol)
		require.NoError(t, err, tc.name)
		again, eps2, err := ieee802154.PrunedFrameEnergy(tc.node, tc.tol)
		require.NoError(t, err, tc.name)
		assert.Equal(t, eps, eps2, "%s: deterministic", tc.name)
		assert.Equal(t, pruned.(dist.Atomic).Atoms(), again.(dist.Atomic).Atoms(), "%s: deterministic", tc.name)
		require.Greater(t, eps, 0.0, "%s: the tolerance must force pruning", tc.name)
		assert.Equal(t, eps, pruned.(dist.Estimated).Accuracy().CDFAbs, tc.name)
		atoms := pruned.(dist.Atomic).Atoms()
		kept := 0.0
		for _, a := range atoms[:len(atoms)-1] {
			kept += a.Mass
		}
		// the worst atom may also hold kept mass; 1 − Σ over the others is at least ε
		assert.GreaterOrEqual(t, 1-kept+1e-12, eps, tc.name)
		worst := atoms[len(atoms)-1]
		assert.GreaterOrEqual(t, worst.Mass+1e-15, eps, "%s: the pruned mass sits on the top atom", tc.name)
		_, hiExact := exact.Support()
		assert.GreaterOrEqual(t, worst.Value, hiExact*(1-1e-12), "%s: the worst-case path bounds every path", tc.name)
		// The two laws compute the same energies by different sums, which
		// may differ in the last bit: evaluate the CDFs just below and just
		// above every atom (relative 1e-11, far inside the atoms' spacing).
		var xs []float64
		for _, l := range []dist.Law{exact, pruned} {
			for _, a := range l.(dist.Atomic).Atoms() {
				xs = append(xs, a.Value*(1-1e-11), a.Value*(1+1e-11))
			}
		}
		maxDiff := 0.0
		for _, x := range xs {
			d := exact.CDF(x) - pruned.CDF(x)
			assert.GreaterOrEqual(t, d, -1e-14, "%s: dominance at %g", tc.name, x)
			assert.LessOrEqual(t, d, eps+1e-14, "%s: within ε at %g", tc.name, x)
			maxDiff = max(maxDiff, math.Abs(d))
		}
		assert.GreaterOrEqual(t, pruned.Mean(), exact.Mean()*(1-1e-12), tc.name)
		t.Logf("%s: %d atoms (exact %d), stated ε %.3g, largest CDF difference %.3g",
			tc.name, len(atoms), len(exact.(dist.Atomic).Atoms()), eps, maxDiff)
	}
}

// TestPrunedLargeSettings: settings beyond MaxFramePaths build by the
// pruned enumeration; the mean is checked against Wald's identity
// (waldMean, written from the algorithm: the expected numbers of CCAs,
// backoff periods, transmissions and acknowledgement waits), which the
// pruned law may exceed by at most ε·E_max, and the law against the
// packet-level sampler simFrame by a Kolmogorov–Smirnov distance within the
// DKW–Massart bound at level 1e-6 (Massart, Ann. Probab. 18(3), 1990) plus
// the stated ε; fixed seeds.
func TestPrunedLargeSettings(t *testing.T) {
	if testing.Short() {
		t.Skip("builds laws of 10^4 atoms")
	}
	for i, tc := range []struct {
		name string
		edit func(*ieee802154.Node)
	}{
		{"7 retries", func(n *ieee802154.Node) { n.CSMA.MaxFrameRetries = 7 }},
		{"macMaxBE 8, 7 retries, PathTolerance 1e-10", func(n *ieee802154.Node) {
			n.CSMA.MaxBE, n.CSMA.MaxFrameRetries, n.PathTolerance = 8, 7, 1e-10
		}},
	} {
		n := testNode()
		tc.edit(&n)
		require.Greater(t, ieee802154.FramePaths(n), float64(ieee802154.MaxFramePaths), tc.name)
		law, err := n.FrameEnergy()
		require.NoError(t, err, tc.name)
		eps, err := n.PathError()
		require.NoError(t, err, tc.name)
		est, ok := law.(dist.Estimated)
		require.True(t, ok, tc.name)
		assert.Equal(t, eps, est.Accuracy().CDFAbs, tc.name)
		assert.Greater(t, eps, 0.0, tc.name)
		assert.Less(t, eps, 1e-6, tc.name)
		tl, err := n.Timeline()
		require.NoError(t, err)
		cur := n.Currents
		eMax := tl.MaxFrameTime * cur.Voltage * max(cur.TX, cur.RX, cur.Turnaround, cur.Idle)
		want := waldMean(t, n)
		assert.GreaterOrEqual(t, law.Mean(), want*(1-1e-12), "%s: mean", tc.name)
		assert.LessOrEqual(t, law.Mean(), want*(1+1e-12)+eps*eMax, "%s: mean", tc.name)

		const samples = 100000
		r := rand.New(rand.NewPCG(uint64(i), 17))
		xs := make([]float64, samples)
		for j := range xs {
			xs[j] = simFrame(r, n).energy
		}
		crit := testref.KSCritical(samples, 1e-6)
		d := testref.KSWithSlack(xs, law.CDF, 1e-9)
		assert.Less(t, d, crit+eps, "%s: KS", tc.name)
		t.Logf("%s: %d atoms, stated ε %.3g, mean %.9g J (Wald %.9g J), KS %.4f (bound %.4f)",
			tc.name, len(law.(dist.Atomic).Atoms()), eps, law.Mean(), want, d, crit)
	}
}

// TestPathToleranceBad: a PathTolerance outside (0, MaxPathTolerance] (0
// aside) is an error wrapping ErrParam that names it, for small and large
// settings alike.
func TestPathToleranceBad(t *testing.T) {
	for _, tol := range []float64{-1e-12, math.NaN(), math.Inf(1), 2e-3, 1} {
		for _, retries := range []int{3, 7} {
			n := testNode()
			n.CSMA.MaxFrameRetries, n.PathTolerance = retries, tol
			_, err := n.FrameEnergy()
			require.Error(t, err, "%g", tol)
			assert.True(t, errors.Is(err, ieee802154.ErrParam))
			var pe *ieee802154.ParamError
			require.ErrorAs(t, err, &pe)
			assert.Equal(t, "PathTolerance", pe.Param)
			_, err = n.PathError()
			assert.ErrorContains(t, err, "PathTolerance")
			_, err = n.Cycle(dist.MustPointMass(60))
			assert.ErrorContains(t, err, "PathTolerance")
		}
	}
}
