package scenario_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// validator checks a JSON value against the subset of JSON Schema (draft
// 2020-12, "JSON Schema Validation", json-schema.org) that
// scenario.schema.json uses: type, const, enum, properties, required,
// additionalProperties (false), items, minItems, maxItems, minimum,
// maximum, exclusiveMinimum, exclusiveMaximum, minLength, maxLength
// (characters), pattern (unanchored) and $ref to "#/$defs/…" (its
// siblings applying too). A keyword outside the subset is an error, so the
// schema cannot grow past what this test checks.
type validator struct{ root map[string]any }

var annotations = []string{"$schema", "$id", "title", "description", "$comment", "$defs"}

func (v validator) check(path string, schema map[string]any, x any) []string {
	var out []string
	bad := func(format string, args ...any) {
		out = append(out, path+": "+fmt.Sprintf(format, args...))
	}
	for key, rule := range schema {
		switch key {
		case "$ref":
			ref, _ := rule.(string)
			name, ok := strings.CutPrefix(ref, "#/$defs/")
			def, found := v.root["$defs"].(map[string]any)[name].(map[string]any)
			if !ok || !found {
				bad("unresolved $ref %q", ref)
				continue
			}
			out = append(out, v.check(path, def, x)...)
		case "type":
			types := []any{rule}
			if list, ok := rule.([]any); ok {
				types = list
			}
			if !slices.ContainsFunc(types, func(t any) bool { return isType(t.(string), x) }) {
				bad("type %v wanted, got %T", rule, x)
			}
		case "const":
			if !jsonEqual(rule, x) {
				bad("must be %v", rule)
			}
		case "enum":
			if !slices.ContainsFunc(rule.([]any), func(e any) bool { return jsonEqual(e, x) }) {
				bad("must be one of %v", rule)
			}
		case "properties":
			m, ok := x.(map[string]any)
			if !ok {
				continue
			}
			for name, sub := range rule.(map[string]any) {
				if val, present := m[name]; present {
					out = append(out, v.check(path+"."+name, sub.(map[string]any), val)...)
				}
			}
		case "required":
			if m, ok := x.(map[string]any); ok {
				for _, name := range rule.([]any) {
					if _, present := m[name.(string)]; !present {
						bad("missing %q", name)
					}
				}
			}
		case "additionalProperties":
			if rule != false {
				bad("schema: only additionalProperties false is supported")
				continue
			}
			if m, ok := x.(map[string]any); ok {
				props, _ := schema["properties"].(map[string]any)
				for name := range m {
					if _, known := props[name]; !known {
						bad("unknown field %q", name)
					}
				}
			}
		case "items":
			if a, ok := x.([]any); ok {
				for i, el := range a {
					out = append(out, v.check(fmt.Sprintf("%s[%d]", path, i), rule.(map[string]any), el)...)
				}
			}
		case "minItems", "maxItems":
			if a, ok := x.([]any); ok {
				lim := num(rule)
				if (key == "minItems" && float64(len(a)) < lim) || (key == "maxItems" && float64(len(a)) > lim) {
					bad("%d items breaks %s %v", len(a), key, rule)
				}
			}
		case "minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum":
			n, ok := x.(json.Number)
			if !ok {
				continue
			}
			f, lim := num(n), num(rule)
			if (key == "minimum" && f < lim) || (key == "maximum" && f > lim) ||
				(key == "exclusiveMinimum" && f <= lim) || (key == "exclusiveMaximum" && f >= lim) {
				bad("%v breaks %s %v", n, key, rule)
			}
		case "minLength", "maxLength":
			if s, ok := x.(string); ok {
				n, lim := float64(utf8.RuneCountInString(s)), num(rule)
				if (key == "minLength" && n < lim) || (key == "maxLength" && n > lim) {
					bad("length %v breaks %s %v", n, key, rule)
				}
			}
		case "pattern":
			if s, ok := x.(string); ok && !regexp.MustCompile(rule.(string)).MatchString(s) {
				bad("%q does not match %q", s, rule)
			}
		default:
			if !slices.Contains(annotations, key) {
				bad("schema: keyword %q is outside the tested subset", key)
			}
		}
	}
	sort.Strings(out)
	return out
}

