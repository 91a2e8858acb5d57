package scenario_test

import (
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

func TestDemoParses(t *testing.T) {
	s := scenario.Demo()
	assert.Equal(t, "EU863-870", s.Region.Name())
	assert.Len(t, s.Gateways, 2)
	assert.Len(t, s.Groups, 4)
	assert.Equal(t, 304, s.TotalNodes())
	// Units are converted to SI on reading.
	assert.InDelta(t, 2.5e-6, s.Nodes[0].Sleep, 1e-18)
	assert.InDelta(t, 0.0115, s.Nodes[0].Receive, 1e-15)
	assert.InDelta(t, 0.010, s.Nodes[0].WindowMargin, 1e-15)
	assert.InDelta(t, 2400*3.6, s.Cells[0].Spec.Charge, 1e-9)
	assert.InDelta(t, 0.01, s.Cells[0].Spec.SelfDischargePerYear, 1e-15)
	assert.InDelta(t, 5*energy.Year, s.Plan.ReplaceAfter, 1e-6)
	g := s.Groups[1]
	assert.Equal(t, "field soil probes", g.Name)
	assert.Equal(t, 0, g.Gateway)
	assert.InDelta(t, 0.35, g.Work[0].Duration, 1e-15)
	assert.Zero(t, g.Work[0].Spread)
	// Transmit levels are ordered by TXPower index (EIRP falling) and cover the region.
	require.Len(t, s.Nodes[0].Transmit, len(s.Region.TXPowers()))
	for i, p := range s.Region.TXPowers() {
		assert.Equal(t, p, s.Nodes[0].Transmit[i].EIRP)
	}
	cur, ok := s.Nodes[0].TransmitCurrent(14)
	assert.True(t, ok)
	assert.InDelta(t, 0.044, cur, 1e-15)
	_, err := energy.NewBattery(s.Cells[0].Spec)
	require.NoError(t, err)
	// Format 2's additions.
	require.NotNil(t, s.Climate)
	assert.InDelta(t, 17.5, s.Climate.Month(6), 1e-12) // July
	assert.Equal(t, 3, s.StartMonth)                   // April, 0-based
	assert.Equal(t, energy.SharedSpread{Batch: 0.02, Temperature: 1}, s.Shared)
	assert.InDelta(t, 0.04, s.Cells[0].CapacitySD, 1e-15)
	assert.InDelta(t, 15*energy.Year, s.Cells[0].CalendarLife, 1e-6)
	require.NotNil(t, s.Cells[0].Thermal)
	require.NotNil(t, s.Cells[0].Voltage)
	assert.InDelta(t, 6*energy.Month, g.StorageTime, 1e-6)
	assert.Equal(t, 1, s.Groups[3].Cell) // the weather masts' spiral cell
	assert.InDelta(t, 3.6/3.3, s.Nodes[0].Supply.EnergyScale(3.6), 1e-15)
}

// A file of the first format (one node and one cell for the site) is still
// read, as a site without spreads, climate or calendar.
func TestFormat1StillRead(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("testdata", "format1.json"))
	require.NoError(t, err)
	s, err := scenario.Parse(data)
	require.NoError(t, err)
	require.Len(t, s.Nodes, 1)
	require.Len(t, s.Cells, 1)
	assert.Nil(t, s.Climate)
	assert.Nil(t, s.Cells[0].Thermal)
	assert.Zero(t, s.Cells[0].CapacitySD)
	assert.Equal(t, 304, s.TotalNodes())
	assert.InDelta(t, 0.9, s.Cells[0].Spec.TemperatureDerating, 1e-15)
}

func TestDemoJSONIsACopy(t *testing.T) {
	a := scenario.DemoJSON()
	a[0] = 'x'
	b := scenario.DemoJSON()
	assert.Equal(t, byte('{'), b[0])
	s, err := scenario.Parse(b)
	require.NoError(t, err)
	assert.Equal(t, scenario.Demo().TotalNodes(), s.TotalNodes())
}

