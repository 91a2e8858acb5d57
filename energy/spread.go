package energy

import (
	"fmt"
	"math"
)

// Caps on the spreads: a normal factor with a relative standard deviation of
// at most MaxRelativeSpread is negative with probability below 1e-11
// (6.7 standard deviations), which the laws of this package count in their
// stated error; wider spreads are rejected rather than truncated, because a
// capacity or a current spread that wide is not a normal factor any more.
const (
	MaxRelativeSpread = 0.15 // cap on NodeSpread.Capacity, NodeSpread.Active, SharedSpread.Batch
	MaxLogSpread      = 1.0  // cap on NodeSpread.Floor (log-sd of a lognormal factor)
	MaxTemperatureSD  = 10.0 // cap on SharedSpread.Temperature (°C)
)

// NodeSpread is the per-node tier of randomness: factors drawn once for a
// node when it is built and kept for its whole life. They do not average
// out over the cycles of a life, so they, not the per-cycle noise, set the
// width of a fleet's lifetimes.
//
// Every field is a spread around the value the description gives; the zero
// value means no spread.
type NodeSpread struct {
	// Capacity is the relative standard deviation of a cell's capacity
	// from unit to unit: the usable energy (and the self-discharge, which is
	// a fraction of it) is multiplied by a normal factor of mean 1 and this
	// standard deviation. In [0, MaxRelativeSpread]. A few per cent is
	// common practice for primary lithium cells of one type.
	Capacity float64
	// Floor is the log-standard deviation of the floor (sleep, leakage)
	// current from board to board: the floor power is multiplied by a
	// lognormal factor of median 1 (so the description gives the typical,
	// median board) and this log-sd. In [0, MaxLogSpread]; 0.4 means about
	// a factor 1.5 either way for one board in three.
	Floor float64
	// Active is the relative standard deviation of a scale on the active
	// states' energy above the floor (transmit, receive, sensing) from board
	// to board: a normal factor of mean 1. In [0, MaxRelativeSpread].
	Active float64
}

// IsZero reports whether s has no spread at all.
func (s NodeSpread) IsZero() bool { return s == NodeSpread{} }

func (s NodeSpread) check(fn, pre string) error {
	switch {
	case !(s.Capacity >= 0 && s.Capacity <= MaxRelativeSpread):
		return paramErr(fn, pre+"Spread.Capacity", s.Capacity, fmt.Sprintf("must be in [0, %g] (relative sd of a normal factor)", MaxRelativeSpread))
	case !(s.Floor >= 0 && s.Floor <= MaxLogSpread):
		return paramErr(fn, pre+"Spread.Floor", s.Floor, fmt.Sprintf("must be in [0, %g] (log-sd of a lognormal factor)", MaxLogSpread))
	case !(s.Active >= 0 && s.Active <= MaxRelativeSpread):
		return paramErr(fn, pre+"Spread.Active", s.Active, fmt.Sprintf("must be in [0, %g] (relative sd of a normal factor)", MaxRelativeSpread))
	}
	return nil
}

// SharedSpread is the shared tier of randomness: factors drawn once for the
// whole fleet, so that its nodes are independent only given them and fleet
// counts are mixtures over them, not binomial counts.
type SharedSpread struct {
	// Batch is the relative standard deviation of the capacity factor of
	// the cell batch the fleet was built from (one draw for the fleet;
	// normal, mean 1). In [0, MaxRelativeSpread].
	Batch float64
	// Temperature is the standard deviation (°C) of the site's temperature
	// offset for the years of the deployment (one draw for the fleet;
	// normal, mean 0), added to every month of the climate. In
	// [0, MaxTemperatureSD].
	Temperature float64
}

// IsZero reports whether s has no spread at all.
func (s SharedSpread) IsZero() bool { return s == SharedSpread{} }

func (s SharedSpread) check(fn string) error {
	switch {
	case !(s.Batch >= 0 && s.Batch <= MaxRelativeSpread):
		return paramErr(fn, "Shared.Batch", s.Batch, fmt.Sprintf("must be in [0, %g] (relative sd of a normal factor)", MaxRelativeSpread))
	case !(s.Temperature >= 0 && s.Temperature <= MaxTemperatureSD):
		return paramErr(fn, "Shared.Temperature", s.Temperature, fmt.Sprintf("must be in [0, %g] (°C)", MaxTemperatureSD))
	}
	return nil
}

// Conditions is one realisation of the shared tier: what a whole fleet
// shares. The zero value is the nominal case (batch factor 1, no offset).
type Conditions struct {
	BatchFactor       float64 // capacity factor of the cell batch; 0 means 1
	TemperatureOffset float64 // °C added to every month of the climate
}

func (c Conditions) batch() float64 {
	if c.BatchFactor == 0 {
		return 1
	}
	return c.BatchFactor
}

func (c Conditions) check(fn string) error {
	switch {
	case !(c.BatchFactor >= 0) || math.IsInf(c.BatchFactor, 0):
		return paramErr(fn, "Conditions.BatchFactor", c.BatchFactor, "must be finite and > 0 (0 means 1)")
	case !finite(c.TemperatureOffset) || math.Abs(c.TemperatureOffset) > 60:
		return paramErr(fn, "Conditions.TemperatureOffset", c.TemperatureOffset, "must be in [-60, 60] (°C)")
	}
	return nil
}
