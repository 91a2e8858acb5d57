package scenario

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"

	"github.com/joulelaw/joulelaw/energy"
)

// readNodeV2 reads the fields format 2 adds to a node design: its name,
// supply path, brown-out voltage and board-to-board spreads.
func readNodeV2(c *checker, p string, o obj, n *Node) {
	n.Name = o.name("name")
	n.Brownout, _ = o.number("brownout_voltage_v", openLow(0, 60))
	n.FloorLogSD, _ = o.number("sleep_current_log_sd", closed(0, energy.MaxLogSpread))
	n.ActiveSD, _ = o.number("active_energy_sd", closed(0, energy.MaxRelativeSpread))
	d, okD := o.number("sleep_current_doubling_c", closed(0, 100))
	if okD && d != 0 && d < 1 {
		c.fail(p+".sleep_current_doubling_c", d, "must be 0 (no temperature dependence) or in [1, 100] °C")
	}
	n.FloorDoubling = d
	sv, ok := o.get("supply")
	if !ok {
		return
	}
	sp := p + ".supply"
	so := c.object(sp, sv, "kind", "efficiency", "quiescent_current_ua")
	kind := so.str("kind", true)
	eff, okE := so.number("efficiency", openLow(0, 1))
	iq, okQ := so.number("quiescent_current_ua", closed(0, 1e5))
	if !(okE && okQ) || !(n.Voltage > 0) {
		return
	}
	var err error
	switch kind {
	case "direct":
		if eff != 1 || iq != 0 {
			c.fail(sp, kind, "a direct supply has efficiency 1 and no quiescent current")
		}
		n.Supply = energy.DirectSupply()
	case "linear":
		if eff != 1 {
			c.fail(sp+".efficiency", eff, "must be 1 for a linear regulator (its loss is the voltage drop, computed from the cell's voltage)")
		}
		n.Supply, err = energy.LinearRegulator(n.Voltage, iq*energy.MicroAmp)
	case "switching":
		n.Supply, err = energy.SwitchingRegulator(n.Voltage, eff, iq*energy.MicroAmp)
	default:
		if kind != "" {
			c.fail(sp+".kind", kind, `must be "direct", "linear" or "switching"`)
		}
	}
	if err != nil {
		c.fail(sp, kind, "rejected by the supply model: "+err.Error())
	}
}

// readCellV2 reads a format 2 cell: the data-sheet values, the spread,
// calendar life, temperature behaviour and optional voltage curve.
func readCellV2(c *checker, p string, v any) Cell {
	if v == nil {
		return Cell{}
	}
	o := c.object(p, v, cellKeys(true)...)
	cl := Cell{Spec: readCellSpec(c, p, o, true)}
	cl.CapacitySD, _ = o.number("capacity_sd", closed(0, energy.MaxRelativeSpread))
	years, _ := o.number("calendar_life_years", closed(0, 100))
	cl.CalendarLife = years * energy.Year
	th := energy.Thermal{}
	var okAll = true
	var ok bool
	th.ReferenceTemperature, ok = o.number("reference_temperature_c", closed(-100, 150))
	okAll = okAll && ok
	kj, ok := o.number("self_discharge_activation_kj_per_mol", closed(0, 200))
	okAll = okAll && ok
	th.SelfDischargeActivation = kj * 1000
	if rng := o.array("rated_temperature_c", 2, 2); len(rng) == 2 {
		lo, ok1 := toFloat(rng[0])
		hi, ok2 := toFloat(rng[1])
		if !ok1 || !ok2 || !(lo < hi) {
			c.fail(p+".rated_temperature_c", note(fmt.Sprint(rng)), "must be [lowest, highest] °C, lowest < highest")
			okAll = false
		}
		th.MinTemperature, th.MaxTemperature = lo, hi
	} else {
		okAll = false
	}
	for i, it := range o.array("derating", 0, 64) {
		dp := index(p+".derating", i)
		do := c.object(dp, it, "temperature_c", "fraction")
		t, ok1 := do.number("temperature_c", closed(-100, 150))
		f, ok2 := do.number("fraction", openLow(0, 1.5))
		okAll = okAll && ok1 && ok2
		th.Derating = append(th.Derating, energy.DeratingPoint{Temperature: t, Fraction: f})
	}
	if okAll {
		if t, err := energy.NewThermal(th); err != nil {
			c.fail(p, cl.Spec.Name, "rejected by the temperature model: "+err.Error())
		} else {
			cl.Thermal = &t
		}
	}
	if vv, ok := o.get("voltage_curve"); ok && vv != nil {
		vp := p + ".voltage_curve"
		vo := c.object(vp, vv, "depth_of_discharge", "open_circuit_v", "resistance_ohm", "cold_temperature_c", "cold_multiplier")
		nums := func(key string, minLen int) []float64 {
			var out []float64
			for j, x := range vo.array(key, minLen, 256) {
				f, ok := toFloat(x)
				if !ok {
					c.fail(index(vp+"."+key, j), raw(x), "must be a number")
					continue
				}
				out = append(out, f)
			}
			return out
		}
		curve := energy.VoltageCurve{
			DepthOfDischarge:     nums("depth_of_discharge", 2),
			OpenCircuit:          nums("open_circuit_v", 2),
			Resistance:           nums("resistance_ohm", 2),
			ReferenceTemperature: th.ReferenceTemperature,
			ColdTemperatures:     nums("cold_temperature_c", 0),
			ColdMultipliers:      nums("cold_multiplier", 0),
		}
		if vo.ok {
			if vc, err := energy.NewVoltageCurve(curve); err != nil {
				c.fail(vp, note("voltage curve"), "rejected by the voltage model: "+err.Error())
			} else {
				cl.Voltage = &vc
			}
		}
	}
	return cl
}

