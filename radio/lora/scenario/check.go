package scenario

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"unicode/utf8"
)

// checker gathers the problems of one file, so that all are reported at once.
type checker struct {
	errs []error
}

func (c *checker) fail(field string, value any, rule string) {
	c.errs = append(c.errs, &FieldError{Field: field, Value: value, Rule: rule})
}

// err joins the problems found, at most MaxProblems of them (the last
// entry then says how many more there were).
func (c *checker) err() error {
	if len(c.errs) > MaxProblems {
		more := len(c.errs) - MaxProblems
		errs := append(c.errs[:MaxProblems:MaxProblems], &FieldError{Field: "(file)", Value: note(fmt.Sprintf("%d more problems", more)), Rule: fmt.Sprintf("not listed: at most %d problems are reported at once", MaxProblems)})
		return errors.Join(errs...)
	}
	return errors.Join(c.errs...)
}

// raw shows a decoded JSON value in a message.
func raw(v any) any {
	switch x := v.(type) {
	case nil:
		return note("null")
	case map[string]any:
		return note("an object")
	case []any:
		return note("an array")
	case json.Number:
		return note(x.String())
	default:
		return x
	}
}

// obj is one JSON object being read; a zero obj (ok false) reads as empty
// without further complaints, its problem having been reported already.
type obj struct {
	c    *checker
	path string
	m    map[string]any
	ok   bool
}

// join names key within path: path.key, or path["key"] quoted and cut
// short when the key (taken from the file) is not a plain field name.
func join(path, key string) string {
	plain := key != ""
	for _, r := range key {
		plain = plain && (r == '_' || r >= 'a' && r <= 'z' || r >= '0' && r <= '9')
	}
	switch {
	case !plain:
		return path + "[" + Quote(key) + "]"
	case path == "":
		return key
	}
	return path + "." + key
}

// object checks that v is an object with exactly the given keys (reporting
// unknown ones; missing ones are reported when read).
func (c *checker) object(path string, v any, keys ...string) obj {
	m, ok := v.(map[string]any)
	if !ok {
		name := path
		if name == "" {
			name = "(file)"
		}
		c.fail(name, raw(v), "must be a JSON object")
		return obj{c: c, path: path}
	}
	var unknown []string
	for k := range m {
		if !slices.Contains(keys, k) {
			unknown = append(unknown, k)
		}
	}
	slices.Sort(unknown)
	for _, k := range unknown {
		c.fail(join(path, k), raw(m[k]), "unknown field (known here: "+strings.Join(keys, ", ")+")")
	}
	return obj{c: c, path: path, m: m, ok: true}
}

// get returns the value of key, reporting it missing.
func (o obj) get(key string) (any, bool) {
	if !o.ok {
		return nil, false
	}
	v, ok := o.m[key]
	if !ok {
		o.c.fail(join(o.path, key), nil, "missing: every field is required (no defaults)")
		return nil, false
	}
	return v, true
}

func (o obj) str(key string, nonEmpty bool) string {
	v, ok := o.get(key)
	if !ok {
		return ""
	}
	s, isStr := v.(string)
	switch {
	case !isStr:
		o.c.fail(join(o.path, key), raw(v), "must be a string")
	case nonEmpty && strings.TrimSpace(s) == "":
		o.c.fail(join(o.path, key), s, "must not be empty")
	}
	return s
}

// name reads a non-empty name of at most MaxName characters.
func (o obj) name(key string) string {
	s := o.str(key, true)
	if n := utf8.RuneCountInString(s); n > MaxName {
		o.c.fail(join(o.path, key), s, fmt.Sprintf("is %d characters long; a name has at most %d (MaxName)", n, MaxName))
	}
	return s
}

func (o obj) boolean(key string) bool {
	v, ok := o.get(key)
	if !ok {
		return false
	}
	b, isBool := v.(bool)
	if !isBool {
		o.c.fail(join(o.path, key), raw(v), "must be true or false")
	}
	return b
}

// span is a closed, open or half-open interval of allowed numbers.
type span struct {
	lo, hi         float64
	loOpen, hiOpen bool
}

