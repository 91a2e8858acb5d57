package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

func runArgs(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	key := strings.Join(args, "\x00")
	shareable := !strings.Contains(key, "-scenario")
	if shareable {
		demoRuns.Lock()
		defer demoRuns.Unlock()
		if r, ok := demoRuns.m[key]; ok {
			return r.code, r.out, r.err
		}
	}
	var out, errb bytes.Buffer
	code = run(args, &out, &errb)
	if shareable {
		demoRuns.m[key] = demoRun{code, out.String(), errb.String()}
	}
	return code, out.String(), errb.String()
}

// demoRuns holds the runs on the built-in demo by their arguments: the
// program's output depends on its arguments alone (the same bits on every
// run; TestDemoOutputRepeats checks it), so tests that read the same run
// share it instead of computing the plan again (go test ./... ≤ 90 s,
// issue 12). Runs that read files (-scenario) are not shared.
var demoRuns = struct {
	sync.Mutex
	m map[string]demoRun
}{m: map[string]demoRun{}}

type demoRun struct {
	code     int
	out, err string
}

// TestDemoOutputRepeats: two runs with the same arguments print the same
// report, so sharing one run between tests (demoRuns) hides nothing.
func TestDemoOutputRepeats(t *testing.T) {
	code, shared, errs := runArgs(t, "-quiet", "-json")
	require.Equal(t, 0, code, errs)
	var fresh, errb bytes.Buffer
	require.Equal(t, 0, run([]string{"-quiet", "-json"}, &fresh, &errb), errb.String())
	require.Equal(t, shared, fresh.String())
}

func TestDefaultReport(t *testing.T) {
	code, out, errs := runArgs(t)
	require.Equal(t, 0, code, errs)
	for _, want := range []string{
		"Fleet energy plan: Lower Quillmoor polder district (fictional)",
		"Group 1 of 4: dyke piezometers", "Group 4 of 4: weather masts",
		"energy per cycle", "where it goes", "runs per cycle", "mean (mJ)", "of variance", "for a state that runs instead of a costlier one, which may then exceed 100 %",
		"data rates", "DR5 (SF7/125 kHz)",
		"duty cycle", "battery lifetime", "Fleet: energy per cycle", "largest of 304", "smallest of 304",
		"outlier threshold", "first failure", "1 % at end", "10 % at end", "50 % at end", "planned replacement",
		"usable capacity", "calendar limit", "spread of the lifetime (shares of its variance)", "climate", "cell batch capacity sd",
		"expected failures before it", "replace by",
	} {
		assert.Contains(t, out, want)
	}
	// Units are printed with the figures.
	for _, unit := range []string{" mJ", " µA", " years", " s "} {
		assert.Contains(t, out, unit)
	}
	// The report ends with the cautions, battery handling and radio regulation among them.
	i := strings.LastIndex(out, "Cautions\n--------")
	require.Positive(t, i)
	tail := out[i:]
	assert.Contains(t, tail, "Battery handling")
	assert.Contains(t, tail, "Radio regulation")
	assert.Contains(t, tail, "not guarantees")
	assert.Contains(t, errs, "fleetplan [", "progress goes to stderr")
	assert.NotContains(t, out, "fleetplan [")
	assert.NotContains(t, out, "NaN")
	assert.NotContains(t, out, "e+", "no figure in exponent form")
	assert.NotContains(t, out, "e-0", "no figure in exponent form")
}

