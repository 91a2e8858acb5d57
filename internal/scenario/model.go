package scenario

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// Model is the library's description of a scenario: per group, the link and
// the ADR law, the collision and downlink probabilities per data rate, and
// the class A cycle with its per-cycle energy law. It is built by Build and is
// an immutable value (treat its slices as read-only).
type Model struct {
	Scenario Scenario
	Battery  energy.Battery
	Groups   []GroupModel
}

// GroupModel is the model of one group.
type GroupModel struct {
	Group   Group
	Link    lora.Link
	Settled lora.Settled
	// Settings is the law of (data rate, TXPower) of a node in reach
	// (probabilities summing to 1): the nodes of the group are taken to be
	// those in reach, and OutOfReach says what share of placements is not.
	Settings   []lora.Setting
	OutOfReach float64
	PerDR      []DRModel // one per data rate with positive probability, by DR
	ClassA     lora.ClassA
	Period     dist.Law // law of the reporting period, s
	Cycle      energy.Cycle
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
	// Windows are the downlink probabilities per attempt.
	Windows lora.Windows
}

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
// the success they change. progress, if not nil, is told about each step.
func Build(s Scenario, progress func(step string)) (Model, error) {
	say := func(format string, args ...any) {
		if progress != nil {
			progress(fmt.Sprintf(format, args...))
		}
	}
	bat, err := energy.NewBattery(s.Cell)
	if err != nil {
		return Model{}, fmt.Errorf("cell: %w", err)
	}
	m := Model{Scenario: s, Battery: bat, Groups: make([]GroupModel, len(s.Groups))}
	channels := len(s.Region.UplinkChannels())
	pl := lora.PathLoss{
		Reference:   s.Environment.ReferenceLoss,
		RefDistance: s.Environment.ReferenceDistance,
		Exponent:    s.Environment.LossExponent,
		Shadowing:   s.Environment.ShadowingSD,
	}
	for i, g := range s.Groups {
		say("settling ADR for group %q", g.Name)
		gm := GroupModel{Group: g}
		d, err := lora.NewAnnulus(g.InnerRadius, g.OuterRadius)
		if err != nil {
			return Model{}, fmt.Errorf("group %q: %w", g.Name, err)
		}
		gm.Link = lora.Link{Distance: d, PathLoss: pl, GatewayGain: s.Environment.GatewayGain, NoiseFigure: s.Environment.NoiseFigure, Margin: s.Environment.InstallationMargin}
		gm.Settled, err = lora.SettleADR(s.Region, gm.Link, lora.ADRConfig{})
		if err != nil {
			return Model{}, fmt.Errorf("group %q: %w", g.Name, err)
		}
		gm.OutOfReach = gm.Settled.OutOfReach()
		gm.Settings, err = gm.Settled.Reachable()
		if err != nil {
			return Model{}, fmt.Errorf("group %q: no node in reach: %w", g.Name, err)
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
				return Model{}, fmt.Errorf("group %q: %w", g.Name, err)
			}
			gm.PerDR = append(gm.PerDR, DRModel{DR: dr, Share: share[dr], Airtime: air, Frames: 1})
		}
		m.Groups[i] = gm
	}
	say("solving collisions and retransmissions")
	if err := m.solveCollisions(channels); err != nil {
		return Model{}, err
	}
	for i := range m.Groups {
		gm := &m.Groups[i]
		say("building the class A cycle of group %q", gm.Group.Name)
		if err := gm.buildCycle(s); err != nil {
			return Model{}, fmt.Errorf("group %q: %w", gm.Group.Name, err)
		}
	}
	return m, nil
}

// solveCollisions fills Load, Vulnerable, UplinkSuccess, Frames and Windows
// of every data rate of every group.
func (m *Model) solveCollisions(channels int) error {
	const maxIter = 200
	for iter := 0; ; iter++ {
		change := 0.0
		for gi := range m.Groups {
			g := &m.Groups[gi]
			for k := range g.PerDR {
				dm := &g.PerDR[k]
				total, vuln := 0.0, 0.0
				for hi := range m.Groups {
					h := &m.Groups[hi]
					if h.Group.Gateway != g.Group.Gateway {
						continue
					}
					hd, ok := h.drModel(dm.DR)
					if !ok {
						continue
					}
					n := float64(h.Group.Nodes) * hd.Share
					others := float64(h.Group.Nodes)
					if hi == gi {
						others--
					}
					others *= hd.Share
					all, err := lora.OfferedLoad(n, hd.Frames, hd.Airtime, h.Group.Interval, channels)
					if err != nil {
						return err
					}
					total += all
					ob, err := lora.OfferedLoad(others, hd.Frames, hd.Airtime, h.Group.Interval, channels)
					if err != nil {
						return err
					}
					oa, err := lora.OfferedLoad(others, hd.Frames, dm.Airtime, h.Group.Interval, channels)
					if err != nil {
						return err
					}
					vuln += (oa + ob) / 2
				}
				dm.Load = total
				dm.Vulnerable = vuln
				succ, err := lora.AlohaSuccess(vuln)
				if err != nil {
					return err
				}
				dm.UplinkSuccess = succ
				gr := g.Group
				w, err := lora.DownlinkWindows(succ, gr.AnswerShare, gr.RX1Share, 1-gr.DownlinkLoss, 1-gr.DownlinkLoss)
				if err != nil {
					return err
				}
				dm.Windows = w
				frames := 1.0
				if gr.MaxTransmissions > 1 {
					tg, err := lora.TruncatedGeometric(w.RX1+w.RX2, gr.MaxTransmissions)
					if err != nil {
						return err
					}
					frames = tg.Mean()
				}
				change = math.Max(change, math.Abs(frames-dm.Frames))
				dm.Frames = frames
			}
		}
		if change < 1e-13 {
			return nil
		}
		if iter == maxIter {
			return fmt.Errorf("scenario: the retransmission load did not settle after %d rounds (last change %.3g frames)", maxIter, change)
		}
	}
}

func (g *GroupModel) drModel(dr int) (DRModel, bool) {
	for _, d := range g.PerDR {
		if d.DR == dr {
			return d, true
		}
	}
	return DRModel{}, false
}

// buildCycle fills ClassA, Period and Cycle.
func (g *GroupModel) buildCycle(s Scenario) error {
	gr := g.Group
	cur := lora.Currents{Voltage: s.Node.Voltage, RX: s.Node.Receive, Wait: s.Node.Wait, Floor: s.Node.Sleep}
	for _, t := range s.Node.Transmit {
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
	byDR := map[int]lora.Windows{}
	for _, d := range g.PerDR {
		byDR[d.DR] = d.Windows
	}
	before, err := WorkStage(s.Node.Voltage, gr.Work)
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
		DownlinkBytes:   dl,
		Downlink:        byDR[g.PerDR[0].DR],
		DownlinkByDR:    byDR,
		PreambleSymbols: s.Node.WindowSymbols,
		ClockMargin:     s.Node.WindowMargin,
		Before:          before,
	}
	g.Period, err = PeriodLaw(gr.Interval, gr.Jitter)
	if err != nil {
		return err
	}
	g.Cycle, err = g.ClassA.Cycle(g.Period)
	return err
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
