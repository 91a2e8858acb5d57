package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/joulelaw/joulelaw/dist"
)

// Cycle is one reporting cycle of a node: the active stage, a period and a
// low-power floor. The floor power (sleep) is drawn whenever no state is
// active, so the floor fills whatever the active states leave:
//
//	E = P_floor·T + Σ_i (P_i − P_floor)·t_i   (J)
//
// where T is the period (s) and the sum runs over the states run in the
// cycle, each at power P_i (W) for t_i (s). Sleep time is never modelled as
// independent of the active time. The period is fixed (a point mass) or a law
// (jittered, or exponential for event-driven traffic), independent of the
// active stage; if the active time can exceed the period the model still
// uses the formula above and OverrunProbability reports P(Σ t_i > T).
//
// A Cycle is an immutable value, safe for concurrent use. A zero Cycle is
// not valid (build one with NewCycle): its laws are nil and Rand returns NaN.
type Cycle struct {
	active  Stage
	period  dist.Law
	floor   float64  // W
	energy  dist.Law // J
	excess  dist.Law // J, Σ (P_i − P_floor)·t_i
	actTime dist.Law // s
	overrun float64
	mom     moments
	states  []State // the distinct states, computed once (States)
}

// NewCycle returns the cycle that runs the stage active once per period
// (law of the period in s; use dist.NewPointMass for a fixed period) and
// draws floorPower (W) at all other times. The period's law must have
// support in [0, ∞) and a finite, positive mean and a finite variance;
// floorPower must be finite and >= 0, and no state may draw less than it
// (the lower end of every state's power law must be >= floorPower). It is an
// error if the active time is always longer than the period: the lower end
// of the active time's support beyond the upper end of the period's.
//
// The laws are computed here: exact (finite discrete) when every state's
// energy is, otherwise numerically by package dist with the accuracy it
// reports (dist.Estimated).
func NewCycle(active Stage, period dist.Law, floorPower float64) (Cycle, error) {
	const fn = "NewCycle"
	if active == nil {
		return Cycle{}, paramErr(fn, "active", nil, "must not be nil")
	}
	if err := checkNonNegLaw(fn, "period", period); err != nil {
		return Cycle{}, err
	}
	if !(period.Mean() > 0) {
		return Cycle{}, paramErr(fn, "period", period, "mean must be > 0")
	}
	if !finite(floorPower) || floorPower < 0 {
		return Cycle{}, paramErr(fn, "floorPower", floorPower, "must be finite and >= 0 (W)")
	}
	ex, at, err := active.laws(floorPower)
	if err != nil {
		return Cycle{}, err
	}
	c := Cycle{active: active, period: period, floor: floorPower, excess: ex, actTime: at,
		mom: active.moments(floorPower)}
	c.states = c.visitStates()
	aLo, _ := at.Support()
	_, tHi := period.Support()
	if aLo > tHi {
		return Cycle{}, paramErr(fn, "period", period,
			fmt.Sprintf("is at most %g s, shorter than the least active time %g s", tHi, aLo))
	}
	if c.energy, err = c.energyWithLeak(0); err != nil {
		return Cycle{}, err
	}
	if t, ok := pointValue(period); ok {
		c.overrun = at.Survival(t)
	} else {
		neg, err := dist.Affine(period, -1, 0)
		if err != nil {
			return Cycle{}, causeErr(fn, "period", period, "cannot be negated", err)
		}
		d, err := sum(at, neg)
		if err != nil {
			return Cycle{}, causeErr(fn, "period", period, "law of active time minus period", err)
		}
		c.overrun = d.Survival(0)
	}
	return c, nil
}

// MustCycle is NewCycle that panics on bad input; for examples and tests.
func MustCycle(active Stage, period dist.Law, floorPower float64) Cycle {
	c, err := NewCycle(active, period, floorPower)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return c
}

// pointValue reports the value of a one-atom law.
func pointValue(l dist.Law) (float64, bool) {
	if lo, hi := l.Support(); lo == hi {
		return lo, true
	}
	return 0, false
}