func TestJSON(t *testing.T) {
	code, out, errs := runArgs(t, "-json", "-quiet")
	require.Equal(t, 0, code, errs)
	assert.Empty(t, errs)
	var p fleet.Plan
	require.NoError(t, json.Unmarshal([]byte(out), &p))
	assert.Equal(t, 304, p.Nodes)
	require.Len(t, p.Groups, 4)
	g := p.Groups[1]
	assert.Equal(t, "field soil probes", g.Name)
	assert.Less(t, g.EnergyPerCycle.In90[0], g.EnergyPerCycle.Median)
	assert.Less(t, g.EnergyPerCycle.Median, g.EnergyPerCycle.In90[1])
	assert.LessOrEqual(t, g.EnergyPerCycle.In99[0], g.EnergyPerCycle.In90[0])
	sum := 0.0
	for _, s := range g.Breakdown {
		sum += s.ShareMean
	}
	assert.InDelta(t, 1, sum, 1e-9, "shares of the mean add to 1")
	share := 0.0
	for _, d := range g.DataRates {
		share += d.Share
	}
	assert.InDelta(t, 1, share, 1e-9)
	f := p.Fleet
	assert.Greater(t, f.MaxPerCycle.Mean, f.EnergyPerCycle.Mean)
	assert.Less(t, f.MinPerCycle.Mean, f.EnergyPerCycle.Mean)
	assert.GreaterOrEqual(t, f.OutlierJ, f.MaxPerCycle.Median)
	require.Len(t, f.FlatBy, 3)
	assert.LessOrEqual(t, f.FirstFailure.Median, f.FlatBy[0].Median)
	assert.Less(t, f.FlatBy[0].Median, f.FlatBy[2].Median)
	assert.InDelta(t, 5, f.Replacement.AfterYears, 1e-12)
	assert.LessOrEqual(t, float64(f.Replacement.Failures90[0]), f.Replacement.ExpectedFailures)
	assert.GreaterOrEqual(t, float64(f.Replacement.Failures90[1]), f.Replacement.ExpectedFailures)
	// The replacement date for the acceptable risk is the risk quantile of
	// the first failure: no later than the first failure's median.
	assert.LessOrEqual(t, f.ReplaceByRisk, f.FirstFailure.Median)
	assert.NotEmpty(t, p.Cautions)

	// Credible intervals: every group's lifetime respects its calendar
	// limit, says which limit binds, and splits its variance; the groups
	// the energy ends at all have intervals of positive width.
	for _, g := range p.Groups {
		assert.Positive(t, g.CalendarLimit)
		assert.LessOrEqual(t, g.Lifetime.In99[1], g.CalendarLimit+1e-12, g.Name)
		assert.GreaterOrEqual(t, g.EnergyBinds, 0.0)
		assert.LessOrEqual(t, g.EnergyBinds, 1.0)
		sp := g.Spread
		assert.InDelta(t, 1, sp.PerCycle+sp.Setting+sp.Capacity+sp.Floor+sp.Active+sp.Batch+sp.Temperature, 1e-9, g.Name)
		if g.EnergyBinds > 0.05 {
			assert.Less(t, g.Lifetime.In90[0], g.Lifetime.In90[1], g.Name)
			assert.Less(t, g.FirstFailure.In90[0], g.FirstFailure.In90[1], g.Name)
		}
	}
	assert.Less(t, f.FirstFailure.In90[0], f.FirstFailure.In90[1])
	assert.Less(t, f.FlatBy[0].In90[0], f.FlatBy[0].In90[1])
	assert.Less(t, f.Replacement.Failures90[0], f.Replacement.Failures90[1])
	require.Len(t, p.Cells, 2)
	assert.InDelta(t, 0.02, p.Shared.BatchCapacitySD, 1e-15)
}

func TestBadScenarioRejected(t *testing.T) {
	var m map[string]any
	require.NoError(t, json.Unmarshal(scenario.DemoJSON(), &m))
	g := m["groups"].([]any)[2].(map[string]any)
	g["max_transmissions"] = 40
	delete(m["cells"].([]any)[0].(map[string]any), "capacity_mah")
	data, err := json.Marshal(m)
	require.NoError(t, err)
	path := filepath.Join(t.TempDir(), "bad.json")
	require.NoError(t, os.WriteFile(path, data, 0o600))

	code, out, errs := runArgs(t, "-scenario", path)
	assert.Equal(t, 1, code)
	assert.Empty(t, out, "nothing is half-computed")
	assert.Contains(t, errs, "is not a usable scenario")
	assert.Contains(t, errs, "groups[2].max_transmissions = 40: must be a whole number in [1, 15]")
	assert.Contains(t, errs, "cells[0].capacity_mah: missing")

	code, _, errs = runArgs(t, "-scenario", filepath.Join(t.TempDir(), "absent.json"))
	assert.Equal(t, 1, code)
	assert.Contains(t, errs, "no such file")

	code, _, _ = runArgs(t, "-no-such-flag")
	assert.Equal(t, 2, code)
	code, _, _ = runArgs(t, "extra")
	assert.Equal(t, 2, code)
}

