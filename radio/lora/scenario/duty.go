package scenario

import (
	"fmt"
	"math"
	"slices"
)

// DutyCheck is the verdict of a group's reporting interval against the
// region's limits on uplinks: the duty cycle of the sub-band of the
// region's first uplink channel, every attempt of a report counted against
// it (lora.Region.CheckInterval), or, in a region without duty-cycle
// sub-bands (US902-928), each uplink against the region's dwell time
// (lora.Region.CheckDwellTime). The limits are for planning, not
// certification: check the local rules and defer to the regulator.
type DutyCheck struct {
	// SubBand names the sub-band checked; "" where the region has none
	// (the rows then check the dwell time).
	SubBand string
	// DwellTime is the region's dwell time, s (0 where it sets none, or
	// where SubBand is not "").
	DwellTime float64
	// Attempts is the number of transmissions per report counted.
	Attempts int
	// Rows holds one verdict per data rate ADR may choose (and per slower
	// data rate of the duty-cycle check), by DR.
	Rows []DutyRow
	// Feasible tells whether every data rate the group's nodes use (in
	// reach or out of it) keeps the limit.
	Feasible bool
}

// DutyRow is the verdict at one data rate.
type DutyRow struct {
	DR       int
	Used     bool // some of the group's nodes send at it
	Feasible bool
	// MinInterval is the shortest reporting interval that keeps the duty
	// cycle, s (0 in a region without duty-cycle sub-bands).
	MinInterval float64
	Warning     string // why not feasible ("" when it is)
}

// DutyCheck returns the group's duty-cycle (or dwell-time) verdict in
// scenario s (see DutyCheck). A data rate is used when nodes in reach or
// out of reach send at it.
func (g GroupModel) DutyCheck(s Scenario) (DutyCheck, error) {
	gr := g.Group
	used := func(dr int) bool {
		return slices.ContainsFunc(g.PerDR, func(d DRModel) bool { return d.DR == dr }) ||
			(g.Unheard.Prob > 0 && g.Unheard.DR == dr)
	}
	dc := DutyCheck{Attempts: gr.MaxTransmissions, Feasible: true}
	reg := s.Region
	if len(reg.SubBands()) == 0 {
		dc.DwellTime = reg.DwellTime()
		if math.IsInf(dc.DwellTime, 1) {
			dc.DwellTime = 0
		}
		for _, dr := range reg.ADRDataRates() {
			row := DutyRow{DR: dr, Used: used(dr), Feasible: true}
			if err := reg.CheckDwellTime(dr, gr.Payload, 0); err != nil {
				row.Feasible, row.Warning = false, err.Error()
			}
			dc.Rows = append(dc.Rows, row)
			dc.Feasible = dc.Feasible && (row.Feasible || !row.Used)
		}
		return dc, nil
	}
	freq := reg.UplinkChannels()[0].Frequency
	band, err := reg.SubBandAt(freq)
	if err != nil {
		return dc, err
	}
	checks, err := reg.CheckInterval(freq, gr.Payload, 0, gr.MaxTransmissions, gr.Interval)
	if err != nil {
		return dc, err
	}
	dc.SubBand = band.String()
	for _, c := range checks {
		u := used(c.DR)
		if !u && !slices.Contains(reg.ADRDataRates(), c.DR) {
			continue
		}
		dc.Rows = append(dc.Rows, DutyRow{DR: c.DR, Used: u, Feasible: c.Feasible, MinInterval: c.MinInterval, Warning: c.Warning})
		dc.Feasible = dc.Feasible && (c.Feasible || !u)
	}
	return dc, nil
}

// DutyWarnings returns one warning (kind DutyCycle) per group whose
// reporting interval breaks the duty cycle, or whose payload breaks the
// dwell time, at a data rate its nodes use (GroupModel.DutyCheck).
func (m Model) DutyWarnings() ([]Warning, error) {
	var out []Warning
	reg := m.Scenario.Region
	for gi, g := range m.Groups {
		dc, err := g.DutyCheck(m.Scenario)
		if err != nil {
			return nil, groupError(gi, g.Group.Name, err)
		}
		if dc.Feasible {
			continue
		}
		var bad []string
		for _, r := range dc.Rows {
			if r.Used && !r.Feasible {
				bad = append(bad, fmt.Sprintf("DR%d", r.DR))
			}
		}
		text := fmt.Sprintf("DUTY CYCLE: group %s: the %.0f s reporting interval breaks the %s duty cycle at %s, used by its nodes (%d transmissions per report counted); lengthen the interval or shorten the payload, and check the local rules and defer to the regulator.",
			Quote(g.Group.Name), g.Group.Interval, dc.SubBand, joinAnd(bad), dc.Attempts)
		if dc.SubBand == "" {
			text = fmt.Sprintf("DWELL TIME: group %s: a %d-byte uplink breaks %s's %.0f ms dwell time at %s, used by its nodes; shorten the payload, and check the local rules and defer to the regulator.",
				Quote(g.Group.Name), g.Group.Payload, reg.Name(), 1e3*dc.DwellTime, joinAnd(bad))
		}
		out = append(out, Warning{Kind: DutyCycle, Group: gi, Gateway: g.Group.Gateway, Text: text})
	}
	return out, nil
}

// joinAnd joins names as "a", "a and b", "a, b and c".
func joinAnd(xs []string) string {
	switch len(xs) {
	case 0:
		return ""
	case 1:
		return xs[0]
	}
	out := xs[0]
	for _, x := range xs[1 : len(xs)-1] {
		out += ", " + x
	}
	return out + " and " + xs[len(xs)-1]
}
