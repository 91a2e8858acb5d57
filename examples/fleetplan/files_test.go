package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// fullDisk accepts room bytes, then fails every write as a full disk does.
type fullDisk struct{ room int }

var errFull = errors.New("no space left on device")

func (d *fullDisk) Write(b []byte) (int, error) {
	if len(b) > d.room {
		n := d.room
		d.room = 0
		return n, errFull
	}
	d.room -= len(b)
	return len(b), nil
}

// Issue 13: text output to a full disk exits non-zero, whether the disk is
// full from the start or fills midway, for the report, the JSON and the
// demo file.
func TestFullDiskExitsNonZero(t *testing.T) {
	for _, c := range []struct {
		name string
		args []string
		room int
	}{
		{"report, full at once", []string{"-quiet"}, 0},
		{"report, fills midway", []string{"-quiet"}, 2000},
		{"JSON, fills midway", []string{"-quiet", "-json"}, 2000},
		{"demo file", []string{"-print-demo"}, 100},
		{"schema", []string{"-print-schema"}, 100},
	} {
		t.Run(c.name, func(t *testing.T) {
			var errb bytes.Buffer
			code := run(c.args, &fullDisk{room: c.room}, &errb)
			assert.Equal(t, 1, code)
			assert.Contains(t, errb.String(), "no space left on device")
		})
	}
}

// Issue 13: names from the file are escaped in the report: escape
// sequences and "\r\n" in a site, group or work-step name cannot forge
// report lines or reach the terminal.
func TestNamesEscapedInTheReport(t *testing.T) {
	var m map[string]any
	require.NoError(t, json.Unmarshal(scenario.DemoJSON(), &m))
	m["site"] = "Quillmoor\r\nPlanned replacement: never\x1b[2J"
	g := m["groups"].([]any)[0].(map[string]any)
	g["name"] = "dyke\npiezometers\u202e"
	g["work"].([]any)[0].(map[string]any)["name"] = "sense\r\n  battery lifetime     median 99 years"
	data, err := json.Marshal(m)
	require.NoError(t, err)
	path := filepath.Join(t.TempDir(), "hostile.json")
	require.NoError(t, os.WriteFile(path, data, 0o600))

	code, out, errs := runArgs(t, "-quiet", "-scenario", path)
	require.Equal(t, 0, code, errs)
	assert.NotContains(t, out, "\r")
	assert.NotContains(t, out, "\x1b")
	assert.NotContains(t, out, "\u202e")
	assert.Contains(t, out, `Fleet energy plan: Quillmoor\r\nPlanned replacement: never\x1b[2J`)
	assert.Contains(t, out, `dyke\npiezometers\u202e`)
	for _, line := range strings.Split(out, "\n") {
		assert.False(t, strings.HasPrefix(line, "Planned replacement: never"), line)
		assert.False(t, strings.HasPrefix(line, "  battery lifetime     median 99 years"), line)
	}
}
