package scenario

import (
	"fmt"
	"math"
	"strconv"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// GatewayModel is what one gateway can send of the answers the network
// books with it: lora.GatewayDownlinks over its streams, one per group,
// data rate, receive window and downlink sub-band (RX1 answers follow
// their uplink's channel, so they spread over the RX1 bands of the
// channels that carry the data rate; RX2 answers use the RX2 frequency).
// An answer the gateway cannot send is lost, and the loss feeds the
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
	Budget  lora.DownlinkBudget
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

// gatewayBudgets recomputes every gateway's downlink budget from the
// current frames and uplink successes, stores the shares sent in the
// groups' DRModel, and returns the largest change of a share.
func (m *Model) gatewayBudgets() (float64, error) {
	s := m.Scenario
	reg := s.Region
	tm := reg.Timing()
	m.Gateways = make([]GatewayModel, len(s.Gateways))
	refs := make([][]streamRef, len(s.Gateways))
	for gw := range s.Gateways {
		m.Gateways[gw].Gateway = s.Gateways[gw]
	}
	for gi := range m.Groups {
		g := &m.Groups[gi]
		gr := g.Group
		gw := gr.Gateway
		dlBytes := lora.EmptyFrameBytes
		if gr.DownlinkPayload > 0 {
			n, err := lora.PHYPayloadBytes(gr.DownlinkPayload, 0)
			if err != nil {
				return 0, err
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
			return 0, fmt.Errorf("group %q: RX2: %w", gr.Name, err)
		}
		b2, d2, err := reg.DownlinkBand(rx2f)
		if err != nil {
			return 0, fmt.Errorf("group %q: RX2: %w", gr.Name, err)
		}
		for _, dm := range g.PerDR {
			answers := float64(gr.Nodes) * g.Heard() * dm.Share * dm.Frames / gr.Interval * dm.UplinkSuccess * gr.AnswerShare
			rx1dr, err := reg.RX1DataRate(dm.DR, gr.RX1DROffset)
			if err != nil {
				return 0, fmt.Errorf("group %q: %w", gr.Name, err)
			}
			a1, err := airtime(rx1dr)
			if err != nil {
				return 0, fmt.Errorf("group %q: RX1: %w", gr.Name, err)
			}
			// RX1 answers spread over the channels carrying dr, grouped by band.
			chans := uplinkChannels(reg, s.Gateways[gw].Channels, dm.DR)
			perBand := map[int]float64{}
			duty := map[int]float64{}
			var order []int
			for _, ch := range chans {
				f, err := reg.RX1Frequency(ch)
				if err != nil {
					return 0, err
				}
				b, d, err := reg.DownlinkBand(f)
				if err != nil {
					return 0, fmt.Errorf("group %q: RX1 after channel %d: %w", gr.Name, ch, err)
				}
				if _, ok := perBand[b]; !ok {
					order = append(order, b)
				}
				perBand[b] += 1 / float64(len(chans))
				duty[b] = d
			}
			for _, b := range order {
				m.Gateways[gw].Streams = append(m.Gateways[gw].Streams, lora.DownlinkStream{
					Rate: answers * gr.RX1Share * perBand[b], Airtime: a1, Lead: tm.ReceiveDelay1, Band: b, DutyCycle: duty[b]})
				refs[gw] = append(refs[gw], streamRef{gi, dm.DR, 1})
			}
			m.Gateways[gw].Streams = append(m.Gateways[gw].Streams, lora.DownlinkStream{
				Rate: answers * (1 - gr.RX1Share), Airtime: a2, Lead: tm.ReceiveDelay2, Band: b2, DutyCycle: d2})
			refs[gw] = append(refs[gw], streamRef{gi, dm.DR, 2})
		}
	}
	// The share sent of a (group, data rate, window): its streams' shares
	// weighted by their rates (all 1 where nothing is booked).
	type acc struct{ rate, sent float64 }
	tot := map[streamRef]*acc{}
	for gw := range m.Gateways {
		b, err := lora.GatewayDownlinks(m.Gateways[gw].Streams)
		if err != nil {
			return 0, fmt.Errorf("gateway %q: %w", s.Gateways[gw].Name, err)
		}
		m.Gateways[gw].Budget = b
		for i, ref := range refs[gw] {
			a, ok := tot[ref]
			if !ok {
				a = &acc{}
				tot[ref] = a
			}
			r := m.Gateways[gw].Streams[i].Rate
			a.rate += r
			a.sent += r * b.Sent[i]
		}
	}
	change := 0.0
	for gi := range m.Groups {
		g := &m.Groups[gi]
		for k := range g.PerDR {
			dm := &g.PerDR[k]
			for w, p := range map[int]*float64{1: &dm.RX1Sent, 2: &dm.RX2Sent} {
				v := 1.0
				if a := tot[streamRef{gi, dm.DR, w}]; a != nil && a.rate > 0 {
					v = a.sent / a.rate
				}
				change = math.Max(change, math.Abs(v-*p))
				*p = v
			}
		}
	}
	return change, nil
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
	for gi, g := range m.Gateways {
		for _, b := range g.Budget.Bands {
			if !b.Over() {
				continue
			}
			band := "the region's transmitter limit"
			if sbs := m.Scenario.Region.SubBands(); b.Band >= 0 && b.Band < len(sbs) {
				band = "the " + sbs[b.Band].String() + " sub-band"
			}
			rate, sent := 0.0, 0.0
			for i, st := range g.Streams {
				if st.Band == b.Band {
					rate += st.Rate
					sent += st.Rate * g.Budget.Sent[i]
				}
			}
			share := 1.0
			if rate > 0 {
				share = sent / rate
			}
			out = append(out, Warning{Kind: GatewayBudget, Group: -1, Gateway: gi, Text: fmt.Sprintf("GATEWAY: %s: its answers need %s of the time in %s, above the %s duty-cycle limit; it can send about %s of them (stated error %.2g percentage points), the rest are lost and the nodes retransmit (planned). Add gateways, answer less often, move answers to RX2 or a faster data rate; check the local rules for gateways and defer to the regulator.",
				Quote(m.Scenario.Gateways[gi].Name), percent(b.Offered), band, percent(b.DutyCycle), percent(share), 100*g.Budget.Error)})
		}
	}
	return out
}

// percent prints a share in per cent with three significant digits.
func percent(x float64) string {
	return strconv.FormatFloat(100*x, 'g', 3, 64) + " %"
}
