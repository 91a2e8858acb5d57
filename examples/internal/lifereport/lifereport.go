// Package lifereport prints the lifetime part of the per-radio example
// programs (examples/floorsensors, examples/beacons): one node's life with
// its 90 % interval, the first flat battery of a fleet of alike nodes, a few
// seeded samples, and the share and count of nodes flat before a date. It is
// a thin shell over energy.NewFleetOfLaws (orderstat underneath).
package lifereport

import (
	"fmt"
	"io"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// Print writes the report for count nodes (called noun, e.g. "sensor")
// described by spec, in the nominal environment (no climate, nominal
// shared factors): the cautions of their lifetime law, then one node's
// life, the first flat battery, three sampled lives and the share flat
// before horizon (s). seed seeds the sampled lives, so the output is the
// same every run.
func Print(w io.Writer, spec energy.NodeSpec, noun string, count int64, horizon float64, seed uint64) error {
	life, err := energy.NewNodeLifetime(spec, energy.Environment{})
	if err != nil {
		return err
	}
	for _, c := range life.Warnings() {
		fmt.Fprintln(w, "caution:", c)
	}
	fmt.Fprintln(w)
	return lives(w, life, noun, count, horizon, seed)
}

// lives writes the lifetime lines of Print.
func lives(w io.Writer, life dist.Law, noun string, count int64, horizon float64, seed uint64) error {
	lo, hi, err := dist.EqualTailed(life, 0.9)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "one %s's life: median %.2f years, 90 %% between %.2f and %.2f years\n",
		noun, energy.Years(life.Quantile(0.5)), energy.Years(lo), energy.Years(hi))
	r := rand.New(rand.NewPCG(seed, 1))
	fmt.Fprintf(w, "three simulated lives: %.2f, %.2f, %.2f years\n",
		energy.Years(life.Rand(r)), energy.Years(life.Rand(r)), energy.Years(life.Rand(r)))

	fleet, err := energy.NewFleetOfLaws([]energy.FleetLawGroup{{Name: noun, Lifetime: life, Count: count}})
	if err != nil {
		return err
	}
	first, err := fleet.FirstFailure()
	if err != nil {
		return err
	}
	flo, fhi, err := dist.EqualTailed(first, 0.9)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "first flat battery of %d: median %.2f years, 90 %% between %.2f and %.2f years\n",
		count, energy.Years(first.Quantile(0.5)), energy.Years(flo), energy.Years(fhi))

	flat, err := fleet.FailedBy(horizon)
	if err != nil {
		return err
	}
	clo, chi, err := dist.EqualTailed(flat, 0.9)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "flat before %.3g years: %.3g %% of them; of %d, %.0f to %.0f (90 %%); none with probability %.3g\n",
		energy.Years(horizon), 100*life.CDF(horizon), count, clo, chi, fleet.NoFailureBefore(horizon))
	return nil
}
