package scenario_test

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// fieldErrors returns the *FieldError entries of err.
func fieldErrors(t *testing.T, err error) []*scenario.FieldError {
	t.Helper()
	var out []*scenario.FieldError
	for _, e := range flatten(err) {
		var fe *scenario.FieldError
		require.True(t, errors.As(e, &fe), "%v is not a FieldError", e)
		out = append(out, fe)
	}
	return out
}

// Issue 13: syntax problems are reported where they are (lines from 1,
// columns in characters from 1), a truncated file at its end, not at
// "line 1, column 1".
func TestSyntaxErrorPositions(t *testing.T) {
	demo := scenario.DemoJSON()
	half := demo[:len(demo)/2]
	lines := bytes.Count(half, []byte("\n")) + 1
	col := len([]rune(string(half[bytes.LastIndexByte(half, '\n')+1:]))) + 1
	for _, c := range []struct {
		name, file, where string
	}{
		{"bad literal", "{\n  \"site\": oops\n}", "line 2, column 11"},
		{"missing colon", "{\"site\" \"x\"}", "line 1, column 9"},
		{"non-ASCII before the error", "{\"site\": \"Ærø\", x}", "line 1, column 17"},
		{"trailing comma", "{\"a\": 1,\n}", "line 2, column 1"},
		{"truncated", string(half), fmt.Sprintf("line %d, column %d", lines, col)},
		{"empty", "", "line 1, column 1"},
		{"trailing data", "{}\n\n  {}", "line 3, column 3"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := scenario.Parse([]byte(c.file))
			require.ErrorIs(t, err, scenario.ErrInvalid)
			fe := fieldErrors(t, err)
			require.Len(t, fe, 1)
			assert.Equal(t, "(file)", fe[0].Field)
			assert.Contains(t, err.Error(), c.where)
		})
	}
}

// Issue 13: a UTF-8 byte-order mark is accepted; duplicate keys are
// rejected (the first value no longer vanishes) at the second key.
func TestByteOrderMarkAndDuplicateKeys(t *testing.T) {
	withBOM := append([]byte{0xEF, 0xBB, 0xBF}, scenario.DemoJSON()...)
	s, err := scenario.Parse(withBOM)
	require.NoError(t, err)
	assert.Equal(t, scenario.Demo().TotalNodes(), s.TotalNodes())

	dup := bytes.Replace(scenario.DemoJSON(), []byte(`"site":`), []byte(`"site": -1,`+"\n"+`  "site":`), 1)
	_, err = scenario.Parse(dup)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), `the key "site" appears twice`)
	assert.Contains(t, err.Error(), "line 4, column 3")
}

// Issue 13: a whole-number field takes a whole number as written:
// 59.99999999999999999 (which rounds to the float 60) is refused.
func TestWholeNumbersAsWritten(t *testing.T) {
	for _, c := range []struct {
		lit string
		ok  bool
	}{{"60", true}, {"60.0", true}, {"59.99999999999999999", false}, {"6e1", false}, {"60.5", false}, {"-0", false}} {
		file := mutate(t, func(m map[string]any) { group(m, 0)["nodes"] = json.Number(c.lit) })
		s, err := scenario.Parse(file)
		if c.ok {
			require.NoError(t, err, c.lit)
			assert.Equal(t, 60, s.Groups[0].Nodes)
			continue
		}
		require.ErrorIs(t, err, scenario.ErrInvalid, c.lit)
		assert.Contains(t, err.Error(), "groups[0].nodes", c.lit)
	}
}

// zeros is an endless stream of zero bytes (as /dev/zero), counting what
// is read from it.
type zeros struct{ n int64 }

func (z *zeros) Read(p []byte) (int, error) {
	clear(p)
	z.n += int64(len(p))
	return len(p), nil
}

// Issue 13: the reader's caps. An endless stream is refused after at most
// MaxFileBytes + 4 bytes; a named pipe, a directory and an oversized file
// are refused before they are read.
func TestStreamingCaps(t *testing.T) {
	z := &zeros{}
	_, err := scenario.Read(z)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "MaxFileBytes")
	assert.LessOrEqual(t, z.n, int64(scenario.MaxFileBytes+4+32*1024), "read no more than the cap and a buffer")

	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	require.NoError(t, syscall.Mkfifo(fifo, 0o600))
	_, err = scenario.Load(fifo) // would block forever if opened
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "a named pipe: must be a regular file")

	_, err = scenario.Load(dir)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "a directory")

	big := filepath.Join(dir, "big.json")
	f, err := os.Create(big)
	require.NoError(t, err)
	require.NoError(t, f.Truncate(scenario.MaxFileBytes+1)) // sparse: no disk used
	require.NoError(t, f.Close())
	_, err = scenario.Load(big)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "MaxFileBytes")
}

