package packetsim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/internal/packetsim"
	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/orderstat"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// zTwoSided is the standard normal quantile with two-sided tail 1e-6
// (Φ⁻¹(1 − 5e-7) = 4.8916; from memory, checked against gonum's
// distuv.UnitNormal.Quantile in TestZTwoSided).
const zTwoSided = 4.891638

// samplesPerGroupPerPlay caps the nodes of a group whose cycles are kept
// from one play for the KS check, so that the kept samples are almost
// independent (they interact only through collisions; see couplingBound).
const samplesPerGroupPerPlay = 10

// ksSlack is the relative slack allowed between a sampled energy and the
// law's atoms: the sampler adds current × voltage × time in another order
// than the library, so an energy that the law holds as an atom comes out
// within a few units in the last place of it.
const ksSlack = 1e-9

// couplingBound bounds the probability that the recorded cycles of two given
// nodes of one gateway interact (one's frame overlaps the other's on the same
// channel): at most frames·(a + a_max)/(channels·T_min) for the largest
// airtime and number of transmissions of the scenario. Indicator variables of
// two such cycles then have covariance at most this bound, so the variance of
// the empirical CDF of k samples of one play is inflated by at most
// 1 + (k−1)·bound; the KS check divides its sample size by that factor.
func couplingBound(t *testing.T, m scenario.Model) float64 {
	t.Helper()
	maxAir, maxFrames, minT := 0.0, 1.0, math.Inf(1)
	for _, g := range m.Groups {
		for _, d := range g.PerDR {
			maxAir = math.Max(maxAir, d.Airtime)
		}
		maxFrames = math.Max(maxFrames, float64(g.Group.MaxTransmissions))
		minT = math.Min(minT, g.Group.Interval-g.Group.Jitter)
	}
	c := float64(len(m.Scenario.Region.UplinkChannels()))
	return maxFrames * maxFrames * 2 * maxAir / (c * minT)
}

// fleetCase is one fleet size of the validation.
type fleetCase struct {
	counts []int // nodes per demo group
	plays  int   // independent plays (fresh placement and phases)
	seed   uint64
}

// validationRow is one line of the README table.
type validationRow struct {
	nodes                int
	meanPred, meanSample float64
	maxPred, maxSample   float64
	minPred, minSample   float64
	ks, ksCrit           float64
	okPred, okSample     float64
	confPred, confSample float64 // mean per cycle of the confirmed group
}

func TestValidationAgainstPacketSampling(t *testing.T) {
	cases := []fleetCase{
		{counts: []int{2, 3, 1, 2}, plays: 6000, seed: 11},
		{counts: []int{12, 35, 5, 8}, plays: 1200, seed: 12},
		{counts: []int{60, 180, 24, 40}, plays: 500, seed: 13},
		{counts: []int{240, 720, 96, 144}, plays: 200, seed: 14},
	}
	var rows []validationRow
	for _, fc := range cases {
		s, err := scenario.Demo().WithCounts(fc.counts)
		require.NoError(t, err)
		n := s.TotalNodes()
		t.Run(fmt.Sprintf("%d nodes", n), func(t *testing.T) {
			rows = append(rows, validateFleet(t, s, fc))
		})
	}
	var b strings.Builder
	b.WriteString("| nodes | mean per cycle, law | sampled | expected largest, law | sampled | expected smallest, law | sampled | KS distance (largest over groups) | KS bound at 1e-6 | uplink success, ALOHA | sampled | confirmed group's mean, law | sampled |\n")
	b.WriteString("|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rows {
		fmt.Fprintf(&b, "| %d | %.2f mJ | %.2f mJ | %.1f mJ | %.1f mJ | %.2f mJ | %.2f mJ | %.4f | %.4f | %.4f | %.4f | %.3f mJ | %.3f mJ |\n",
			r.nodes, 1e3*r.meanPred, 1e3*r.meanSample, 1e3*r.maxPred, 1e3*r.maxSample, 1e3*r.minPred, 1e3*r.minSample, r.ks, r.ksCrit, r.okPred, r.okSample,
			1e3*r.confPred, 1e3*r.confSample)
	}
	t.Logf("validation table (README):\n%s", b.String())
	// The trend the table must show: the fleet's largest cycle grows and its
	// smallest shrinks with the fleet size.
	for i := 1; i < len(rows); i++ {
		assert.Greater(t, rows[i].maxPred, rows[i-1].maxPred)
		assert.Less(t, rows[i].minPred, rows[i-1].minPred)
	}
}

