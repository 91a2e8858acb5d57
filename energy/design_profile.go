package energy

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/root"
)

// Caps on a profile.
const (
	// MaxProfileIntervals caps the intervals of one Profile call.
	MaxProfileIntervals = 1024
	// MaxProfileLevels caps its quantile levels.
	MaxProfileLevels = 16
)

// ProfileRow is a node's lifetime at one reading interval of a choice.
type ProfileRow struct {
	Interval float64 // s between readings
	// Quantiles are the node's lifetime quantiles (s) at the levels asked
	// for: the mixture over the shared factors, as SearchDesign evaluates
	// (MixedNodeLifetime's law).
	Quantiles []float64
	// Probability is the target's p at the interval (see TargetKind),
	// computed without its stated error.
	Probability float64
	// Meets tells whether p <= Level and the radio's rules allow the
	// interval (Candidate.MinInterval): the computed figure, where the
	// search asks p + its stated error to meet the level.
	Meets bool
}

// Profile returns, for the choice c of p's space at each of the reading
// intervals (s), the node's lifetime quantiles at levels and the target's
// figure: the table of what an interval buys, beside SearchDesign's
// answer. The candidates are built by p.Build and evaluated as the search
// does (the same shared factors' rule, the same month tables), on two
// goroutines; the rows do not depend on the schedule.
//
// Quantiles are found as the mixture's Quantile finds them (regula falsi
// on the probit, internal/root), to 1e-10 relative, from a cheaper bracket: the calendar
// limit where the energy binds less often than the level, otherwise the
// heaviest shared node's own quantile widened until the mixture's CDF
// brackets the level (one conditional root-finding per quantile instead
// of one per node). Errors: bad problem (as SearchDesign), a choice
// outside the space, intervals not finite and > 0 or more than
// MaxProfileIntervals, levels outside (0, 1) or more than
// MaxProfileLevels, or a builder's error (wrapping ErrParam).
func (p DesignProblem) Profile(c DesignChoice, intervals, levels []float64) ([]ProfileRow, error) {
	const fn = "DesignProblem.Profile"
	if _, _, err := p.check(fn); err != nil {
		return nil, err
	}
	s := p.Space
	switch {
	case c.Cell < 0 || c.Cell >= len(s.Cells):
		return nil, paramErr(fn, "c.Cell", c.Cell, fmt.Sprintf("must index the space's %d cells", len(s.Cells)))
	case c.Window < 0 || c.Window >= len(s.Windows):
		return nil, paramErr(fn, "c.Window", c.Window, fmt.Sprintf("must index the space's %d receive windows", len(s.Windows)))
	case c.Batch < 1:
		return nil, paramErr(fn, "c.Batch", c.Batch, "must be >= 1 reading per uplink")
	case c.Link.Transmissions < 1:
		return nil, paramErr(fn, "c.Link.Transmissions", c.Link.Transmissions, "must be >= 1")
	case len(intervals) > MaxProfileIntervals:
		return nil, paramErr(fn, "intervals", len(intervals), fmt.Sprintf("must hold at most %d intervals", MaxProfileIntervals))
	case len(levels) > MaxProfileLevels:
		return nil, paramErr(fn, "levels", len(levels), fmt.Sprintf("must hold at most %d levels", MaxProfileLevels))
	}
	for i, iv := range intervals {
		if !(iv > 0) || math.IsInf(iv, 0) {
			return nil, paramErr(fn, fmt.Sprintf("intervals[%d]", i), iv, "must be finite and > 0 (s)")
		}
	}
	for i, q := range levels {
		if !(q > 0 && q < 1) {
			return nil, paramErr(fn, fmt.Sprintf("levels[%d]", i), q, "must be in (0, 1)")
		}
	}
	months := &monthCache{}
	rule := p.rule()
	rows := make([]ProfileRow, len(intervals))
	err := forEachOnTwo(len(intervals), func(i int) error {
		ch := c
		ch.Interval = intervals[i]
		cand, err := p.Build(ch)
		if err != nil {
			return causeErr(fn, "p.Build", fmt.Sprintf("%+v", ch), "the builder failed", err)
		}
		tl, err := newTargetLaws(fn, cand.Node, p.Climate, rule, months, p.Target.Date)
		if err != nil {
			return err
		}
		pr, err := tl.prob(p.Target, p.Count)
		if err != nil {
			return err
		}
		row := ProfileRow{Interval: ch.Interval, Probability: pr, Meets: pr <= p.Target.Level && ch.Interval >= cand.MinInterval}
		for _, q := range levels {
			x := tl.quantile(q)
			if math.IsNaN(x) {
				return paramErr(fn, "quantile", x, fmt.Sprintf("the lifetime's %g-quantile at interval %g s is NaN", q, ch.Interval))
			}
			row.Quantiles = append(row.Quantiles, x)
		}
		rows[i] = row
		return nil
	})
	if err != nil {
		return nil, err
	}
	return rows, nil
}

// quantile returns the q-quantile (s, q in (0, 1)) of the mixture over the
// shared factors (see Profile).
func (tl *targetLaws) quantile(q float64) float64 {
	m := tl.nodeLaw("")
	if !math.IsInf(tl.calendar, 1) {
		if math.IsNaN(tl.binds) { // once for every level
			tl.binds = 0
			for e, l := range tl.laws {
				tl.binds += tl.w[e] * l.EnergyBinds()
			}
		}
		if q > tl.binds {
			return tl.calendar
		}
	}
	heavy := 0
	for e, w := range tl.w {
		if w > tl.w[heavy] {
			heavy = e
		}
	}
	target := dist.MustNormal(0, 1).Quantile(q)
	x := tl.laws[heavy].Quantile(q)
	if !(x > 0) || math.IsInf(x, 0) {
		return m.Quantile(q) // the mixture's own bracket
	}
	// Widen by factors 1.05, 1.05², 1.05⁴, … until the probit brackets
	// the target (probit(lo) < target <= probit(hi)), keeping the ends'
	// probits for the root finder.
	lo, hi := x, x
	zlo := m.probit(x)
	zhi := zlo
	for f := 1.05; zlo >= target; f *= f {
		if lo < 1 || f > 1e300 {
			return m.Quantile(q)
		}
		hi, zhi = lo, zlo
		lo /= f
		zlo = m.probit(lo)
	}
	for f := 1.05; zhi < target; f *= f {
		if hi >= tl.calendar || f > 1e300 {
			return m.Quantile(q)
		}
		lo, zlo = hi, zhi
		hi = min(hi*f, tl.calendar)
		zhi = m.probit(hi)
	}
	return root.Illinois(func(t float64) float64 { return m.probit(t) - target }, lo, hi, zlo-target, zhi-target, profileQuantileTol*hi)
}

// profileQuantileTol is the relative width to which Profile brackets a
// quantile (the mixture's own Quantile goes to 1e-12: a table's quantile
// needs fewer steps of the same root finder).
const profileQuantileTol = 1e-10
