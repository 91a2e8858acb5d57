package energy

import (
	"fmt"
	"math"
)

// monthTable is the year month by month from deployment at a site's
// climate shifted by a temperature offset, for one Thermal and deployment
// month: the floor and self-discharge factors, the year's mean capacity
// derating, the coldest temperature (the coldest month's mean less half
// the daily swing, °C) and the range warnings. It depends on nothing else
// of a NodeSpec, so specs that share a Thermal, a StartMonth and a climate
// share it (the design search's candidates: many intervals, one cell).
type monthTable struct {
	floorRate, sdFactor [12]float64 // factors on the floor power and the self-discharge rate in the i-th month after deployment
	floorCum, sdCum     [13]float64 // their integrals (s) to the start of the i-th month (accumulate)
	derate, coldest     float64
	warnings            []string
}

// accumulate sets floorCum and sdCum from the factors.
func (mt *monthTable) accumulate() {
	for i := range 12 {
		mt.floorCum[i+1] = mt.floorCum[i] + Month*mt.floorRate[i]
		mt.sdCum[i+1] = mt.sdCum[i] + Month*mt.sdFactor[i]
	}
}

// newMonthTable returns the month table of spec (whose Thermal is not nil)
// in env; fn and pre prefix its errors as newNode's.
func newMonthTable(fn, pre string, spec NodeSpec, env Environment) (*monthTable, error) {
	return newMonthTableFor(fn, pre, spec, env, true)
}

// newMonthTableFor is newMonthTable, with the self-discharge factors (a
// quadrature each) only with sd, else left 1 (for a reader of the others
// alone: they raise no error).
func newMonthTableFor(fn, pre string, spec NodeSpec, env Environment, sd bool) (*monthTable, error) {
	th := spec.Thermal
	shifted, err := shiftedClimate(fn, th, env)
	if err != nil {
		return nil, err
	}
	mt := &monthTable{coldest: math.Inf(1), warnings: th.RangeWarnings(shifted)}
	sw := shifted.DailySwing()
	sum := 0.0
	for i := range 12 {
		t := shifted.Month((spec.StartMonth + i) % 12)
		mt.floorRate[i] = th.FloorFactor(t, sw)
		mt.sdFactor[i] = 1
		if sd {
			mt.sdFactor[i] = th.SelfDischargeFactor(t, sw)
		}
		d, err := th.CapacityFactor(t)
		if err != nil {
			return nil, causeErr(fn, pre+"Thermal.Derating", t, fmt.Sprintf("derating at the month %d's temperature", (spec.StartMonth+i)%12), err)
		}
		sum += d
		mt.coldest = min(mt.coldest, t-sw/2)
	}
	mt.derate = sum / 12
	mt.accumulate()
	return mt, nil
}

// shiftedClimate returns env's climate (the reference temperature all year
// when nil) shifted by its temperature offset.
func shiftedClimate(fn string, th *Thermal, env Environment) (Climate, error) {
	clim := env.Climate
	if clim == nil {
		c, err := ConstantClimate(th.ReferenceTemperature)
		if err != nil {
			return Climate{}, causeErr(fn, "env.Climate", nil, "reference climate", err)
		}
		clim = &c
	}
	return clim.Shift(env.TemperatureOffset), nil
}