func validateFleet(t *testing.T, s scenario.Scenario, fc fleetCase) validationRow {
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	// The plan's laws: every node, heard or not (out-of-reach nodes at the
	// ADR back-off, as the sampler keeps them).
	all, err := m.Laws(2, nil)
	require.NoError(t, err)
	laws := all.GroupEnergy
	n := s.TotalNodes()
	meanPred := all.FleetEnergy.Mean()
	mx, mn := all.FleetMax, all.FleetMin

	r := rand.New(rand.NewPCG(fc.seed, 0x6a6f756c65))
	kept := make([][]float64, len(m.Groups))
	var maxes, mins, means []float64
	sent, lost := map[int]int{}, map[int]int{}
	predLost := 0.0
	for range fc.plays {
		out, err := packetsim.Play(s, packetsim.Options{Start: 120}, r)
		require.NoError(t, err)
		perGroup := make([]int, len(m.Groups))
		hi, lo, sum := math.Inf(-1), math.Inf(1), 0.0
		for i, node := range out.Nodes {
			e := out.Energy[i]
			require.Greater(t, e, 0.0, "every node records a cycle")
			hi, lo, sum = math.Max(hi, e), math.Min(lo, e), sum+e
			if perGroup[node.Group] < samplesPerGroupPerPlay {
				kept[node.Group] = append(kept[node.Group], e)
				perGroup[node.Group]++
			}
		}
		maxes, mins, means = append(maxes, hi), append(mins, lo), append(means, sum/float64(n))
		for _, f := range out.Frames {
			sent[f.DR] += f.Sent
			lost[f.DR] += f.Collided
			d, ok := drModel(m.Groups[f.Group], f.DR)
			require.True(t, ok, "group %d uses DR%d, which the model gives no share", f.Group, f.DR)
			predLost += float64(f.Sent) * (1 - d.UplinkSuccess)
		}
	}
	row := validationRow{nodes: n, meanPred: meanPred, maxPred: mx.Mean(), minPred: mn.Mean()}

	// Per-cycle energies against the library's law, group by group
	// (Kolmogorov–Smirnov with the DKW–Massart bound at level 1e-6).
	coupling := couplingBound(t, m)
	for gi, g := range m.Groups {
		k := math.Min(samplesPerGroupPerPlay, float64(g.Group.Nodes))
		nEff := int(float64(len(kept[gi])) / (1 + (k-1)*coupling))
		crit := testref.KSCritical(nEff, testref.KSLevel)
		d := testref.KSWithSlack(kept[gi], laws[gi].CDF, ksSlack)
		assert.LessOrEqual(t, d, crit, "group %q: KS distance of %d sampled cycles", g.Group.Name, len(kept[gi]))
		if len(kept[gi]) >= 4000 {
			// The check has power: the same samples reject a law 3 % off.
			off := testref.KSWithSlack(kept[gi], func(x float64) float64 { return laws[gi].CDF(x / 1.03) }, ksSlack)
			assert.Greater(t, off, crit, "group %q: a law 3 %% off passes", g.Group.Name)
		}
		if d > row.ks {
			row.ks = d
		}
		row.ksCrit = math.Max(row.ksCrit, crit)
		if g.Group.Confirmed {
			row.confPred = laws[gi].Mean()
			row.confSample, _ = meanSD(kept[gi])
		}
	}

	// Means of the fleet's mean, largest and smallest per-cycle energy: the
	// plays are independent, so each sample mean is within z·sd/√plays of the
	// law's mean at level 1e-6 (normal approximation of the mean of 100 or
	// more plays), widened by the order statistics' own moment error.
	check := func(name string, xs []float64, want, wantErr float64) float64 {
		mean, sd := meanSD(xs)
		tol := zTwoSided*sd/math.Sqrt(float64(len(xs))) + wantErr
		assert.InDelta(t, want, mean, tol, "%s: law %.6g J, sampled %.6g J over %d plays", name, want, mean, len(xs))
		return mean
	}
	row.meanSample = check("mean per cycle", means, meanPred, 0)
	mxErr, _ := mx.(orderstat.Statistic).MomentError()
	mnErr, _ := mn.(orderstat.Statistic).MomentError()
	row.maxSample = check("largest per cycle", maxes, row.maxPred, mxErr)
	row.minSample = check("smallest per cycle", mins, row.minPred, mnErr)

	// Uplink success against pure ALOHA: the collided count is compared with
	// its prediction Σ (1 − P_success) over the frames sent. A collision
	// destroys at least two frames, so the count's variance is at most twice
	// the binomial one (pairs) and, with rarer triples, taken as three times.
	total, collided := 0, 0
	for dr := range sent {
		total += sent[dr]
		collided += lost[dr]
	}
	require.Positive(t, total)
	p := predLost / float64(total)
	tol := zTwoSided*math.Sqrt(3*float64(total)*p*(1-p)) + 1
	assert.InDelta(t, predLost, float64(collided), tol, "collided frames of %d", total)
	row.okPred = 1 - p
	row.okSample = 1 - float64(collided)/float64(total)
	return row
}

