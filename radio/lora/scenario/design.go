package scenario

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/joulelaw/joulelaw/energy"
)

// Caps on the design section.
const (
	maxDesignCells   = 16
	maxDesignLinks   = 16
	maxDesignBatches = 16
	maxDesignWindows = 8
)

// Design is the scenario's optional "design" section: the target every
// group's design must meet, the choices the fleet planner may make for it
// (energy.SearchDesign), and the horizon and costs of the replacement
// policies it compares (energy.Site.ComparePolicies, at the plan's
// acceptable risk). Nil when the file has no such section.
type Design struct {
	Target      energy.Target // Date in s
	MinInterval float64       // s, the shortest reading interval searched
	MaxInterval float64       // s, the longest
	Cells       []int         // indices into Scenario.Cells
	Links       []energy.Link
	Batches     []int    // readings per uplink; the payload is the group's payload times it
	Windows     []Window // receive-window settings
	Horizon     float64  // s, of the policy comparison
	Costs       energy.Costs
}

// Window is a receive-window setting a design may choose: the preamble
// symbols listened for and the extra listening for clock error (they
// replace the node's receive_window_symbols and receive_window_margin_ms).
type Window struct {
	Name    string
	Symbols int     // 4 … 64
	Margin  float64 // s
}

// designKinds are the target kinds by their name in the file.
var designKinds = map[string]energy.TargetKind{
	"node_flat_by":         energy.NodeFlat,
	"lifetime_quantile":    energy.NodeQuantile,
	"any_in_group_flat_by": energy.GroupFlat,
}

// jsonNumber returns a finite JSON number's value.
func jsonNumber(v any) (float64, bool) {
	n, ok := v.(json.Number)
	if !ok {
		return 0, false
	}
	x, err := n.Float64()
	return x, err == nil && !math.IsInf(x, 0) && !math.IsNaN(x)
}

func readDesign(c *checker, v any, s Scenario) *Design {
	const p = "design"
	o := c.object(p, v, "target", "reading_interval_s", "cells", "links", "readings_per_uplink", "receive_windows", "horizon_years", "costs")
	if !o.ok {
		return nil
	}
	d := &Design{}
	if tv, ok := o.get("target"); ok {
		t := c.object(p+".target", tv, "kind", "years", "level")
		kind := t.str("kind", true)
		if k, ok := designKinds[kind]; ok {
			d.Target.Kind = k
		} else if kind != "" {
			var names []string
			for n := range designKinds {
				names = append(names, fmt.Sprintf("%q", n))
			}
			slices.Sort(names)
			c.fail(p+".target.kind", kind, "must be one of "+strings.Join(names, ", "))
		}
		years, _ := t.number("years", openLow(0, 100))
		d.Target.Date = years * energy.Year
		d.Target.Level, _ = t.number("level", open(0, 1))
	}
	if iv := o.array("reading_interval_s", 2, 2); iv != nil {
		a, okLo := jsonNumber(iv[0])
		b, okHi := jsonNumber(iv[1])
		if !okLo || !okHi || !(a > 0 && b >= a && b <= 100*energy.Year) {
			c.fail(p+".reading_interval_s", raw(iv), "must be [shortest, longest] with 0 < shortest <= longest <= 100 years, in s")
		}
		d.MinInterval, d.MaxInterval = a, b
	}
	for i, it := range o.array("cells", 1, maxDesignCells) {
		name, ok := it.(string)
		ci := slices.IndexFunc(s.Cells, func(cl Cell) bool { return cl.Spec.Name == name })
		if !ok || ci < 0 {
			c.fail(index(p+".cells", i), raw(it), "must name a cell of the scenario's cells")
			continue
		}
		d.Cells = append(d.Cells, ci)
	}
	for i, it := range o.array("links", 1, maxDesignLinks) {
		lo := c.object(index(p+".links", i), it, "confirmed", "max_transmissions")
		l := energy.Link{Confirmed: lo.boolean("confirmed")}
		l.Transmissions, _ = lo.integer("max_transmissions", 1, 15, "NbTrans, LoRaWAN L2 1.0.4")
		if !l.Confirmed && l.Transmissions > 1 {
			c.fail(index(p+".links", i)+".max_transmissions", l.Transmissions, "must be 1 for unconfirmed uplinks (this model sends each unconfirmed frame once)")
		}
		d.Links = append(d.Links, l)
	}
	maxPay, _ := smallestPayloadLimit(s.Region)
	for i, it := range o.array("readings_per_uplink", 1, maxDesignBatches) {
		x, ok := jsonNumber(it)
		if !ok || x != math.Trunc(x) || x < 1 || x > 64 {
			c.fail(index(p+".readings_per_uplink", i), raw(it), "must be a whole number in [1, 64]")
			continue
		}
		k := int(x)
		for _, g := range s.Groups {
			if k*g.Payload > maxPay {
				c.fail(index(p+".readings_per_uplink", i), k, fmt.Sprintf("gives group %s a %d-byte payload, above the %d bytes the region's slowest ADR data rate carries", Quote(g.Name), k*g.Payload, maxPay))
				ok = false
				break
			}
		}
		if ok {
			d.Batches = append(d.Batches, k)
		}
	}
	for i, it := range o.array("receive_windows", 1, maxDesignWindows) {
		wo := c.object(index(p+".receive_windows", i), it, "name", "symbols", "margin_ms")
		w := Window{Name: wo.str("name", true)}
		w.Symbols, _ = wo.integer("symbols", 4, 64)
		ms, _ := wo.number("margin_ms", closed(0, 1000))
		w.Margin = ms * energy.Millisecond
		d.Windows = append(d.Windows, w)
	}
	years, _ := o.number("horizon_years", openLow(0, 100))
	d.Horizon = years * energy.Year
	if cv, ok := o.get("costs"); ok {
		co := c.object(p+".costs", cv, "per_visit", "per_cell")
		d.Costs.Visit, _ = co.number("per_visit", closed(0, 1e12))
		d.Costs.Cell, _ = co.number("per_cell", closed(0, 1e12))
	}
	return d
}
