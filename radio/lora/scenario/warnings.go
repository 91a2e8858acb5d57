package scenario

import (
	"fmt"
	"math"
	"slices"
)

// WarningKind names what a Warning is about.
type WarningKind int

// The kinds of warning the site model gives.
const (
	// OutOfReach: at least OutOfReachWarnShare of a group's placements miss
	// the installation margin even at the slowest data rate and full power.
	OutOfReach WarningKind = iota + 1
	// Collisions: a data rate's uplink success per transmission is below
	// SaturationThreshold.
	Collisions
	// GatewayBudget: a gateway's answers need more airtime than a
	// sub-band's duty cycle allows (answers are lost).
	GatewayBudget
	// DutyCycle: a group's reporting interval breaks its uplinks' duty
	// cycle (or its payload the dwell time) at a data rate its nodes use.
	DutyCycle
	// CellPulse: a state draws more than the cell's rated pulse current.
	CellPulse
	// Climate: the site's temperatures leave the cell's rated range.
	Climate
)

// String returns the kind's name as the report prints it.
func (k WarningKind) String() string {
	switch k {
	case OutOfReach:
		return "out of reach"
	case Collisions:
		return "collisions"
	case GatewayBudget:
		return "gateway budget"
	case DutyCycle:
		return "duty cycle"
	case CellPulse:
		return "cell pulse"
	case Climate:
		return "climate"
	}
	return fmt.Sprintf("WarningKind(%d)", int(k))
}

// Warning is one thing the plan should make a person look at: the model
// decides it, so that a back-end gets the same warnings as the fleet
// planner.
type Warning struct {
	Kind WarningKind
	// Group indexes Model.Groups, or is −1 for a gateway's warning.
	Group int
	// Gateway indexes Scenario.Gateways: the group's gateway, or the
	// gateway warned about.
	Gateway int
	// Text is one line for a person; names from the file are quoted
	// (Quote).
	Text string
}

// String returns the warning's text.
func (w Warning) String() string { return w.Text }

// SaturationThreshold is the uplink success per transmission below which a
// data rate is called swamped by collisions: at 90 % one report in ten is
// lost at the first try, and pure ALOHA is then at a load G' = −ln(0.9)/2 ≈
// 0.053 per channel, already past a tenth of its peak throughput's load
// (G = 0.5, Abramson 1970). Networks are commonly planned well below it
// (common practice).
const SaturationThreshold = 0.9

// OutOfReachWarnShare is the out-of-reach share of a group from which
// Laws.Warnings warns (1 %); below it the share is still planned and shown
// in the group's figures.
const OutOfReachWarnShare = 0.01

// heaviestSlack is how far below the group's largest average current (as a
// share of it) the out-of-reach nodes' may be and still be called the
// heaviest: an unconfirmed node in reach at the same setting that now and
// then receives a downlink draws a little more.
const heaviestSlack = 0.01

// CollisionWarnings returns one warning per data rate of a group whose
// uplink success per transmission (DRModel.UplinkSuccess, pure ALOHA) is
// below SaturationThreshold, group by group.
func (m Model) CollisionWarnings() []Warning {
	var out []Warning
	for gi, g := range m.Groups {
		for _, d := range g.PerDR {
			if d.UplinkSuccess >= SaturationThreshold {
				continue
			}
			name := fmt.Sprintf("DR%d", d.DR)
			if dr, err := m.Scenario.Region.DataRate(d.DR); err == nil {
				name = dr.String()
			}
			out = append(out, Warning{Kind: Collisions, Group: gi, Gateway: g.Group.Gateway, Text: fmt.Sprintf(
				"COLLISIONS: group %s at %s: only %s of transmissions escape collision (offered load %.3g per channel; the plan warns below %s). %s of the group's nodes use this data rate; add gateways, lengthen the interval or shorten the payload.",
				Quote(g.Group.Name), name, percent(d.UplinkSuccess), d.Load, percent(SaturationThreshold), percent(d.Share*g.Heard()))})
		}
	}
	return out
}

// Drain is what the out-of-reach nodes of a group draw against the rest:
// long-run average currents (A) at the node's supply voltage.
type Drain struct {
	// Unheard is the average current of an out-of-reach node (0 when the
	// group has none planned).
	Unheard float64
	// Group is the average over all the group's nodes (AllWeights).
	Group float64
	// Settings[i] is the average current at AllSettings()[i].
	Settings []float64
	// Heaviest tells whether the out-of-reach nodes draw the group's
	// largest average current, within 1 %: they drain first.
	Heaviest bool
}