func (r span) contains(x float64) bool {
	if x < r.lo || (r.loOpen && x == r.lo) || x > r.hi || (r.hiOpen && x == r.hi) {
		return false
	}
	return true
}

func (r span) String() string {
	l, h := "[", "]"
	if r.loOpen {
		l = "("
	}
	if r.hiOpen {
		h = ")"
	}
	return fmt.Sprintf("%s%g, %g%s", l, r.lo, r.hi, h)
}

func closed(lo, hi float64) span   { return span{lo: lo, hi: hi} }
func openLow(lo, hi float64) span  { return span{lo: lo, hi: hi, loOpen: true} }
func openHigh(lo, hi float64) span { return span{lo: lo, hi: hi, hiOpen: true} }
func open(lo, hi float64) span     { return span{lo: lo, hi: hi, loOpen: true, hiOpen: true} }

// number reads a finite number in r; ok is false when it is missing or bad.
func (o obj) number(key string, r span) (float64, bool) {
	v, present := o.get(key)
	if !present {
		return 0, false
	}
	n, isNum := v.(json.Number)
	if !isNum {
		o.c.fail(join(o.path, key), raw(v), "must be a number in "+r.String())
		return 0, false
	}
	x, err := n.Float64()
	if err != nil || math.IsInf(x, 0) || math.IsNaN(x) {
		o.c.fail(join(o.path, key), note(n.String()), "must be a finite number")
		return 0, false
	}
	if !r.contains(x) {
		o.c.fail(join(o.path, key), x, "must be in "+r.String())
		return x, false
	}
	return x, true
}

// scaled reads a number in r and returns it times unit, or NaN when it is
// missing or bad (already reported).
func (o obj) scaled(key string, r span, unit float64) float64 {
	x, ok := o.number(key, r)
	if !ok {
		return math.NaN()
	}
	return x * unit
}

// integer reads a whole number in [lo, hi]; why, if given, explains the bounds.
func (o obj) integer(key string, lo, hi int, why ...string) (int, bool) {
	v, present := o.get(key)
	if !present {
		return 0, false
	}
	rule := fmt.Sprintf("must be a whole number in [%d, %d]", lo, hi)
	if len(why) > 0 {
		rule += " (" + strings.Join(why, "; ") + ")"
	}
	n, isNum := v.(json.Number)
	if !isNum {
		o.c.fail(join(o.path, key), raw(v), rule)
		return 0, false
	}
	if !wholeLiteral(n.String()) {
		o.c.fail(join(o.path, key), note(n.String()), rule+", written without a fraction or exponent (60 or 60.0, not 59.99999999999999999 or 6e1)")
		return 0, false
	}
	x, err := n.Float64()
	if err != nil || x < float64(lo) || x > float64(hi) {
		o.c.fail(join(o.path, key), note(n.String()), rule)
		return 0, false
	}
	return int(x), true
}

// array reads an array of minLen … maxLen elements.
func (o obj) array(key string, minLen, maxLen int) []any {
	v, present := o.get(key)
	if !present {
		return nil
	}
	a, isArr := v.([]any)
	if !isArr {
		o.c.fail(join(o.path, key), raw(v), fmt.Sprintf("must be an array of %d to %d entries", minLen, maxLen))
		return nil
	}
	if len(a) < minLen || len(a) > maxLen {
		o.c.fail(join(o.path, key), note(fmt.Sprintf("%d entries", len(a))), fmt.Sprintf("must have %d to %d entries", minLen, maxLen))
		return nil
	}
	return a
}

func index(path string, i int) string { return fmt.Sprintf("%s[%d]", path, i) }

// wholeLiteral tells whether a JSON number literal is a whole number as
// written: an optional minus, digits, and an optional fraction of zeros only.
func wholeLiteral(s string) bool {
	s = strings.TrimPrefix(s, "-")
	digits, frac, hasFrac := strings.Cut(s, ".")
	if digits == "" || strings.Trim(digits, "0123456789") != "" {
		return false
	}
	return !hasFrac || (frac != "" && strings.Trim(frac, "0") == "")
}
