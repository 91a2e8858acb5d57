package packetsim

import (
	"container/heap"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// ErrParam is wrapped by errors about bad arguments to this package.
var ErrParam = errors.New("packetsim: invalid parameter")

// maxRedraws bounds the placements tried for one node before giving up.
const maxRedraws = 10000

// Node is one placed node.
type Node struct {
	Group     int     // index into the scenario's groups
	X, Y      float64 // position, m
	Distance  float64 // to its gateway, m
	Shadowing float64 // its shadowing draw, dB
	PathLoss  float64 // median loss + shadowing, dB
	DR        int     // the data rate ADR settled on
	TXPower   int     // the TXPower index ADR settled on
	EIRP      float64 // dBm
}

// Options sets the time window of a play.
type Options struct {
	// Start is the time (s) from which cycles are recorded: each node's
	// first cycle starting at or after Start is its recorded cycle. Nodes
	// start at a phase uniform over their first period, so traffic is
	// stationary from the beginning up to retransmissions; Start leaves
	// time for those.
	Start float64
}

// FrameCount counts the uplink transmissions of one group at one data rate
// that started in the counting window, and how many of them collided.
type FrameCount struct {
	Group, DR int
	Sent      int
	Collided  int
}

// Outcome is the result of one play of a scenario.
type Outcome struct {
	Nodes []Node
	// Energy[i] is the energy (J) of node i's recorded cycle.
	Energy []float64
	// Redraws[g] is the number of placements of group g rejected as out of
	// reach.
	Redraws []int
	// Frames counts the transmissions that started between Start and 45 s
	// before the last cycle was begun (so every frame that could overlap
	// them was played), per group and data rate, in order of group then DR.
	Frames []FrameCount
}

// physics holds what the play needs from package lora, computed once.
type physics struct {
	channels int
	d1, d2   float64 // RECEIVE_DELAY1/2, s
	ackLo    float64 // ACK_TIMEOUT range, s
	ackHi    float64
	rx2DR    int
	adrDRs   []int
	powers   []float64 // EIRP per TXPower index, dBm
	floor    map[int]float64
	// per group, per data rate
	uplink  []map[int]float64 // airtime, s
	rx1DR   []map[int]int
	listen  []map[int]float64 // empty-window time per window DR, s (same for all groups)
	receive []map[int]float64 // window time with a downlink, per window DR, s
}

func newPhysics(s scenario.Scenario) (*physics, error) {
	reg := s.Region
	tm := reg.Timing()
	p := &physics{
		channels: len(reg.UplinkChannels()),
		d1:       tm.ReceiveDelay1, d2: tm.ReceiveDelay2,
		ackLo: tm.AckTimeoutMin, ackHi: tm.AckTimeoutMax,
		adrDRs: reg.ADRDataRates(),
		powers: reg.TXPowers(),
		floor:  map[int]float64{},
	}
	_, p.rx2DR = reg.RX2()
	for _, dr := range p.adrDRs {
		d, err := reg.DataRate(dr)
		if err != nil {
			return nil, err
		}
		f, err := lora.Sensitivity(d.SF, d.Bandwidth, s.Environment.NoiseFigure)
		if err != nil {
			return nil, err
		}
		p.floor[dr] = f
	}
	for _, g := range s.Groups {
		up := map[int]float64{}
		r1 := map[int]int{}
		li := map[int]float64{}
		re := map[int]float64{}
		dlBytes := lora.EmptyFrameBytes
		if g.DownlinkPayload > 0 {
			dlBytes = lora.MACOverhead + g.DownlinkPayload
		}
		window := func(dr int) error {
			d, err := reg.DataRate(dr)
			if err != nil {
				return err
			}
			sym, err := lora.SymbolTime(d.SF, d.Bandwidth)
			if err != nil {
				return err
			}
			air, err := lora.DownlinkPHY(d.SF, d.Bandwidth).Airtime(dlBytes)
			if err != nil {
				return err
			}
			node := s.NodeOf(g)
			li[dr] = node.WindowMargin + float64(node.WindowSymbols)*sym
			re[dr] = node.WindowMargin + air
			return nil
		}
		for _, dr := range p.adrDRs {
			a, err := reg.UplinkAirtime(dr, g.Payload, 0)
			if err != nil {
				return nil, err
			}
			up[dr] = a
			x, err := reg.RX1DataRate(dr, 0)
			if err != nil {
				return nil, err
			}
			r1[dr] = x
			if err := window(x); err != nil {
				return nil, err
			}
		}
		if err := window(p.rx2DR); err != nil {
			return nil, err
		}
		p.uplink = append(p.uplink, up)
		p.rx1DR = append(p.rx1DR, r1)
		p.listen = append(p.listen, li)
		p.receive = append(p.receive, re)
	}
	return p, nil
}

// adr returns the data rate and TXPower index ADR settles on for a path loss
// L (dB), and false when the node is out of reach.
func (p *physics) adr(env scenario.Environment, loss float64) (dr, txp int, ok bool) {
	surplus := func(dr, txp int) float64 {
		return p.powers[txp] + env.GatewayGain - loss - p.floor[dr]
	}
	for i := len(p.adrDRs) - 1; i >= 0; i-- {
		dr := p.adrDRs[i]
		if surplus(dr, 0) < env.InstallationMargin {
			continue
		}
		txp := 0
		if i == len(p.adrDRs)-1 {
			for txp+1 < len(p.powers) && surplus(dr, txp+1) >= env.InstallationMargin {
				txp++
			}
		}
		return dr, txp, true
	}
	return 0, 0, false
}

// Place draws the position, shadowing and ADR setting of every node of s,
// placing out-of-reach nodes again. It also returns the redraws per group.
func Place(s scenario.Scenario, r *rand.Rand) ([]Node, []int, error) {
	if r == nil {
		return nil, nil, fmt.Errorf("%w: r = nil: a random source is required", ErrParam)
	}
	p, err := newPhysics(s)
	if err != nil {
		return nil, nil, err
	}
	return p.place(s, r)
}

func (p *physics) place(s scenario.Scenario, r *rand.Rand) ([]Node, []int, error) {
	env := s.Environment
	var nodes []Node
	redraws := make([]int, len(s.Groups))
	for gi, g := range s.Groups {
		gw := s.Gateways[g.Gateway]
		a2, b2 := g.InnerRadius*g.InnerRadius, g.OuterRadius*g.OuterRadius
		for range g.Nodes {
			for try := 0; ; try++ {
				if try == maxRedraws {
					return nil, nil, fmt.Errorf("%w: group %q: no placement in reach after %d tries", ErrParam, g.Name, maxRedraws)
				}
				rad := math.Sqrt(a2 + r.Float64()*(b2-a2))
				ang := 2 * math.Pi * r.Float64()
				x := gw.X + rad*math.Cos(ang)
				y := gw.Y + rad*math.Sin(ang)
				d := math.Hypot(x-gw.X, y-gw.Y)
				sh := env.ShadowingSD * r.NormFloat64()
				loss := env.ReferenceLoss + 10*env.LossExponent*math.Log10(d/env.ReferenceDistance) + sh
				dr, txp, ok := p.adr(env, loss)
				if !ok {
					redraws[gi]++
					continue
				}
				nodes = append(nodes, Node{Group: gi, X: x, Y: y, Distance: d, Shadowing: sh, PathLoss: loss, DR: dr, TXPower: txp, EIRP: p.powers[txp]})
				break
			}
		}
	}
	return nodes, redraws, nil
}

// MaxPlayedCycles caps the reports one Play simulates: every node's cycles
// from time 0 to opt.Start plus its longest period and 90 s. A larger
// Start (1e12 s used to run without end) or fleet is refused before
// anything is played.
const MaxPlayedCycles = 10_000_000

// Play places the nodes of s and plays their reports until every node has
// completed one cycle starting at or after opt.Start, all from r (not nil).
// opt.Start must be finite, >= 0 and small enough that at most
// MaxPlayedCycles reports are played.
func Play(s scenario.Scenario, opt Options, r *rand.Rand) (Outcome, error) {
	if !(opt.Start >= 0) || math.IsInf(opt.Start, 0) {
		return Outcome{}, fmt.Errorf("%w: Options.Start = %g: must be finite and >= 0 s", ErrParam, opt.Start)
	}
	if r == nil {
		return Outcome{}, fmt.Errorf("%w: r = nil: a random source is required", ErrParam)
	}
	if n := playedCycles(s, opt.Start); !(n <= MaxPlayedCycles) {
		return Outcome{}, fmt.Errorf("%w: Options.Start = %g s: the play would simulate about %.3g reports, more than MaxPlayedCycles = %d", ErrParam, opt.Start, n, MaxPlayedCycles)
	}
	p, err := newPhysics(s)
	if err != nil {
		return Outcome{}, err
	}
	nodes, redraws, err := p.place(s, r)
	if err != nil {
		return Outcome{}, err
	}
	pl := &play{s: s, p: p, r: r, nodes: nodes, start: opt.Start}
	pl.run()
	out := Outcome{Nodes: nodes, Energy: pl.energy, Redraws: redraws}
	for gi := range s.Groups {
		for _, dr := range p.adrDRs {
			c := pl.counts[countKey{gi, dr}]
			if c.Sent > 0 {
				out.Frames = append(out.Frames, FrameCount{Group: gi, DR: dr, Sent: c.Sent, Collided: c.Collided})
			}
		}
	}
	return out, nil
}

// playedCycles returns about how many reports a play up to start
// simulates (see run's horizon): Σ_g nodes_g·horizon/(interval_g − jitter_g),
// +Inf when a period can be 0 or less.
func playedCycles(s scenario.Scenario, start float64) float64 {
	longest := 0.0
	for _, g := range s.Groups {
		longest = math.Max(longest, g.Interval+g.Jitter)
	}
	horizon := start + longest + 90
	n := 0.0
	for _, g := range s.Groups {
		shortest := g.Interval - g.Jitter
		if !(shortest > 0) {
			return math.Inf(1)
		}
		n += float64(g.Nodes) * (horizon/shortest + 1)
	}
	return n
}

// The play is a discrete-event simulation over frame starts, frame ends and
// cycle starts, in time order.

type eventKind int

const (
	wake eventKind = iota
	frameStart
	frameEnd
)

type event struct {
	t    float64
	seq  int // tie-break: order of scheduling
	kind eventKind
	node int
	f    *frame
	c    *cycle
}

type events []event

func (h events) Len() int { return len(h) }
func (h events) Less(i, j int) bool {
	if h[i].t != h[j].t {
		return h[i].t < h[j].t
	}
	return h[i].seq < h[j].seq
}
func (h events) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *events) Push(x any)   { *h = append(*h, x.(event)) }
func (h *events) Pop() any {
	old := *h
	e := old[len(old)-1]
	*h = old[:len(old)-1]
	return e
}

