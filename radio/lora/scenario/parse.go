package scenario

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

const (
	maxNodes    = 100000
	maxGateways = 8
	maxGroups   = 64
	maxWork     = 16
	maxDesigns  = 16 // node and cell descriptions in one file
)

// Parse reads a scenario file (see the package doc for the format) and
// checks every field. It returns all problems found, joined, each a
// *FieldError wrapping ErrInvalid; a scenario with any problem is rejected
// whole.
func Parse(data []byte) (Scenario, error) {
	root, err := decode(data)
	if err != nil {
		return Scenario{}, err
	}
	c := &checker{}
	// The format decides which fields the file must hold.
	v1 := false
	if m, ok := root.(map[string]any); ok {
		if f, ok := m["format"].(string); ok && f == FormatVersion1 {
			v1 = true
		}
	}
	keys := []string{"format", "site", "description", "region", "radio_environment", "climate", "shared", "nodes", "cells", "gateways", "groups", "plan", "design"}
	if v1 {
		keys = []string{"format", "site", "description", "region", "radio_environment", "node", "cell", "gateways", "groups", "plan"}
	}
	top := c.object("", root, keys...)
	var s Scenario
	if f := top.str("format", true); top.ok && f != "" && f != FormatVersion && f != FormatVersion1 {
		c.fail("format", f, fmt.Sprintf("must be %q (or the first format, %q)", FormatVersion, FormatVersion1))
	}
	s.Site = top.name("site")
	s.Description = top.str("description", false)
	regionOK := false
	if name := top.str("region", true); name != "" {
		var names []string
		for _, r := range lora.Regions() {
			names = append(names, fmt.Sprintf("%q", r.Name()))
			if r.Name() == name {
				s.Region, regionOK = r, true
			}
		}
		if !regionOK {
			c.fail("region", name, "must be a region package lora models: "+strings.Join(names, ", "))
		}
	}
	env, _ := top.get("radio_environment")
	s.Environment = readEnvironment(c, env)
	if v1 {
		node, _ := top.get("node")
		n := readNode(c, "node", node, s.Region, regionOK, false)
		n.Name = "node"
		s.Nodes = []Node{n}
		cell, _ := top.get("cell")
		s.Cells = []Cell{{Spec: readCell(c, "cell", cell, false)}}
	} else {
		clim, _ := top.get("climate")
		s.Climate, s.StartMonth = readClimate(c, clim)
		sh, _ := top.get("shared")
		s.Shared = readShared(c, sh)
		for i, it := range top.array("nodes", 1, maxDesigns) {
			p := index("nodes", i)
			n := readNode(c, p, it, s.Region, regionOK, true)
			if n.Name != "" && slices.ContainsFunc(s.Nodes, func(m Node) bool { return m.Name == n.Name }) {
				c.fail(p+".name", n.Name, "node names must be unique")
			}
			s.Nodes = append(s.Nodes, n)
		}
		for i, it := range top.array("cells", 1, maxDesigns) {
			p := index("cells", i)
			cl := readCellV2(c, p, it)
			if cl.Spec.Name != "" && slices.ContainsFunc(s.Cells, func(m Cell) bool { return m.Spec.Name == cl.Spec.Name }) {
				c.fail(p+".name", cl.Spec.Name, "cell names must be unique")
			}
			s.Cells = append(s.Cells, cl)
		}
	}
	s.Gateways = readGateways(c, top.array("gateways", 1, maxGateways), s.Region, regionOK)
	s.Groups = readGroups(c, top.array("groups", 1, maxGroups), s, regionOK, v1)
	plan, _ := top.get("plan")
	s.Plan = readPlan(c, plan)
	if d, ok := top.m["design"]; ok && !v1 {
		s.Design = readDesign(c, d, s) // the one optional section (design.go)
	}
	checkCurrents(c, s)
	checkOverlap(c, s)
	if len(c.errs) == 0 {
		// These need every field read and valid.
		checkWork(c, s)
		checkCellCovers(c, s)
	}
	if err := c.err(); err != nil {
		return Scenario{}, err
	}
	return s, nil
}

