package scenario

import (
	"fmt"
	"math"
	"slices"
	"strconv"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// GatewayModel is what one gateway can send of the answers the network
// books with it: lora.GatewayDownlinks over its streams, one per group,
// data rate, receive window and downlink sub-band (RX1 answers follow
// their uplink's channel, so they spread over the RX1 bands of the
// channels that carry the data rate; RX2 answers use the RX2 frequency).
// An answer refused in RX1 (the gateway busy, or its sub-band closed by the
// duty cycle) is sent in RX2 instead when RX2 can take it (the network
// server's fallback: each RX1 stream's Fallback is its group and data
// rate's RX2 stream); an answer the gateway cannot send in either is lost,
// and the loss feeds the
// acknowledgement and retransmission laws: Build solves the whole by
// successive substitution — transmissions per report → uplink loads and
// successes → answers booked → shares sent (GatewayDownlinks, its own fixed
// point) → window probabilities → transmissions per report — until the
// transmissions and the shares change by less than 1e-13 between rounds.
// The rounds move monotonically (more transmissions book more answers, fewer
// are sent, more transmissions follow; the transmissions are bounded by
// NbTrans), so they settle; what remains is each gateway's Budget.Error,
// the stated error of the shares sent (an estimate; the packet-level tests
// compare the shares and the energies with a sampler at several loads).
// Duty-cycle limits are for planning, not certification: check the local
// rules for gateways and defer to the regulator.
type GatewayModel struct {
	Gateway Gateway
	Streams []lora.DownlinkStream
	// Window[i] is the receive window (1 or 2) Streams[i] answers in.
	Window []int
	Budget lora.DownlinkBudget
}

// BandBudget is one row of a gateway's downlink budget: the airtime its
// answers take in one sub-band, against the sub-band's duty-cycle limit,
// split by receive window. Shares are of time (airtime per second).
type BandBudget struct {
	Gateway int // index into Scenario.Gateways
	// Band names the sub-band ("868.0–868.60 MHz (1 %)"), or is
	// "transmitter" where the region has no duty-cycle sub-bands (the one
	// transmitter alone limits, DutyCycle 1).
	Band      string
	DutyCycle float64 // the limit, in (0, 1]
	// OfferedRX1 and OfferedRX2 are the airtime shares the answers booked
	// in RX1 and in RX2 would need (RX2's counts the answers refused in RX1
	// and booked in RX2 instead).
	OfferedRX1, OfferedRX2 float64
	// UsedRX1 and UsedRX2 are the airtime shares of the answers sent in
	// each window as booked; UsedFallback that of the answers refused in
	// RX1 and sent in RX2. Their sum is at most DutyCycle (the off-time
	// rule).
	UsedRX1, UsedRX2, UsedFallback float64
	// Lost is the share of the answers booked in this sub-band (as first
	// choice) that are sent nowhere.
	Lost float64
}

// Offered returns the airtime share all the booked answers would need.
func (b BandBudget) Offered() float64 { return b.OfferedRX1 + b.OfferedRX2 }

// Used returns the airtime share of all the answers sent.
func (b BandBudget) Used() float64 { return b.UsedRX1 + b.UsedRX2 + b.UsedFallback }

// Over reports whether the booked answers need more than the limit.
func (b BandBudget) Over() bool { return b.Offered() > b.DutyCycle }

// GatewayBudgets returns every gateway's downlink budget as a table: one
// row per gateway and sub-band its answers use, gateway by gateway, bands
// in the region's order (GatewayModel, lora.GatewayDownlinks). Duty-cycle
// limits are for planning, not certification: check the local rules for
// gateways and defer to the regulator.
func (m Model) GatewayBudgets() []BandBudget {
	var out []BandBudget
	sbs := m.Scenario.Region.SubBands()
	for gi, g := range m.Gateways {
		b := g.Budget
		rows := map[int]*BandBudget{}
		booked, lost := map[int]float64{}, map[int]float64{}
		for i, st := range g.Streams {
			r, ok := rows[st.Band]
			if !ok {
				r = &BandBudget{Gateway: gi, Band: "transmitter", DutyCycle: st.DutyCycle}
				if st.Band >= 0 && st.Band < len(sbs) {
					r.Band = sbs[st.Band].String()
				}
				rows[st.Band] = r
			}
			own := st.Rate * b.Sent[i] * st.Airtime
			if g.Window[i] == 1 {
				r.OfferedRX1 += st.Rate * st.Airtime
				r.UsedRX1 += own
			} else {
				r.OfferedRX2 += b.Booked[i] * st.Airtime
				r.UsedRX2 += own
			}
			booked[st.Band] += st.Rate
			lost[st.Band] += st.Rate * (1 - b.Sent[i] - b.FallbackSent[i])
			if st.Fallback != 0 {
				t := g.Streams[st.Fallback-1]
				if rows[t.Band] == nil {
					rows[t.Band] = &BandBudget{Gateway: gi, Band: "transmitter", DutyCycle: t.DutyCycle}
					if t.Band >= 0 && t.Band < len(sbs) {
						rows[t.Band].Band = sbs[t.Band].String()
					}
				}
				rows[t.Band].UsedFallback += st.Rate * b.FallbackSent[i] * t.Airtime
			}
		}
		keys := make([]int, 0, len(rows))
		for k := range rows {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		for _, k := range keys {
			r := rows[k]
			if booked[k] > 0 {
				r.Lost = max(0, lost[k]/booked[k])
			}
			out = append(out, *r)
		}
	}
	return out
}

// Over reports whether the answers booked need more airtime than some
// sub-band's duty cycle allows (answers are then lost).
func (g GatewayModel) Over() bool {
	for _, b := range g.Budget.Bands {
		if b.Over() {
			return true
		}
	}
	return false
}

// streamRef ties a stream to the (group, data rate, window) it serves.
type streamRef struct{ group, dr, window int }

// budgetLayout is what the rounds of one collision solve share of the
// gateways' downlink streams: everything but their rates (the groups, data
// rates, airtimes, bands and channels do not move between rounds; the
// rates move with the frames and uplink successes). The first round
// builds it; a round then rewrites the rates alone.
type budgetLayout struct {
	built bool
	gws   []gatewayLayout // per gateway (empty for one not solved)
	// accOf indexes each (group, data rate, window) served in acc, the
	// shares' sums of a round.
	accOf map[streamRef]int
	acc   []budgetAcc
}

// gatewayLayout is one gateway's streams: their layout, the streams
// themselves (rates rewritten each round), the window each answers in,
// its (group, data rate, window) in budgetLayout.acc, and its rate's part
// of the answers of its group and data rate.
type gatewayLayout struct {
	lay     lora.DownlinkLayout
	streams []lora.DownlinkStream
	window  []int
	acc     []int
	rate    []rateShare
}

// rateShare is a stream's rate: the answers of group g's k-th data rate
// times the group's RX1 share and band (RX1), or times its RX2 share.
type rateShare struct {
	g, k int
	rx1  bool
	band float64 // RX1: the share of the data rate's channels whose RX1 lies in the stream's band
}

// budgetAcc sums a (group, data rate, window)'s streams: their rates,
// and their rates times the shares sent and sent in the fallback.
type budgetAcc struct{ rate, sent, fell float64 }

// answersOf is the rate (per s) of the answers booked for group g's
// nodes at data rate dm.
func answersOf(g *GroupModel, dm DRModel) float64 {
	gr := g.Group
	return float64(gr.Nodes) * g.Heard() * dm.Share * dm.Frames / gr.Interval * dm.UplinkSuccess * gr.AnswerShare
}

// gatewayBudgets recomputes every gateway's downlink budget (only gateway
// only's when only >= 0) from the current frames and uplink successes,
// stores the shares sent in the groups' DRModel, and returns the largest
// change of a share. lay is the solve's layout (built by the first call).
func (m *Model) gatewayBudgets(only int, lay *budgetLayout) (float64, error) {
	s := m.Scenario
	last := m.Gateways // the last round's budgets start this round's
	m.Gateways = make([]GatewayModel, len(s.Gateways))
	for gw := range s.Gateways {
		m.Gateways[gw].Gateway = s.Gateways[gw]
	}
	if !lay.built {
		if err := m.buildBudgetLayout(only, lay); err != nil {
			return 0, err
		}
	}
	// The rates of the answers booked, from this round's frames and
	// successes.
	for gw := range lay.gws {
		gl := &lay.gws[gw]
		for i, r := range gl.rate {
			g := &m.Groups[r.g]
			answers := answersOf(g, g.PerDR[r.k])
			if r.rx1 {
				gl.streams[i].Rate = answers * g.Group.RX1Share * r.band
			} else {
				gl.streams[i].Rate = answers * (1 - g.Group.RX1Share)
			}
		}
		m.Gateways[gw].Streams, m.Gateways[gw].Window = gl.streams, gl.window
	}
	// The share sent of a (group, data rate, window): its streams' shares
	// weighted by their rates (all 1 where nothing is booked).
	clear(lay.acc)
	for gw := range m.Gateways {
		if only >= 0 && gw != only {
			continue
		}
		var prev lora.DownlinkBudget
		if gw < len(last) {
			prev = last[gw].Budget
		}
		gl := &lay.gws[gw]
		b, err := gl.lay.BudgetFrom(gl.streams, prev)
		if err != nil {
			return 0, fmt.Errorf("gateway %q: %w", s.Gateways[gw].Name, err)
		}
		m.Gateways[gw].Budget = b
		for i, ai := range gl.acc {
			a := &lay.acc[ai]
			r := gl.streams[i].Rate
			a.rate += r
			a.sent += r * b.Sent[i]
			a.fell += r * b.FallbackSent[i]
		}
	}
	sums := func(gi, dr, w int) (budgetAcc, bool) {
		i, ok := lay.accOf[streamRef{gi, dr, w}]
		if !ok {
			return budgetAcc{}, false
		}
		return lay.acc[i], true
	}
	change := 0.0
	m.eachDR(only, func(gi int, _ *GroupModel, dm *DRModel) {
		for _, x := range [...]struct {
			w int
			p *float64
		}{{1, &dm.RX1Sent}, {2, &dm.RX2Sent}} {
			v := 1.0
			if a, ok := sums(gi, dm.DR, x.w); ok && a.rate > 0 {
				v = a.sent / a.rate
			}
			change = max(change, math.Abs(v-*x.p))
			*x.p = v
		}
		v := 0.0
		if a, ok := sums(gi, dm.DR, 1); ok && a.rate > 0 {
			v = a.fell / a.rate
		}
		change = max(change, math.Abs(v-dm.RX1Fallback))
		dm.RX1Fallback = v
	})
	return change, nil
}

// buildBudgetLayout builds lay from m's groups: per gateway (only gateway
// only's when only >= 0), per group and data rate, the RX1 streams (one
// per downlink band of the RX1 frequencies of the channels carrying the
// data rate, in the order first met) and then the RX2 stream they fall
// back to.
func (m *Model) buildBudgetLayout(only int, lay *budgetLayout) error {
	s := m.Scenario
	reg := s.Region
	tm := reg.Timing()
	lay.gws = make([]gatewayLayout, len(s.Gateways))
	lay.accOf = map[streamRef]int{}
	ref := func(gl *gatewayLayout, r streamRef) {
		i, ok := lay.accOf[r]
		if !ok {
			i = len(lay.acc)
			lay.accOf[r] = i
			lay.acc = append(lay.acc, budgetAcc{})
		}
		gl.acc = append(gl.acc, i)
	}
	for gi := range m.Groups {
		g := &m.Groups[gi]
		gr := g.Group
		gw := gr.Gateway
		if only >= 0 && gw != only {
			continue
		}
		gl := &lay.gws[gw]
		dlBytes := lora.EmptyFrameBytes
		if gr.DownlinkPayload > 0 {
			n, err := lora.PHYPayloadBytes(gr.DownlinkPayload, 0)
			if err != nil {
				return err
			}
			dlBytes = n
		}
		airtime := func(dr int) (float64, error) {
			d, err := reg.DownlinkDataRate(dr)
			if err != nil {
				return 0, err
			}
			return d.DownlinkPHY().Airtime(dlBytes)
		}
		rx2f, rx2dr := reg.RX2()
		if gr.RX2 != (lora.RX2Window{}) {
			rx2f, rx2dr = gr.RX2.Frequency, gr.RX2.DR
		}
		a2, err := airtime(rx2dr)
		if err != nil {
			return fmt.Errorf("group %q: RX2: %w", gr.Name, err)
		}
		b2, d2, err := reg.DownlinkBand(rx2f)
		if err != nil {
			return fmt.Errorf("group %q: RX2: %w", gr.Name, err)
		}
		for k, dm := range g.PerDR {
			rx1dr, err := reg.RX1DataRate(dm.DR, gr.RX1DROffset)
			if err != nil {
				return fmt.Errorf("group %q: %w", gr.Name, err)
			}
			a1, err := airtime(rx1dr)
			if err != nil {
				return fmt.Errorf("group %q: RX1: %w", gr.Name, err)
			}
			// RX1 answers spread over the channels carrying dr, grouped by band.
			chans := uplinkChannels(reg, s.Gateways[gw].Channels, dm.DR)
			perBand := map[int]float64{}
			duty := map[int]float64{}
			var order []int
			for _, ch := range chans {
				f, err := reg.RX1Frequency(ch)
				if err != nil {
					return err
				}
				b, d, err := reg.DownlinkBand(f)
				if err != nil {
					return fmt.Errorf("group %q: RX1 after channel %d: %w", gr.Name, ch, err)
				}
				if _, ok := perBand[b]; !ok {
					order = append(order, b)
				}
				perBand[b] += 1 / float64(len(chans))
				duty[b] = d
			}
			// An answer refused in RX1 falls back to this (group, data
			// rate)'s RX2 stream, appended after them.
			rx2 := len(gl.streams) + len(order)
			for _, b := range order {
				gl.streams = append(gl.streams, lora.DownlinkStream{Airtime: a1, Lead: tm.ReceiveDelay1, Band: b, DutyCycle: duty[b], Fallback: rx2 + 1})
				gl.window = append(gl.window, 1)
				gl.rate = append(gl.rate, rateShare{g: gi, k: k, rx1: true, band: perBand[b]})
				ref(gl, streamRef{gi, dm.DR, 1})
			}
			gl.streams = append(gl.streams, lora.DownlinkStream{Airtime: a2, Lead: tm.ReceiveDelay2, Band: b2, DutyCycle: d2})
			gl.window = append(gl.window, 2)
			gl.rate = append(gl.rate, rateShare{g: gi, k: k})
			ref(gl, streamRef{gi, dm.DR, 2})
		}
	}
	for gw := range lay.gws {
		if only >= 0 && gw != only {
			continue
		}
		l, err := lora.NewDownlinkLayout(lay.gws[gw].streams)
		if err != nil {
			return fmt.Errorf("gateway %q: %w", s.Gateways[gw].Name, err)
		}
		lay.gws[gw].lay = l
	}
	lay.built = true
	return nil
}

// uplinkChannels lists the channels of mask (zero: all) that carry dr.
func uplinkChannels(r lora.Region, mask lora.ChannelMask, dr int) []int {
	if mask.Len() == 0 {
		mask = r.AllChannels()
	}
	var out []int
	for i, c := range r.UplinkChannels() {
		if mask.Has(i) && dr >= c.MinDR && dr <= c.MaxDR {
			out = append(out, i)
		}
	}
	return out
}

// GatewayWarnings returns one warning (kind GatewayBudget, Group −1) per
// sub-band of a gateway whose booked answers need more airtime than its
// duty cycle allows: the share needed, the limit, the share of those
// answers the gateway can send, and the caution to check local
// regulations. Names are quoted (Quote).
func (m Model) GatewayWarnings() []Warning {
	var out []Warning
	for _, b := range m.GatewayBudgets() {
		if !b.Over() {
			continue
		}
		band := "the region's transmitter limit"
		if b.Band != "transmitter" {
			band = "the " + b.Band + " sub-band"
		}
		out = append(out, Warning{Kind: GatewayBudget, Group: -1, Gateway: b.Gateway, Text: fmt.Sprintf("GATEWAY: %s: its answers need %s of the time in %s, above the %s duty-cycle limit; %s of the answers booked there are sent in neither window (stated error %.2g percentage points; an answer refused in RX1 is tried in RX2), and the nodes retransmit (planned). Add gateways, answer less often, move answers to RX2 or a faster data rate; check the local rules for gateways and defer to the regulator.",
			Quote(m.Scenario.Gateways[b.Gateway].Name), percent(b.Offered()), band, percent(b.DutyCycle), percent(b.Lost), 100*m.Gateways[b.Gateway].Budget.FallbackError)})
	}
	return out
}

// percent prints a share in per cent with three significant digits.
func percent(x float64) string {
	return strconv.FormatFloat(100*x, 'g', 3, 64) + " %"
}
