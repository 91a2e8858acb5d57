package lifesim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/lifesim"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// Sample sizes of the validation. The KS bounds at level 1e-6 (DKW with
// Massart's constant) are sqrt(ln(2e6)/(2n)): 0.060 for 2000 nodes, 0.085
// for 1000 fleets.
const (
	nodeSamples  = 2000 // independent nodes per group and law
	fleetSamples = 1000 // independent fleets
	seedNodes    = 501
	seedFleets   = 502
	seedEnv      = 503
)

// shift is the relative move of a law that each KS check must reject, so
// that no check passes whatever the law says ("a few per cent": the
// lifetimes here spread by 10 to 15 %, and the smallest move the samples
// reject is reported beside each check).
const shift = 0.05

// parallel runs job(i) for i in [0, n) on two goroutines; each job uses its
// own source seeded by (seed, i), so the results do not depend on the
// schedule.
func parallel(n int, seed uint64, job func(i int, r *rand.Rand) error) error {
	errs := make([]error, n)
	var wg sync.WaitGroup
	for w := range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := w; i < n; i += 2 {
				errs[i] = job(i, rand.New(rand.NewPCG(seed, uint64(i))))
			}
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// ksRow is one line of the figures reported to the README.
type ksRow struct {
	what     string
	n        int
	d, bound float64
	moved    float64 // smallest relative move of the law the samples reject
}

func (k ksRow) String() string {
	moved := "—"
	if !math.IsNaN(k.moved) {
		moved = fmt.Sprintf("%.1f %%", 100*k.moved)
	}
	return fmt.Sprintf("| %s | %d | %.4f | %.4f | %s |", k.what, k.n, k.d, k.bound, moved)
}

// ksGrid is the number of grid intervals of testref.KSGridBounds: the upper bound
// exceeds the true distance by at most about 1/ksGrid plus the law's rise
// over one interval, about 0.003 here.
const ksGrid = 400

// movedKS returns a lower bound on the smaller KS distance of the sorted
// xs to the law moved by a factor 1 ± s (read at ksGrid/4 points: a lower
// bound needs no fine grid).
func movedKS(xs []float64, cdf func(float64) float64, s float64) float64 {
	_, up := testref.KSGridBounds(xs, func(x float64) float64 { return cdf(x / (1 + s)) }, ksGrid/4)
	_, down := testref.KSGridBounds(xs, func(x float64) float64 { return cdf(x / (1 - s)) }, ksGrid/4)
	return math.Min(up, down)
}

// checkKS compares samples with cdf against the DKW–Massart bound at level
// 1e-6 (Massart 1990, Ann. Probab. 18(3)): an upper bound on their
// Kolmogorov–Smirnov distance (gridKS) must lie below it, and a lower bound
// on their distance to the law moved by ±shift above it. With -v it also
// finds, by bisection to 0.1 %, the smallest move both ways that the
// samples reject.
func checkKS(t *testing.T, what string, samples []float64, cdf func(float64) float64) ksRow {
	t.Helper()
	xs := slices.Clone(samples)
	slices.Sort(xs)
	bound := testref.KSCritical(len(xs), testref.KSLevel)
	d, _ := testref.KSGridBounds(xs, cdf, ksGrid)
	assert.LessOrEqual(t, d, bound, "%s: KS distance of %d samples", what, len(xs))
	assert.Greater(t, movedKS(xs, cdf, shift), bound, "%s: the law moved by %g %% passes", what, 100*shift)
	if !testing.Verbose() {
		return ksRow{what: what, n: len(xs), d: d, bound: bound, moved: math.NaN()}
	}
	// The figure for the README only (it costs some 20 more passes).
	lo, hi := 0.0, 0.2
	for hi-lo > 1e-3 {
		m := (lo + hi) / 2
		if movedKS(xs, cdf, m) > bound {
			hi = m
		} else {
			lo = m
		}
	}
	return ksRow{what: what, n: len(xs), d: d, bound: bound, moved: hi}
}

// The validation against Site: a node's lifetime law (mixed over the
// shared factors), the calendar atom, the first failure of a fleet and the
// failed-count band.
func TestAgainstSite(t *testing.T) {
	spec := siteSpec(t)
	site, err := energy.NewSite(spec)
	require.NoError(t, err)
	p, err := lifesim.NewPlayer(spec)
	require.NoError(t, err)
	var rows []ksRow
	var cover []string

	// Independent nodes: each with its own shared draw, so that nodeSamples
	// lifetimes are i.i.d. from the law Site.NodeLifetime mixes.
	nodes := make([][]lifesim.Node, fleetGroups)
	for g := range fleetGroups {
		nodes[g] = make([]lifesim.Node, nodeSamples)
		require.NoError(t, parallel(nodeSamples, seedNodes+uint64(100*g), func(i int, r *rand.Rand) error {
			n, err := p.Node(g, p.Shared(r), r)
			nodes[g][i] = n
			return err
		}))
	}
	t.Run("node lifetime", func(t *testing.T) {
		for g := range fleetGroups {
			law, err := site.NodeLifetime(g)
			require.NoError(t, err)
			xs := make([]float64, nodeSamples)
			for i, n := range nodes[g] {
				xs[i] = n.Lifetime
			}
			rows = append(rows, checkKS(t, fmt.Sprintf("Site.NodeLifetime(%s)", site.Name(g)), xs, law.CDF))
		}
	})
	t.Run("calendar atom", func(t *testing.T) {
		for g := range fleetGroups {
			// The count of nodes whose energy ran out before the calendar
			// limit is Binomial(nodeSamples, EnergyBinds): its 1e-6
			// acceptance interval (testref.BinomialInterval, exact tails).
			k := 0
			for _, n := range nodes[g] {
				if !n.Calendar {
					k++
				}
			}
			pe := site.EnergyBinds(g)
			lo, hi := testref.BinomialInterval(nodeSamples, pe, testref.BinLevel)
			assert.True(t, k >= lo && k <= hi, "group %s: %d of %d ended by energy, law %.4f gives [%d, %d]", site.Name(g), k, nodeSamples, pe, lo, hi)
			cover = append(cover, fmt.Sprintf("| EnergyBinds(%s) | %.4f | %.4f | [%.4f, %.4f] |", site.Name(g), pe,
				float64(k)/nodeSamples, float64(lo)/nodeSamples, float64(hi)/nodeSamples))
		}
		// The atom is there: group C's calendar ends between a quarter and
		// three quarters of its lives.
		assert.InDelta(t, 0.5, site.EnergyBinds(2), 0.25)
	})

	fleets := make([]lifesim.Fleet, fleetSamples)
	require.NoError(t, parallel(fleetSamples, seedFleets, func(i int, r *rand.Rand) error {
		f, err := p.Fleet(r)
		fleets[i] = f
		return err
	}))
	t.Run("first failure", func(t *testing.T) {
		law, err := site.FirstFailure()
		require.NoError(t, err)
		xs := make([]float64, fleetSamples)
		for i, f := range fleets {
			xs[i] = f.FirstFailure()
		}
		rows = append(rows, checkKS(t, "Site.FirstFailure", xs, law.CDF))
		for g := range fleetGroups {
			law, err := site.GroupFirstFailure(g)
			require.NoError(t, err)
			for i, f := range fleets {
				xs[i] = f.Group(g).FirstFailure()
			}
			rows = append(rows, checkKS(t, fmt.Sprintf("Site.GroupFirstFailure(%s)", site.Name(g)), xs, law.CDF))
		}
	})
	t.Run("fraction failed", func(t *testing.T) {
		size := fleetGroups * perGroup
		for _, q := range []float64{0.25} {
			law, err := site.FractionFailed(q)
			require.NoError(t, err)
			k := max(1, int(math.Ceil(q*float64(size)))) // the k-th flat battery
			xs := make([]float64, fleetSamples)
			for i, f := range fleets {
				ls := make([]float64, len(f.Nodes))
				for j, n := range f.Nodes {
					ls[j] = n.Lifetime
				}
				slices.Sort(ls)
				xs[i] = ls[k-1]
			}
			rows = append(rows, checkKS(t, fmt.Sprintf("Site.FractionFailed(%g)", q), xs, law.CDF))
		}
	})
	t.Run("replacement plan", func(t *testing.T) {
		const risk = 0.1
		plan, err := site.ReplacementPlan(risk)
		require.NoError(t, err)
		require.Len(t, plan.Groups, fleetGroups)
		// Four binomial checks (the fleet and each group): Bonferroni.
		level := testref.BinLevel / (fleetGroups + 1)
		check := func(what string, law dist.Law, date float64, first func(f lifesim.Fleet) float64) {
			p := law.CDF(date) // the plan's date is the risk-quantile: P(first failure <= date) >= risk
			assert.GreaterOrEqual(t, p, risk-1e-9, what)
			k := 0
			for _, f := range fleets {
				if first(f) <= date {
					k++
				}
			}
			lo, hi := testref.BinomialInterval(fleetSamples, p, level)
			assert.True(t, k >= lo && k <= hi, "%s: %d of %d fleets failed by the plan's date, law %.4f gives [%d, %d]", what, k, fleetSamples, p, lo, hi)
			cover = append(cover, fmt.Sprintf("| %s: any flat by the plan's date | %.4f | %.4f | [%.4f, %.4f] |", what, p,
				float64(k)/fleetSamples, float64(lo)/fleetSamples, float64(hi)/fleetSamples))
		}
		ff, err := site.FirstFailure()
		require.NoError(t, err)
		check("ReplacementPlan(0.1) fleet", ff, plan.FleetReplaceBy, lifesim.Fleet.FirstFailure)
		for g, gp := range plan.Groups {
			law, err := site.GroupFirstFailure(g)
			require.NoError(t, err)
			check(fmt.Sprintf("ReplacementPlan(0.1) %s", gp.Name), law, gp.ReplaceBy, func(f lifesim.Fleet) float64 { return f.Group(g).FirstFailure() })
			// ExpectedFailed: the mean over independent fleets of the
			// group's count by ReplaceBy, within z·sd/√F of it (normal
			// approximation of a mean of 1000 fleets; z two-sided at 1e-6).
			const z = 4.891638 // Φ⁻¹(1 − 5e-7), from memory; gonum distuv.UnitNormal.Quantile gives 4.8916
			sum, sum2 := 0.0, 0.0
			for _, f := range fleets {
				c := float64(f.Group(g).FailedBy(gp.ReplaceBy))
				sum += c
				sum2 += c * c
			}
			mean := sum / fleetSamples
			sd := math.Sqrt((sum2 - fleetSamples*mean*mean) / (fleetSamples - 1))
			assert.InDelta(t, gp.ExpectedFailed, mean, z*sd/math.Sqrt(fleetSamples)+1e-9, "group %s: expected failed by ReplaceBy", gp.Name)
		}
	})
	t.Run("failed-count band", func(t *testing.T) {
		dates := []float64{0.8, 1.0, 1.2} // years
		for _, y := range dates {
			at := y * energy.Year
			law, err := site.FailedBy(at)
			require.NoError(t, err)
			lo, hi := law.Quantile(0.05), law.Quantile(0.95)
			// The band's own probability (counts are whole numbers, so it
			// is at least, not exactly, 90 %).
			pBand := law.CDF(hi) - law.CDF(lo-0.5)
			k := 0
			counts := make([]float64, fleetSamples)
			for i, f := range fleets {
				c := f.FailedBy(at)
				counts[i] = float64(c)
				if float64(c) >= lo && float64(c) <= hi {
					k++
				}
			}
			// Bonferroni over the dates.
			blo, bhi := testref.BinomialInterval(fleetSamples, pBand, testref.BinLevel/float64(len(dates)))
			assert.True(t, k >= blo && k <= bhi, "at %g y: %d of %d fleets in [%g, %g], law %.4f gives [%d, %d]", y, k, fleetSamples, lo, hi, pBand, blo, bhi)
			cover = append(cover, fmt.Sprintf("| FailedBy(%g y) in [%g, %g] | %.4f | %.4f | [%.4f, %.4f] |", y, lo, hi, pBand,
				float64(k)/fleetSamples, float64(blo)/fleetSamples, float64(bhi)/fleetSamples))
			// The whole count law too (KS is conservative for a discrete
			// law: the DKW bound holds).
			bound := testref.KSCritical(fleetSamples, testref.KSLevel)
			d := testref.KSStatistic(counts, law.CDF)
			assert.LessOrEqual(t, d, bound, "at %g y: KS of the failed counts", y)
			rows = append(rows, ksRow{what: fmt.Sprintf("Site.FailedBy(%g y) counts", y), n: fleetSamples, d: d, bound: bound, moved: math.NaN()})
		}
	})
	var b strings.Builder
	b.WriteString("| law | samples | KS distance | bound at 1e-6 | smallest move rejected |\n|---|---:|---:|---:|---:|\n")
	for _, r := range rows {
		b.WriteString(r.String() + "\n")
	}
	b.WriteString("\n| share | law | sampled | 1e-6 interval |\n|---|---:|---:|---:|\n")
	for _, c := range cover {
		b.WriteString(c + "\n")
	}
	t.Logf("validation figures:\n%s", b.String())
}

// NewNodeLifetime in fixed environments (a cold, poor batch and a warm,
// good one): nodes played under those shared factors against the
// conditional law.
func TestAgainstNodeLifetime(t *testing.T) {
	spec := siteSpec(t)
	p, err := lifesim.NewPlayer(spec)
	require.NoError(t, err)
	envs := []energy.Conditions{
		{BatchFactor: 0.96, TemperatureOffset: -5},
		{BatchFactor: 1.03, TemperatureOffset: 4},
	}
	var rows []ksRow
	for e, cond := range envs {
		for g := range fleetGroups {
			law, err := energy.NewNodeLifetime(spec.Groups[g].Node, energy.Environment{Climate: spec.Climate, Conditions: cond})
			require.NoError(t, err)
			xs := make([]float64, nodeSamples)
			require.NoError(t, parallel(len(xs), seedEnv+uint64(10*e+g), func(i int, r *rand.Rand) error {
				n, err := p.Node(g, cond, r)
				xs[i] = n.Lifetime
				return err
			}))
			rows = append(rows, checkKS(t, fmt.Sprintf("NewNodeLifetime(%s, b=%g, ΔT=%+g °C)", spec.Groups[g].Name, cond.BatchFactor, cond.TemperatureOffset), xs, law.CDF))
		}
	}
	var b strings.Builder
	for _, r := range rows {
		b.WriteString(r.String() + "\n")
	}
	t.Logf("validation figures:\n%s", b.String())
}