func TestValueCaps(t *testing.T) {
	many := "{\"a\": [" + strings.Repeat("0,", scenario.MaxValues) + "0]}"
	_, err := scenario.Parse([]byte(many))
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "MaxValues")

	deep := strings.Repeat("[", scenario.MaxDepth+1) + strings.Repeat("]", scenario.MaxDepth+1)
	_, err = scenario.Parse([]byte(`{"a": ` + deep + `}`))
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "MaxDepth")

	long := mutate(t, func(m map[string]any) { m["description"] = strings.Repeat("x", scenario.MaxStringBytes+1) })
	_, err = scenario.Parse(long)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "MaxStringBytes")

	var bad []string
	for i := range 2 * scenario.MaxProblems {
		bad = append(bad, fmt.Sprintf(`"x%d": 0`, i))
	}
	_, err = scenario.Parse([]byte("{" + strings.Join(bad, ",") + "}"))
	require.ErrorIs(t, err, scenario.ErrInvalid)
	fe := fieldErrors(t, err)
	require.Len(t, fe, scenario.MaxProblems+1)
	assert.Contains(t, fe[scenario.MaxProblems].Error(), "more problems")
}

// Issue 13: an echoed value is cut short, and a name or key from the file
// cannot forge lines or send terminal commands through a message.
func TestEchoesCutAndEscaped(t *testing.T) {
	file := mutate(t, func(m map[string]any) {
		m["site"] = strings.Repeat("é", 4000/2)
		group(m, 0)["\r\nFleet energy plan: forged\x1b[2J"] = 1
	})
	_, err := scenario.Parse(file)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	msg := err.Error()
	for _, line := range strings.Split(msg, "\n") {
		assert.Less(t, len([]rune(line)), 2*scenario.MaxEcho+400, "each message short: %q", line)
		assert.NotContains(t, line, "\r")
		assert.NotContains(t, line, "\x1b")
	}
	assert.Equal(t, 2, strings.Count(msg, "\n")+1, "two problems, one line each: %q", msg)
	assert.Contains(t, msg, "MaxName")
	assert.Contains(t, msg, `\r\nFleet energy plan: forged\x1b[2J`)
}

// Issue 13: a follow-on check does not invent a value for a bad field (a
// receive current of "x" is not also reported "= 0").
func TestNoInventedValues(t *testing.T) {
	_, err := scenario.Parse(mutate(t, func(m map[string]any) { node0(m)["receive_current_ma"] = "x" }))
	require.ErrorIs(t, err, scenario.ErrInvalid)
	fe := fieldErrors(t, err)
	require.Len(t, fe, 1, err.Error())
	assert.Equal(t, "nodes[0].receive_current_ma", fe[0].Field)
}

// Issue 13: what the computation would fail on (or compute as nonsense) is
// refused by the checks, at the field that causes it.
func TestCheckedBeforeComputing(t *testing.T) {
	for _, c := range []struct {
		name  string
		edit  func(m map[string]any)
		field string
		rule  string
	}{
		{"a 0.001 mAh cell", func(m map[string]any) { cell0(m)["capacity_mah"] = 0.001 }, "cells[0].capacity_mah", "not even one report"},
		{"600 s of work in a 10 s interval", func(m map[string]any) {
			g := group(m, 0)
			g["report_interval_s"], g["interval_jitter_s"] = 10, 0
			g["work"] = []any{map[string]any{"name": "w", "current_ma": 4, "duration_ms": 600000, "duration_spread_ms": 0}}
		}, "groups[0].work", "shortest reporting period"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := scenario.Parse(mutate(t, c.edit))
			require.ErrorIs(t, err, scenario.ErrInvalid)
			fe := fieldErrors(t, err)
			require.NotEmpty(t, fe)
			assert.Equal(t, c.field, fe[0].Field)
			assert.Contains(t, fe[0].Error(), c.rule)
		})
	}
}

// A scenario built in Go is checked by Build: bad indices are errors
// naming the field (not panics), and an error of the battery model comes
// back on the cell, wrapping both sentinels.
func TestBuildChecksGoValues(t *testing.T) {
	s := scenario.Demo()
	s.Groups = append([]scenario.Group(nil), s.Groups...)
	s.Groups[1].Node = 7
	s.Groups[2].Gateway = -1
	_, err := scenario.Build(s, nil)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	assert.Contains(t, err.Error(), "groups[1].node")
	assert.Contains(t, err.Error(), "groups[2].gateway")

	s = scenario.Demo()
	s.Cells = append([]scenario.Cell(nil), s.Cells...)
	s.Cells[0].Spec.NominalVoltage = -3
	_, err = scenario.Build(s, nil)
	require.ErrorIs(t, err, scenario.ErrInvalid)
	require.ErrorIs(t, err, energy.ErrParam)
	assert.Contains(t, err.Error(), "cells[0]")

	_, err = scenario.Build(scenario.Scenario{}, nil)
	require.ErrorIs(t, err, scenario.ErrInvalid)
}

var _ io.Reader = (*zeros)(nil)
