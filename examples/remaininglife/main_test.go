package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestDemo runs the program on its demo log and checks what it plants:
// the retransmission loop and the hot board flagged, the device on
// external power reported as such, the swapped cell's device with a
// young cell, and a report with each section. The same results serve
// the round trip: the demo written as JSON lines and read back with -log
// (standard input) gives the demo's results (one demo run fewer than two
// separate tests: go test ./... ≤ 90 s, issue 12).
func TestDemo(t *testing.T) {
	var out, errOut bytes.Buffer
	require.Equal(t, 0, run([]string{"-json"}, nil, &out, &errOut), errOut.String())
	var res Results
	require.NoError(t, json.Unmarshal(out.Bytes(), &res))
	require.True(t, res.Invented)
	require.Zero(t, res.Skipped)
	require.Len(t, res.Groups, 2)
	flagged := map[string]bool{}
	for _, d := range res.Flagged {
		flagged[d.Name] = true
	}
	require.True(t, flagged["meters-north-07"], "retransmission loop: %v", flagged)
	require.True(t, flagged["valves-south-13"], "hot board: %v", flagged)
	byName := map[string]DeviceResult{}
	for _, d := range res.Devices {
		byName[d.Name] = d
	}
	require.True(t, byName["valves-south-21"].External)
	require.Less(t, byName["meters-north-30"].AgeDays, 400.0)
	for _, g := range res.Groups {
		require.LessOrEqual(t, g.FlatLow, g.FlatExpected)
		require.LessOrEqual(t, g.FlatExpected, g.FlatHigh)
	}

	t.Run("report", func(t *testing.T) {
		var out, errOut bytes.Buffer
		require.Equal(t, 0, run(nil, nil, &out, &errOut))
		for _, s := range []string{"INVENTED DATA", "Groups", "Service list", "Flagged", "Caution"} {
			require.Contains(t, out.String(), s)
		}
	})

	t.Run("log round trip", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "demo.jsonl")
		var out, errOut bytes.Buffer
		require.Equal(t, 0, run([]string{"-write-demo", path}, nil, &out, &errOut), errOut.String())
		out.Reset()
		f, err := os.Open(path)
		require.NoError(t, err)
		defer f.Close()
		require.Equal(t, 0, run([]string{"-json", "-log", "-"}, f, &out, &errOut), errOut.String())
		var file Results
		require.NoError(t, json.Unmarshal(out.Bytes(), &file))
		demo := res
		demo.Source, file.Source, demo.Invented, file.Invented = "", "", false, false
		require.Equal(t, demo, file)
	})
}

// TestMalformedRecords: each bad record is reported with its line, field,
// value and rule and skipped; -strict stops at the first with status 1.
func TestMalformedRecords(t *testing.T) {
	log := strings.Join([]string{
		`{"t":1704067200,"dev":"a","kind":"install","group":"meters-north"}`,
		`{"t":1704067300,"dev":"a","kind":"up","fcnt":0,"dr":5,"txp":1}`,
		`{"t":1704067400,"dev":"a","kind":"down","win":3}`,
		`{"t":1704067500,"dev":"a","kind":"up","fcnt":1,"dr":5}`,
		`{"t":1704067600,"dev":"a","kind":"status","bat":300}`,
		`{"t":1704067700,"dev":"b","kind":"up","fcnt":1,"dr":5,"txp":1}`,
		`{"t":1704067800,"dev":"a","kind":"up","fcnt":2,"dr":5,"txp":1,"rssi":-90}`,
		`not json`,
		``,
		`{"t":1700000000,"dev":"a","kind":"up","fcnt":3,"dr":5,"txp":1}`,
		`{"t":1704067900,"dev":"a","kind":"install","group":"nowhere"}`,
		`{"t":1704068000,"dev":"a","kind":"up","fcnt":4,"dr":5,"txp":1}`,
	}, "\n")
	var out, errOut bytes.Buffer
	require.Equal(t, 0, run([]string{"-json", "-log", "-"}, strings.NewReader(log), &out, &errOut), errOut.String())
	msgs := errOut.String()
	for _, want := range []string{
		"line 3: field win = 3: must be 1 (RX1) or 2 (RX2)",
		"line 4: field txp = missing",
		"line 5: field bat = 300",
		`line 6: field dev = "b": has no "install" record`,
		"line 7: field (record)",
		"line 8: field (record)",
		"line 10: field fcnt, dr, txp",
		`line 11: field group = "nowhere"`,
	} {
		require.Contains(t, msgs, want)
	}
	var res Results
	require.NoError(t, json.Unmarshal(out.Bytes(), &res))
	require.Equal(t, 8, res.Skipped)
	require.Equal(t, 3, res.Records)

	errOut.Reset()
	require.Equal(t, 1, run([]string{"-strict", "-log", "-"}, strings.NewReader(log), &out, &errOut))
	require.Contains(t, errOut.String(), "line 3: field win = 3")
	require.Equal(t, 2, run([]string{"-risk", "2"}, nil, &out, &errOut))
}