func TestOwnScenarioFile(t *testing.T) {
	code, demo, _ := runArgs(t, "-print-demo")
	require.Equal(t, 0, code)
	path := filepath.Join(t.TempDir(), "site.json")
	require.NoError(t, os.WriteFile(path, []byte(demo), 0o600))
	code, out, errs := runArgs(t, "-scenario", path, "-quiet")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, out, "scenario             "+path)
}

// TestFiguresFlagRefused: -figures is refused before anything is computed,
// with the command of the figures program, which draws them now.
func TestFiguresFlagRefused(t *testing.T) {
	code, out, errs := runArgs(t, "-figures", "out")
	assert.Equal(t, 2, code)
	assert.Empty(t, out)
	assert.Contains(t, errs, "go run ./examples/fleetplan/figures")
	assert.NotContains(t, errs, "assembling the model", "refused before computing")
}

// firstGroupFile writes the demo reduced to its first group and gateway,
// without shadowing, with the group edited by edit, and returns its path.
func firstGroupFile(t *testing.T, edit func(g map[string]any)) string {
	t.Helper()
	var m map[string]any
	require.NoError(t, json.Unmarshal(scenario.DemoJSON(), &m))
	g := m["groups"].([]any)[0].(map[string]any)
	edit(g)
	m["groups"] = []any{g}
	m["gateways"] = m["gateways"].([]any)[:1]
	m["radio_environment"].(map[string]any)["shadowing_sd_db"] = 0
	data, err := json.Marshal(m)
	require.NoError(t, err)
	path := filepath.Join(t.TempDir(), "site.json")
	require.NoError(t, os.WriteFile(path, data, 0o600))
	return path
}

// A degenerate but valid site: one node that always sends at DR5 and the
// lowest power, is never answered and keeps a fixed schedule, so its
// per-cycle energy is a single value. The plan still prints, with no NaN.
func TestConstantEnergyScenario(t *testing.T) {
	path := firstGroupFile(t, func(g map[string]any) {
		g["nodes"] = 1
		g["inner_radius_m"], g["outer_radius_m"] = 10, 11
		g["answer_share"] = 0
	})
	code, out, errs := runArgs(t, "-scenario", path, "-quiet")
	require.Equal(t, 0, code, errs)
	assert.NotContains(t, out, "NaN")
	assert.Contains(t, out, "largest of 1")
	code, js, errs := runArgs(t, "-scenario", path, "-quiet", "-json")
	require.Equal(t, 0, code, errs)
	var p fleet.Plan
	require.NoError(t, json.Unmarshal([]byte(js), &p))
	require.Len(t, p.Groups, 1)
	assert.Zero(t, p.Groups[0].EnergyPerCycle.SD)
	assert.Nil(t, p.Groups[0].Breakdown[0].ShareVariance)
}

// A group whose every node misses the installation margin is planned, not
// dropped: all of it at the ADR back-off setting (LoRaWAN L2 1.0.4
// §4.3.1.1, from memory: slowest data rate, full power), flagged loudly.
func TestGroupWhollyOutOfReachPlanned(t *testing.T) {
	path := firstGroupFile(t, func(g map[string]any) {
		g["nodes"] = 5
		g["inner_radius_m"], g["outer_radius_m"] = 40000, 50000
	})
	code, out, errs := runArgs(t, "-scenario", path, "-quiet")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, out, "OUT OF REACH: EVERY node of group")
	assert.Contains(t, out, "EVERY node is out of reach")
	assert.NotContains(t, out, "NaN")

	code, js, errs := runArgs(t, "-scenario", path, "-quiet", "-json")
	require.Equal(t, 0, code, errs)
	var p fleet.Plan
	require.NoError(t, json.Unmarshal([]byte(js), &p))
	gp := p.Groups[0]
	assert.Equal(t, 1.0, gp.OutOfReachPlanned)
	require.Len(t, gp.DataRates, 1)
	assert.True(t, gp.DataRates[0].OutOfReach)
	assert.Equal(t, 1.0, gp.DataRates[0].Share)
	assert.Zero(t, gp.DataRates[0].UplinkSuccess)
	assert.Positive(t, gp.Lifetime.Median)
	assert.InDelta(t, gp.OutOfReachCurrentA, gp.Current.Mean, 1e-15, "every node draws the back-off setting's current")
}

