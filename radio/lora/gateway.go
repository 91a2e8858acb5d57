package lora

import (
	"fmt"
	"math"
	"sort"
)

// MaxDownlinkStreams caps the streams GatewayDownlinks takes (its work grows
// with their square).
const MaxDownlinkStreams = 4096

// maxDownlinkRounds caps the fixed-point rounds of GatewayDownlinks.
const maxDownlinkRounds = 100000

// DownlinkStream is one kind of answer a gateway is asked to send: booked
// when an uplink ends, sent Lead seconds later (RECEIVE_DELAY1 for RX1,
// RECEIVE_DELAY2 for RX2), Airtime long, in a sub-band whose duty cycle it
// shares with the other streams of the same Band.
type DownlinkStream struct {
	Rate    float64 // answers booked per second, finite, >= 0
	Airtime float64 // time on air of one answer, s, finite, > 0
	Lead    float64 // from booking to the start of transmission, s, finite, >= 0
	// Band names the sub-band (any key; Region.DownlinkBand gives one):
	// streams with equal Band share its duty-cycle budget and must give the
	// same DutyCycle.
	Band      int
	DutyCycle float64 // the band's duty-cycle limit, in (0, 1]; 1 for none
}

// BandUse is the use of one sub-band's duty-cycle budget.
type BandUse struct {
	Band      int
	DutyCycle float64 // the limit
	Offered   float64 // airtime share the booked answers would need: Σ Rate·Airtime
	Used      float64 // airtime share of the answers sent: Σ Rate·Sent·Airtime (≤ DutyCycle)
}

// Over reports whether the booked answers need more than the budget.
func (b BandUse) Over() bool { return b.Offered > b.DutyCycle }

// DownlinkBudget is what a gateway can send of the answers booked with it.
type DownlinkBudget struct {
	// Sent[i] is the probability that an answer of stream i is sent; the
	// others are lost.
	Sent []float64
	// Bands lists each sub-band's use, by Band.
	Bands []BandUse
	// TransmitterBusy is the share of time the transmitter is on.
	TransmitterBusy float64
	// Error estimates the error of every Sent value: the second-order terms
	// the approximation leaves out (max over streams of w², see
	// GatewayDownlinks) plus the fixed-point solver's remaining error.
	Error float64
	// Iterations is the number of rounds the fixed point took.
	Iterations int
}

