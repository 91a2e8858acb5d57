package energy

import (
	"fmt"
	"math"
)

// Limits of a Supply.
const (
	supplyMaxRail      = 60.0 // largest rail voltage (V)
	supplyMaxQuiescent = 0.1  // largest quiescent current (A)
)

// supplyKind tells the three supply paths apart.
type supplyKind int

const (
	supplyDirect supplyKind = iota
	supplyLinear
	supplySwitching
)

// Supply is the path between the cell and the node's rail. The node's
// state currents are given at the rail voltage (RailVoltage) they were
// measured at; the supply turns node energy into cell energy:
//
//	direct:    cell energy = node energy
//	linear:    cell current = node current + Iq          (cell J per node J = Vcell/Vrail)
//	switching: cell power = node power/η + Iq·Vcell      (cell J per node J = 1/η)
//
// with the quiescent draw Iq·Vcell (W) taken from the cell whatever the load
// (common practice for a low-dropout linear regulator and for a switching
// converter with a fixed efficiency). A Supply is an immutable value, safe
// for concurrent use; the zero value is DirectSupply.
type Supply struct {
	kind       supplyKind
	rail       float64 // V; 0 for direct
	efficiency float64 // in (0, 1]; switching only
	quiescent  float64 // A
}

// DirectSupply returns the supply of a node running on the cell directly:
// cell energy = node energy, no quiescent draw; the node's currents are
// taken at the cell's voltage.
func DirectSupply() Supply { return Supply{} }

// LinearRegulator returns a linear (low-dropout) regulator to railVoltage
// (V, finite, in (0, 60]) drawing quiescentCurrent (A, finite, in [0, 0.1])
// from the cell whatever the load: the cell current is the node's current
// plus the quiescent current. Errors wrap ErrParam.
func LinearRegulator(railVoltage, quiescentCurrent float64) (Supply, error) {
	const fn = "LinearRegulator"
	if err := checkRail(fn, railVoltage, quiescentCurrent); err != nil {
		return Supply{}, err
	}
	return Supply{kind: supplyLinear, rail: railVoltage, quiescent: quiescentCurrent}, nil
}

// SwitchingRegulator returns a switching converter to railVoltage (V,
// finite, in (0, 60]) with the given efficiency (in (0, 1], taken constant
// over the load) and quiescentCurrent (A, finite, in [0, 0.1]) drawn from the
// cell whatever the load: cell power = node power/efficiency +
// quiescentCurrent·Vcell. Errors wrap ErrParam.
func SwitchingRegulator(railVoltage, efficiency, quiescentCurrent float64) (Supply, error) {
	const fn = "SwitchingRegulator"
	if err := checkRail(fn, railVoltage, quiescentCurrent); err != nil {
		return Supply{}, err
	}
	if !(efficiency > 0 && efficiency <= 1) {
		return Supply{}, paramErr(fn, "efficiency", efficiency, "must be in (0, 1] (0.85 is 85 %)")
	}
	return Supply{kind: supplySwitching, rail: railVoltage, efficiency: efficiency, quiescent: quiescentCurrent}, nil
}

func checkRail(fn string, rail, iq float64) error {
	switch {
	case !finite(rail) || rail <= 0 || rail > supplyMaxRail:
		return paramErr(fn, "railVoltage", rail, "must be finite and in (0, 60] (V)")
	case !finite(iq) || iq < 0 || iq > supplyMaxQuiescent:
		return paramErr(fn, "quiescentCurrent", iq, "must be finite and in [0, 0.1] (A; 2 µA is 2*MicroAmp)")
	}
	return nil
}

// RailVoltage returns the voltage (V) at which the node's currents are
// given: the regulator's output, or 0 for DirectSupply (the node's
// currents are then at the cell's voltage).
func (s Supply) RailVoltage() float64 { return s.rail }

// Efficiency returns a switching converter's efficiency, and 1 for the
// other paths (a linear regulator's loss is in EnergyScale's Vcell/Vrail).
func (s Supply) Efficiency() float64 {
	if s.kind == supplySwitching {
		return s.efficiency
	}
	return 1
}

// QuiescentCurrent returns the current (A) the supply draws from the cell
// whatever the load (0 for DirectSupply).
func (s Supply) QuiescentCurrent() float64 { return s.quiescent }

// EnergyScale returns the cell energy (J) spent per joule the node draws at
// its rail, with the cell at cellVoltage (V): 1 for DirectSupply,
// cellVoltage/RailVoltage for a linear regulator (the cell delivers the
// node's current at its own voltage), 1/efficiency for a switching one.
// NaN when cellVoltage is NaN, infinite or <= 0 (use Check to get an error
// instead). The quiescent draw is not included: see QuiescentPower.
func (s Supply) EnergyScale(cellVoltage float64) float64 {
	if !finite(cellVoltage) || cellVoltage <= 0 {
		return math.NaN()
	}
	switch s.kind {
	case supplyLinear:
		return cellVoltage / s.rail
	case supplySwitching:
		return 1 / s.efficiency
	}
	return 1
}

// QuiescentPower returns the power (W) the supply draws from the cell at
// cellVoltage (V) whatever the load: QuiescentCurrent·cellVoltage (0 for
// DirectSupply). NaN when cellVoltage is NaN, infinite or <= 0.
func (s Supply) QuiescentPower(cellVoltage float64) float64 {
	if !finite(cellVoltage) || cellVoltage <= 0 {
		return math.NaN()
	}
	return s.quiescent * cellVoltage
}

// Check returns an error wrapping ErrParam when the supply cannot run from
// a cell at cellVoltage (V): a voltage that is not finite and > 0, or a
// linear regulator whose input is below its rail (a linear regulator only
// drops voltage; its dropout comes on top and is the caller's margin).
func (s Supply) Check(cellVoltage float64) error {
	const fn = "Supply.Check"
	if !finite(cellVoltage) || cellVoltage <= 0 {
		return paramErr(fn, "cellVoltage", cellVoltage, "must be finite and > 0 (V)")
	}
	if s.kind == supplyLinear && cellVoltage < s.rail {
		return paramErr(fn, "cellVoltage", cellVoltage,
			fmt.Sprintf("a linear regulator cannot raise its input to its %g V rail: use a switching converter or a lower rail", s.rail))
	}
	return nil
}

// String describes the supply path in one line.
func (s Supply) String() string {
	switch s.kind {
	case supplyLinear:
		return fmt.Sprintf("linear regulator to %.4g V, quiescent %.4g µA", s.rail, s.quiescent/MicroAmp)
	case supplySwitching:
		return fmt.Sprintf("switching regulator to %.4g V, efficiency %.4g %%, quiescent %.4g µA", s.rail, 100*s.efficiency, s.quiescent/MicroAmp)
	}
	return "direct from the cell"
}