// readClimate reads the site's year of temperature and the deployment month.
func readClimate(c *checker, v any) (*energy.Climate, int) {
	if v == nil {
		return nil, 0
	}
	const p = "climate"
	o := c.object(p, v, "monthly_mean_c", "daily_swing_c", "deployment_month")
	var months []float64
	for i, x := range o.array("monthly_mean_c", 12, 12) {
		f, ok := toFloat(x)
		if !ok {
			c.fail(index(p+".monthly_mean_c", i), raw(x), "must be a finite number (°C)")
			continue
		}
		months = append(months, f)
	}
	swing, okS := o.number("daily_swing_c", closed(0, 60))
	month, _ := o.integer("deployment_month", 1, 12, "January is 1")
	if len(months) != 12 || !okS {
		return nil, max(0, month-1)
	}
	cl, err := energy.NewClimate(months, swing)
	if err != nil {
		c.fail(p, note("12 monthly means"), "rejected by the climate model: "+err.Error())
		return nil, max(0, month-1)
	}
	return &cl, max(0, month-1)
}

// readShared reads what the whole fleet shares.
func readShared(c *checker, v any) energy.SharedSpread {
	if v == nil {
		return energy.SharedSpread{}
	}
	o := c.object("shared", v, "batch_capacity_sd", "temperature_offset_sd_c")
	var s energy.SharedSpread
	s.Batch, _ = o.number("batch_capacity_sd", closed(0, energy.MaxRelativeSpread))
	s.Temperature, _ = o.number("temperature_offset_sd_c", closed(0, energy.MaxTemperatureSD))
	return s
}

// pickName returns the index of name among n names (name(i)), or −1 after
// reporting the field.
func pickName(c *checker, field, name string, n int, at func(int) string) int {
	if name == "" {
		return -1
	}
	var all []string
	for i := range n {
		if at(i) == name {
			return i
		}
		all = append(all, fmt.Sprintf("%q", at(i)))
	}
	c.fail(field, name, "must name one of "+strings.Join(all, ", "))
	return -1
}

// toFloat reads a JSON number as a finite float64.
func toFloat(x any) (float64, bool) {
	n, ok := x.(json.Number)
	if !ok {
		return 0, false
	}
	f, err := n.Float64()
	return f, err == nil && !math.IsInf(f, 0) && !math.IsNaN(f)
}