// GatewayDownlinks tells what share of the answers booked with one gateway
// it can send under two limits: the duty cycle of each sub-band, enforced
// by the off-time rule (after an answer of airtime a the band stays closed
// until a/d after its start, SubBand.OffTime), and the one transmitter,
// which sends one frame at a time. An answer is booked when its uplink
// ends and refused — lost — when it would overlap, on the transmitter or on
// its band's closed time, an answer booked before it; a refused answer is
// not moved to another window (a network server that retries in RX2 saves
// some; that is not modelled, so losses are on the safe side).
//
// Bookings arrive as Poisson streams (the sum of many nodes' uplinks). By
// PASTA an answer is refused with the probability that a conflict interval
// holds at its booking. Streams of one band and one lead are booked in the
// order they are sent, so their band holds for disjoint times and the
// band's busy share seen by them is exact: the one-server loss formula
//
//	u = S/(1 + S),  S = Σ Rate·(Airtime/d)·(1 − w)
//
// (Erlang's loss formula with one server, which holds for any holding-time
// law: for one stream, Sent = 1/(1 + ρ), ρ = Rate·Airtime/d). Answers
// booked ahead of others (another lead) or sent in another band conflict
// through w, the expected number of earlier-booked sent answers whose
// holding overlaps — Airtime/d within the band, Airtime on the transmitter
// across bands —
//
//	w_X = Σ_Y Rate_Y·Sent_Y·max(0, h_Y + min(h_X, Lead_Y − Lead_X))
//
// and Sent_X = (1 − u)·(1 − w_X): the two refusals are taken as
// independent. Both what that leaves out (the refusals are coupled only
// through the conflicts that w counts) and the double counting in w (two
// conflicts at once) are of second order in w, so Error estimates them by
// max w² over the streams, plus the solver's error. It is an estimate, not
// a bound: against a direct play of the booking rules (the tests, six
// loads, EU and US) and the packet-level sampler (three loads) the
// differences stayed within the sampling error plus Error. The fixed point in Sent is solved by damped
// iteration (halving the step, down to 1/64, while the change grows) until
// the change is below 1e-14; the contraction estimate change/(1 − k), with
// k the last ratio of changes, is added to Error. It fails after 100000
// rounds.
//
// It fails, wrapping ErrParam, on a stream out of range, streams of one
// Band with different duty cycles, or more than MaxDownlinkStreams.
// Duty-cycle limits are for planning, not certification: check the local
// rules that apply to gateways and defer to the regulator.
func GatewayDownlinks(streams []DownlinkStream) (DownlinkBudget, error) {
	const fn = "GatewayDownlinks"
	if len(streams) > MaxDownlinkStreams {
		return DownlinkBudget{}, paramErr(fn, "streams", len(streams), fmt.Sprintf("at most MaxDownlinkStreams = %d", MaxDownlinkStreams))
	}
	duty := map[int]float64{}
	for i, s := range streams {
		switch {
		case !finite(s.Rate) || s.Rate < 0:
			return DownlinkBudget{}, paramErr(fn, fmt.Sprintf("streams[%d].Rate", i), s.Rate, "must be finite and >= 0 per s")
		case !finite(s.Airtime) || s.Airtime <= 0:
			return DownlinkBudget{}, paramErr(fn, fmt.Sprintf("streams[%d].Airtime", i), s.Airtime, "must be finite and > 0 s")
		case !finite(s.Lead) || s.Lead < 0:
			return DownlinkBudget{}, paramErr(fn, fmt.Sprintf("streams[%d].Lead", i), s.Lead, "must be finite and >= 0 s")
		case !(s.DutyCycle > 0 && s.DutyCycle <= 1):
			return DownlinkBudget{}, paramErr(fn, fmt.Sprintf("streams[%d].DutyCycle", i), s.DutyCycle, "must be in (0, 1]")
		}
		if d, ok := duty[s.Band]; ok && d != s.DutyCycle {
			return DownlinkBudget{}, paramErr(fn, fmt.Sprintf("streams[%d].DutyCycle", i), s.DutyCycle, fmt.Sprintf("band %d was given %g by an earlier stream", s.Band, d))
		}
		duty[s.Band] = s.DutyCycle
	}
	n := len(streams)
	// Pools: streams of one band and one lead.
	type poolKey struct {
		band int
		lead float64
	}
	poolOf := make([]int, n)
	pools := map[poolKey]int{}
	for i, s := range streams {
		k := poolKey{s.Band, s.Lead}
		p, ok := pools[k]
		if !ok {
			p = len(pools)
			pools[k] = p
		}
		poolOf[i] = p
	}
	hold := func(s DownlinkStream) float64 { return s.Airtime / s.DutyCycle }
	// conflict[x][y]: measure of the booking times of y that refuse x.
	conflict := make([][]float64, n)
	for x, sx := range streams {
		conflict[x] = make([]float64, n)
		for y, sy := range streams {
			if poolOf[x] == poolOf[y] {
				continue
			}
			hx, hy := sx.Airtime, sy.Airtime
			if sx.Band == sy.Band {
				hx, hy = hold(sx), hold(sy)
			}
			conflict[x][y] = math.Max(0, hy+math.Min(hx, sy.Lead-sx.Lead))
		}
	}
	sent := make([]float64, n)
	for i := range sent {
		sent[i] = 1
	}
	u := make([]float64, len(pools))
	w := make([]float64, n)
	next := make([]float64, n)
	step, prev, solverErr := 1.0, math.Inf(1), 0.0
	iter := 1
	for ; ; iter++ {
		if iter > maxDownlinkRounds {
			return DownlinkBudget{}, fmt.Errorf("lora.%s: the fixed point did not settle after %d rounds (last change %.3g)", fn, maxDownlinkRounds, prev)
		}
		for x := range streams {
			w[x] = 0
			for y, sy := range streams {
				w[x] += sy.Rate * sent[y] * conflict[x][y]
			}
			w[x] = math.Min(w[x], 1)
		}
		sum := make([]float64, len(pools))
		for y, sy := range streams {
			sum[poolOf[y]] += sy.Rate * hold(sy) * (1 - w[y])
		}
		for p, s := range sum {
			u[p] = s / (1 + s)
		}
		change := 0.0
		for x := range streams {
			next[x] = (1 - u[poolOf[x]]) * (1 - w[x])
			change = math.Max(change, math.Abs(next[x]-sent[x]))
		}
		if change > prev && step > 1.0/64 {
			step /= 2 // the antitone map overshoots: damp it
		}
		for x := range sent {
			sent[x] += step * (next[x] - sent[x])
		}
		if change < 1e-14 {
			// Contraction estimate: the rest is at most change·k/(1 − k)
			// with k the last ratio of changes (taken as 0.99 at worst).
			k := 0.99
			if prev < math.Inf(1) && change < prev {
				k = math.Min(change/prev, 0.99)
			}
			solverErr = change / (1 - k)
			break
		}
		prev = change
	}
	out := DownlinkBudget{Sent: append([]float64(nil), sent...), Iterations: iter}
	approx := 0.0
	uses := map[int]*BandUse{}
	for x, s := range streams {
		approx = math.Max(approx, w[x]*w[x])
		b, ok := uses[s.Band]
		if !ok {
			b = &BandUse{Band: s.Band, DutyCycle: s.DutyCycle}
			uses[s.Band] = b
		}
		b.Offered += s.Rate * s.Airtime
		b.Used += s.Rate * sent[x] * s.Airtime
		out.TransmitterBusy += s.Rate * sent[x] * s.Airtime
	}
	for _, b := range uses {
		out.Bands = append(out.Bands, *b)
	}
	sort.Slice(out.Bands, func(i, j int) bool { return out.Bands[i].Band < out.Bands[j].Band })
	out.Error = approx + solverErr
	return out, nil
}

// DownlinkBand returns a band key and duty-cycle limit for a gateway's
// downlink at freq (Hz), for DownlinkStream: the index of the region's
// sub-band holding freq and its limit, or (−1, 1) where the region has no
// duty-cycle sub-bands (the transmitter alone limits). It fails, wrapping
// ErrParam, when the region has sub-bands and freq lies outside them.
func (r Region) DownlinkBand(freq float64) (band int, dutyCycle float64, err error) {
	if r.t == nil {
		return 0, 0, errZeroRegion()
	}
	if len(r.t.subBands) == 0 {
		return -1, 1, nil
	}
	for i, s := range r.t.subBands {
		if s.Contains(freq) {
			return i, s.DutyCycle, nil
		}
	}
	_, err = r.SubBandAt(freq)
	return 0, 0, err
}
