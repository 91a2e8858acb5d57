// Command figures draws the fleetplan program's plan as PNG and SVG figures:
// the energy per cycle of a node of the fleet and of the largest and
// smallest of its nodes, the share of each group's nodes still running over
// the years, and the number of nodes at the end of their life with its 90 %
// band; with -what-it-takes, the design search's lifetime against the
// reading interval as well.
//
// Usage:
//
//	go run ./examples/fleetplan/figures DIR                      # the built-in, invented demo
//	go run ./examples/fleetplan/figures -scenario site.json DIR  # your own scenario
//	go run ./examples/fleetplan/figures -what-it-takes DIR       # with the design figure
//
// The plan is the one fleetplan prints for the same scenario (package fleet
// computes both). DIR is created if missing and checked before the
// computation; each figure is written to a temporary file renamed into
// place, and the files written are listed on stdout. A figure that fails
// leaves the others in place and exits with status 1. Progress goes to
// stderr. The figures live in their own program so that fleetplan, the
// main job, carries no plotting code.
package main

import (
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
	fs := flag.NewFlagSet("figures", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o fleet.Options
	o.Define(fs, "also draw the scenario's design section (the lifetime against the reading interval)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: figures [-scenario file] [-quiet] [-what-it-takes] DIR")
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		return 2
	}
	if fs.NArg() != 1 {
		fmt.Fprintln(stderr, "figures: give one directory for the figures")
		fs.Usage()
		return 2
	}
	dir := fs.Arg(0)
	say := fleet.Progressor(stderr, "figures", o.Quiet)
	s, source, err := fleet.Load(o.Scenario)
	if err != nil {
		fleet.Complain(stderr, fmt.Sprintf("figures: %s is not a usable scenario:", scenario.Quote(o.Scenario)), err)
		return 1
	}
	// The directory is checked before the long computation.
	if err := checkDir(dir); err != nil {
		fmt.Fprintf(stderr, "figures: %v\n", err)
		return 1
	}
	p, err := fleet.Compute(s, source, o.WhatItTakes, say)
	if err != nil {
		fleet.Complain(stderr, "figures: the plan cannot be computed:", err)
		return 1
	}
	say("writing figures to %s", scenario.Quote(dir))
	names, err := writeFigures(p, dir)
	status := 0
	for _, n := range names {
		if _, werr := fmt.Fprintln(stdout, scenario.Quote(n)); werr != nil && err == nil {
			err = werr
		}
	}
	if err != nil {
		fmt.Fprintf(stderr, "figures: %v\n", err)
		status = 1
	}
	say("done")
	return status
}

// checkDir makes dir if it is missing and checks that a file can be
// created in it (and removes that file), so that a bad directory is found
// before the computation.
func checkDir(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	f, err := os.CreateTemp(dir, ".figures-check-*")
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
