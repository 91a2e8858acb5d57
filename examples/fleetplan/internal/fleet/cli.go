package fleet

import (
	"flag"
	"fmt"
	"io"
	"time"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// Options are the flags both programs read: the scenario file, quiet and
// the design section.
type Options struct {
	Scenario    string // the scenario file; empty: the built-in demo
	Quiet       bool   // no progress on stderr
	WhatItTakes bool   // also the scenario's design section
}

// Define defines -scenario, -quiet and -what-it-takes on fs, into o; design
// is the help text of -what-it-takes.
func (o *Options) Define(fs *flag.FlagSet, design string) {
	fs.StringVar(&o.Scenario, "scenario", "", "read the scenario from this JSON `file` (default: the built-in demo)")
	fs.BoolVar(&o.Quiet, "quiet", false, "print no progress on stderr")
	fs.BoolVar(&o.WhatItTakes, "what-it-takes", false, design)
}

// DemoSource is the scenario source the plan names for the built-in demo.
const DemoSource = "built-in demo (invented; run with -scenario FILE for your own, -print-demo for its file)"

// Load returns the built-in demo when file is empty and the checked
// scenario in file otherwise, with the source the plan names. A bad file's
// error joins every problem found (Flatten lists them).
func Load(file string) (scenario.Scenario, string, error) {
	if file == "" {
		return scenario.Demo(), DemoSource, nil
	}
	s, err := scenario.Load(file)
	return s, file, err
}

// Flatten returns the errors joined in err, or err itself.
func Flatten(err error) []error {
	if _, one := err.(*scenario.FieldError); one {
		return []error{err}
	}
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		return j.Unwrap()
	}
	return []error{err}
}

// Complain writes head and then each problem in err on its own indented
// line.
func Complain(w io.Writer, head string, err error) {
	fmt.Fprintln(w, head)
	for _, e := range Flatten(err) {
		fmt.Fprintf(w, "  %v\n", e)
	}
}

// Progressor returns a Progress that writes "prog [elapsed s] message"
// lines to w, or one that writes nothing when quiet.
func Progressor(w io.Writer, prog string, quiet bool) Progress {
	if quiet {
		return func(string, ...any) {}
	}
	start := time.Now()
	return func(format string, args ...any) {
		fmt.Fprintf(w, "%s [%5.1f s] %s\n", prog, time.Since(start).Seconds(), fmt.Sprintf(format, args...))
	}
}

// Compute builds the plan of s, with the design section when withDesign.
func Compute(s scenario.Scenario, source string, withDesign bool, say Progress) (*Plan, error) {
	p, err := Build(s, source, say)
	if err == nil && withDesign {
		p.Design, err = WhatItTakes(s, p, say)
	}
	return p, err
}