// Drain returns group g's average currents by setting (Cycle.MeanCurrent),
// the out-of-reach nodes' among them. It fails on an index out of range.
func (l Laws) Drain(g int) (Drain, error) {
	if g < 0 || g >= len(l.Model.Groups) {
		return Drain{}, &FieldError{Field: "group", Value: g, Rule: fmt.Sprintf("must index the model's %d groups", len(l.Model.Groups))}
	}
	gm := l.Model.Groups[g]
	w := gm.AllWeights()
	d := Drain{Settings: make([]float64, len(l.Cycles[g]))}
	for i, c := range l.Cycles[g] {
		d.Settings[i] = c.MeanCurrent(gm.Node.Voltage)
		d.Group += w[i] * d.Settings[i]
		if gm.IsUnheard(i) {
			d.Unheard = d.Settings[i]
		}
	}
	d.Heaviest = gm.Unheard.Prob > 0 && d.Unheard >= (1-heaviestSlack)*slices.Max(d.Settings)
	return d, nil
}

// OutOfReachWarnings returns one warning per group with at least
// OutOfReachWarnShare of its placements out of reach: the share, how they
// are planned (the ADR back-off) and what they draw against the group.
func (l Laws) OutOfReachWarnings() []Warning {
	var out []Warning
	env := l.Model.Scenario.Environment
	for gi, g := range l.Model.Groups {
		u := g.Unheard
		if u.Prob < OutOfReachWarnShare {
			continue
		}
		d, err := l.Drain(gi)
		if err != nil {
			continue // cannot happen: gi indexes the groups
		}
		name := Quote(g.Group.Name)
		var text string
		if u.Prob >= 1 {
			text = fmt.Sprintf("OUT OF REACH: EVERY node of group %s misses the %.0f dB installation margin even at DR%d and full power (%g dBm): the gateway is taken to hear none of its uplinks. The plan keeps all of them at DR%d, TXPower 0, every uplink lost and no downlink (the ADR back-off of the LoRaWAN specification); they draw %s. Move the nodes, add a gateway or lower the margin.",
				name, env.InstallationMargin, u.DR, u.EIRP, u.DR, current(d.Unheard))
		} else {
			drain := fmt.Sprintf("they average %s against the group's %s", current(d.Unheard), current(d.Group))
			if d.Heaviest {
				drain += ", as much as the group's heaviest setting, within a per cent: they drain first"
			}
			text = fmt.Sprintf("OUT OF REACH: group %s: %s of placements miss the %.0f dB installation margin even at DR%d and full power. Those nodes are planned at DR%d, TXPower 0 (%g dBm), every uplink lost and no downlink (the ADR back-off of the LoRaWAN specification) and counted in every figure; %s. Move them or add a gateway.",
				name, percent(u.Prob), env.InstallationMargin, u.DR, u.DR, u.EIRP, drain)
		}
		out = append(out, Warning{Kind: OutOfReach, Group: gi, Gateway: g.Group.Gateway, Text: text})
	}
	return out
}

// CellWarnings returns, per group, one warning (kind CellPulse) per state
// of its cycles whose peak current exceeds the cell's rated pulse current
// (energy.Battery.PulseCheck, without repeats), and one (kind Climate) per
// warning of the site's climate against the cell (energy.Site.Warnings).
func (l Laws) CellWarnings() []Warning {
	var out []Warning
	for gi, g := range l.Model.Groups {
		seen := map[string]bool{}
		for _, c := range l.Cycles[gi] {
			for _, pw := range g.Battery.PulseCheck(c) {
				if txt := pw.String(); !seen[txt] {
					seen[txt] = true
					out = append(out, Warning{Kind: CellPulse, Group: gi, Gateway: g.Group.Gateway, Text: fmt.Sprintf("CELL PULSE: group %s: %s", Quote(g.Group.Name), txt)})
				}
			}
		}
		for _, w := range l.Site.Warnings(gi) {
			out = append(out, Warning{Kind: Climate, Group: gi, Gateway: g.Group.Gateway, Text: fmt.Sprintf("CLIMATE: group %s: %s", Quote(g.Group.Name), w)})
		}
	}
	return out
}

// Warnings returns every warning of the site model, group by group: its
// out-of-reach share (OutOfReachWarnings), its swamped data rates
// (Model.CollisionWarnings), its duty cycle or dwell time
// (Model.DutyWarnings), its cell's pulse rating and climate range
// (CellWarnings); then the gateways over budget (Model.GatewayWarnings). A
// back-end gets the fleet planner's warnings from it. It fails only where
// the duty-cycle check cannot be made (a region without the group's
// channels).
func (l Laws) Warnings() ([]Warning, error) {
	duty, err := l.Model.DutyWarnings()
	if err != nil {
		return nil, err
	}
	lists := [][]Warning{l.OutOfReachWarnings(), l.Model.CollisionWarnings(), duty, l.CellWarnings()}
	var out []Warning
	for gi := range l.Model.Groups {
		for _, ws := range lists {
			for _, w := range ws {
				if w.Group == gi {
					out = append(out, w)
				}
			}
		}
	}
	return append(out, l.Model.GatewayWarnings()...), nil
}

// current prints a current (A) with three significant digits in A, mA or µA.
func current(x float64) string {
	switch {
	case math.Abs(x) >= 1:
		return fmt.Sprintf("%.3g A", x)
	case math.Abs(x) >= 1e-3:
		return fmt.Sprintf("%.3g mA", x*1e3)
	}
	return fmt.Sprintf("%.3g µA", x*1e6)
}