func TestLoad(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "s.json")
	require.NoError(t, os.WriteFile(path, scenario.DemoJSON(), 0o600))
	s, err := scenario.Load(path)
	require.NoError(t, err)
	assert.Equal(t, 304, s.TotalNodes())
	_, err = scenario.Load(filepath.Join(dir, "absent.json"))
	require.Error(t, err)
}

// mutate returns the demo file with edit applied to its decoded tree.
func mutate(t *testing.T, edit func(m map[string]any)) []byte {
	t.Helper()
	var m map[string]any
	require.NoError(t, json.Unmarshal(scenario.DemoJSON(), &m))
	edit(m)
	out, err := json.Marshal(m)
	require.NoError(t, err)
	return out
}

func obj(v any) map[string]any              { return v.(map[string]any) }
func node0(m map[string]any) map[string]any { return obj(m["nodes"].([]any)[0]) }
func cell0(m map[string]any) map[string]any { return obj(m["cells"].([]any)[0]) }
func group(m map[string]any, i int) map[string]any {
	return obj(m["groups"].([]any)[i])
}

func TestMalformedRejected(t *testing.T) {
	cases := []struct {
		name  string
		file  func(t *testing.T) []byte
		field string // the field the message must name
		value string // the value it must show ("" when missing)
		rule  string // a piece of the rule it must state
	}{
		{"missing field", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { delete(group(m, 1), "payload_bytes") })
		}, "groups[1].payload_bytes", "", "missing"},
		{"unknown field", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 0)["payload"] = 10 })
		}, "groups[0].payload", "10", "unknown field"},
		{"misspelt top-level field", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { m["plans"] = m["plan"]; delete(m, "plan") })
		}, "plans", "an object", "unknown field"},
		{"wrong type", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 0)["nodes"] = "sixty" })
		}, "groups[0].nodes", `"sixty"`, "whole number"},
		{"fractional count", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 2)["nodes"] = 12.5 })
		}, "groups[2].nodes", "12.5", "whole number in [1, 100000]"},
		{"zero nodes", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 2)["nodes"] = 0 })
		}, "groups[2].nodes", "0", "whole number in [1, 100000]"},
		{"out of range", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { obj(m["radio_environment"])["loss_exponent"] = -2 })
		}, "radio_environment.loss_exponent", "-2", "in [1, 8]"},
		{"payload too large for DR0", func(t *testing.T) []byte {
			// EU863-870 DR0 carries at most 51 application bytes (RP002-1.0.3, table "EU863-870 maximum payload size").
			return mutate(t, func(m map[string]any) { group(m, 3)["payload_bytes"] = 52 })
		}, "groups[3].payload_bytes", "52", "[0, 51] (the application payload of DR0"},
		{"jitter too large", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 1)["interval_jitter_s"] = 900 })
		}, "groups[1].interval_jitter_s", "900", "less than half of report_interval_s (900 s)"},
		{"RX1DROffset beyond the region's", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 0)["rx1_dr_offset"] = 6 })
		}, "groups[0].rx1_dr_offset", "6", "[0, 5]"},
		{"RX2 at an FSK data rate", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) {
				group(m, 0)["rx2"] = map[string]any{"frequency_mhz": 869.525, "data_rate": 7}
			})
		}, "groups[0].rx2.data_rate", "7", "LoRa downlink data rate"},
		{"RX2 outside the sub-bands", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) {
				group(m, 0)["rx2"] = map[string]any{"frequency_mhz": 868.65, "data_rate": 3}
			})
		}, "groups[0].rx2.frequency_mhz", "868.65", "outside every duty-cycle sub-band"},
		{"channel block in EU863-870", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { m["gateways"].([]any)[0].(map[string]any)["channel_block"] = 1 })
		}, "gateways[0].channel_block", "", "no blocks of eight channels"},
		{"a channel the plan lacks", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { m["gateways"].([]any)[0].(map[string]any)["channels"] = []any{0, 5} })
		}, "gateways[0].channels[1]", "5", "channel index 0 … 2"},
		{"rejoin every 0 reports", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 0)["rejoin_every_reports"] = 0 })
		}, "groups[0].rejoin_every_reports", "0", "[1, 1000000]"},
		{"confirmed not always answered", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 2)["answer_share"] = 0.5 })
		}, "groups[2].answer_share", "0.5", "must be 1 for confirmed"},
		{"unknown gateway", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 3)["gateway"] = "church spire" })
		}, "groups[3].gateway", `"church spire"`, `"pumping station", "sluice tower"`},
		{"duplicate group name", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 1)["name"] = "dyke piezometers" })
		}, "groups[1].name", `"dyke piezometers"`, "unique"},
		{"transmit level missing", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) {
				n := node0(m)
				n["transmit_current_ma"] = n["transmit_current_ma"].([]any)[1:]
			})
		}, "nodes[0].transmit_current_ma", "7 levels", "missing 16 dBm"},
		{"transmit level not in the region", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) {
				obj(node0(m)["transmit_current_ma"].([]any)[0])["eirp_dbm"] = 15
			})
		}, "nodes[0].transmit_current_ma[0].eirp_dbm", "15", "not a TXPower level of EU863-870"},
		{"cut-off above nominal", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { cell0(m)["cutoff_voltage_v"] = 3.6 })
		}, "cells[0].cutoff_voltage_v", "3.6", "below nominal_voltage_v (3.6 V)"},
		{"self-discharge of 100 %", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { cell0(m)["self_discharge_percent_per_year"] = 100 })
		}, "cells[0].self_discharge_percent_per_year", "100", "in [0, 100)"},
		{"zero capacity", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { cell0(m)["capacity_mah"] = 0 })
		}, "cells[0].capacity_mah", "0", "in (0, 1e+07]"},
		{"wrong format version", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { m["format"] = "joulelaw-scenario/3" })
		}, "format", `"joulelaw-scenario/3"`, `must be "joulelaw-scenario/2"`},
		{"climate of eleven months", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) {
				c := obj(m["climate"])
				c["monthly_mean_c"] = c["monthly_mean_c"].([]any)[1:]
			})
		}, "climate.monthly_mean_c", "11 entries", "12 to 12 entries"},
		{"unknown cell", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 1)["cell"] = "mystery cell" })
		}, "groups[1].cell", `"mystery cell"`, "must name one of"},
		{"capacity spread too wide", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { cell0(m)["capacity_sd"] = 0.3 })
		}, "cells[0].capacity_sd", "0.3", "in [0, 0.15]"},
		{"storage beyond the calendar life", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { group(m, 0)["storage_months"] = 200 })
		}, "groups[0].storage_months", "200", "below the cell's calendar life"},
		{"unknown supply", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { obj(node0(m)["supply"])["kind"] = "solar" })
		}, "nodes[0].supply.kind", `"solar"`, `"direct", "linear" or "switching"`},
		{"sleep spread negative", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { node0(m)["sleep_current_log_sd"] = -0.1 })
		}, "nodes[0].sleep_current_log_sd", "-0.1", "in [0, 1]"},
		{"region not modelled", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { m["region"] = "KR920-923" })
		}, "region", `"KR920-923"`, `must be a region package lora models: "EU863-870", "US902-928"`},
		// US902-928's TXPower 0 … 14 run from 30 dBm down in 2 dB steps
		// (RP002-1.0.3 §2.5, from memory): the demo's EU863-870 table of
		// 16 … 2 dBm lacks seven of them.
		{"transmit levels of another region", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { m["region"] = "US902-928" })
		}, "nodes[0].transmit_current_ma", "8 levels", "missing 30, 28, 26, 24, 22, 20, 18 dBm"},
		{"overlapping service areas", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) {
				obj(m["gateways"].([]any)[1])["x_m"] = 5000
				obj(m["gateways"].([]any)[1])["y_m"] = 0
			})
		}, "gateways[0], gateways[1]", `"pumping station" and "sluice tower" 5000 m apart`, "overlap"},
		{"current below the floor", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { node0(m)["wait_current_ua"] = 1 })
		}, "nodes[0].wait_current_ua", "1", "at least the sleep current (2.5 µA"},
		{"work named like a radio state", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { obj(group(m, 0)["work"].([]any)[0])["name"] = "rx1" })
		}, "groups[0].work[0].name", `"rx1"`, "name of a radio state"},
		{"spread as large as the duration", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { obj(group(m, 0)["work"].([]any)[0])["duration_spread_ms"] = 180 })
		}, "groups[0].work[0].duration_spread_ms", "180", "less than duration_ms (180 ms)"},
		{"no groups", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { m["groups"] = []any{} })
		}, "groups", "0 entries", "1 to 64 entries"},
		{"null value", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { obj(m["plan"])["acceptable_risk"] = nil })
		}, "plan.acceptable_risk", "null", "must be a number in (0, 1)"},
		{"risk of one", func(t *testing.T) []byte {
			return mutate(t, func(m map[string]any) { obj(m["plan"])["acceptable_risk"] = 1 })
		}, "plan.acceptable_risk", "1", "in (0, 1)"},
		{"not an object", func(t *testing.T) []byte { return []byte(`[1, 2]`) }, "(file)", "an array", "JSON object"},
		{"syntax error", func(t *testing.T) []byte {
			return []byte("{\n  \"format\": \"joulelaw-scenario/1\",\n  \"site\": oops\n}")
		}, "(file)", "line 3", "not valid JSON"},
		{"trailing data", func(t *testing.T) []byte { return append(scenario.DemoJSON(), []byte(` {}`)...) }, "(file)", "line", "nothing after it"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			s, err := scenario.Parse(tc.file(t))
			require.Error(t, err)
			assert.Zero(t, s.TotalNodes(), "nothing is half-read")
			require.ErrorIs(t, err, scenario.ErrInvalid)
			var found *scenario.FieldError
			for _, e := range flatten(err) {
				var fe *scenario.FieldError
				if errors.As(e, &fe) && fe.Field == tc.field {
					found = fe
					break
				}
			}
			require.NotNil(t, found, "no error names %s; got:\n%v", tc.field, err)
			msg := found.Error()
			assert.Contains(t, msg, tc.field)
			if tc.value == "" {
				assert.Nil(t, found.Value)
			} else {
				assert.Contains(t, msg, tc.value)
			}
			assert.Contains(t, msg, tc.rule)
		})
	}
}