// The demo's out-of-reach shares are planned and counted: the data-rate
// table's shares, the back-off row's included, sum to 1; the cautions no
// longer say they are left out.
func TestDemoPlansOutOfReachNodes(t *testing.T) {
	code, js, errs := runArgs(t, "-quiet", "-json")
	require.Equal(t, 0, code, errs)
	var p fleet.Plan
	require.NoError(t, json.Unmarshal([]byte(js), &p))
	for _, g := range p.Groups {
		sum := 0.0
		last := g.DataRates[len(g.DataRates)-1]
		for _, d := range g.DataRates {
			sum += d.Share
		}
		assert.InDelta(t, 1, sum, 1e-12, g.Name)
		assert.True(t, last.OutOfReach, g.Name)
		assert.Equal(t, g.OutOfReach, last.Share, g.Name)
		assert.Equal(t, 0, last.DR, "EU863-870's slowest data rate")
		assert.Equal(t, float64(g.MaxTransmission), last.Frames)
	}
	warned := 0
	for _, w := range p.Warnings {
		if strings.HasPrefix(w, "OUT OF REACH") {
			warned++
		}
	}
	assert.Equal(t, 2, warned, "two demo groups have more than 1 % out of reach")
	for _, c := range p.Cautions {
		assert.NotContains(t, c, "left out")
	}
	// The confirmed group's unheard nodes send every attempt: the heaviest.
	assert.True(t, p.Groups[2].OutOfReachHeaviest)
}

// A US902-928 site runs end to end: no duty-cycle sub-bands, each uplink
// checked against the 400 ms dwell time (RP002-1.0.3 §2.5, from memory),
// the back-off setting at DR0 (SF10) and 30 dBm, and the channel caution.
func TestUS902928Plan(t *testing.T) {
	path := filepath.Join("..", "..", "radio", "lora", "scenario", "testdata", "us902-928.json")
	code, out, errs := runArgs(t, "-scenario", path, "-quiet")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, out, "region               US902-928")
	assert.Contains(t, out, "DR4 (SF8/500 kHz)")
	assert.Contains(t, out, "none in US902-928; each uplink against its 400.0 ms dwell time")
	assert.NotContains(t, out, "NaN")

	code, js, errs := runArgs(t, "-scenario", path, "-quiet", "-json")
	require.Equal(t, 0, code, errs)
	var p fleet.Plan
	require.NoError(t, json.Unmarshal([]byte(js), &p))
	assert.Equal(t, "US902-928", p.Region)
	for _, g := range p.Groups {
		dc := g.DutyCycle
		assert.Empty(t, dc.SubBand)
		assert.Equal(t, 0.4, dc.DwellTimeS)
		assert.True(t, dc.Feasible, "every payload the format admits fits the dwell time")
		for _, d := range g.DataRates {
			if d.OutOfReach {
				assert.Equal(t, 0, d.DR)
				assert.Equal(t, "DR0 (SF10/125 kHz)", d.Name)
			}
		}
		assert.Positive(t, g.Lifetime.Median)
	}
	found := false
	for _, c := range p.Cautions {
		found = found || strings.HasPrefix(c, "US902-928: the gateway is taken to hear all 64 uplink channels")
	}
	assert.True(t, found, "the channel caution")
	// No duty-cycle sub-bands: one budget row per gateway, the transmitter.
	require.Len(t, p.GatewayBudgets, len(p.Gateways))
	for _, b := range p.GatewayBudgets {
		assert.Equal(t, "transmitter", b.SubBand)
		assert.Equal(t, 1.0, b.Limit)
	}
	assert.Contains(t, out, "Gateways: downlink airtime")
}

