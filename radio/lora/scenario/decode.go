package scenario

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"unicode/utf8"
)

// The reader's caps. A file beyond any of them is refused with an error
// that names the cap; the reader never holds more than MaxFileBytes + 1
// bytes of input, however long the stream.
const (
	// MaxFileBytes is the largest scenario file read, in bytes (2 MiB; the
	// demo takes 16 kB and the largest file the format's entry caps admit
	// about 1 MB).
	MaxFileBytes = 2 << 20
	// MaxValues is the most JSON values (objects, arrays, strings, numbers,
	// booleans and nulls, counted at every depth) in one file.
	MaxValues = 1 << 17
	// MaxDepth is the deepest nesting of objects and arrays (the format
	// needs 4).
	MaxDepth = 16
	// MaxStringBytes is the longest string value or key, in bytes
	// (a description included); names are further capped by MaxName.
	MaxStringBytes = 4096
	// MaxName is the longest name (site, node design, cell, gateway,
	// group, work step), in characters.
	MaxName = 100
	// MaxProblems is the most problems one error lists; the rest are
	// counted in a last entry.
	MaxProblems = 100
)

// bom is the UTF-8 byte-order mark, accepted (and skipped) at the start of
// a file.
var bom = []byte{0xEF, 0xBB, 0xBF}

// decode parses data into a tree of map[string]any, []any, json.Number,
// string, bool and nil. It accepts a leading byte-order mark, rejects
// duplicate keys and enforces MaxValues, MaxDepth and MaxStringBytes;
// problems are reported with their line and column (lines from 1, columns
// in characters from 1, the byte-order mark not counted).
func decode(data []byte) (any, error) {
	data = bytes.TrimPrefix(data, bom)
	if len(data) > MaxFileBytes {
		return nil, &FieldError{Field: "(file)", Value: note(fmt.Sprintf("%d bytes", len(data))), Rule: fmt.Sprintf("is larger than the %d-byte cap (MaxFileBytes)", MaxFileBytes)}
	}
	// First pass: syntax, with the position of the first error.
	dec := json.NewDecoder(bytes.NewReader(data))
	var raw json.RawMessage
	if err := dec.Decode(&raw); err != nil {
		return nil, syntaxError(data, err)
	}
	if rest := bytes.TrimLeft(data[dec.InputOffset():], " \t\r\n"); len(rest) > 0 {
		return nil, &FieldError{Field: "(file)", Value: where(data, int64(len(data)-len(rest))), Rule: "must hold exactly one JSON object, with nothing after it"}
	}
	// Second pass: the tree, its caps and duplicate keys.
	t := tree{data: data, dec: json.NewDecoder(bytes.NewReader(data))}
	t.dec.UseNumber()
	return t.value(0)
}

// syntaxError reports a JSON syntax error at its position: the offending
// character, or the end of the file when it ends too early.
func syntaxError(data []byte, err error) error {
	var se *json.SyntaxError
	switch {
	case errors.As(err, &se):
		return &FieldError{Field: "(file)", Value: where(data, se.Offset-1), Rule: "not valid JSON: " + err.Error()}
	case errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF):
		return &FieldError{Field: "(file)", Value: where(data, int64(len(data))), Rule: "not valid JSON: the file ends before its JSON object does"}
	}
	return &FieldError{Field: "(file)", Value: note("–"), Rule: "not valid JSON: " + err.Error()}
}

// where locates byte offset in data as "line L, column C" (C counts
// characters; an offset at the end of the file is the place after its last
// character).
func where(data []byte, offset int64) note {
	offset = max(0, min(offset, int64(len(data))))
	before := data[:offset]
	line := bytes.Count(before, []byte("\n")) + 1
	start := bytes.LastIndexByte(before, '\n') + 1
	col := utf8.RuneCount(before[start:]) + 1
	return note(fmt.Sprintf("line %d, column %d", line, col))
}

// tree builds the decoded value from a file already checked for syntax.
type tree struct {
	data   []byte
	dec    *json.Decoder
	values int
}

func (t *tree) fail(offset int64, rule string) error {
	return &FieldError{Field: "(file)", Value: where(t.data, offset), Rule: rule}
}

// next returns the next token and the offset where it starts.
func (t *tree) next() (json.Token, int64, error) {
	off := t.dec.InputOffset()
	for off < int64(len(t.data)) && bytes.IndexByte([]byte(" \t\r\n,:"), t.data[off]) >= 0 {
		off++
	}
	tok, err := t.dec.Token()
	if err != nil {
		return nil, off, syntaxError(t.data, err)
	}
	return tok, off, nil
}

func (t *tree) value(depth int) (any, error) {
	tok, off, err := t.next()
	if err != nil {
		return nil, err
	}
	return t.build(tok, off, depth)
}

func (t *tree) build(tok json.Token, off int64, depth int) (any, error) {
	t.values++
	if t.values > MaxValues {
		return nil, t.fail(off, fmt.Sprintf("holds more than %d JSON values (MaxValues)", MaxValues))
	}
	switch x := tok.(type) {
	case json.Delim:
		if depth+1 > MaxDepth {
			return nil, t.fail(off, fmt.Sprintf("nests objects and arrays deeper than %d levels (MaxDepth)", MaxDepth))
		}
		if x == '[' {
			a := []any{}
			for t.dec.More() {
				v, err := t.value(depth + 1)
				if err != nil {
					return nil, err
				}
				a = append(a, v)
			}
			_, _, err := t.next() // ']'
			return a, err
		}
		m := map[string]any{}
		for t.dec.More() {
			k, koff, err := t.next()
			if err != nil {
				return nil, err
			}
			key, _ := k.(string)
			if len(key) > MaxStringBytes {
				return nil, t.fail(koff, fmt.Sprintf("a key is longer than %d bytes (MaxStringBytes)", MaxStringBytes))
			}
			if _, dup := m[key]; dup {
				return nil, t.fail(koff, fmt.Sprintf("the key %s appears twice in one object: each field once", Quote(key)))
			}
			v, err := t.value(depth + 1)
			if err != nil {
				return nil, err
			}
			m[key] = v
		}
		_, _, err := t.next() // '}'
		return m, err
	case string:
		if len(x) > MaxStringBytes {
			return nil, t.fail(off, fmt.Sprintf("a string is longer than %d bytes (MaxStringBytes)", MaxStringBytes))
		}
		return x, nil
	default:
		return x, nil
	}
}