// flatten returns the errors joined in err (or err itself).
func flatten(err error) []error {
	if _, one := err.(*scenario.FieldError); one {
		return []error{err}
	}
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		return j.Unwrap()
	}
	return []error{err}
}

func TestEveryProblemReported(t *testing.T) {
	file := mutate(t, func(m map[string]any) {
		group(m, 0)["nodes"] = -1
		group(m, 1)["report_interval_s"] = "900"
		delete(cell0(m), "usable_fraction")
	})
	_, err := scenario.Parse(file)
	require.Error(t, err)
	msg := err.Error()
	for _, f := range []string{"groups[0].nodes", "groups[1].report_interval_s", "cells[0].usable_fraction"} {
		assert.Contains(t, msg, f)
	}
	assert.Len(t, flatten(err), 3, msg)
	assert.Equal(t, 3, strings.Count(msg, "scenario: "))
}

func TestWithCounts(t *testing.T) {
	s := scenario.Demo()
	c, err := s.WithCounts([]int{1, 2, 3, 4})
	require.NoError(t, err)
	assert.Equal(t, 10, c.TotalNodes())
	assert.Equal(t, 304, s.TotalNodes(), "the original is untouched")
	c.Groups[0].Work[0].Name = "changed"
	assert.Equal(t, "piezometer read", s.Groups[0].Work[0].Name)
	_, err = s.WithCounts([]int{1, 2})
	require.ErrorIs(t, err, scenario.ErrInvalid)
	_, err = s.WithCounts([]int{1, 0, 3, 4})
	require.ErrorIs(t, err, scenario.ErrInvalid)
}