func readEnvironment(c *checker, v any) Environment {
	if v == nil {
		return Environment{} // missing: reported by the caller's get
	}
	const p = "radio_environment"
	o := c.object(p, v, "reference_distance_m", "reference_loss_db", "loss_exponent", "shadowing_sd_db", "gateway_gain_db", "gateway_noise_figure_db", "installation_margin_db")
	var e Environment
	e.ReferenceDistance, _ = o.number("reference_distance_m", openLow(0, 10000))
	e.ReferenceLoss, _ = o.number("reference_loss_db", closed(0, 200))
	e.LossExponent, _ = o.number("loss_exponent", closed(1, 8))
	e.ShadowingSD, _ = o.number("shadowing_sd_db", closed(0, 20))
	e.GatewayGain, _ = o.number("gateway_gain_db", closed(-20, 30))
	e.NoiseFigure, _ = o.number("gateway_noise_figure_db", closed(0, 20))
	e.InstallationMargin, _ = o.number("installation_margin_db", closed(0, 40))
	return e
}

func readNode(c *checker, p string, v any, region lora.Region, regionOK, v2 bool) Node {
	if v == nil {
		return Node{}
	}
	keys := []string{"supply_voltage_v", "sleep_current_ua", "wait_current_ua", "receive_current_ma", "receive_window_symbols", "receive_window_margin_ms", "transmit_current_ma"}
	if v2 {
		keys = append(keys, "name", "supply", "brownout_voltage_v", "sleep_current_log_sd", "active_energy_sd", "sleep_current_doubling_c")
	}
	o := c.object(p, v, keys...)
	var n Node
	n.Voltage, _ = o.number("supply_voltage_v", openLow(0, 60))
	// A current that is missing or bad is NaN here, so that the checks
	// across fields (checkCurrents) skip it rather than invent a value.
	n.Sleep = o.scaled("sleep_current_ua", closed(0, 1e6), energy.MicroAmp)
	n.Wait = o.scaled("wait_current_ua", closed(0, 1e6), energy.MicroAmp)
	n.Receive = o.scaled("receive_current_ma", closed(0, 1000), energy.MilliAmp)
	n.WindowSymbols, _ = o.integer("receive_window_symbols", 4, 64)
	ms, _ := o.number("receive_window_margin_ms", closed(0, 1000))
	n.WindowMargin = ms * energy.Millisecond
	if v2 {
		readNodeV2(c, p, o, &n)
	}

	levels := o.array("transmit_current_ma", 1, 32)

	if levels == nil {
		return n
	}
	var want []float64
	if regionOK {
		want = region.TXPowers()
	}
	var seen []float64
	for i, lv := range levels {
		lp := index(p+".transmit_current_ma", i)
		lo := c.object(lp, lv, "eirp_dbm", "current_ma")
		eirp, okE := lo.number("eirp_dbm", closed(-30, 40))
		cur, okC := lo.number("current_ma", openLow(0, 1000))
		if !okE {
			continue
		}
		if regionOK && !slices.ContainsFunc(want, func(w float64) bool { return math.Abs(w-eirp) < 1e-9 }) {
			c.fail(lp+".eirp_dbm", eirp, fmt.Sprintf("is not a TXPower level of %s (%s dBm)", region.Name(), list(want)))
			continue
		}
		if slices.ContainsFunc(seen, func(w float64) bool { return math.Abs(w-eirp) < 1e-9 }) {
			c.fail(lp+".eirp_dbm", eirp, "is listed twice")
			continue
		}
		seen = append(seen, eirp)
		if okC {
			n.Transmit = append(n.Transmit, TransmitLevel{EIRP: eirp, Current: cur * energy.MilliAmp})
		}
	}
	if regionOK {
		var missing []float64
		for _, w := range want {
			if !slices.ContainsFunc(seen, func(x float64) bool { return math.Abs(w-x) < 1e-9 }) {
				missing = append(missing, w)
			}
		}
		if len(missing) > 0 {
			c.fail(p+".transmit_current_ma", note(fmt.Sprintf("%d levels", len(levels))), fmt.Sprintf("must give a current for every TXPower level of %s (%s dBm); missing %s dBm", region.Name(), list(want), list(missing)))
		}
		// Order by TXPower index (EIRP falling).
		slices.SortFunc(n.Transmit, func(a, b TransmitLevel) int {
			switch {
			case a.EIRP > b.EIRP:
				return -1
			case a.EIRP < b.EIRP:
				return 1
			}
			return 0
		})
	}
	return n
}

func list(xs []float64) string {
	s := make([]string, len(xs))
	for i, x := range xs {
		s[i] = fmt.Sprintf("%g", x)
	}
	return strings.Join(s, ", ")
}

