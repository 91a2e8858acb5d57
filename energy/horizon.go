package energy

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// Cycles returns the law of the energy (J) of k consecutive cycles: the
// K-fold sum of the per-cycle law, dist.SumIID (numerical with its
// reported accuracy for continuous or mixed laws). For a purely discrete
// cycle law it is the exact discrete law while that has few atoms, the
// exact binomial law for two energies, the exact sum of conditional binomial
// tails for three, the lattice FFT for four or more commensurate energies,
// and otherwise the second-order saddlepoint law with its reported bound
// (Esseen's smoothing inequality; dist.Estimated), as for Lifetime. k must
// be in [1, dist.MaxSumIIDTerms].
func (c Cycle) Cycles(k int64) (dist.Law, error) {
	if k < 1 {
		return nil, paramErr("Cycle.Cycles", "k", k, "must be >= 1")
	}
	if c.energy == nil {
		return nil, paramErr("Cycle.Cycles", "c", "zero Cycle", "must be built by NewCycle")
	}
	l, err := sumIID(c.energy, k)
	if err != nil {
		return nil, causeErr("Cycle.Cycles", "k", k, "K-fold sum of the cycle energy", err)
	}
	return l, nil
}

// Horizon is the energy a node spends over a stretch of time.
type Horizon struct {
	Duration float64  // the stretch asked for (s)
	Cycles   int64    // the number of cycles counted: round(Duration / E[T]), at least 1
	Energy   dist.Law // law of the energy of Cycles cycles (J)
}

// Over returns the energy over the duration d (s): the K-fold sum over
// k = round(d / E[T]) cycles (at least 1). For a fixed period dividing d this
// is exact; otherwise d is rounded to whole mean periods. d must be finite
// and > 0.
func (c Cycle) Over(d float64) (Horizon, error) {
	if !finite(d) || d <= 0 {
		return Horizon{}, paramErr("Cycle.Over", "d", d, "must be finite and > 0 (s)")
	}
	if c.period == nil {
		return Horizon{}, paramErr("Cycle.Over", "c", "zero Cycle", "must be built by NewCycle")
	}
	n := max(1, math.Round(d/c.period.Mean()))
	if !(n <= 1<<62) {
		return Horizon{}, paramErr("Cycle.Over", "d", d, fmt.Sprintf("must be at most 2^62 mean periods (%g s), so that the cycle count fits an int64", c.period.Mean()))
	}
	k := int64(n)
	l, err := c.Cycles(k)
	if err != nil {
		return Horizon{}, err
	}
	return Horizon{Duration: d, Cycles: k, Energy: l}, nil
}

// Day returns the energy over one day (86 400 s); see Over.
func (c Cycle) Day() (Horizon, error) { return c.Over(Day) }

// Month returns the energy over one twelfth of a Julian year; see Over.
func (c Cycle) Month() (Horizon, error) { return c.Over(Month) }

// Year returns the energy over one Julian year; see Over.
func (c Cycle) Year() (Horizon, error) { return c.Over(Year) }

// CurrentInterval is an average current with an equal-tailed interval.
type CurrentInterval struct {
	Mean   float64 // the long-run mean current (A)
	Lo, Hi float64 // the interval (A)
	Level  float64 // its probability content, e.g. 0.95
	Cycles int64   // cycles averaged over
}

// String prints the interval in µA.
func (ci CurrentInterval) String() string {
	return fmt.Sprintf("%.4g µA (%.0f %% interval %.4g–%.4g µA over %d cycles)",
		ci.Mean/MicroAmp, 100*ci.Level, ci.Lo/MicroAmp, ci.Hi/MicroAmp, ci.Cycles)
}

// AverageCurrent returns the average current (A) drawn from a supply at
// voltage (V) over the duration d (s), I = S_k / (V·k·E[T]) with S_k the
// energy of k = round(d/E[T]) cycles, with its equal-tailed interval of
// probability level. voltage must be finite and > 0, level in (0, 1).
func (c Cycle) AverageCurrent(d, voltage, level float64) (CurrentInterval, error) {
	const fn = "Cycle.AverageCurrent"
	if !finite(voltage) || voltage <= 0 {
		return CurrentInterval{}, paramErr(fn, "voltage", voltage, "must be finite and > 0 (V)")
	}
	if !(level > 0 && level < 1) {
		return CurrentInterval{}, paramErr(fn, "level", level, "must be in (0, 1)")
	}
	h, err := c.Over(d)
	if err != nil {
		return CurrentInterval{}, err
	}
	scale := 1 / (voltage * float64(h.Cycles) * c.period.Mean())
	lo, hi, err := dist.EqualTailed(h.Energy, level)
	if err != nil {
		return CurrentInterval{}, causeErr(fn, "level", level, "interval", err)
	}
	return CurrentInterval{Mean: c.MeanCurrent(voltage), Lo: lo * scale, Hi: hi * scale, Level: level, Cycles: h.Cycles}, nil
}