// energyWithLeak returns the law of (P_floor + leak)·T + Σ (P_i − P_floor)·t_i:
// the cycle's energy with an extra constant drain leak (W) such as a cell's
// self-discharge.
func (c Cycle) energyWithLeak(leak float64) (dist.Law, error) {
	f := c.floor + leak
	if t, ok := pointValue(c.period); ok {
		l, err := dist.Affine(c.excess, 1, f*t)
		if err != nil {
			return nil, causeErr("NewCycle", "period", t, "cycle energy law", err)
		}
		return l, nil
	}
	fl, err := dist.Affine(c.period, f, 0)
	if err != nil {
		return nil, causeErr("NewCycle", "floorPower", f, "floor energy law", err)
	}
	l, err := sum(fl, c.excess)
	if err != nil {
		return nil, causeErr("NewCycle", "period", c.period, "cycle energy law", err)
	}
	return l, nil
}

// Energy returns the law of the energy per cycle (J).
func (c Cycle) Energy() dist.Law { return c.energy }

// ActiveTime returns the law of the time per cycle spent in states (s).
func (c Cycle) ActiveTime() dist.Law { return c.actTime }

// Period returns the law of the period (s).
func (c Cycle) Period() dist.Law { return c.period }

// FloorPower returns the floor power (W).
func (c Cycle) FloorPower() float64 { return c.floor }

// Active returns the active stage.
func (c Cycle) Active() Stage { return c.active }

// MeanEnergy returns E[E] = P_floor·E[T] + E[Σ (P_i − P_floor)·t_i] (J),
// exact from the structure.
func (c Cycle) MeanEnergy() float64 {
	if c.period == nil {
		return math.NaN()
	}
	return c.floor*c.period.Mean() + c.mom.meanX
}

// EnergyVariance returns Var[E] = P_floor²·Var[T] + Var[Σ (P_i − P_floor)·t_i]
// (J²), exact from the structure.
func (c Cycle) EnergyVariance() float64 {
	if c.period == nil {
		return math.NaN()
	}
	return c.floor*c.floor*c.period.Variance() + c.mom.varX
}

// MeanPower returns the long-run average power E[E]/E[T] (W) (the
// renewal-reward theorem; Ross, Stochastic Processes, 2nd ed., §3.6, section from memory).
func (c Cycle) MeanPower() float64 {
	if c.period == nil {
		return math.NaN()
	}
	return c.MeanEnergy() / c.period.Mean()
}

// MeanCurrent returns the long-run average current MeanPower()/voltage (A)
// drawn from a supply at voltage (V); NaN if voltage is not > 0.
func (c Cycle) MeanCurrent(voltage float64) float64 {
	if !(voltage > 0) {
		return math.NaN()
	}
	return c.MeanPower() / voltage
}

// OverrunProbability returns P(active time > period): the probability that a
// cycle's states do not fit in its period. The model then still charges
// E = P_floor·T + Σ (P_i − P_floor)·t_i, which undercounts such a cycle; keep
// this probability negligible.
func (c Cycle) OverrunProbability() float64 { return c.overrun }

// States returns the distinct states (by name, in order of first
// appearance) that the cycle can run.
func (c Cycle) States() []State {
	if c.states != nil {
		return slices.Clone(c.states)
	}
	return c.visitStates()
}

// statesView is States without the copy, for reading only (newNode).
func (c Cycle) statesView() []State {
	if c.states != nil {
		return c.states
	}
	return c.visitStates()
}

// visitStates is States, from a visit of the stages (NewCycle keeps its
// result: the node models of a site read it once a law and setting).
func (c Cycle) visitStates() []State {
	if c.active == nil {
		return nil
	}
	// A cycle has tens of states: a scan of those kept finds a repeat
	// with less work and memory than a map of their names. They are
	// gathered on the stack, then kept in a list of their number.
	var buf [16]State
	found := appendStates(buf[:0], c.active)
	if len(found) == 0 {
		return []State{}
	}
	out := make([]State, len(found))
	copy(out, found)
	return out
}

