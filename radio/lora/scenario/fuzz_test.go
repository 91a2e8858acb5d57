package scenario_test

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// FuzzParse feeds the reader arbitrary files: it must never panic, every
// refusal must wrap ErrInvalid in messages of printable characters only,
// and every accepted file must go through the model assembly (Build)
// without panic, any failure there mapped to a field (ErrInvalid too).
// Failing inputs are kept in testdata/fuzz/FuzzParse.
func FuzzParse(f *testing.F) {
	f.Add(scenario.DemoJSON())
	for _, name := range []string{"format1.json", "us902-928.json"} {
		data, err := os.ReadFile(filepath.Join("testdata", name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Add([]byte("\xEF\xBB\xBF{\"format\": \"joulelaw-scenario/2\", \"format\": 1}"))
	f.Add([]byte(`{"site": oops`))
	f.Add([]byte(`[[[[[[[[[[[[[[[[[[[[]]]]]]]]]]]]]]]]]]]`))
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := scenario.Parse(data)
		if err != nil {
			checkRefusal(t, err)
			return
		}
		if _, err := scenario.Build(s, nil); err != nil {
			checkRefusal(t, err)
		}
	})
}

func checkRefusal(t *testing.T, err error) {
	t.Helper()
	if !errors.Is(err, scenario.ErrInvalid) {
		t.Fatalf("error does not wrap ErrInvalid: %v", err)
	}
	for _, line := range strings.Split(err.Error(), "\n") {
		for _, r := range line {
			if !unicode.IsPrint(r) {
				t.Fatalf("message holds the non-printing %U: %q", r, line)
			}
		}
	}
}