func isType(t string, x any) bool {
	switch t {
	case "object":
		_, ok := x.(map[string]any)
		return ok
	case "array":
		_, ok := x.([]any)
		return ok
	case "string":
		_, ok := x.(string)
		return ok
	case "boolean":
		_, ok := x.(bool)
		return ok
	case "null":
		return x == nil
	case "number":
		_, ok := x.(json.Number)
		return ok
	case "integer": // a number with a zero fractional part (draft 2020-12)
		n, ok := x.(json.Number)
		return ok && num(n) == math.Trunc(num(n))
	}
	return false
}

func num(x any) float64 {
	n, ok := x.(json.Number)
	if !ok {
		return math.NaN()
	}
	f, err := n.Float64()
	if err != nil {
		return math.NaN()
	}
	return f
}

func jsonEqual(a, b any) bool {
	if na, ok := a.(json.Number); ok {
		nb, ok := b.(json.Number)
		return ok && num(na) == num(nb)
	}
	return fmt.Sprint(a) == fmt.Sprint(b)
}

func decodeJSON(t *testing.T, data []byte) any {
	t.Helper()
	dec := json.NewDecoder(bytes.NewReader(bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF})))
	dec.UseNumber()
	var v any
	require.NoError(t, dec.Decode(&v))
	return v
}

func loadSchema(t *testing.T) validator {
	t.Helper()
	data, err := os.ReadFile("scenario.schema.json")
	require.NoError(t, err)
	root := decodeJSON(t, data).(map[string]any)
	assert.Equal(t, root, decodeJSON(t, scenario.SchemaJSON()).(map[string]any), "SchemaJSON is the file")
	return validator{root: root}
}

// The demo and the format 2 test files are valid under the schema.
func TestSchemaAcceptsTheDemo(t *testing.T) {
	v := loadSchema(t)
	files := map[string][]byte{"demo": scenario.DemoJSON()}
	data, err := os.ReadFile(filepath.Join("testdata", "us902-928.json"))
	require.NoError(t, err)
	files["us902-928"] = data
	for name, data := range files {
		assert.Empty(t, v.check("", v.root, decodeJSON(t, data)), name)
	}
}

// The schema's region list is the regions package lora models.
func TestSchemaRegions(t *testing.T) {
	v := loadSchema(t)
	var want []any
	for _, r := range lora.Regions() {
		want = append(want, r.Name())
	}
	got := v.root["properties"].(map[string]any)["region"].(map[string]any)["enum"].([]any)
	assert.ElementsMatch(t, want, got)
}

// Every malformed test file is refused by the schema and by the reader.
func TestSchemaRejectsMalformed(t *testing.T) {
	v := loadSchema(t)
	paths, err := filepath.Glob(filepath.Join("testdata", "malformed", "*.json"))
	require.NoError(t, err)
	require.NotEmpty(t, paths)
	for _, p := range paths {
		data, err := os.ReadFile(p)
		require.NoError(t, err)
		assert.NotEmpty(t, v.check("", v.root, decodeJSON(t, data)), "the schema accepts %s", p)
		_, err = scenario.Parse(data)
		assert.ErrorIs(t, err, scenario.ErrInvalid, "the reader accepts %s", p)
	}
}

// The validator itself catches what it claims to (so the tests above
// cannot pass whatever the schema says).
func TestSchemaValidatorCatches(t *testing.T) {
	v := loadSchema(t)
	demo := func() map[string]any { return decodeJSON(t, scenario.DemoJSON()).(map[string]any) }
	for name, edit := range map[string]func(m map[string]any){
		"const":                func(m map[string]any) { m["format"] = "joulelaw-scenario/9" },
		"enum":                 func(m map[string]any) { m["region"] = "XX000" },
		"required":             func(m map[string]any) { delete(m, "plan") },
		"additionalProperties": func(m map[string]any) { m["extra"] = true },
		"type":                 func(m map[string]any) { m["site"] = json.Number("3") },
		"minimum":              func(m map[string]any) { group(m, 0)["nodes"] = json.Number("0") },
		"exclusiveMaximum":     func(m map[string]any) { obj(m["plan"])["acceptable_risk"] = json.Number("1") },
		"integer":              func(m map[string]any) { group(m, 0)["nodes"] = json.Number("1.5") },
		"maxItems":             func(m map[string]any) { m["gateways"] = slices.Repeat(m["gateways"].([]any), 5) },
		"pattern":              func(m map[string]any) { m["site"] = "   " },
		"$ref":                 func(m map[string]any) { obj(m["cells"].([]any)[0])["voltage_curve"] = json.Number("1") },
	} {
		m := demo()
		edit(m)
		assert.NotEmpty(t, v.check("", v.root, m), name)
	}
}