// cycle accumulates one report's charge.
type cycle struct {
	start, period float64
	charge        float64 // Σ I·t over the states run, C
	active        float64 // Σ t, s
	attempt       int
	record        bool
}

type frame struct {
	node       int
	start, end float64
	channel    int
	collided   bool
	counted    bool
	c          *cycle
}

type domain struct{ gw, dr, ch int }

type countKey struct{ group, dr int }

type play struct {
	s       scenario.Scenario
	p       *physics
	r       *rand.Rand
	nodes   []Node
	start   float64
	horizon float64 // no cycle starts after it
	countTo float64 // frames starting before it are counted

	q        events
	seq      int
	air      map[domain][]*frame
	energy   []float64
	recorded []bool
	counts   map[countKey]FrameCount
}

func (pl *play) push(e event) {
	e.seq = pl.seq
	pl.seq++
	heap.Push(&pl.q, e)
}

func (pl *play) run() {
	s := pl.s
	longest := 0.0
	for _, g := range s.Groups {
		longest = math.Max(longest, g.Interval+g.Jitter)
	}
	// Every node's recorded cycle starts by start + longest; its attempts end
	// well within the next 90 s, and cycles are played up to the horizon so
	// that every frame of a recorded cycle meets all the traffic it could.
	pl.horizon = pl.start + longest + 90
	pl.countTo = pl.horizon - 45
	pl.air = map[domain][]*frame{}
	pl.energy = make([]float64, len(pl.nodes))
	pl.recorded = make([]bool, len(pl.nodes))
	pl.counts = map[countKey]FrameCount{}
	for i, n := range pl.nodes {
		g := s.Groups[n.Group]
		pl.push(event{t: pl.r.Float64() * g.Interval, kind: wake, node: i})
	}
	for pl.q.Len() > 0 {
		e := heap.Pop(&pl.q).(event)
		switch e.kind {
		case wake:
			pl.wake(e.node, e.t)
		case frameStart:
			pl.frameStart(e.f)
		case frameEnd:
			pl.frameEnd(e.f)
		}
	}
}

