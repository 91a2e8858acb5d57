// Command fleetplan is joulelaw's main job: it turns a fleet scenario —
// groups of LoRaWAN class A sensor nodes, their gateways, radio environment,
// currents and cell — into an energy and battery-replacement plan with
// intervals, from the library's probability laws.
//
// Usage:
//
//	go run ./examples/fleetplan                      # the built-in, invented demo
//	go run ./examples/fleetplan -scenario site.json  # your own scenario
//	go run ./examples/fleetplan -json                # the same results as JSON
//	go run ./examples/fleetplan -figures DIR         # also write PNG and SVG figures
//	go run ./examples/fleetplan -print-demo          # print the demo scenario file
//	go run ./examples/fleetplan -print-schema        # print the format's JSON Schema
//
// The scenario format is documented in radio/lora/scenario/FORMAT.md, with
// its JSON Schema beside it (or start from -print-demo). The plan is computed
// by the public site model, package radio/lora/scenario; this program
// prints it. The figures' directory is checked (created if missing) before
// the computation; the report or JSON is written first, then the figures,
// each to a temporary file renamed into place, so a failed figure never
// discards the report. Any failed write exits with status 1. A bad file is
// rejected with every problem named by field, value and rule; nothing is
// defaulted. Progress goes to stderr; the report or JSON goes to stdout.
package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"time"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// run is the program; it returns the exit status (0 ok, 1 failure, 2 usage).
func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("fleetplan", flag.ContinueOnError)
	fs.SetOutput(stderr)
	file := fs.String("scenario", "", "read the scenario from this JSON `file` (default: the built-in demo)")
	asJSON := fs.Bool("json", false, "print the results as JSON instead of the report")
	figures := fs.String("figures", "", "write PNG and SVG figures into this `directory` (created if missing)")
	printDemo := fs.Bool("print-demo", false, "print the built-in demo scenario file and exit")
	printSchema := fs.Bool("print-schema", false, "print the JSON Schema of the scenario format and exit")
	quiet := fs.Bool("quiet", false, "print no progress on stderr")
	whatItTakes := fs.Bool("what-it-takes", false, "also answer the scenario's design section: the design that meets its target per group, and the replacement policies compared (design.go)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: fleetplan [-scenario file] [-json] [-figures dir] [-print-demo] [-print-schema] [-quiet] [-what-it-takes]")
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		return 2
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "fleetplan: unexpected argument %q\n", fs.Arg(0))
		fs.Usage()
		return 2
	}
	if *printDemo {
		return emit(stderr, func() error { _, err := stdout.Write(scenario.DemoJSON()); return err })
	}
	if *printSchema {
		return emit(stderr, func() error { _, err := stdout.Write(scenario.SchemaJSON()); return err })
	}
	start := time.Now()
	say := func(format string, args ...any) {
		if !*quiet {
			fmt.Fprintf(stderr, "fleetplan [%5.1f s] %s\n", time.Since(start).Seconds(), fmt.Sprintf(format, args...))
		}
	}

	var s scenario.Scenario
	source := "built-in demo (invented; run with -scenario FILE for your own, -print-demo for its file)"
	if *file == "" {
		s = scenario.Demo()
	} else {
		var err error
		if s, err = scenario.Load(*file); err != nil {
			fmt.Fprintf(stderr, "fleetplan: %s is not a usable scenario:\n", scenario.Quote(*file))
			for _, e := range flatten(err) {
				fmt.Fprintf(stderr, "  %v\n", e)
			}
			return 1
		}
		source = *file
	}
	// The figures' directory is checked before the long computation.
	if *figures != "" {
		if err := checkDir(*figures); err != nil {
			fmt.Fprintf(stderr, "fleetplan: figures: %v\n", err)
			return 1
		}
	}
	p, err := buildPlan(s, source, say)
	if err == nil && *whatItTakes {
		p.Design, err = whatItTakesSection(s, p, say) // design.go
	}
	if err != nil {
		fmt.Fprintln(stderr, "fleetplan: the plan cannot be computed:")
		for _, e := range flatten(err) {
			fmt.Fprintf(stderr, "  %v\n", e)
		}
		return 1
	}
	// The report (or JSON) first: a figure that fails never discards it.
	// Through a buffer: the report is a few hundred lines, one write each
	// otherwise; the flush's error is the write's.
	status := emit(stderr, func() error {
		bw := bufio.NewWriterSize(stdout, 64<<10)
		var err error
		if *asJSON {
			enc := json.NewEncoder(bw)
			enc.SetIndent("", "  ")
			err = enc.Encode(p)
		} else {
			err = writeReport(bw, p)
		}
		if ferr := bw.Flush(); err == nil {
			err = ferr
		}
		return err
	})
	if *figures != "" {
		say("writing figures to %s", scenario.Quote(*figures))
		names, err := writeFigures(p, *figures)
		for _, n := range names {
			say("  wrote %s", scenario.Quote(n))
		}
		if err != nil {
			fmt.Fprintf(stderr, "fleetplan: figures: %v (the report was written)\n", err)
			status = 1
		}
	}
	say("done")
	return status
}

// emit runs write and turns its error (a full disk, a closed pipe) into
// exit status 1 with a message on stderr.
func emit(stderr io.Writer, write func() error) int {
	if err := write(); err != nil {
		fmt.Fprintf(stderr, "fleetplan: writing the output: %v\n", err)
		return 1
	}
	return 0
}

// checkDir makes dir if it is missing and checks that a file can be
// created in it (and removes that file), so that a bad figures directory
// is found before the computation.
func checkDir(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	f, err := os.CreateTemp(dir, ".fleetplan-check-*")
	if err != nil {
		return err
	}
	name := f.Name()
	err = f.Close()
	if rmErr := os.Remove(name); err == nil {
		err = rmErr
	}
	return err
}

// flatten returns the errors joined in err, or err itself.
func flatten(err error) []error {
	if _, one := err.(*scenario.FieldError); one {
		return []error{err}
	}
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		return j.Unwrap()
	}
	return []error{err}
}