func readCell(c *checker, p string, v any, v2 bool) energy.BatterySpec {
	if v == nil {
		return energy.BatterySpec{}
	}
	o := c.object(p, v, cellKeys(v2)...)
	return readCellSpec(c, p, o, v2)
}

func cellKeys(v2 bool) []string {
	keys := []string{"name", "chemistry", "capacity_mah", "nominal_voltage_v", "cutoff_voltage_v", "usable_fraction", "self_discharge_percent_per_year", "temperature_derating", "pulse_current_ma"}
	if v2 {
		keys = []string{"name", "chemistry", "capacity_mah", "nominal_voltage_v", "cutoff_voltage_v", "usable_fraction", "self_discharge_percent_per_year", "pulse_current_ma",
			"capacity_sd", "calendar_life_years", "reference_temperature_c", "self_discharge_activation_kj_per_mol", "rated_temperature_c", "derating", "voltage_curve"}
	}
	return keys
}

func readCellSpec(c *checker, p string, o obj, v2 bool) energy.BatterySpec {
	var b energy.BatterySpec
	b.Name = o.name("name")
	b.Chemistry = o.str("chemistry", false)
	mah, okCap := o.number("capacity_mah", openLow(0, 1e7))
	b.Charge = mah * energy.MilliAmpHour
	var okV bool
	b.NominalVoltage, okV = o.number("nominal_voltage_v", openLow(0, 60))
	cut, okCut := o.number("cutoff_voltage_v", closed(0, 60))
	if okV && okCut && cut >= b.NominalVoltage {
		c.fail(p+".cutoff_voltage_v", cut, fmt.Sprintf("must be below nominal_voltage_v (%g V)", b.NominalVoltage))
		okCut = false
	}
	b.CutoffVoltage = cut
	var okU, okS, okT, okP bool
	b.UsableFraction, okU = o.number("usable_fraction", openLow(0, 1))
	pct, okS := o.number("self_discharge_percent_per_year", openHigh(0, 100))
	b.SelfDischargePerYear = pct / 100
	if v2 {
		// The derating table replaces the single factor.
		b.TemperatureDerating, okT = 1, true
	} else {
		b.TemperatureDerating, okT = o.number("temperature_derating", openLow(0, 1))
	}
	ma, okP := o.number("pulse_current_ma", closed(0, 1e5))
	b.PulseCurrent = ma * energy.MilliAmp
	if okCap && okV && okCut && okU && okS && okT && okP {
		if _, err := energy.NewBattery(b); err != nil {
			c.fail(p, b.Name, "rejected by the battery model: "+err.Error())
		}
	}
	return b
}

func readGateways(c *checker, items []any, region lora.Region, regionOK bool) []Gateway {
	var gws []Gateway
	for i, it := range items {
		p := index("gateways", i)
		o := c.object(p, it, "name", "x_m", "y_m", "channel_block", "channels")
		var g Gateway
		g.Name = o.name("name")
		g.X, _ = o.number("x_m", closed(-1e6, 1e6))
		g.Y, _ = o.number("y_m", closed(-1e6, 1e6))
		if regionOK {
			g.Channels = readChannels(c, p, o, region)
		}
		if g.Name != "" && slices.ContainsFunc(gws, func(h Gateway) bool { return h.Name == g.Name }) {
			c.fail(p+".name", g.Name, "gateway names must be unique")
		}
		gws = append(gws, g)
	}
	return gws
}

func readGroups(c *checker, items []any, s Scenario, regionOK, v1 bool) []Group {
	var groups []Group
	for i, it := range items {
		groups = append(groups, readGroup(c, index("groups", i), it, s, regionOK, v1, groups))
	}
	return groups
}