func (pl *play) uniform(mid, half float64) float64 {
	if half == 0 {
		return mid
	}
	return mid - half + 2*half*pl.r.Float64()
}

// wake begins a report: period, work steps, first transmission.
func (pl *play) wake(i int, t float64) {
	n := pl.nodes[i]
	g := pl.s.Groups[n.Group]
	c := &cycle{start: t, period: pl.uniform(g.Interval, g.Jitter)}
	if t >= pl.start && !pl.recorded[i] {
		c.record = true
		pl.recorded[i] = true
	}
	if next := t + c.period; next <= pl.horizon {
		pl.push(event{t: next, kind: wake, node: i})
	}
	busy := 0.0
	for _, w := range g.Work {
		d := pl.uniform(w.Duration, w.Spread)
		c.charge += w.Current * d
		busy += d
	}
	c.active += busy
	pl.transmit(i, c, t+busy)
}

// transmit starts an attempt of cycle c at time t.
func (pl *play) transmit(i int, c *cycle, t float64) {
	n := pl.nodes[i]
	c.attempt++
	a := pl.p.uplink[n.Group][n.DR]
	f := &frame{node: i, start: t, end: t + a, channel: pl.r.IntN(pl.p.channels), c: c}
	cur, _ := pl.s.NodeOf(pl.s.Groups[n.Group]).TransmitCurrent(n.EIRP)
	c.charge += cur * a
	c.active += a
	pl.push(event{t: t, kind: frameStart, f: f})
}

