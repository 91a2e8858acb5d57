// Command remaininglife shows a LoRaWAN network back-end re-estimating
// the remaining life of each battery-powered device from what the network
// already sees: its uplinks by data rate and power, frame-counter gaps,
// repetitions and retries, downlinks, joins and the battery levels of its
// status answers. It feeds the records through lora.Observer into each
// device's energy.Tally (constant work per record, no history kept) and
// prints, per group and per device, remaining-life laws (median and 90 %
// interval), the service list for a date and a risk, the number of
// devices flat by then with its 90 % band, and the devices whose
// observations are improbable under their group's model.
//
// Usage:
//
//	go run ./examples/remaininglife                  # the built-in, invented demo log
//	go run ./examples/remaininglife -json            # the same results as JSON
//	go run ./examples/remaininglife -log FILE        # read a log (JSON lines, FORMAT.md)
//	go run ./examples/remaininglife -log -           # … from standard input
//	go run ./examples/remaininglife -write-demo FILE # write the demo log as JSON lines
//
// The demo log is INVENTED DATA, generated in the program from a fixed
// seed (two groups of 100 devices over two years, about 600 000 records;
// demo.go says what is planted in it): it shows the program at work, it
// validates nothing. The groups (radio settings, currents, cell, spreads)
// are the demo's, in demo.go; a log read with -log must name those groups.
//
// A malformed record (bad JSON, an unknown or missing field, a value out
// of range, a record the device's state refuses such as a time going back
// by more than an hour) is reported on stderr with its line number, field,
// value and rule, and skipped; -strict makes the first one fatal (exit
// status 1). Nothing is dropped silently: the report counts the skipped
// records. The report goes to stdout.
//
// Caution: these are planning figures for scheduling service visits, not
// a guarantee that a device keeps working. Replace, store and dispose of
// primary lithium cells as their maker instructs and local rules require;
// keep your own margin for devices whose failure can hurt someone.
package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

// options are the program's settings.
type options struct {
	asJSON     bool
	logFile    string
	writeDemo  string
	strict     bool
	horizon    float64 // days from today
	risk       float64 // service-list threshold
	level      float64 // outlier false-alarm rate
	devicesOut int     // devices listed in the text report
}

// run is the program; it returns the exit status (0 ok, 1 failure, 2 usage).
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("remaininglife", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o options
	fs.BoolVar(&o.asJSON, "json", false, "print the results as JSON instead of the report")
	fs.StringVar(&o.logFile, "log", "", "read the back-end log from this `file` (JSON lines, FORMAT.md; - for standard input) instead of the demo")
	fs.StringVar(&o.writeDemo, "write-demo", "", "write the demo log to this `file` as JSON lines and exit")
	fs.BoolVar(&o.strict, "strict", false, "stop at the first malformed record (exit status 1) instead of skipping it")
	fs.Float64Var(&o.horizon, "horizon", 180, "service date, `days` after the newest record (0 … 3650)")
	fs.Float64Var(&o.risk, "risk", 0.1, "list the devices whose probability of being flat by the service date is at least this (0 … 1)")
	fs.Float64Var(&o.level, "level", 1e-3, "flag devices whose observations are this improbable under their group's model: the false-alarm rate per device (0 … 0.5)")
	fs.IntVar(&o.devicesOut, "devices", 15, "devices listed in the report, highest risk first (0 … 16384)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: remaininglife [-json] [-log file|-] [-write-demo file] [-strict] [-horizon days] [-risk p] [-level p] [-devices n]")
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		return 2
	}
	switch {
	case fs.NArg() > 0:
		fmt.Fprintf(stderr, "remaininglife: unexpected argument %q\n", fs.Arg(0))
		return 2
	case !(o.horizon >= 0 && o.horizon <= 3650):
		fmt.Fprintf(stderr, "remaininglife: -horizon %g: must be 0 … 3650 days\n", o.horizon)
		return 2
	case !(o.risk >= 0 && o.risk <= 1):
		fmt.Fprintf(stderr, "remaininglife: -risk %g: must be 0 … 1\n", o.risk)
		return 2
	case !(o.level > 0 && o.level <= 0.5):
		fmt.Fprintf(stderr, "remaininglife: -level %g: must be in (0, 0.5]\n", o.level)
		return 2
	case o.devicesOut < 0 || o.devicesOut > maxDevices:
		fmt.Fprintf(stderr, "remaininglife: -devices %d: must be 0 … %d\n", o.devicesOut, maxDevices)
		return 2
	}
	groups, err := demoGroups()
	if err != nil {
		fmt.Fprintln(stderr, "remaininglife:", err)
		return 1
	}
	if o.writeDemo != "" {
		if err := writeDemo(o.writeDemo, groups); err != nil {
			fmt.Fprintln(stderr, "remaininglife:", err)
			return 1
		}
		return 0
	}
	fl, err := newFleet(groups)
	if err != nil {
		fmt.Fprintln(stderr, "remaininglife:", err)
		return 1
	}
	skip := func(e recordError) {
		fl.skipped++
		if fl.skipped <= 20 {
			fmt.Fprintln(stderr, "remaininglife: skipped:", e)
		} else if fl.skipped == 21 {
			fmt.Fprintln(stderr, "remaininglife: skipped: … (further skipped records are counted, not listed)")
		}
	}
	switch o.logFile {
	case "":
		fl.source = "the built-in demo log (INVENTED DATA, seed 1)"
		line := 0
		err = demoLog(groups, 1, func(rec Record) error {
			line++
			if e := fl.apply(line, rec); e != nil {
				var re recordError
				if errors.As(e, &re) {
					skip(re)
					return nil
				}
				return e
			}
			return nil
		})
	default:
		var in io.Reader = stdin
		fl.source = "standard input"
		if o.logFile != "-" {
			f, e := os.Open(o.logFile)
			if e != nil {
				fmt.Fprintln(stderr, "remaininglife:", e)
				return 1
			}
			defer f.Close()
			in, fl.source = f, o.logFile
		}
		err = readLog(in, o.strict, fl.apply, skip)
	}
	if err != nil {
		fmt.Fprintln(stderr, "remaininglife:", err)
		return 1
	}
	res, err := fl.results(o)
	if err != nil {
		fmt.Fprintln(stderr, "remaininglife:", err)
		return 1
	}
	w := bufio.NewWriter(stdout)
	if o.asJSON {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		err = enc.Encode(res)
	} else {
		res.write(w, o)
	}
	if err == nil {
		err = w.Flush()
	}
	if err != nil {
		fmt.Fprintln(stderr, "remaininglife:", err)
		return 1
	}
	return 0
}

// writeDemo writes the demo log to path through a temporary file renamed
// into place.
func writeDemo(path string, groups []groupConfig) error {
	tmp, err := os.CreateTemp(filepath.Dir(path), ".remaininglife-*.jsonl")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	w := bufio.NewWriterSize(tmp, 1<<16)
	if err := demoLog(groups, 1, func(rec Record) error { return writeRecord(w, rec) }); err != nil {
		tmp.Close()
		return err
	}
	if err := w.Flush(); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), path)
}