// appendStates appends to dst the states of s (in the order of s.visit:
// TestAppendStatesVisitOrder) whose names dst does not hold yet.
func appendStates(dst []State, s Stage) []State {
	switch st := s.(type) {
	case State:
		for i := range dst {
			if dst[i].name == st.name {
				return dst
			}
		}
		return append(dst, st)
	case sequence:
		for _, x := range st.stages {
			dst = appendStates(dst, x)
		}
	case choice:
		for _, x := range st.stages {
			dst = appendStates(dst, x)
		}
	case configured:
		for _, x := range st.stages {
			dst = appendStates(dst, x)
		}
	case repeat:
		dst = appendStates(dst, st.stage)
	}
	// nothing has no states; Stage's unexported methods leave no other kind.
	return dst
}

// Rand draws one cycle's energy (J) from the structure, not from the
// computed law: the period, then every stage's choices, counts,
// configurations, powers and durations. It is the independent Monte Carlo
// path against which the law is checked.
func (c Cycle) Rand(r *rand.Rand) float64 {
	if c.active == nil {
		return math.NaN()
	}
	e, _ := c.active.sample(r, c.floor, nil)
	return c.floor*c.period.Rand(r) + e
}

// Share is one row of a cycle's breakdown: a state (all its runs in the
// cycle, summed) or the floor. Over all rows the MeanShare values sum to 1
// and so do the VarianceShare values.
type Share struct {
	Name  string // the state's name; "" for the floor row
	Floor bool   // whether this is the floor row, P_floor·T
	// Runs is the expected number of runs per cycle (1 for the floor row).
	Runs float64
	// MeanEnergy is the expected energy the state draws per cycle, E[Σ P·t]
	// (J), floor-level part included; for the floor row P_floor·E[T].
	MeanEnergy float64
	// MeanAboveFloor is E[Σ (P − P_floor)·t] (J), the state's part of the
	// mean; for the floor row P_floor·E[T].
	MeanAboveFloor float64
	// MeanShare is MeanAboveFloor / E[E].
	MeanShare float64
	// VarianceShare is Cov(C, E) / Var[E], where C is the row's part of the
	// cycle energy (Σ (P − P_floor)·t over its runs, or P_floor·T): the
	// covariance allocation of the variance, which adds up to 1 over the rows
	// and says which state drives the spread. A row can be negative when its
	// part moves against the total (a branch that replaces a costlier one).
	// NaN when Var[E] = 0.
	VarianceShare float64
}

// Breakdown returns the cycle's mean and variance per state, exact from the
// structure: one row per distinct state name, in order of first appearance,
// then the floor row.
func (c Cycle) Breakdown() []Share {
	if c.period == nil {
		return nil
	}
	mean, vr := c.MeanEnergy(), c.EnergyVariance()
	out := make([]Share, 0, len(c.mom.parts)+1)
	for _, p := range c.mom.parts {
		out = append(out, Share{
			Name: p.name, Runs: p.count, MeanEnergy: p.own, MeanAboveFloor: p.excess,
			MeanShare: p.excess / mean, VarianceShare: ratio(p.cov, vr),
		})
	}
	fm := c.floor * c.period.Mean()
	out = append(out, Share{
		Floor: true, Runs: 1, MeanEnergy: fm, MeanAboveFloor: fm,
		MeanShare: fm / mean, VarianceShare: ratio(c.floor*c.floor*c.period.Variance(), vr),
	})
	return out
}

func ratio(a, b float64) float64 {
	if b == 0 {
		return math.NaN()
	}
	return a / b
}

// String summarises the cycle: mean energy, mean power and the period.
func (c Cycle) String() string {
	if c.period == nil {
		return "Cycle(zero: not built by NewCycle)"
	}
	return fmt.Sprintf("Cycle(mean %.6g J per cycle, sd %.4g J, mean power %.6g W, period %v s, floor %.4g W)",
		c.MeanEnergy(), math.Sqrt(c.EnergyVariance()), c.MeanPower(), c.period, c.floor)
}
