package scenario

import (
	"fmt"
	"math"
	"slices"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/workers"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// Model is the library's description of a scenario: per group, the link and
// the ADR law, the collision and downlink probabilities per data rate, and
// the class A cycle with its per-cycle energy law. It is built by Build and is
// an immutable value (treat its slices as read-only).
type Model struct {
	Scenario Scenario
	Groups   []GroupModel
	// Gateways holds each gateway's downlink budget (see GatewayModel).
	Gateways []GatewayModel
}

// GroupModel is the model of one group.
type GroupModel struct {
	Group   Group
	Node    Node           // the group's node design
	Cell    Cell           // the group's cell description
	Battery energy.Battery // the cell, checked
	Link    lora.Link
	Settled lora.Settled
	// Settings is the law of (data rate, TXPower) of a node in reach
	// (probabilities summing to 1; empty when no node is in reach), and
	// OutOfReach the share of placements that miss the installation margin
	// even at the slowest data rate and full power.
	Settings   []lora.Setting
	OutOfReach float64
	// Unheard is the setting an out-of-reach node ends in: the ADR back-off
	// (LoRaWAN L2 1.0.4 §4.3.1.1, 1.0.3 §4.3.1.1, from memory) has a node
	// that hears no downlink for ADR_ACK_LIMIT uplinks set ADRACKReq, then
	// after each further ADR_ACK_DELAY uplinks without an answer restore
	// full power and step the data rate down, until it sends at the slowest
	// data rate at full power, where it stays and keeps transmitting. The
	// model takes the node there for its whole life (the back-off takes
	// ADR_ACK_LIMIT + 6·ADR_ACK_DELAY = 256 uplinks at the most in
	// EU863-870: days, against years of reports), every uplink lost and no
	// downlink received. Prob is the share of the group's nodes, OutOfReach,
	// or 0 when it is below UnheardFloor (no such nodes are planned).
	Unheard lora.Setting
	// PerDR describes the nodes in reach: one entry per data rate with
	// positive probability, by DR (empty when no node is in reach).
	PerDR []DRModel
	// ClassA describes the reports of the group's nodes in reach; its
	// Cycle method gives the per-cycle law of a node drawn at random (the
	// setting drawn once per cycle). SettingCycle gives the cycle of a node
	// at one setting.
	ClassA lora.ClassA
	Period dist.Law // law of the reporting period, s
}

// DRModel is what happens to the uplinks of a group's nodes at one data rate.
type DRModel struct {
	DR    int
	Share float64 // probability that a node in reach uses this data rate
	// Airtime is the time on air of one uplink of this group, s.
	Airtime float64
	// Load is the offered load G per channel on this data rate at the
	// group's gateway: Σ λ·b over all its nodes' frames (retransmissions
	// included), the share of time a channel carries such a frame.
	Load float64
	// Vulnerable is the effective load G' that one of this group's frames
	// meets from the other nodes' frames: the success is exp(−2G').
	Vulnerable float64
	// UplinkSuccess is the probability that one transmission escapes collision.
	UplinkSuccess float64
	// Frames is the mean number of transmissions per report.
	Frames float64
	// RX1Sent and RX2Sent are the probabilities that the gateway can send
	// an answer booked in RX1 and in RX2 (lora.GatewayDownlinks), and
	// RX1Fallback the probability that an answer booked in RX1 is refused
	// there and sent in RX2 instead (the network server's fallback); an
	// answer booked in RX1 is lost with probability 1 − RX1Sent −
	// RX1Fallback.
	RX1Sent, RX2Sent, RX1Fallback float64
	// Windows are the downlink probabilities per attempt.
	Windows lora.Windows
}

// UnheardFloor is the smallest share of a group that the model plans as a
// separate population: an out-of-reach share below it is taken as 0 (every
// node heard), and an in-reach share below it as 0 (every node unheard).
// It is ten times lora.SettleADR's error bound on these shares (1e-10),
// so a share below it is not told apart from numerical noise.
const UnheardFloor = 1e-9

// Build turns a checked scenario into the library's model. Collision
// probabilities follow pure ALOHA per gateway, data rate and channel
// (Abramson 1970) generalised to frames of different lengths: a frame of
// length a escapes the frames of another kind (rate λ per channel, length b)
// when none starts within the vulnerable period a + b, so with Poisson
// arrivals
//
//	P(success) = exp(−Σ_h λ_h·(a + b_h)) = exp(−2G'),  G' = ½ Σ_h λ_h·(a + b_h)
//
// which is exp(−2G) when all frames are alike (common practice). The sum runs
// over the other nodes (a node's own frames do not collide with each other),
// and λ_h counts retransmissions through the mean number of transmissions per
// report, found by a fixed-point iteration since retransmissions depend on
// the success they change (to a change below 1e-13 frames per report;
// extrapolated where its rounds shrink at a steady ratio, see
// settleHistory).
//
// Out-of-reach nodes (Unheard) are planned with every uplink lost, but their
// frames are not counted in the loads that the nodes in reach meet: they
// arrive below the installation margin, where a stronger frame usually
// survives the overlap (the capture effect, common practice), and leaving
// them out keeps the model the one the packet-level sampler plays. A group
// with no node in reach is planned with its unheard nodes alone.
// progress, if not nil, is told about each step.
func Build(s Scenario, progress func(step string)) (Model, error) {
	say := func(format string, args ...any) {
		if progress != nil {
			progress(fmt.Sprintf(format, args...))
		}
	}
	if err := s.Check(); err != nil {
		return Model{}, err
	}
	m := Model{Scenario: s, Groups: make([]GroupModel, len(s.Groups))}
	pl := s.pathLoss()
	for i, g := range s.Groups {
		say("settling ADR for group %q", g.Name)
		gm, err := newGroupModel(s, i, pl, nil)
		if err != nil {
			return Model{}, err
		}
		m.Groups[i] = gm
	}
	say("solving collisions and retransmissions")
	if err := m.solveCollisions(-1); err != nil {
		return Model{}, err
	}
	for i := range m.Groups {
		gm := &m.Groups[i]
		if err := gm.describe(s); err != nil {
			return Model{}, groupError(i, gm.Group.Name, err)
		}
	}
	return m, nil
}

// pathLoss returns the site's log-distance path loss.
func (s Scenario) pathLoss() lora.PathLoss {
	return lora.PathLoss{
		Reference:   s.Environment.ReferenceLoss,
		RefDistance: s.Environment.ReferenceDistance,
		Exponent:    s.Environment.LossExponent,
		Shadowing:   s.Environment.ShadowingSD,
	}
}

// newGroupModel sets up group i of s before the collision solve: its node,
// cell and battery, its link and the ADR law settled on it (settled, when
// not nil, is that law already settled on the same link and region), the
// settings in reach and out of reach, and one PerDR entry per data rate in
// use with its airtime (no collisions yet: one frame a report, every
// answer sent). pl is the site's path loss.
func newGroupModel(s Scenario, i int, pl lora.PathLoss, settled *lora.Settled) (GroupModel, error) {
	g := s.Groups[i]
	gm := GroupModel{Group: g, Node: s.NodeOf(g), Cell: s.CellOf(g)}
	var err error
	if gm.Battery, err = energy.NewBattery(gm.Cell.Spec); err != nil {
		return GroupModel{}, &FieldError{Field: index("cells", g.Cell), Value: gm.Cell.Spec.Name, Rule: "rejected by the battery model", Cause: err}
	}
	d, err := lora.NewAnnulus(g.InnerRadius, g.OuterRadius)
	if err != nil {
		return GroupModel{}, groupError(i, g.Name, err)
	}
	gm.Link = lora.Link{Distance: d, PathLoss: pl, GatewayGain: s.Environment.GatewayGain, NoiseFigure: s.Environment.NoiseFigure, Margin: s.Environment.InstallationMargin}
	if settled != nil {
		gm.Settled = *settled
	} else if gm.Settled, err = lora.SettleADR(s.Region, gm.Link, lora.ADRConfig{}); err != nil {
		return GroupModel{}, groupError(i, g.Name, err)
	}
	gm.OutOfReach = gm.Settled.OutOfReach()
	slow := slices.Min(s.Region.ADRDataRates())
	full, err := s.Region.TXPower(0)
	if err != nil {
		return GroupModel{}, groupError(i, g.Name, err)
	}
	gm.Unheard = lora.Setting{DR: slow, TXPower: 0, EIRP: full}
	switch u := gm.OutOfReach; {
	case 1-u < UnheardFloor:
		gm.Unheard.Prob = 1
	case u >= UnheardFloor:
		gm.Unheard.Prob = u
	}
	if gm.Unheard.Prob < 1 {
		reach, err := gm.Settled.Reachable()
		if err != nil {
			return GroupModel{}, groupError(i, g.Name, err)
		}
		for _, st := range reach {
			if st.Prob > 0 {
				gm.Settings = append(gm.Settings, st)
			}
		}
	}
	if len(gm.Settings) == 0 && gm.Unheard.Prob == 0 {
		return GroupModel{}, groupError(i, g.Name, fmt.Errorf("no setting has positive probability (out of reach %g)", gm.OutOfReach))
	}
	share := map[int]float64{}
	for _, st := range gm.Settings {
		share[st.DR] += st.Prob
	}
	for _, dr := range s.Region.ADRDataRates() {
		if share[dr] <= 0 {
			continue
		}
		air, err := s.Region.UplinkAirtime(dr, g.Payload, 0)
		if err != nil {
			return GroupModel{}, groupError(i, g.Name, err)
		}
		gm.PerDR = append(gm.PerDR, DRModel{DR: dr, Share: share[dr], Airtime: air, Frames: 1, RX1Sent: 1, RX2Sent: 1})
	}
	return gm, nil
}

// solveCollisions fills Load, Vulnerable, UplinkSuccess, Frames and Windows
// of every data rate of every group, or with only >= 0 of the groups of
// gateway only (the others, which neither load its channels nor book its
// answers, keep theirs).
func (m *Model) solveCollisions(only int) error {
	const maxIter = 200
	type gwDR struct{ gw, dr int }
	chans := map[gwDR]int{}
	for _, g := range m.Groups {
		gw := g.Group.Gateway
		if only >= 0 && gw != only {
			continue
		}
		for _, d := range g.PerDR {
			chans[gwDR{gw, d.DR}] = m.Scenario.Region.ChannelsCarrying(m.Scenario.Gateways[gw].Channels, d.DR)
		}
	}
	// One sweep computes every group's new values from the last sweep's
	// (a Jacobi step, not Gauss–Seidel), and a group's vulnerable load is
	// the sum over all the gateway's nodes less its own one node: each
	// group's values then depend on the groups' values alone, not on their
	// order, so two groups alike but for their names get the same numbers
	// (energy.Site then builds their lifetime tables once).
	type upd struct {
		load, vuln, succ, frames float64
		win                      lora.Windows
	}
	next := make([][]upd, len(m.Groups))
	var hist settleHistory
	lay := &budgetLayout{} // the gateways' streams but for their rates, built in the first round
	for iter := 0; ; iter++ {
		change := 0.0
		for gi := range m.Groups {
			g := &m.Groups[gi]
			if only >= 0 && g.Group.Gateway != only {
				continue
			}
			next[gi] = next[gi][:0]
			for k := range g.PerDR {
				dm := g.PerDR[k]
				total, vuln := 0.0, 0.0
				nch := chans[gwDR{g.Group.Gateway, dm.DR}]
				if nch == 0 {
					return fmt.Errorf("group %q: gateway %q hears no channel that carries DR%d", g.Group.Name, m.Scenario.Gateways[g.Group.Gateway].Name, dm.DR)
				}
				for hi := range m.Groups {
					h := &m.Groups[hi]
					if h.Group.Gateway != g.Group.Gateway {
						continue
					}
					hd, ok := h.drModel(dm.DR)
					if !ok {
						continue
					}
					// Only the heard nodes' frames count (see Build).
					n := float64(h.Group.Nodes) * h.Heard() * hd.Share
					all, err := lora.OfferedLoad(n, hd.Frames, hd.Airtime, h.Group.Interval, nch)
					if err != nil {
						return err
					}
					total += all
					oa, err := lora.OfferedLoad(n, hd.Frames, dm.Airtime, h.Group.Interval, nch)
					if err != nil {
						return err
					}
					vuln += (oa + all) / 2
				}
				// Less the node's own frames (they do not collide with
				// each other): one node of the group's share.
				one := g.Heard() * dm.Share
				own, err := lora.OfferedLoad(one, dm.Frames, dm.Airtime, g.Group.Interval, nch)
				if err != nil {
					return err
				}
				vuln = max(0, vuln-own)
				succ, err := lora.AlohaSuccess(vuln)
				if err != nil {
					return err
				}
				gr := g.Group
				w, err := answerWindows(succ, gr, dm)
				if err != nil {
					return err
				}
				frames := 1.0
				if gr.MaxTransmissions > 1 {
					tg, err := lora.TruncatedGeometric(w.RX1+w.RX2, gr.MaxTransmissions)
					if err != nil {
						return err
					}
					frames = tg.Mean()
				}
				change = max(change, math.Abs(frames-dm.Frames))
				next[gi] = append(next[gi], upd{total, vuln, succ, frames, w})
			}
		}
		for gi := range m.Groups {
			if only >= 0 && m.Groups[gi].Group.Gateway != only {
				continue
			}
			for k, u := range next[gi] {
				dm := &m.Groups[gi].PerDR[k]
				dm.Load, dm.Vulnerable, dm.UplinkSuccess, dm.Frames, dm.Windows = u.load, u.vuln, u.succ, u.frames, u.win
			}
		}
		sent, err := m.gatewayBudgets(only, lay)
		if err != nil {
			return err
		}
		if change < 1e-13 && sent < 1e-13 {
			return nil
		}
		if iter == maxIter {
			return fmt.Errorf("scenario: the retransmission load did not settle after %d rounds (last change %.3g frames)", maxIter, change)
		}
		hist.next(m, only)
	}
}

// settleHistory keeps the last rounds of the collision fixed point (each
// included group's data rates' Frames, RX1Sent, RX2Sent and RX1Fallback)
// and extrapolates where the rounds shrink at a steady ratio: the
// iteration converges linearly (in the 5,000-node benchmark site each
// round's change is 0.28 of the last, 26 rounds to 1e-13), so once two
// successive ratios r agree within 5 % the remaining steps sum to about
// r/(1 − r) of the last one (Aitken's Δ² process in the dominant
// direction: Aitken, Proc. Roy. Soc. Edinburgh 46 (1926) 289–305, from
// memory). The jump is clamped to the values' ranges and only starts the
// next rounds: the iteration still stops on its own round's change, so
// what it returns is a fixed point to the same tolerance, in fewer rounds.
type settleHistory struct {
	x    [][]float64 // the last states, oldest first (at most 3)
	step []float64   // the last steps' largest changes
	// ratioBefore is the ratio of the two steps before the last.
	ratioBefore float64
}

// settleState returns the fixed point's values for the included groups.
func settleState(m *Model, only int) []float64 {
	var x []float64
	m.eachDR(only, func(_ int, _ *GroupModel, d *DRModel) {
		x = append(x, d.Frames, d.RX1Sent, d.RX2Sent, d.RX1Fallback)
	})
	return x
}

// eachDR calls f on every data rate of every group, in order, or with
// only >= 0 of the groups of gateway only.
func (m *Model) eachDR(only int, f func(gi int, g *GroupModel, d *DRModel)) {
	for gi := range m.Groups {
		g := &m.Groups[gi]
		if only >= 0 && g.Group.Gateway != only {
			continue
		}
		for k := range g.PerDR {
			f(gi, g, &g.PerDR[k])
		}
	}
}

// next records the state after a round and extrapolates where the ratio
// of the last two steps is steady.
func (h *settleHistory) next(m *Model, only int) {
	x := settleState(m, only)
	if n := len(h.x); n > 0 {
		d := 0.0
		for i, v := range x {
			d = max(d, math.Abs(v-h.x[n-1][i]))
		}
		h.step = append(h.step, d)
	}
	h.x = append(h.x, x)
	if len(h.x) > 3 {
		h.x, h.step = h.x[1:], h.step[1:]
	}
	if len(h.step) < 2 {
		return
	}
	r := h.step[1] / h.step[0]
	prev := h.ratioBefore
	h.ratioBefore = r
	if !(r > 0 && r < 0.9) || !(prev > 0) || math.Abs(r-prev) > 0.05*r {
		return
	}
	f := r / (1 - r)
	last, before := h.x[2], h.x[1]
	k := 0
	jump := func(v *float64, lo, hi float64) {
		*v = min(hi, max(lo, last[k]+f*(last[k]-before[k])))
		k++
	}
	m.eachDR(only, func(_ int, g *GroupModel, d *DRModel) {
		jump(&d.Frames, 1, float64(max(1, g.Group.MaxTransmissions)))
		jump(&d.RX1Sent, 0, 1)
		jump(&d.RX2Sent, 0, 1)
		jump(&d.RX1Fallback, 0, 1)
	})
	*h = settleHistory{}
}

// answerWindows returns the downlink probabilities per attempt of a group's
// node at one data rate, with uplink success up: the network answers
// (AnswerShare), in RX1 with probability RX1Share, where the gateway sends
// it (RX1Sent) or falls back to RX2 (RX1Fallback), otherwise in RX2
// (RX2Sent); a sent answer arrives with probability 1 − DownlinkLoss:
//
//	RX1 = up·answer·RX1Share·RX1Sent·(1 − loss)
//	RX2 = up·answer·((1 − RX1Share)·RX2Sent + RX1Share·RX1Fallback)·(1 − loss)
func answerWindows(up float64, g Group, d DRModel) (lora.Windows, error) {
	p, err := lora.DownlinkProbability(up, g.AnswerShare, 1-g.DownlinkLoss)
	if err != nil {
		return lora.Windows{}, err
	}
	return lora.Windows{RX1: p * g.RX1Share * d.RX1Sent, RX2: p * ((1-g.RX1Share)*d.RX2Sent + g.RX1Share*d.RX1Fallback)}, nil
}

// Channels returns the number of the region's uplink channels that carry
// data rate dr (EU863-870: the 3 default channels for DR0 … DR5;
// US902-928: 64 channels of 125 kHz for DR0 … DR3, 8 of 500 kHz for DR4),
// over which a data rate's frames spread evenly when the gateway hears the
// whole plan. A gateway with a channel mask (Gateway.Channels; a US902-928
// gateway on one block of 8 + 1 channels, common practice) spreads them
// over r.ChannelsCarrying(mask, dr), which Build uses.
func Channels(r lora.Region, dr int) int {
	return r.ChannelsCarrying(lora.ChannelMask{}, dr)
}

func (g *GroupModel) drModel(dr int) (DRModel, bool) {
	for _, d := range g.PerDR {
		if d.DR == dr {
			return d, true
		}
	}
	return DRModel{}, false
}

// describe fills ClassA and Period.
func (g *GroupModel) describe(s Scenario) error {
	gr := g.Group
	node := g.Node
	cur := lora.Currents{Voltage: node.Voltage, RX: node.Receive, Wait: node.Wait, Floor: node.Sleep}
	for _, t := range node.Transmit {
		cur.TX = append(cur.TX, lora.TXCurrent{EIRP: t.EIRP, Current: t.Current})
	}
	dl := lora.EmptyFrameBytes
	if gr.DownlinkPayload > 0 {
		n, err := lora.PHYPayloadBytes(gr.DownlinkPayload, 0)
		if err != nil {
			return err
		}
		dl = n
	}
	// Every data rate of a node in reach has its windows in byDR; the
	// default (no downlink) is what an unheard node meets.
	byDR := map[int]lora.Windows{}
	for _, d := range g.PerDR {
		byDR[d.DR] = d.Windows
	}
	before, err := WorkStage(node.Voltage, gr.Work)
	if err != nil {
		return err
	}
	g.ClassA = lora.ClassA{
		Region:          s.Region,
		Currents:        cur,
		App:             gr.Payload,
		Settings:        g.Settings,
		Confirmed:       gr.Confirmed,
		NbTrans:         gr.MaxTransmissions,
		RX1DROffset:     gr.RX1DROffset,
		RX2:             gr.RX2,
		Mask:            s.Gateways[gr.Gateway].Channels,
		DownlinkBytes:   dl,
		Downlink:        lora.Windows{},
		DownlinkByDR:    byDR,
		PreambleSymbols: node.WindowSymbols,
		ClockMargin:     node.WindowMargin,
		Before:          before,
	}
	g.Period, err = PeriodLaw(gr.Interval, gr.Jitter)
	return err
}

// Cycle returns the class A cycle of a node drawn at random from the
// group's nodes in reach: its setting drawn once per cycle from Settings.
func (g GroupModel) Cycle() (energy.Cycle, error) {
	return g.ClassA.Cycle(g.Period)
}

// SettingCycle returns the class A cycle of a node of the group that uses
// Settings[i] (its data rate and power stay, as ADR left them).
func (g GroupModel) SettingCycle(i int) (energy.Cycle, error) {
	if i < 0 || i >= len(g.Settings) {
		return energy.Cycle{}, &FieldError{Field: "setting", Value: i, Rule: fmt.Sprintf("must index the group's %d settings", len(g.Settings))}
	}
	c := g.ClassA
	one := g.Settings[i]
	one.Prob = 1
	c.Settings = []lora.Setting{one}
	return c.Cycle(g.Period)
}

// Heard returns the share of the group's nodes in reach: 1 − Unheard.Prob.
func (g GroupModel) Heard() float64 { return 1 - g.Unheard.Prob }

// AllSettings returns the settings of every node of the group, heard or not:
// Settings with their probabilities times Heard, then Unheard when its
// share is positive. The probabilities sum to 1.
func (g GroupModel) AllSettings() []lora.Setting {
	h := g.Heard()
	out := make([]lora.Setting, 0, len(g.Settings)+1)
	for _, st := range g.Settings {
		st.Prob *= h
		out = append(out, st)
	}
	if g.Unheard.Prob > 0 {
		out = append(out, g.Unheard)
	}
	return out
}

// AllWeights returns the probabilities of AllSettings, as the weights of a
// mixture.
func (g GroupModel) AllWeights() []float64 {
	all := g.AllSettings()
	w := make([]float64, len(all))
	for i, s := range all {
		w[i] = s.Prob
	}
	return w
}

// IsUnheard tells whether AllSettings()[i] is the out-of-reach setting.
func (g GroupModel) IsUnheard(i int) bool {
	return g.Unheard.Prob > 0 && i == len(g.Settings)
}

// AllSettingCycle returns the class A cycle of a node of the group at
// AllSettings()[i]: SettingCycle(i) for a node in reach, UnheardCycle for
// the last one when some nodes are out of reach.
func (g GroupModel) AllSettingCycle(i int) (energy.Cycle, error) {
	if g.IsUnheard(i) {
		return g.UnheardCycle()
	}
	return g.SettingCycle(i)
}

// UnheardCycle returns the class A cycle of an out-of-reach node: every
// report at Unheard's data rate and power, every transmission lost, so both
// receive windows stay empty and a confirmed report spends all
// MaxTransmissions attempts. It fails when the group has no such nodes.
func (g GroupModel) UnheardCycle() (energy.Cycle, error) {
	if g.Unheard.Prob == 0 {
		return energy.Cycle{}, &FieldError{Field: "setting", Value: "out of reach", Rule: "the group has no out-of-reach nodes"}
	}
	c := g.ClassA
	one := g.Unheard
	one.Prob = 1
	c.Settings = []lora.Setting{one}
	c.Downlink = lora.Windows{}
	c.DownlinkByDR = nil
	c.JoinEvery = g.Group.RejoinEvery
	return c.Cycle(g.Period)
}

// NodeSpec returns the description of the group's nodes for package
// energy's lifetime laws, given the cycle of each of its settings, heard or
// not (in the order of AllSettings): their weights, the cell, the supply path, the
// temperature behaviour (the cell's, with the node's sleep-current
// doubling), the voltage curve and brown-out, the per-node spreads, the
// calendar life, storage time and the deployment month.
func (g GroupModel) NodeSpec(s Scenario, cycles []energy.Cycle) (energy.NodeSpec, error) {
	w := g.AllWeights()
	if len(cycles) != len(w) {
		return energy.NodeSpec{}, &FieldError{Field: "cycles", Value: len(cycles), Rule: fmt.Sprintf("need one cycle per setting, heard or not (%d)", len(w))}
	}
	spec := energy.NodeSpec{Name: g.Group.Name, Battery: g.Battery, Supply: g.Node.Supply,
		Spread:       energy.NodeSpread{Capacity: g.Cell.CapacitySD, Floor: g.Node.FloorLogSD, Active: g.Node.ActiveSD},
		CalendarLife: g.Cell.CalendarLife, StorageTime: g.Group.StorageTime, StartMonth: s.StartMonth}
	for i, c := range cycles {
		spec.Settings = append(spec.Settings, energy.NodeSetting{Weight: w[i], Cycle: c})
	}
	if g.Cell.Thermal != nil {
		th := *g.Cell.Thermal
		th.FloorDoublingInterval = g.Node.FloorDoubling
		spec.Thermal = &th
	}
	if g.Cell.Voltage != nil {
		spec.Voltage = g.Cell.Voltage
		spec.Brownout = g.Node.Brownout
	}
	return spec, nil
}

// SettingCycles builds the cycle of every setting of every group's nodes in
// reach (SettingCycle) on goroutines goroutines (a count below 1 means 1);
// the result, indexed [group][setting], does not depend on it. Laws builds
// the cycles of every setting, heard or not.
func (m Model) SettingCycles(goroutines int) ([][]energy.Cycle, error) {
	out := make([][]energy.Cycle, len(m.Groups))
	type job struct{ group, setting int }
	var jobs []job
	for gi, g := range m.Groups {
		out[gi] = make([]energy.Cycle, len(g.Settings))
		for si := range g.Settings {
			jobs = append(jobs, job{gi, si})
		}
	}
	return out, workers.Run(len(jobs), goroutines, func(k int) error {
		j := jobs[k]
		g := m.Groups[j.group]
		c, err := g.SettingCycle(j.setting)
		if err != nil {
			return groupError(j.group, g.Group.Name, fmt.Errorf("setting %v: %w", g.Settings[j.setting], err))
		}
		out[j.group][j.setting] = c
		return nil
	}, nil)
}

// Weights returns the probabilities of the group's settings, as the weights
// of a mixture.
func (g GroupModel) Weights() []float64 {
	w := make([]float64, len(g.Settings))
	for i, s := range g.Settings {
		w[i] = s.Prob
	}
	return w
}

// PeriodLaw returns the law of a reporting period: uniform over interval ±
// jitter (s), or the point mass at interval when jitter is 0.
func PeriodLaw(interval, jitter float64) (dist.Law, error) {
	if jitter == 0 {
		return dist.NewPointMass(interval)
	}
	return dist.NewUniform(interval-jitter, interval+jitter)
}

// WorkStage returns the work steps as one energy stage in sequence (nil when
// there are none): each a constant current at voltage (V) for a duration
// uniform over Duration ± Spread.
func WorkStage(voltage float64, work []Step) (energy.Stage, error) {
	if len(work) == 0 {
		return nil, nil
	}
	stages := make([]energy.Stage, len(work))
	for i, w := range work {
		var dur dist.Law
		dur, err := dist.NewPointMass(w.Duration)
		if err != nil {
			return nil, err
		}
		if w.Spread > 0 {
			u, err := dist.NewUniform(w.Duration-w.Spread, w.Duration+w.Spread)
			if err != nil {
				return nil, err
			}
			dur = u
		}
		cur, err := dist.NewPointMass(w.Current)
		if err != nil {
			return nil, err
		}
		st, err := energy.NewState(w.Name, cur, voltage, dur)
		if err != nil {
			return nil, err
		}
		stages[i] = st
	}
	return energy.Sequence(stages...)
}

// MixEnergy returns the per-cycle energy law (J) of a node drawn at random
// from the group's nodes in reach: the mixture, with the settings' probabilities, of the
// per-setting laws (cycles indexed like Settings).
func (g GroupModel) MixEnergy(cycles []energy.Cycle) (dist.Law, error) {
	laws := make([]dist.Law, len(cycles))
	for i, c := range cycles {
		laws[i] = c.Energy()
	}
	return dist.Mixture(g.Weights(), laws)
}

// MixBreakdown returns the per-state breakdown of the mixture of the
// per-setting cycles with the given weights: means add with the weights, and
// each row's covariance with the total follows the law of total covariance
//
//	Cov(C, E) = Σ_s w_s·[Cov_s(C, E) + (m_s − m)(μ_s − μ)]
//
// (any probability text), with Cov_s(C, E) = VarianceShare_s·Var_s[E], m_s
// the row's mean part and μ_s the mean energy under setting s. Rows appear in
// order of first appearance, the floor row last.
func MixBreakdown(weights []float64, cycles []energy.Cycle) []energy.Share {
	type acc struct {
		share energy.Share
		parts []float64 // MeanAboveFloor per setting
		covs  []float64 // Cov_s(C, E) per setting
	}
	var rows []*acc
	find := func(r energy.Share) *acc {
		for _, a := range rows {
			if a.share.Name == r.Name && a.share.Floor == r.Floor {
				return a
			}
		}
		a := &acc{share: energy.Share{Name: r.Name, Floor: r.Floor}, parts: make([]float64, len(cycles)), covs: make([]float64, len(cycles))}
		rows = append(rows, a)
		return a
	}
	mu, means, vars := 0.0, make([]float64, len(cycles)), make([]float64, len(cycles))
	for s, c := range cycles {
		means[s], vars[s] = c.MeanEnergy(), c.EnergyVariance()
		mu += weights[s] * means[s]
		for _, r := range c.Breakdown() {
			a := find(r)
			w := weights[s]
			a.share.Runs += w * r.Runs
			a.share.MeanEnergy += w * r.MeanEnergy
			a.share.MeanAboveFloor += w * r.MeanAboveFloor
			a.parts[s] = r.MeanAboveFloor
			if vars[s] > 0 && !math.IsNaN(r.VarianceShare) {
				a.covs[s] = r.VarianceShare * vars[s]
			}
		}
	}
	total := 0.0
	for s := range cycles {
		d := means[s] - mu
		total += weights[s] * (vars[s] + d*d)
	}
	out := make([]energy.Share, 0, len(rows))
	var floor []energy.Share
	for _, a := range rows {
		cov := 0.0
		for s := range cycles {
			cov += weights[s] * (a.covs[s] + (a.parts[s]-a.share.MeanAboveFloor)*(means[s]-mu))
		}
		a.share.MeanShare = a.share.MeanAboveFloor / mu
		a.share.VarianceShare = math.NaN()
		if total > 0 {
			a.share.VarianceShare = cov / total
		}
		if a.share.Floor {
			floor = append(floor, a.share)
		} else {
			out = append(out, a.share)
		}
	}
	return append(out, floor...)
}

// groupError maps an error met while assembling or computing group i's
// model back to the group: a *FieldError on groups[i] wrapping both
// ErrInvalid and the cause.
func groupError(i int, name string, err error) error {
	return &FieldError{Field: index("groups", i), Value: name, Rule: "the model of this group cannot be built", Cause: err}
}