// The gateways' budget table in the report and the JSON: the demo's two
// gateways each use the EU863-870 RX1 sub-band (868.0–868.6 MHz, 1 %) and
// RX2's (869.4–869.65 MHz, 10 %; ERC Rec. 70-03 Annex 1), well below the
// limits; every used share is at most the limit and at most what is
// needed.
func TestGatewayBudgetSection(t *testing.T) {
	code, js, errs := runArgs(t, "-quiet", "-json")
	require.Equal(t, 0, code, errs)
	var p fleet.Plan
	require.NoError(t, json.Unmarshal([]byte(js), &p))
	require.Len(t, p.GatewayBudgets, 4)
	for _, b := range p.GatewayBudgets {
		assert.Contains(t, []float64{0.01, 0.1}, b.Limit, b.SubBand)
		assert.LessOrEqual(t, b.UsedRX1+b.UsedRX2+b.FallbackUsed, b.Limit)
		assert.LessOrEqual(t, b.UsedRX1, b.OfferedRX1)
		assert.LessOrEqual(t, b.UsedRX2+b.FallbackUsed, b.OfferedRX2*(1+1e-12))
		assert.False(t, b.Over, "the demo's answers are light")
	}
	assert.Contains(t, js, `"gateway_budgets"`)
	code, out, errs := runArgs(t, "-quiet")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, out, "Gateways: downlink airtime")
	assert.Contains(t, out, "868.0–868.60 MHz (1 %)")
}

// Each group's outlier threshold is the upper 1 % point of the largest of
// its n cycles: P(max > x) = 1 − F(x)^n = −expm1(n·log1p(−S(x))) (independent
// nodes; the closed form, evaluated here from the group's law) is at most
// 1 % at the threshold and above 1 % just below it.
func TestGroupOutlierThresholds(t *testing.T) {
	p, err := fleet.Build(scenario.Demo(), "demo", func(string, ...any) {})
	require.NoError(t, err)
	// The program decides no warning itself: they are the model's.
	ws, err := p.Laws.Warnings()
	require.NoError(t, err)
	var texts []string
	for _, w := range ws {
		texts = append(texts, w.Text)
	}
	assert.Equal(t, texts, p.Warnings)
	for i, g := range p.Groups {
		l := p.Laws.GroupEnergy[i]
		n := float64(g.Nodes)
		over := func(x float64) float64 { return -math.Expm1(n * math.Log1p(-l.Survival(x))) }
		x := g.OutlierJ
		assert.LessOrEqual(t, over(x), fleet.OutlierLevel*(1+1e-9), g.Name)
		assert.Greater(t, over(x*(1-1e-6)), fleet.OutlierLevel, g.Name)
		assert.LessOrEqual(t, x, p.Fleet.OutlierJ*(1+1e-9), "no group's threshold above the fleet's")
	}
}

// The report's Laws section gives every group's and the fleet's laws, one
// line each (wrapped), with support, method and stated error.
func TestReportLawsSection(t *testing.T) {
	code, out, errs := runArgs(t, "-quiet")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, out, "run with -scenario FILE for your own, -print-demo for its file)", "text printed bare is escaped, not cut short")
	i := strings.Index(out, "Laws\n----")
	require.Positive(t, i)
	laws := out[i:strings.Index(out, "Warnings\n--------")]
	for _, g := range []string{"dyke piezometers", "field soil probes", "pump alarms", "weather masts"} {
		assert.Contains(t, laws, g+", energy per cycle: mean")
		assert.Contains(t, laws, g+", lifetime: mean")
	}
	assert.Contains(t, laws, "exact: finite discrete")
	assert.Contains(t, laws, "CDF error ≤")
	assert.Equal(t, 4*3+4, strings.Count(laws, "  - "), "one entry per law")
	assert.Len(t, regexp.MustCompile(`support\s+\[`).FindAllString(laws, -1), 4*3+4)
}
