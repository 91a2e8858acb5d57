package scenario

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/energy"
)

// Check reports the problems of a scenario built in Go (or changed after
// Parse) that would otherwise surface only while its laws are computed:
// the same checks across fields that Parse runs (checkCurrents,
// checkOverlap, checkWork, checkCellCovers) and, first, the structure Build
// relies on: a region, 1 … 64 groups each with 1 … 100000 nodes, and
// indices of gateways, node designs and cells in range. The values of single
// fields are checked by the constructors of packages energy and lora when
// Build and Model.Laws use them, and their errors are returned naming the
// group or cell. Every problem is a *FieldError wrapping ErrInvalid.
func (s Scenario) Check() error {
	c := &checker{}
	checkStructure(c, s)
	if len(c.errs) > 0 {
		return c.err()
	}
	checkCurrents(c, s)
	checkOverlap(c, s)
	checkWork(c, s)
	checkCellCovers(c, s)
	return c.err()
}

// checkStructure checks what Build indexes by.
func checkStructure(c *checker, s Scenario) {
	if s.Region.Name() == "" {
		c.fail("region", nil, "must be set (one of lora.Regions)")
	}
	if len(s.Groups) < 1 || len(s.Groups) > maxGroups {
		c.fail("groups", note(fmt.Sprintf("%d entries", len(s.Groups))), fmt.Sprintf("must have 1 to %d entries", maxGroups))
	}
	if len(s.Gateways) > maxGateways {
		c.fail("gateways", note(fmt.Sprintf("%d entries", len(s.Gateways))), fmt.Sprintf("must have 1 to %d entries", maxGateways))
	}
	if len(s.Nodes) > maxDesigns || len(s.Cells) > maxDesigns {
		c.fail("nodes, cells", note(fmt.Sprintf("%d and %d entries", len(s.Nodes), len(s.Cells))), fmt.Sprintf("must have 1 to %d entries each", maxDesigns))
	}
	for i, g := range s.Groups {
		p := index("groups", i)
		if g.Nodes < 1 || g.Nodes > maxNodes {
			c.fail(p+".nodes", g.Nodes, fmt.Sprintf("must be a whole number in [1, %d]", maxNodes))
		}
		if g.Gateway < 0 || g.Gateway >= len(s.Gateways) {
			c.fail(p+".gateway", g.Gateway, fmt.Sprintf("must index the %d gateways", len(s.Gateways)))
		}
		if g.Node < 0 || g.Node >= len(s.Nodes) {
			c.fail(p+".node", g.Node, fmt.Sprintf("must index the %d node designs", len(s.Nodes)))
		}
		if g.Cell < 0 || g.Cell >= len(s.Cells) {
			c.fail(p+".cell", g.Cell, fmt.Sprintf("must index the %d cells", len(s.Cells)))
		}
		if len(g.Work) > maxWork {
			c.fail(p+".work", note(fmt.Sprintf("%d entries", len(g.Work))), fmt.Sprintf("must have 0 to %d entries", maxWork))
		}
	}
	checkNetwork(c, s)
	if s.StartMonth < 0 || s.StartMonth > 11 {
		c.fail("climate.deployment_month", s.StartMonth+1, "must be a whole number in [1, 12]")
	}
}

// checkWork: the work before an uplink, at its shortest, must end within
// the shortest reporting period (interval − jitter); otherwise no cycle
// fits in its period.
func checkWork(c *checker, s Scenario) {
	for i, g := range s.Groups {
		least := 0.0
		for _, w := range g.Work {
			least += w.Duration - w.Spread
		}
		shortest := g.Interval - g.Jitter
		if len(g.Work) > 0 && least >= shortest {
			c.fail(index("groups", i)+".work", note(fmt.Sprintf("%d steps of at least %g s in all", len(g.Work), least)),
				fmt.Sprintf("must end within the shortest reporting period, report_interval_s − interval_jitter_s = %g s", shortest))
		}
	}
}

// checkCellCovers: a cell must hold at least one report of every group
// that carries it. One report costs at least its work at the shortest
// durations, one uplink at the fastest data rate the region's ADR may
// choose and the lowest transmit current, and the floor current over the
// shortest period, all at the rail (a supply path only adds to it); the
// cell's usable energy at its rated usable fraction must exceed that.
func checkCellCovers(c *checker, s Scenario) {
	for _, g := range s.Groups {
		node, cell := s.Nodes[g.Node], s.Cells[g.Cell]
		b, err := energy.NewBattery(cell.Spec)
		if err != nil || len(node.Transmit) == 0 {
			continue // reported by the cell's own check, or by the levels'
		}
		least := node.Sleep * node.Voltage * (g.Interval - g.Jitter)
		for _, w := range g.Work {
			least += w.Current * node.Voltage * (w.Duration - w.Spread)
		}
		airtime := math.Inf(1)
		for _, dr := range s.Region.ADRDataRates() {
			if a, err := s.Region.UplinkAirtime(dr, g.Payload, 0); err == nil {
				airtime = min(airtime, a)
			}
		}
		tx := math.Inf(1)
		for _, t := range node.Transmit {
			tx = min(tx, t.Current)
		}
		if !math.IsInf(airtime, 1) {
			least += tx * node.Voltage * airtime
		}
		if !(b.UsableEnergy() > least) {
			c.fail(index("cells", g.Cell)+".capacity_mah", cell.Spec.Charge/energy.MilliAmpHour,
				fmt.Sprintf("holds %.3g J usable, not even one report of group %s (at least %.3g J: its shortest work, one uplink at the fastest data rate and the sleep current over the shortest period)", b.UsableEnergy(), Quote(g.Name), least))
		}
	}
}
