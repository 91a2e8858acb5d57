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
//	go run ./examples/fleetplan -print-demo          # print the demo scenario file
//	go run ./examples/fleetplan -print-schema        # print the format's JSON Schema
//	go run ./examples/fleetplan/figures DIR          # the plan's PNG and SVG figures (its own program)
//
// The scenario format is documented in radio/lora/scenario/FORMAT.md, with
// its JSON Schema beside it (or start from -print-demo). The plan is computed
// by the public site model, package radio/lora/scenario, and summarised by
// package fleet (internal to this program and its figures program); this
// program prints it. Any failed write exits with status 1. A bad file is
// rejected with every problem named by field, value and rule; nothing is
// defaulted. Progress goes to stderr; the report or JSON goes to stdout.
//
// The figures are drawn by their own program, examples/fleetplan/figures,
// from the same plan: the plotting library's start-up (its fonts) would
// otherwise cost every run of this one about 4 MB and a few milliseconds.
// The -figures flag is refused with a pointer to it.
package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"

	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// run is the program; it returns the exit status (0 ok, 1 failure, 2 usage).
func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("fleetplan", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o fleet.Options
	o.Define(fs, "also answer the scenario's design section: the design that meets its target per group, and the replacement policies compared")
	asJSON := fs.Bool("json", false, "print the results as JSON instead of the report")
	figures := fs.String("figures", "", "refused: the figures are drawn by go run ./examples/fleetplan/figures `DIR`")
	printDemo := fs.Bool("print-demo", false, "print the built-in demo scenario file and exit")
	printSchema := fs.Bool("print-schema", false, "print the JSON Schema of the scenario format and exit")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: fleetplan [-scenario file] [-json] [-print-demo] [-print-schema] [-quiet] [-what-it-takes]")
		fmt.Fprintln(stderr, "figures: go run ./examples/fleetplan/figures [-scenario file] [-what-it-takes] [-quiet] DIR")
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
	if *figures != "" {
		fmt.Fprintf(stderr, "fleetplan: -figures: the figures are drawn by their own program: go run ./examples/fleetplan/figures [-scenario file] [-what-it-takes] %s\n", scenario.Quote(*figures))
		return 2
	}
	if *printDemo {
		return emit(stderr, func() error { _, err := stdout.Write(scenario.DemoJSON()); return err })
	}
	if *printSchema {
		return emit(stderr, func() error { _, err := stdout.Write(scenario.SchemaJSON()); return err })
	}
	say := fleet.Progressor(stderr, "fleetplan", o.Quiet)
	s, source, err := fleet.Load(o.Scenario)
	if err != nil {
		fleet.Complain(stderr, fmt.Sprintf("fleetplan: %s is not a usable scenario:", scenario.Quote(o.Scenario)), err)
		return 1
	}
	p, err := fleet.Compute(s, source, o.WhatItTakes, say)
	if err != nil {
		fleet.Complain(stderr, "fleetplan: the plan cannot be computed:", err)
		return 1
	}
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
			err = fleet.WriteReport(bw, p)
		}
		if ferr := bw.Flush(); err == nil {
			err = ferr
		}
		return err
	})
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