func readGroup(c *checker, p string, v any, s Scenario, regionOK, v1 bool, before []Group) Group {
	keys := []string{"name", "nodes", "gateway", "inner_radius_m", "outer_radius_m", "payload_bytes", "report_interval_s", "interval_jitter_s", "confirmed", "max_transmissions", "answer_share", "rx1_share", "downlink_payload_bytes", "downlink_loss_probability", "work"}
	if !v1 {
		keys = append(keys, "node", "cell", "storage_months", "rx1_dr_offset", "rx2", "rejoin_every_reports")
	}
	o := c.object(p, v, keys...)
	var g Group
	if !v1 {
		g.Node = pickName(c, p+".node", o.str("node", true), len(s.Nodes), func(i int) string { return s.Nodes[i].Name })
		g.Cell = pickName(c, p+".cell", o.str("cell", true), len(s.Cells), func(i int) string { return s.Cells[i].Spec.Name })
		months, _ := o.number("storage_months", closed(0, 240))
		g.StorageTime = months * energy.Month
		if g.Cell >= 0 && g.Cell < len(s.Cells) {
			if cal := s.Cells[g.Cell].CalendarLife; cal > 0 && g.StorageTime >= cal {
				c.fail(p+".storage_months", months, fmt.Sprintf("must be below the cell's calendar life (%g years)", cal/energy.Year))
			}
		}
	}
	g.Name = o.name("name")
	if g.Name != "" && slices.ContainsFunc(before, func(h Group) bool { return h.Name == g.Name }) {
		c.fail(p+".name", g.Name, "group names must be unique")
	}
	g.Nodes, _ = o.integer("nodes", 1, maxNodes)
	g.Gateway = -1
	if name := o.str("gateway", true); name != "" {
		g.Gateway = slices.IndexFunc(s.Gateways, func(gw Gateway) bool { return gw.Name == name })
		if g.Gateway < 0 {
			names := make([]string, len(s.Gateways))
			for j, gw := range s.Gateways {
				names[j] = fmt.Sprintf("%q", gw.Name)
			}
			c.fail(p+".gateway", name, "must name one of the gateways ("+strings.Join(names, ", ")+")")
		}
	}
	inner, okI := o.number("inner_radius_m", closed(0, 50000))
	outer, okO := o.number("outer_radius_m", openLow(0, 50000))
	if okI && okO && outer <= inner {
		c.fail(p+".outer_radius_m", outer, fmt.Sprintf("must be greater than inner_radius_m (%g m)", inner))
	}
	g.InnerRadius, g.OuterRadius = inner, outer

	if regionOK {
		limit, dr := smallestPayloadLimit(s.Region)
		g.Payload, _ = o.integer("payload_bytes", 0, limit, fmt.Sprintf("the application payload of DR%d, the slowest data rate ADR may choose in %s", dr, s.Region.Name()))
		_, rx2 := s.Region.RX2()
		dlLimit, err := s.Region.MaxAppPayload(rx2, 0)
		if err != nil {
			dlLimit = 0
		}
		g.DownlinkPayload, _ = o.integer("downlink_payload_bytes", 0, dlLimit, fmt.Sprintf("the application payload of RX2's data rate DR%d", rx2))
	} else {
		g.Payload, _ = o.integer("payload_bytes", 0, lora.MaxPHYPayload)
		g.DownlinkPayload, _ = o.integer("downlink_payload_bytes", 0, lora.MaxPHYPayload)
	}

	interval, okInt := o.number("report_interval_s", closed(10, 31*86400))
	g.Interval = interval
	jitter, okJ := o.number("interval_jitter_s", closed(0, 31*86400))
	if okInt && okJ && jitter >= interval/2 {
		c.fail(p+".interval_jitter_s", jitter, fmt.Sprintf("must be less than half of report_interval_s (%g s)", interval/2))
	}
	g.Jitter = jitter

	g.Confirmed = o.boolean("confirmed")
	_, hasConf := o.m["confirmed"]
	// NbTrans: retransmissions of a confirmed uplink, repetitions of an
	// unconfirmed one (stopped at the first downlink, LoRaWAN 1.0.4).
	nb, _ := o.integer("max_transmissions", 1, 15)
	g.MaxTransmissions = nb
	ans, okA := o.number("answer_share", closed(0, 1))
	if okA && hasConf && g.Confirmed && ans != 1 {
		c.fail(p+".answer_share", ans, "must be 1 for confirmed uplinks: the network acknowledges every one it receives")
	}
	g.AnswerShare = ans
	g.RX1Share, _ = o.number("rx1_share", closed(0, 1))
	g.DownlinkLoss, _ = o.number("downlink_loss_probability", openHigh(0, 1))
	if regionOK {
		readNetworkSettings(c, p, o, s.Region, &g)
	}

	for j, w := range o.array("work", 0, maxWork) {
		wp := index(p+".work", j)
		wo := c.object(wp, w, "name", "current_ma", "duration_ms", "duration_spread_ms")
		var st Step
		st.Name = wo.name("name")
		if st.Name != "" && slices.ContainsFunc(g.Work, func(h Step) bool { return h.Name == st.Name }) {
			c.fail(wp+".name", st.Name, "work step names must be unique within a group")
		}
		for _, reserved := range reservedStates {
			if st.Name == reserved {
				c.fail(wp+".name", st.Name, "is the name of a radio state; choose another ("+strings.Join(reservedStates, ", ")+" are taken)")
			}
		}
		st.Current = wo.scaled("current_ma", closed(0, 1000), energy.MilliAmp)
		ms, okD := wo.number("duration_ms", openLow(0, 600000))
		sp, okS := wo.number("duration_spread_ms", closed(0, 600000))
		if okD && okS && sp >= ms {
			c.fail(wp+".duration_spread_ms", sp, fmt.Sprintf("must be less than duration_ms (%g ms)", ms))
		}
		st.Duration, st.Spread = ms*energy.Millisecond, sp*energy.Millisecond
		g.Work = append(g.Work, st)
	}
	return g
}

