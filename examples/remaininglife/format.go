package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"
)

// Caps of the log format (FORMAT.md).
const (
	maxLineBytes = 4096    // one record
	maxRecords   = 1 << 26 // records in one log
	maxDevices   = 1 << 14 // devices in one log (PlanService's cap)
	maxNameBytes = 64      // device and group names
)

// Record is one line of the back-end log (FORMAT.md).
type Record struct {
	T     *float64 `json:"t"`               // s, Unix time
	Dev   string   `json:"dev"`             // device name
	Kind  string   `json:"kind"`            // install, swap, up, down, join, status, mv
	Group string   `json:"group,omitempty"` // install: the device's group
	FCnt  *int64   `json:"fcnt,omitempty"`  // up: frame counter
	DR    *int     `json:"dr,omitempty"`    // up, join: data rate
	TXP   *int     `json:"txp,omitempty"`   // up: TXPower index
	Win   *int     `json:"win,omitempty"`   // down: 1 (RX1) or 2 (RX2)
	Bat   *int     `json:"bat,omitempty"`   // status: DevStatusAns battery, 0 … 255
	MV    *int     `json:"mv,omitempty"`    // mv: supply voltage, mV
}

// recordError is a malformed record: its line, field, value and rule.
type recordError struct {
	Line  int    `json:"line"`
	Field string `json:"field"`
	Value string `json:"value"`
	Rule  string `json:"rule"`
}

func (e recordError) Error() string {
	return fmt.Sprintf("line %d: field %s = %s: %s", e.Line, e.Field, e.Value, e.Rule)
}

// need lists the fields each kind requires (besides t, dev, kind).
var need = map[string][]string{
	"install": {"group"},
	"swap":    nil,
	"up":      {"fcnt", "dr", "txp"},
	"down":    {"win"},
	"join":    {"dr"},
	"status":  {"bat"},
	"mv":      {"mv"},
}

// check validates a decoded record's fields (not their meaning for the
// device: the fleet does that).
func (r Record) check(line int) error {
	bad := func(field, value, rule string) error {
		return recordError{Line: line, Field: field, Value: value, Rule: rule}
	}
	switch {
	case r.T == nil:
		return bad("t", "missing", "every record needs its time, s (Unix)")
	case math.IsNaN(*r.T) || math.IsInf(*r.T, 0) || math.Abs(*r.T) > 1e11:
		return bad("t", fmt.Sprint(*r.T), "must be a finite Unix time in s (|t| <= 1e11)")
	case r.Dev == "" || len(r.Dev) > maxNameBytes:
		return bad("dev", quote(r.Dev), fmt.Sprintf("must be 1 to %d bytes", maxNameBytes))
	}
	fields, ok := need[r.Kind]
	if !ok {
		return bad("kind", quote(r.Kind), "must be one of install, swap, up, down, join, status, mv")
	}
	has := map[string]bool{"group": r.Group != "", "fcnt": r.FCnt != nil, "dr": r.DR != nil, "txp": r.TXP != nil,
		"win": r.Win != nil, "bat": r.Bat != nil, "mv": r.MV != nil}
	for _, f := range fields {
		if !has[f] {
			return bad(f, "missing", fmt.Sprintf("a %q record needs %s", r.Kind, strings.Join(fields, ", ")))
		}
		has[f] = false
	}
	for _, f := range []string{"group", "fcnt", "dr", "txp", "win", "bat", "mv"} {
		if has[f] {
			return bad(f, "present", fmt.Sprintf("a %q record has no field %s", r.Kind, f))
		}
	}
	switch {
	case len(r.Group) > maxNameBytes:
		return bad("group", quote(r.Group), fmt.Sprintf("must be at most %d bytes", maxNameBytes))
	case r.FCnt != nil && (*r.FCnt < 0 || *r.FCnt > math.MaxUint32):
		return bad("fcnt", fmt.Sprint(*r.FCnt), "must be 0 … 2^32 − 1")
	case r.Win != nil && *r.Win != 1 && *r.Win != 2:
		return bad("win", fmt.Sprint(*r.Win), "must be 1 (RX1) or 2 (RX2)")
	case r.Bat != nil && (*r.Bat < 0 || *r.Bat > 255):
		return bad("bat", fmt.Sprint(*r.Bat), "must be 0 … 255 (0 external power, 1 … 254 level, 255 not measured)")
	case r.MV != nil && (*r.MV < 1 || *r.MV > 100000):
		return bad("mv", fmt.Sprint(*r.MV), "must be 1 … 100000 mV")
	}
	return nil
}

func quote(s string) string {
	if len(s) > 80 {
		s = s[:80] + "…"
	}
	return fmt.Sprintf("%q", s)
}

// readLog decodes the JSON-lines log from r, calling apply for every
// well-formed record in order. A malformed record (bad JSON, unknown or
// missing field, value out of range) is reported through skip with its
// line, field, value and rule; with strict it ends the reading with that
// error. Blank lines are skipped silently (they hold no record). An error
// of apply is reported the same way (the record is then skipped). The
// number of records is capped at maxRecords.
func readLog(r io.Reader, strict bool, apply func(line int, rec Record) error, skip func(recordError)) error {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, maxLineBytes), maxLineBytes)
	line := 0
	for sc.Scan() {
		line++
		if line > maxRecords {
			return recordError{Line: line, Field: "(log)", Value: fmt.Sprint(line), Rule: fmt.Sprintf("a log holds at most %d records", maxRecords)}
		}
		b := bytes.TrimSpace(sc.Bytes())
		if len(b) == 0 {
			continue
		}
		var rec Record
		dec := json.NewDecoder(bytes.NewReader(b))
		dec.DisallowUnknownFields()
		err := dec.Decode(&rec)
		if err == nil && dec.More() {
			err = errors.New("more than one JSON value on the line")
		}
		if err == nil {
			err = rec.check(line)
		}
		if err == nil {
			err = apply(line, rec)
		}
		if err != nil {
			var re recordError
			if !errors.As(err, &re) {
				re = recordError{Line: line, Field: "(record)", Value: quote(string(b)), Rule: err.Error()}
			}
			if strict {
				return re
			}
			skip(re)
		}
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return recordError{Line: line + 1, Field: "(line)", Value: fmt.Sprintf("more than %d bytes", maxLineBytes), Rule: "a record is one line of at most 4096 bytes"}
		}
		return err
	}
	return nil
}

// writeRecord writes rec as one JSON line.
func writeRecord(w *bufio.Writer, rec Record) error {
	b, err := json.Marshal(rec)
	if err != nil {
		return err
	}
	w.Write(b)
	return w.WriteByte('\n')
}
