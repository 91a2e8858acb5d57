package scenario

import (
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// MaxEcho is the most characters (runes) of a value taken from a file that
// a message echoes; a longer value is cut there and marked with "…".
const MaxEcho = 80

// Quote returns s in double quotes for a message or a report, with every
// control and other non-printing character escaped as in Go source
// (strconv.Quote: "\r", "\n", "\x1b", "\u202e" …), so that a name from a
// file can never forge a line or a terminal command, and cut after MaxEcho
// characters.
func Quote(s string) string {
	return strconv.Quote(cut(s))
}

// Escape returns s whole, with its non-printing characters, quotes and
// backslashes escaped as Quote does, but without the quotes and not cut
// short: use it where a name from a file is printed bare and in full (a
// report's title, a table cell; names are capped at MaxName characters by
// the reader).
func Escape(s string) string {
	q := strconv.Quote(s)
	return q[1 : len(q)-1]
}

// cut returns s cut after MaxEcho runes, marked with "…".
func cut(s string) string {
	if utf8.RuneCountInString(s) <= MaxEcho {
		return s
	}
	n := 0
	for i := range s {
		if n == MaxEcho {
			return s[:i] + "…"
		}
		n++
	}
	return s
}

// printable returns s with every rune that is not printable (unicode.IsPrint;
// the ASCII space is) escaped as in Go source, so that a message built from
// a file's contents stays one line and carries no terminal command.
func printable(s string) string {
	ok := true
	for _, r := range s {
		if !unicode.IsPrint(r) || r == utf8.RuneError {
			ok = false
			break
		}
	}
	if ok {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		if unicode.IsPrint(r) && r != utf8.RuneError {
			b.WriteRune(r)
			continue
		}
		q := strconv.QuoteRune(r)
		b.WriteString(q[1 : len(q)-1])
	}
	return b.String()
}
