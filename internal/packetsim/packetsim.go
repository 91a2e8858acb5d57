package packetsim

import (
	"container/heap"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// ErrParam is wrapped by errors about bad arguments to this package.
var ErrParam = errors.New("packetsim: invalid parameter")

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
	// Unheard marks a node out of reach: it sends at the ADR back-off
	// (slowest data rate, TXPower 0), every uplink is lost and it hears no
	// downlink.
	Unheard bool
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

// FrameCount counts the uplink transmissions of one group's nodes in reach
// at one data rate that started in the counting window, and how many of them
// collided.
type FrameCount struct {
	Group, DR int
	Sent      int
	Collided  int
}

// AnswerCount counts the answers the network booked with a gateway for one
// group's uplinks at one data rate in one window (1 or 2), for uplinks that
// ended in the counting window, how many the gateway could send in that
// window, and (window 1) how many it refused there and sent in RX2 instead.
type AnswerCount struct {
	Group, DR, Window int
	Booked, Sent      int
	Fallback          int
}

// Outcome is the result of one play of a scenario.
type Outcome struct {
	Nodes []Node
	// Energy[i] is the energy (J) of node i's recorded cycle.
	Energy []float64
	// Unheard[g] is the number of group g's nodes placed out of reach.
	Unheard []int
	// Frames counts the transmissions that started between Start and 45 s
	// before the last cycle was begun (so every frame that could overlap
	// them was played), per group and data rate, in order of group then DR.
	Frames []FrameCount
	// Answers counts the answers booked for uplinks that ended in the same
	// window, per group, data rate and receive window, in that order.
	Answers []AnswerCount
}

// physics holds what the play needs from package lora, computed once.
type physics struct {
	d1, d2   float64 // RECEIVE_DELAY1/2, s
	ja1, ja2 float64 // JOIN_ACCEPT_DELAY1/2, s
	ackLo    float64 // ACK_TIMEOUT range, s
	ackHi    float64
	adrDRs   []int
	powers   []float64 // EIRP per TXPower index, dBm
	floor    map[int]float64
	// channels[gw][dr] lists the uplink channels the gateway hears that
	// carry dr; rx1Band[ch] is the downlink band of RX1 after channel ch.
	channels []map[int][]int
	rx1Band  []band
	// per group, per data rate
	uplink  []map[int]float64 // airtime, s
	duty    []map[int]float64 // duty cycle binding the uplinks (1: none)
	rx1DR   []map[int]int
	listen  []map[int]float64 // empty-window time per window DR, s
	receive []map[int]float64 // window time with a downlink, per window DR, s
	dlAir   []map[int]float64 // a downlink's airtime per window DR, s
	join    []map[int]float64 // a Join-request's airtime, s
	// per group
	rx2DR     []int
	rx2Band   []band
	joinRX1   []map[int]int // join-accept RX1 data rate (RX1DROffset 0)
	defaultR2 int           // the region's RX2 data rate (join-accept RX2)
}

// band is a downlink sub-band: a key and its duty cycle.
type band struct {
	key  int
	duty float64
}

func newPhysics(s scenario.Scenario) (*physics, error) {
	reg := s.Region
	tm := reg.Timing()
	p := &physics{
		d1: tm.ReceiveDelay1, d2: tm.ReceiveDelay2,
		ja1: tm.JoinAcceptDelay1, ja2: tm.JoinAcceptDelay2,
		ackLo: tm.AckTimeoutMin, ackHi: tm.AckTimeoutMax,
		adrDRs: reg.ADRDataRates(),
		powers: reg.TXPowers(),
		floor:  map[int]float64{},
	}
	_, p.defaultR2 = reg.RX2()
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
	for ch := range reg.UplinkChannels() {
		f, err := reg.RX1Frequency(ch)
		if err != nil {
			return nil, err
		}
		k, d, err := reg.DownlinkBand(f)
		if err != nil {
			return nil, err
		}
		p.rx1Band = append(p.rx1Band, band{k, d})
	}
	for _, gw := range s.Gateways {
		m := map[int][]int{}
		mask := gatewayMask(gw)
		if mask.Len() == 0 {
			mask = reg.AllChannels()
		}
		for i, c := range reg.UplinkChannels() {
			for _, dr := range p.adrDRs {
				if mask.Has(i) && dr >= c.MinDR && dr <= c.MaxDR {
					m[dr] = append(m[dr], i)
				}
			}
		}
		p.channels = append(p.channels, m)
	}
	for _, g := range s.Groups {
		up := map[int]float64{}
		duty := map[int]float64{}
		r1 := map[int]int{}
		jr1 := map[int]int{}
		li := map[int]float64{}
		re := map[int]float64{}
		dl := map[int]float64{}
		join := map[int]float64{}
		dlBytes := lora.EmptyFrameBytes
		if g.DownlinkPayload > 0 {
			dlBytes = lora.MACOverhead + g.DownlinkPayload
		}
		node := s.NodeOf(g)
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
			li[dr] = node.WindowMargin + float64(node.WindowSymbols)*sym
			re[dr] = node.WindowMargin + air
			dl[dr] = air
			return nil
		}
		mask := gatewayMask(s.Gateways[g.Gateway])
		for _, dr := range p.adrDRs {
			a, err := reg.UplinkAirtime(dr, g.Payload, 0)
			if err != nil {
				return nil, err
			}
			up[dr] = a
			if duty[dr], err = reg.UplinkDutyCycle(mask, dr); err != nil {
				return nil, err
			}
			x, err := reg.RX1DataRate(dr, groupRX1Offset(g))
			if err != nil {
				return nil, err
			}
			r1[dr] = x
			if err := window(x); err != nil {
				return nil, err
			}
			if jr1[dr], err = reg.RX1DataRate(dr, 0); err != nil {
				return nil, err
			}
			if err := window(jr1[dr]); err != nil {
				return nil, err
			}
			d, err := reg.DataRate(dr)
			if err != nil {
				return nil, err
			}
			if join[dr], err = d.UplinkPHY().Airtime(lora.JoinRequestBytes); err != nil {
				return nil, err
			}
		}
		r2f, r2 := groupRX2(s, g)
		if err := window(r2); err != nil {
			return nil, err
		}
		if err := window(p.defaultR2); err != nil {
			return nil, err
		}
		k, d, err := reg.DownlinkBand(r2f)
		if err != nil {
			return nil, err
		}
		p.uplink = append(p.uplink, up)
		p.duty = append(p.duty, duty)
		p.rx1DR = append(p.rx1DR, r1)
		p.joinRX1 = append(p.joinRX1, jr1)
		p.listen = append(p.listen, li)
		p.receive = append(p.receive, re)
		p.dlAir = append(p.dlAir, dl)
		p.join = append(p.join, join)
		p.rx2DR = append(p.rx2DR, r2)
		p.rx2Band = append(p.rx2Band, band{k, d})
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

// Place draws the position, shadowing and ADR setting of every node of s.
// A node out of reach is kept at the ADR back-off (Node.Unheard), as the
// site model plans it; Place also returns the unheard count per group. Every
// node takes a bounded number of draws, so a group wholly out of reach is
// placed like any other (it used to be drawn again without end).
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
	unheard := make([]int, len(s.Groups))
	slow := slices.Min(p.adrDRs)
	for gi, g := range s.Groups {
		gw := s.Gateways[g.Gateway]
		a2, b2 := g.InnerRadius*g.InnerRadius, g.OuterRadius*g.OuterRadius
		for range g.Nodes {
			rad := math.Sqrt(a2 + r.Float64()*(b2-a2))
			ang := 2 * math.Pi * r.Float64()
			x := gw.X + rad*math.Cos(ang)
			y := gw.Y + rad*math.Sin(ang)
			d := math.Hypot(x-gw.X, y-gw.Y)
			sh := env.ShadowingSD * r.NormFloat64()
			loss := env.ReferenceLoss + 10*env.LossExponent*math.Log10(d/env.ReferenceDistance) + sh
			dr, txp, ok := p.adr(env, loss)
			n := Node{Group: gi, X: x, Y: y, Distance: d, Shadowing: sh, PathLoss: loss, DR: dr, TXPower: txp, EIRP: p.powers[txp]}
			if !ok {
				unheard[gi]++
				n.DR, n.TXPower, n.EIRP, n.Unheard = slow, 0, p.powers[0], true
			}
			nodes = append(nodes, n)
		}
	}
	return nodes, unheard, nil
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
	nodes, unheard, err := p.place(s, r)
	if err != nil {
		return Outcome{}, err
	}
	pl := &play{s: s, p: p, r: r, nodes: nodes, start: opt.Start}
	pl.run()
	out := Outcome{Nodes: nodes, Energy: pl.energy, Unheard: unheard}
	for gi := range s.Groups {
		for _, dr := range p.adrDRs {
			c := pl.counts[countKey{gi, dr}]
			if c.Sent > 0 {
				out.Frames = append(out.Frames, FrameCount{Group: gi, DR: dr, Sent: c.Sent, Collided: c.Collided})
			}
			for w := 1; w <= 2; w++ {
				if a := pl.answers[answerKey{gi, dr, w}]; a.Booked > 0 {
					out.Answers = append(out.Answers, AnswerCount{Group: gi, DR: dr, Window: w, Booked: a.Booked, Sent: a.Sent, Fallback: a.Fallback})
				}
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
		longest = max(longest, g.Interval+g.Jitter)
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

type answerKey struct{ group, dr, window int }

// booked is an answer a gateway has taken on: on the transmitter from start
// to end, and closing its band until closed (the off-time rule).
type booked struct {
	start, end, closed float64
	band               int
}

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
	sent     [][]booked // per gateway, answers taken on and not yet over
	energy   []float64
	recorded []bool
	counts   map[countKey]FrameCount
	answers  map[answerKey]AnswerCount
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
		longest = max(longest, g.Interval+g.Jitter)
	}
	// Every node's recorded cycle starts by start + longest; its attempts end
	// well within the next 90 s, and cycles are played up to the horizon so
	// that every frame of a recorded cycle meets all the traffic it could.
	pl.horizon = pl.start + longest + 90
	pl.countTo = pl.horizon - 45
	pl.air = map[domain][]*frame{}
	pl.sent = make([][]booked, len(s.Gateways))
	pl.energy = make([]float64, len(pl.nodes))
	pl.recorded = make([]bool, len(pl.nodes))
	pl.counts = map[countKey]FrameCount{}
	pl.answers = map[answerKey]AnswerCount{}
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

// transmit starts an attempt of cycle c at time t, on a channel drawn from
// those of the node's gateway that carry its data rate.
func (pl *play) transmit(i int, c *cycle, t float64) {
	n := pl.nodes[i]
	g := pl.s.Groups[n.Group]
	c.attempt++
	a := pl.p.uplink[n.Group][n.DR]
	chans := pl.p.channels[g.Gateway][n.DR]
	f := &frame{node: i, start: t, end: t + a, channel: chans[pl.r.IntN(len(chans))], c: c}
	cur, _ := pl.s.NodeOf(g).TransmitCurrent(n.EIRP)
	c.charge += cur * a
	c.active += a
	pl.push(event{t: t, kind: frameStart, f: f})
}

// frameStart puts a frame of a node in reach on the air of its gateway, data
// rate and channel; an unheard node's frames arrive below the margin and
// are left out of the collision domains, as the site model does.
func (pl *play) frameStart(f *frame) {
	n := pl.nodes[f.node]
	if !n.Unheard {
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
	}
	pl.push(event{t: f.end, kind: frameEnd, f: f})
}

// book asks the node's gateway to send an answer in the given window after
// uplink f: it is taken on unless it would overlap, on the transmitter or on
// its band's closed time, an answer taken on before.
func (pl *play) book(f *frame, window int) bool {
	n := pl.nodes[f.node]
	p := pl.p
	gw := pl.s.Groups[n.Group].Gateway
	var x booked
	if window == 1 {
		b := p.rx1Band[f.channel]
		a := p.dlAir[n.Group][p.rx1DR[n.Group][n.DR]]
		x = booked{start: f.end + p.d1, end: f.end + p.d1 + a, closed: f.end + p.d1 + a/b.duty, band: b.key}
	} else {
		b := p.rx2Band[n.Group]
		a := p.dlAir[n.Group][p.rx2DR[n.Group]]
		x = booked{start: f.end + p.d2, end: f.end + p.d2 + a, closed: f.end + p.d2 + a/b.duty, band: b.key}
	}
	keep := pl.sent[gw][:0]
	free := true
	for _, y := range pl.sent[gw] {
		if max(y.end, y.closed) <= f.end { // over: can meet no later answer
			continue
		}
		keep = append(keep, y)
		if x.start < y.end && y.start < x.end || x.band == y.band && x.start < y.closed && y.start < x.closed {
			free = false
		}
	}
	if free {
		keep = append(keep, x)
	}
	pl.sent[gw] = keep
	return free
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
	node := pl.s.NodeOf(g)
	// Which window, if any, brings an answer: the network answers a
	// received uplink, picks its window, the gateway takes it on or not,
	// and the answer is received or lost.
	inRX1, inRX2 := false, false
	if !n.Unheard && !f.collided && pl.r.Float64() < g.AnswerShare {
		window := 2
		if pl.r.Float64() < g.RX1Share {
			window = 1
		}
		ok := pl.book(f, window)
		fell := false
		if !ok && window == 1 {
			// The network server falls back to RX2 at once.
			fell = pl.book(f, 2)
		}
		if f.counted {
			k := answerKey{n.Group, n.DR, window}
			a := pl.answers[k]
			a.Booked++
			if ok {
				a.Sent++
			}
			if fell {
				a.Fallback++
			}
			pl.answers[k] = a
		}
		if (ok || fell) && pl.r.Float64() >= g.DownlinkLoss {
			inRX1, inRX2 = ok && window == 1, fell || ok && window == 2
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
	r2 := p.rx2DR[n.Group]
	var d2 float64
	if inRX2 {
		d2 = p.receive[n.Group][r2]
	} else {
		d2 = p.listen[n.Group][r2]
	}
	c.charge += node.Receive * d2
	c.active += d2
	if inRX2 || c.attempt >= g.MaxTransmissions {
		pl.rejoin(f.node, c)
		pl.finish(f.node, c)
		return
	}
	// The next attempt: ACK_TIMEOUT after RX2 for a confirmed frame, at
	// once for a repetition, and never before the off-time rule allows
	// (start + airtime/d).
	closeRX2 := f.end + p.d2 - margin + d2
	next := closeRX2
	if g.Confirmed {
		next += p.ackLo + (p.ackHi-p.ackLo)*pl.r.Float64()
	}
	next = max(next, f.start+(f.end-f.start)/p.duty[n.Group][n.DR])
	gap := next - closeRX2
	c.charge += node.Wait * gap
	c.active += gap
	pl.transmit(f.node, c, next)
}

// rejoin adds, for an unheard node of a group that asks for it, a
// Join-request in one report of JoinEvery (drawn per report) with both
// join-accept windows empty.
func (pl *play) rejoin(i int, c *cycle) {
	n := pl.nodes[i]
	g := pl.s.Groups[n.Group]
	k := groupJoinEvery(g)
	if !n.Unheard || k == 0 || pl.r.Float64()*float64(k) >= 1 {
		return
	}
	p := pl.p
	node := pl.s.NodeOf(g)
	a := p.join[n.Group][n.DR]
	cur, _ := node.TransmitCurrent(n.EIRP)
	l1 := p.listen[n.Group][p.joinRX1[n.Group][n.DR]]
	l2 := p.listen[n.Group][p.defaultR2]
	w1 := p.ja1 - node.WindowMargin
	w2 := (p.ja2 - p.ja1) - l1
	c.charge += cur*a + node.Receive*(l1+l2) + node.Wait*(w1+w2)
	c.active += a + l1 + l2 + w1 + w2
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

// The scenario's network settings, in one place.

// gatewayMask returns the uplink channels gw hears (zero: all).
func gatewayMask(gw scenario.Gateway) lora.ChannelMask { return gw.Channels }

// groupRX1Offset returns the group's RX1DROffset.
func groupRX1Offset(g scenario.Group) int { return g.RX1DROffset }

// groupRX2 returns the group's RX2 frequency (Hz) and data rate.
func groupRX2(s scenario.Scenario, g scenario.Group) (float64, int) {
	if g.RX2 != (lora.RX2Window{}) {
		return g.RX2.Frequency, g.RX2.DR
	}
	return s.Region.RX2()
}

// groupJoinEvery returns the reports per Join-request of the group's
// unheard nodes (0: none).
func groupJoinEvery(g scenario.Group) int { return g.RejoinEvery }