func drModel(g scenario.GroupModel, dr int) (scenario.DRModel, bool) {
	for _, d := range g.PerDR {
		if d.DR == dr {
			return d, true
		}
	}
	return scenario.DRModel{}, false
}

func meanSD(xs []float64) (mean, sd float64) {
	for _, x := range xs {
		mean += x
	}
	mean /= float64(len(xs))
	for _, x := range xs {
		sd += (x - mean) * (x - mean)
	}
	return mean, math.Sqrt(sd / float64(len(xs)-1))
}

func TestZTwoSided(t *testing.T) {
	// gonum's standard normal quantile is the independent reference.
	assert.InDelta(t, distuv.UnitNormal.Quantile(1-5e-7), zTwoSided, 1e-5)
}

// ksGridBound returns an upper bound on sup|F_n − F| from cdf evaluated at m+1
// order statistics of the samples only: between two grid points both
// functions are non-decreasing, so the distance there is at most
// max(F_n(g_{j+1}⁻) − F(g_j), F(g_{j+1}) − F_n(g_j)). Used where each
// evaluation of the law is costly (numerically inverted laws).
func ksGridBound(samples []float64, cdf func(float64) float64, m int) float64 {
	xs := slices.Clone(samples)
	slices.Sort(xs)
	n := len(xs)
	fn := func(x float64) (below, at float64) { // F_n(x⁻), F_n(x)
		i, _ := slices.BinarySearch(xs, x)
		j := i
		for j < n && xs[j] == x {
			j++
		}
		return float64(i) / float64(n), float64(j) / float64(n)
	}
	grid := make([]float64, 0, m+1)
	for j := 0; j <= m; j++ {
		grid = append(grid, xs[min(n-1, j*(n-1)/m)])
	}
	grid = slices.Compact(grid)
	f := make([]float64, len(grid))
	for j, g := range grid {
		f[j] = cdf(g)
	}
	b := f[0]                      // below the smallest sample F_n = 0
	b = math.Max(b, 1-f[len(f)-1]) // at and above the largest F_n = 1
	for j := 0; j+1 < len(grid); j++ {
		_, atLo := fn(grid[j])
		belowHi, _ := fn(grid[j+1])
		b = math.Max(b, belowHi-f[j])
		b = math.Max(b, f[j+1]-atLo)
		b = math.Max(b, math.Abs(atLo-f[j]))
	}
	return b
}

// A jittered schedule with work of random length makes the per-cycle law
// continuous (computed numerically by package dist): the sampler's jittered
// uplink times and drawn durations are checked against it.
func TestValidationJittered(t *testing.T) {
	s, err := scenario.Demo().WithCounts([]int{60, 1, 1, 1})
	require.NoError(t, err)
	s.Groups = s.Groups[:1]
	s.Groups[0].Jitter = 90
	s.Groups[0].Work[0].Spread = 0.06
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	cycles, err := m.SettingCycles(2)
	require.NoError(t, err)
	law, err := m.Groups[0].MixEnergy(cycles[0])
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(21, 0x6a6974746572))
	var kept, all, playMeans []float64
	for range 400 {
		out, err := packetsim.Play(s, packetsim.Options{Start: 120}, r)
		require.NoError(t, err)
		kept = append(kept, out.Energy[:samplesPerGroupPerPlay]...)
		all = append(all, out.Energy...)
		pm, _ := meanSD(out.Energy)
		playMeans = append(playMeans, pm)
	}
	nEff := int(float64(len(kept)) / (1 + (samplesPerGroupPerPlay-1)*couplingBound(t, m)))
	crit := testref.KSCritical(nEff, testref.KSLevel)
	d := ksGridBound(kept, law.CDF, 400)
	assert.LessOrEqual(t, d, crit, "KS bound of %d jittered cycles", len(kept))
	// The law is continuous: no sampled value repeats.
	slices.Sort(all)
	assert.Equal(t, len(all), len(slices.Compact(all)))
	mean, sd := meanSD(playMeans) // plays are independent
	assert.InDelta(t, law.Mean(), mean, zTwoSided*sd/math.Sqrt(float64(len(playMeans))))
	t.Logf("jittered: KS bound %.4f (critical %.4f), mean law %.5g J, sampled %.5g J", d, crit, law.Mean(), mean)
}