// reservedStates are the state names the radio part of a cycle uses.
var reservedStates = []string{"uplink", "wait", "rx1", "rx2", "ack wait", "sleep"}

// smallestPayloadLimit returns the smallest application payload limit among
// the data rates ADR may choose, and that data rate.
func smallestPayloadLimit(r lora.Region) (int, int) {
	best, bestDR := lora.MaxPHYPayload, -1
	for _, dr := range r.ADRDataRates() {
		n, err := r.MaxAppPayload(dr, 0)
		if err == nil && n < best {
			best, bestDR = n, dr
		}
	}
	return best, bestDR
}

func readPlan(c *checker, v any) Plan {
	if v == nil {
		return Plan{}
	}
	o := c.object("plan", v, "replacement_after_years", "acceptable_risk")
	years, _ := o.number("replacement_after_years", openLow(0, 50))
	risk, _ := o.number("acceptable_risk", open(0, 1))
	return Plan{ReplaceAfter: years * energy.Year, AcceptableRisk: risk}
}

// checkCurrents: every state must draw at least the floor current of the
// node design that runs it.
func checkCurrents(c *checker, s Scenario) {
	for ni, n := range s.Nodes {
		sleep := n.Sleep
		if !(sleep > 0) { // 0, or missing or bad (NaN, reported already)
			continue
		}
		p := index("nodes", ni)
		if len(s.Nodes) == 1 && n.Name == "node" {
			p = "node"
		}
		rule := fmt.Sprintf("must be at least the sleep current (%g µA = %g mA)", sleep/energy.MicroAmp, sleep/energy.MilliAmp)
		below := func(field string, a, unit float64) {
			if a < sleep { // false for a missing or bad current (NaN)
				c.fail(field, a/unit, rule)
			}
		}
		below(p+".wait_current_ua", n.Wait, energy.MicroAmp)
		below(p+".receive_current_ma", n.Receive, energy.MilliAmp)
		for i, t := range n.Transmit {
			below(fmt.Sprintf("%s.transmit_current_ma (%g dBm, entry %d by power)", p, t.EIRP, i), t.Current, energy.MilliAmp)
		}
		for i, g := range s.Groups {
			if g.Node != ni {
				continue
			}
			for j, w := range g.Work {
				below(fmt.Sprintf("groups[%d].work[%d].current_ma", i, j), w.Current, energy.MilliAmp)
			}
		}
	}
}

// checkOverlap: service disks of different gateways must not overlap, since
// collisions are counted per gateway.
func checkOverlap(c *checker, s Scenario) {
	reach := make([]float64, len(s.Gateways))
	for _, g := range s.Groups {
		if g.Gateway >= 0 && g.Gateway < len(reach) {
			reach[g.Gateway] = max(reach[g.Gateway], g.OuterRadius)
		}
	}
	for i := range s.Gateways {
		for j := i + 1; j < len(s.Gateways); j++ {
			a, b := s.Gateways[i], s.Gateways[j]
			d := math.Hypot(a.X-b.X, a.Y-b.Y)
			if reach[i] > 0 && reach[j] > 0 && reach[i]+reach[j] > d {
				c.fail(fmt.Sprintf("gateways[%d], gateways[%d]", i, j), note(fmt.Sprintf("%q and %q %.0f m apart", a.Name, b.Name, d)),
					fmt.Sprintf("their groups reach %.0f m and %.0f m, so the service areas overlap; this model counts collisions per gateway and needs them apart", reach[i], reach[j]))
			}
		}
	}
}