func (pl *play) frameStart(f *frame) {
	n := pl.nodes[f.node]
	key := domain{gw: pl.s.Groups[n.Group].Gateway, dr: n.DR, ch: f.channel}
	on := pl.air[key][:0]
	for _, o := range pl.air[key] { // keep only frames still on air
		if o.end > f.start {
			on = append(on, o)
		}
	}
	for _, o := range on {
		o.collided = true
		f.collided = true
	}
	pl.air[key] = append(on, f)
	if f.start >= pl.start && f.start < pl.countTo {
		f.counted = true
	}
	pl.push(event{t: f.end, kind: frameEnd, f: f})
}

// frameEnd decides the receive windows of the attempt and what follows.
func (pl *play) frameEnd(f *frame) {
	n := pl.nodes[f.node]
	g := pl.s.Groups[n.Group]
	p := pl.p
	if f.counted {
		k := countKey{n.Group, n.DR}
		c := pl.counts[k]
		c.Sent++
		if f.collided {
			c.Collided++
		}
		pl.counts[k] = c
	}
	c := f.c
	node := pl.s.NodeOf(pl.s.Groups[pl.nodes[f.node].Group])
	// Which window, if any, brings an answer.
	inRX1, inRX2 := false, false
	if !f.collided && pl.r.Float64() < g.AnswerShare {
		first := pl.r.Float64() < g.RX1Share
		if pl.r.Float64() >= g.DownlinkLoss {
			inRX1, inRX2 = first, !first
		}
	}
	margin := node.WindowMargin
	wait1 := p.d1 - margin
	c.charge += node.Wait * wait1
	c.active += wait1
	r1 := p.rx1DR[n.Group][n.DR]
	if inRX1 {
		d := p.receive[n.Group][r1]
		c.charge += node.Receive * d
		c.active += d
		pl.finish(f.node, c)
		return
	}
	l1 := p.listen[n.Group][r1]
	c.charge += node.Receive * l1
	c.active += l1
	wait2 := (p.d2 - margin) - (wait1 + l1)
	c.charge += node.Wait * wait2
	c.active += wait2
	var d2 float64
	if inRX2 {
		d2 = p.receive[n.Group][p.rx2DR]
	} else {
		d2 = p.listen[n.Group][p.rx2DR]
	}
	c.charge += node.Receive * d2
	c.active += d2
	if inRX2 || c.attempt >= g.MaxTransmissions {
		pl.finish(f.node, c)
		return
	}
	gap := p.ackLo + (p.ackHi-p.ackLo)*pl.r.Float64()
	c.charge += node.Wait * gap
	c.active += gap
	pl.transmit(f.node, c, f.end+p.d2-margin+d2+gap)
}

// finish closes a report: the sleep current fills the rest of the period.
func (pl *play) finish(i int, c *cycle) {
	if !c.record {
		return
	}
	node := pl.s.NodeOf(pl.s.Groups[pl.nodes[i].Group])
	sleep := node.Sleep * (c.period - c.active)
	pl.energy[i] = node.Voltage * (c.charge + sleep)
}
