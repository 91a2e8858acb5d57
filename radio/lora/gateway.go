package lora

import (
	"fmt"
	"math"
	"slices"
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
	// Fallback is 1 + the index of the stream that takes this stream's
	// refused answers (a network server that cannot send an answer in RX1
	// books it in RX2 instead), or 0 for none: a refused answer is then
	// lost. The stream it names must have no Fallback of its own.
	Fallback int
}

// BandUse is the use of one sub-band's duty-cycle budget.
type BandUse struct {
	Band      int
	DutyCycle float64 // the limit
	Offered   float64 // airtime share the booked answers would need: Σ Booked·Airtime
	Used      float64 // airtime share of the answers sent: Σ Booked·Sent·Airtime (≤ DutyCycle)
}

// Over reports whether the booked answers need more than the budget.
func (b BandUse) Over() bool { return b.Offered > b.DutyCycle }

// DownlinkBudget is what a gateway can send of the answers booked with it.
type DownlinkBudget struct {
	// Sent[i] is the probability that an answer of stream i (its own Rate)
	// is sent in stream i's window.
	Sent []float64
	// FallbackSent[i] is the probability that an answer of stream i is
	// refused in its window and sent in its Fallback stream's instead (0
	// without a Fallback). An answer of stream i is lost with probability
	// 1 − Sent[i] − FallbackSent[i]. The fallback answers meet the target
	// in bursts and are sent less often than its own (see
	// GatewayDownlinks).
	FallbackSent []float64
	// Booked[i] is the rate of answers booked with stream i, per second:
	// its Rate plus the refused answers of the streams that fall back to
	// it.
	Booked []float64
	// Bands lists each sub-band's use, by Band.
	Bands []BandUse
	// TransmitterBusy is the share of time the transmitter is on.
	TransmitterBusy float64
	// Error estimates the error of every Sent value: the second-order terms
	// the approximation leaves out (see GatewayDownlinks) plus the
	// fixed-point solver's remaining error.
	Error float64
	// FallbackError estimates the error of every FallbackSent value: Error
	// plus half the correction for the fallbacks' bursts (see
	// GatewayDownlinks).
	FallbackError float64
	// Iterations is the number of rounds the fixed point took.
	Iterations int
	// fb is the fixed point's share sent of each stream's refused answers
	// in its fallback (GatewayDownlinksFrom's start).
	fb []float64
}

// GatewayDownlinks tells what share of the answers booked with one gateway
// it can send under two limits: the duty cycle of each sub-band, enforced
// by the off-time rule (after an answer of airtime a the band stays closed
// until a/d after its start, SubBand.OffTime), and the one transmitter,
// which sends one frame at a time. An answer is booked when its uplink
// ends and refused — lost — when it would overlap, on the transmitter or on
// its band's closed time, an answer booked before it. A refused answer of
// a stream with a Fallback is booked at once with the stream it names (the
// network server that cannot send in RX1 answers in RX2 instead: common
// practice in network servers, from memory), and is sent there or lost by
// the same rules; the fallback stream's bookings are then its own Rate plus
// Rate·(1 − Sent) of each stream falling back to it (Booked), and they share
// its Sent. A refused answer without a Fallback is lost.
//
// Bookings arrive as Poisson streams (the sum of many nodes' uplinks). By
// PASTA an answer is refused with the probability that a conflict interval
// holds at its booking. Streams of one band and one lead (a pool) are
// booked in the order they are sent, so their band holds for disjoint
// times, and the share b of time it is held (the pool's carried load)
// refuses its answers exactly: without fallbacks, the one-server loss
// formula
//
//	b = S/(1 + S),  S = Σ Rate·(Airtime/d)·(1 − w)
//
// (Erlang's loss formula with one server, which holds for any holding-time
// law: for one stream, Sent = 1/(1 + ρ), ρ = Rate·Airtime/d). Answers
// booked ahead of others (another lead) or sent in another band conflict
// through w, the expected number of earlier-booked sent answers whose
// holding overlaps — Airtime/d within the band, Airtime on the transmitter
// across bands —
//
//	w_X = Σ_Y Sent rate_Y·max(0, h_Y + min(h_X, Lead_Y − Lead_X))
//
// and Sent_X = (1 − b)·(1 − w_X): the two refusals are taken as
// independent.
//
// Fallback answers are not Poisson: a pool refuses every answer while one
// of its own holds it, and a cross conflict refuses a stream's answers for
// as long as it lasts, so refusals come in bursts and the earlier fallbacks
// of a burst hold the target when the later ones arrive (the overflow
// traffic of teletraffic theory, peakier than Poisson). A fallback refused
// for one cause meets the target pool with the load of the answers booked
// in its look-back window h, its own stream's at the full rate over the
// part E[min(τ, h)]/h of the window inside the burst (τ the burst's
// elapsed time, uniform over the burst; length-biased over the holdings
// that start a pool's closures) and at the average rate before, and is
// sent with Erlang's 1/(1 + S_c) for that load; the target's primaries see
// its carried load b (which the fallbacks sent add to).
//
// Error estimates what this leaves out, per stream: the coupling of the
// two refusals, w·min(b, w) (the covariance of two events is at most the
// smaller probability, and of the order of the product when they are
// weakly coupled), and the double counting in w (two conflicts at once):
// pairs from different pools, and pairs from one pool only where the
// conflict interval is longer than its holding (a pool's sent answers
// never overlap); plus, to first order, the load that the fallbacks' error
// moves onto the others (through w, and through a pool's held share b =
// S/(1 + S), which moves by (1 − b)² per unit of load); plus the solver's
// error. FallbackError adds half
// the burst correction (the difference between the bursty and the Poisson
// view). Both are estimates, not bounds: against a direct play of the
// booking rules (the tests: six loads, EU and US, with and without
// fallbacks) and the packet-level sampler (three loads) the differences
// stayed within the sampling error plus the stated error. In the saturated
// US902-928 case without fallbacks the stated error is 0.025 against a
// measured 0.018 (it was 0.11 with the earlier estimate max w², which
// counted double conflicts that one pool's answers cannot make).
//
// The fixed point in Sent and the fallbacks' shares is solved by damped
// iteration (halving the step, down to 1/64, while the change grows) until
// the change is below 1e-14; the contraction estimate change/(1 − k), with
// k the last ratio of changes, is added to Error. It fails after 100000
// rounds. Each round costs O(n²) in the number of streams n.
//
// It fails, wrapping ErrParam, on a stream out of range, streams of one
// Band with different duty cycles, a Fallback that names no other stream
// or a stream with a Fallback of its own, or more than MaxDownlinkStreams.
// Duty-cycle limits are for planning, not certification: check the local
// rules that apply to gateways and defer to the regulator.
func GatewayDownlinks(streams []DownlinkStream) (DownlinkBudget, error) {
	return gatewayDownlinks("GatewayDownlinks", streams, DownlinkBudget{})
}

// GatewayDownlinksFrom is GatewayDownlinks with its fixed point started
// from the answer prev gave for as many streams (all sent where prev has
// another number of streams): a caller that solves a sequence of nearby
// budgets (the site model's collision rounds) settles each in fewer rounds.
// The answer is the same fixed point to the same tolerance; its Error
// carries the solver's remaining error as GatewayDownlinks's does.
func GatewayDownlinksFrom(streams []DownlinkStream, prev DownlinkBudget) (DownlinkBudget, error) {
	return gatewayDownlinks("GatewayDownlinksFrom", streams, prev)
}

// DownlinkLayout is a gateway's downlink streams but for their rates:
// checked, grouped into pools (one band and one lead) and with the
// conflicts between them measured, once. A caller that solves the same
// streams at many rates (the site model's collision rounds) makes it once
// and asks BudgetFrom for each; the budgets are GatewayDownlinksFrom's to
// the bit. An immutable value, safe for concurrent use.
type DownlinkLayout struct {
	streams  []DownlinkStream // as given; their rates are not read
	poolOf   []int
	nPools   int
	hold     []float64   // per stream: Airtime/DutyCycle (s), how long an answer holds its band
	conflict [][]float64 // conflict[x][y]: measure (s) of the booking times of y that refuse x
}

// NewDownlinkLayout returns the layout of streams (their rates are not
// read). It fails as GatewayDownlinks does on everything but a rate,
// wrapping ErrParam.
func NewDownlinkLayout(streams []DownlinkStream) (DownlinkLayout, error) {
	const fn = "NewDownlinkLayout"
	if err := checkStreams(fn, streams, false); err != nil {
		return DownlinkLayout{}, err
	}
	return newDownlinkLayout(slices.Clone(streams)), nil
}

// BudgetFrom is GatewayDownlinksFrom(streams, prev) for streams equal to
// the layout's but for their rates. It fails, wrapping ErrParam, on a rate
// not finite and >= 0 per s, or streams that differ from the layout's in
// number or in anything but Rate.
func (l DownlinkLayout) BudgetFrom(streams []DownlinkStream, prev DownlinkBudget) (DownlinkBudget, error) {
	const fn = "DownlinkLayout.BudgetFrom"
	if len(streams) != len(l.streams) {
		return DownlinkBudget{}, paramErr(fn, "streams", len(streams), fmt.Sprintf("must be the layout's %d streams", len(l.streams)))
	}
	if err := checkRates(fn, streams); err != nil {
		return DownlinkBudget{}, err
	}
	for i, s := range streams {
		t := l.streams[i]
		t.Rate = s.Rate
		if s != t {
			return DownlinkBudget{}, paramErr(fn, fmt.Sprintf("streams[%d]", i), fmt.Sprintf("%+v", s), fmt.Sprintf("must be the layout's %+v but for its Rate", l.streams[i]))
		}
	}
	return l.solve(fn, streams, prev)
}

func gatewayDownlinks(fn string, streams []DownlinkStream, start DownlinkBudget) (DownlinkBudget, error) {
	if err := checkStreams(fn, streams, true); err != nil {
		return DownlinkBudget{}, err
	}
	return newDownlinkLayout(streams).solve(fn, streams, start)
}

// checkStreams checks streams as GatewayDownlinks states, their rates only
// when rates is set.
func checkStreams(fn string, streams []DownlinkStream, rates bool) error {
	if len(streams) > MaxDownlinkStreams {
		return paramErr(fn, "streams", len(streams), fmt.Sprintf("at most MaxDownlinkStreams = %d", MaxDownlinkStreams))
	}
	duty := map[int]float64{}
	for i, s := range streams {
		switch {
		case rates && (!finite(s.Rate) || s.Rate < 0):
			return rateErr(fn, i, s.Rate)
		case !finite(s.Airtime) || s.Airtime <= 0:
			return paramErr(fn, fmt.Sprintf("streams[%d].Airtime", i), s.Airtime, "must be finite and > 0 s")
		case !finite(s.Lead) || s.Lead < 0:
			return paramErr(fn, fmt.Sprintf("streams[%d].Lead", i), s.Lead, "must be finite and >= 0 s")
		case !(s.DutyCycle > 0 && s.DutyCycle <= 1):
			return paramErr(fn, fmt.Sprintf("streams[%d].DutyCycle", i), s.DutyCycle, "must be in (0, 1]")
		}
		if s.Fallback != 0 {
			switch f := s.Fallback - 1; {
			case f < 0 || f >= len(streams) || f == i:
				return paramErr(fn, fmt.Sprintf("streams[%d].Fallback", i), s.Fallback, fmt.Sprintf("must be 0 or 1 + the index of another of the %d streams", len(streams)))
			case streams[f].Fallback != 0:
				return paramErr(fn, fmt.Sprintf("streams[%d].Fallback", i), s.Fallback, fmt.Sprintf("names stream %d, which has a Fallback of its own (no chains)", f))
			}
		}
		if d, ok := duty[s.Band]; ok && d != s.DutyCycle {
			return paramErr(fn, fmt.Sprintf("streams[%d].DutyCycle", i), s.DutyCycle, fmt.Sprintf("band %d was given %g by an earlier stream", s.Band, d))
		}
		duty[s.Band] = s.DutyCycle
	}
	return nil
}

// checkRates checks the streams' rates alone.
func checkRates(fn string, streams []DownlinkStream) error {
	for i, s := range streams {
		if !finite(s.Rate) || s.Rate < 0 {
			return rateErr(fn, i, s.Rate)
		}
	}
	return nil
}

func rateErr(fn string, i int, rate float64) error {
	return paramErr(fn, fmt.Sprintf("streams[%d].Rate", i), rate, "must be finite and >= 0 per s")
}

// newDownlinkLayout is the layout of checked streams (kept, not copied).
func newDownlinkLayout(streams []DownlinkStream) DownlinkLayout {
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
	cells := make([]float64, n*n) // the rows' one backing array
	for x, sx := range streams {
		conflict[x] = cells[x*n : (x+1)*n : (x+1)*n]
		for y, sy := range streams {
			if poolOf[x] == poolOf[y] {
				continue
			}
			hx, hy := sx.Airtime, sy.Airtime
			if sx.Band == sy.Band {
				hx, hy = hold(sx), hold(sy)
			}
			conflict[x][y] = max(0, hy+min(hx, sy.Lead-sx.Lead))
		}
	}
	holds := make([]float64, n)
	for y, sy := range streams {
		holds[y] = hold(sy)
	}
	return DownlinkLayout{streams: streams, poolOf: poolOf, nPools: len(pools), hold: holds, conflict: conflict}
}

// solve is the fixed point of checked streams of the layout's shape (see
// GatewayDownlinks), started from start.
func (l DownlinkLayout) solve(fn string, streams []DownlinkStream, start DownlinkBudget) (DownlinkBudget, error) {
	n := len(streams)
	poolOf, conflict := l.poolOf, l.conflict
	hold := func(s DownlinkStream) float64 { return s.Airtime / s.DutyCycle }
	// The unknowns: sent[x], the share sent of stream x's own answers, and
	// fb[x], the share sent of its refused answers in its fallback.
	sent, fb := make([]float64, n), make([]float64, n)
	for i := range sent {
		sent[i], fb[i] = 1, 1
	}
	if len(start.Sent) == n && len(start.fb) == n {
		copy(sent, start.Sent)
		copy(fb, start.fb)
	}
	st := newGatewayState(n, l.nPools)
	next, nextFB := make([]float64, n), make([]float64, n)
	step, prev, solverErr := 1.0, math.Inf(1), 0.0
	iter := 1
	for ; ; iter++ {
		if iter > maxDownlinkRounds {
			return DownlinkBudget{}, fmt.Errorf("lora.%s: the fixed point did not settle after %d rounds (last change %.3g)", fn, maxDownlinkRounds, prev)
		}
		gatewayRound(streams, poolOf, l.hold, conflict, sent, fb, next, nextFB, st)
		change := 0.0
		for x := range streams {
			change = max(change, max(math.Abs(next[x]-sent[x]), math.Abs(nextFB[x]-fb[x])))
		}
		if change > prev && step > 1.0/64 {
			step /= 2 // the antitone map overshoots: damp it
		}
		for x := range sent {
			sent[x] += step * (next[x] - sent[x])
			fb[x] += step * (nextFB[x] - fb[x])
		}
		if change < 1e-14 {
			// Contraction estimate: the rest is at most change·k/(1 − k)
			// with k the last ratio of changes (taken as 0.99 at worst).
			k := 0.99
			if prev < math.Inf(1) && change < prev {
				k = min(change/prev, 0.99)
			}
			solverErr = change / (1 - k)
			break
		}
		prev = change
	}
	gatewayRound(streams, poolOf, l.hold, conflict, sent, fb, next, nextFB, st)
	out := DownlinkBudget{Sent: append([]float64(nil), sent...), Booked: st.booked, FallbackSent: make([]float64, n), Iterations: iter,
		fb: append([]float64(nil), fb...)}
	// The fallbacks' error (half their burst correction) moves the load
	// they put on the others: on the target pool's held share and on the
	// conflicts w, to first order.
	fbLoad := make([]float64, n) // error of the fallback answers sent into each target, per s
	for x, sx := range streams {
		if sx.Fallback != 0 {
			fbLoad[sx.Fallback-1] += sx.Rate * (1 - sent[x]) * st.burst[x] / 2
		}
	}
	poolErr := make([]float64, l.nPools)
	for y := range streams {
		poolErr[poolOf[y]] += hold(streams[y]) * fbLoad[y]
	}
	for p := range poolErr {
		// b = S/(1 + S) moves by (1 − b)² per unit of S.
		poolErr[p] *= (1 - st.busy[p]) * (1 - st.busy[p])
	}
	approx, fbErr := 0.0, 0.0
	for x, sx := range streams {
		// Second order: the coupling of the two refusals, w·min(b, w), and
		// the double counting in w, D (gatewayRound); then what the
		// fallbacks' error moves.
		e := st.w[x]*min(st.busy[poolOf[x]], st.w[x]) + st.double[x] + poolErr[poolOf[x]]
		for y := range streams {
			e += conflict[x][y] * fbLoad[y]
		}
		approx = max(approx, e)
		if sx.Fallback != 0 {
			out.FallbackSent[x] = (1 - sent[x]) * fb[x]
			fbErr = max(fbErr, (1-sent[x])*st.burst[x]/2)
		}
	}
	uses := map[int]*BandUse{}
	for x, s := range streams {
		b, ok := uses[s.Band]
		if !ok {
			b = &BandUse{Band: s.Band, DutyCycle: s.DutyCycle}
			uses[s.Band] = b
		}
		b.Offered += st.booked[x] * s.Airtime
		b.Used += st.sentRate[x] * s.Airtime
		out.TransmitterBusy += st.sentRate[x] * s.Airtime
	}
	for _, b := range uses {
		out.Bands = append(out.Bands, *b)
	}
	sort.Slice(out.Bands, func(i, j int) bool { return out.Bands[i].Band < out.Bands[j].Band })
	out.Error = approx + solverErr
	out.FallbackError = out.Error + fbErr
	return out, nil
}

// gatewayState is what one round of GatewayDownlinks's fixed point derives
// from the current shares, with the round's scratch: one is made per
// solve and every round overwrites it (the last round's booked is the
// budget's).
type gatewayState struct {
	booked   []float64 // answers booked per stream, per s (own + fallbacks)
	sentRate []float64 // answers sent per stream, per s
	w        []float64 // expected conflicting earlier answers, per stream
	double   []float64 // double-counting estimate of w, per stream
	busy     []float64 // per pool: the share of time it is held (its carried load)
	burst    []float64 // per fallback source: how much the burst raises the refusal

	fallRate []float64   // per stream: fallback answers sent into it, per s
	num, den []float64   // per pool: the carried load's numerator and denominator
	base     []float64   // per pool: its load at the average refusal rates
	closures [][]closure // per pool: its closures
	inClos   []float64   // per fallback source z: inClosure(poolOf[z], hold(target of z)); NaN until computed in the round
}

// closure is one kind of a pool's closures: the held time it starts, and
// the holding that starts it.
type closure struct{ weight, h float64 }

// newGatewayState makes the state of n streams in nPools pools.
func newGatewayState(n, nPools int) *gatewayState {
	return &gatewayState{booked: make([]float64, n), sentRate: make([]float64, n), w: make([]float64, n), double: make([]float64, n),
		busy: make([]float64, nPools), burst: make([]float64, n), fallRate: make([]float64, n), num: make([]float64, nPools),
		den: make([]float64, nPools), base: make([]float64, nPools), closures: make([][]closure, nPools), inClos: make([]float64, n)}
}

// gatewayRound computes one round: from sent and fb (see GatewayDownlinks)
// the next values, into next and nextFB.
//
// Primary answers of a pool P meet it held with the probability b_P, its
// carried load (the share of time one of its answers holds it), which
// solves b = Σ_y h_y·(Rate_y·(1 − b)·(1 − w_y) + F_y), F_y the fallback
// answers sent in y: Erlang's u = S/(1 + S) when there are none.
//
// Fallback answers come in bursts: a source pool Q refuses every answer
// while an answer of its own holds it, so during such a closure its
// refusals reach the target at the full Rate, not the average
// Rate·(1 − Sent), and the earlier ones of the same closure hold the
// target. A fallback refused because Q was held (probability b_Q/(1 −
// Sent_x) among the refusals) meets the target pool with the load S_c of
// the answers booked in the last h_y: the primaries', the other sources' at
// their average, and Q's own at the full rate over the part c_Q(h_y) of
// that window that lies within the closure (the closure's elapsed time τ
// at a random moment of Q's held time, length-biased over the holding
// times that start closures: E[min(τ, h)] = h − h²/(2H) for h ≤ H, H/2
// otherwise) and at the average before; it is sent with probability
// 1/(1 + S_c). A fallback refused for a cross conflict meets the target as
// a primary does.
func gatewayRound(streams []DownlinkStream, poolOf []int, holds []float64, conflict [][]float64, sent, fb, next, nextFB []float64, st *gatewayState) {
	for _, xs := range [][]float64{st.booked, st.sentRate, st.w, st.double, st.busy, st.burst, st.fallRate, st.num, st.den, st.base} {
		clear(xs)
	}
	for p := range st.closures {
		st.closures[p] = st.closures[p][:0]
	}
	for z := range st.inClos {
		st.inClos[z] = math.NaN()
	}
	hold := func(y int) float64 { return holds[y] } // Airtime/DutyCycle
	// fallRate: the fallback answers sent into each target.
	fallRate := st.fallRate
	for y, sy := range streams {
		st.booked[y] += sy.Rate
		st.sentRate[y] += sy.Rate * sent[y]
		if sy.Fallback != 0 {
			t := sy.Fallback - 1
			st.booked[t] += sy.Rate * (1 - sent[y])
			st.sentRate[t] += sy.Rate * (1 - sent[y]) * fb[y]
			fallRate[t] += sy.Rate * (1 - sent[y]) * fb[y]
		}
	}
	for x := range streams {
		sum, sq := 0.0, 0.0
		for y := range streams {
			c := st.sentRate[y] * conflict[x][y]
			st.w[x] += c
			sq += c * c
			// Two answers of one pool can both conflict only where the
			// conflict interval is longer than their holding.
			if extra := conflict[x][y] - hold(y); extra > 0 {
				sum += (st.sentRate[y] * extra) * (st.sentRate[y] * extra) / 2
			}
		}
		// Pairs from different pools: (w² − Σ c²)/2.
		st.double[x] = (st.w[x]*st.w[x]-sq)/2 + sum
		st.w[x] = min(st.w[x], 1)
	}
	// Carried load per pool.
	num, den := st.num, st.den
	for y, sy := range streams {
		p := poolOf[y]
		num[p] += hold(y) * (sy.Rate*(1-st.w[y]) + fallRate[y])
		den[p] += hold(y) * sy.Rate * (1 - st.w[y])
	}
	for p := range st.busy {
		st.busy[p] = min(num[p]/(1+den[p]), 1)
	}
	for y := range streams {
		next[y] = (1 - st.busy[poolOf[y]]) * (1 - st.w[y])
		nextFB[y] = 1
	}
	// Closures of each pool: the held time, by the holding that started it.
	closures := st.closures
	for y := range streams {
		if st.sentRate[y] > 0 {
			closures[poolOf[y]] = append(closures[poolOf[y]], closure{st.sentRate[y] * hold(y), hold(y)})
		}
	}
	// within(H, h) = E[min(τ, h)]/h for τ uniform on (0, H): the part of a
	// look-back window h inside a burst of length H at a random moment of
	// it.
	within := func(H, h float64) float64 {
		if h <= H {
			return 1 - h/(2*H)
		}
		return H / (2 * h)
	}
	// inClosure(z) is the same over the closures of z's pool for the
	// holding of z's fallback target (computed once a round).
	inClosure := func(z int) float64 {
		if v := st.inClos[z]; !math.IsNaN(v) {
			return v
		}
		h := hold(streams[z].Fallback - 1)
		tw, m := 0.0, 0.0
		for _, c := range closures[poolOf[z]] {
			tw += c.weight
			m += c.weight * within(c.h, h)
		}
		v := 0.0
		if tw > 0 {
			v = m / tw
		}
		st.inClos[z] = v
		return v
	}
	// base[P]: the target pool's load at the average refusal rates.
	base := st.base
	for y, sy := range streams {
		base[poolOf[y]] += hold(y) * (1 - st.w[y]) * sy.Rate
		if sy.Fallback != 0 {
			t := sy.Fallback - 1
			base[poolOf[t]] += hold(t) * (1 - st.w[t]) * sy.Rate * (1 - sent[y])
		}
	}
	for x, sx := range streams {
		if sx.Fallback == 0 {
			continue
		}
		t, q, p := sx.Fallback-1, poolOf[x], poolOf[sx.Fallback-1]
		refused := 1 - sent[x]
		plain := 1 - st.busy[p]
		if refused <= 0 {
			nextFB[x] = plain * (1 - st.w[t])
			continue
		}
		// Refused because its own pool is held: every source of the pool
		// falls back at its full rate during the closure.
		sc := base[p]
		for z, sz := range streams {
			if sz.Fallback != 0 && poolOf[z] == q && poolOf[sz.Fallback-1] == p {
				tz := sz.Fallback - 1
				sc += hold(tz) * (1 - st.w[tz]) * sz.Rate * sent[z] * inClosure(z)
			}
		}
		pu := min(st.busy[q]/refused, 1)
		got := pu / (1 + sc)
		dev := pu * math.Abs(plain-1/(1+sc))
		// Refused for a cross conflict with y: x falls back at its full
		// rate while that conflict lasts (conflict[x][y] of booking time).
		rest := 1 - pu
		for y := range streams {
			l := conflict[x][y]
			if l <= 0 || st.sentRate[y] == 0 {
				continue
			}
			py := min((1-st.busy[q])*st.sentRate[y]*l/refused, rest)
			rest -= py
			sy := base[p] + hold(t)*(1-st.w[t])*sx.Rate*sent[x]*within(l, hold(t))
			got += py / (1 + sy)
			dev += py * math.Abs(plain-1/(1+sy))
		}
		got += rest * plain
		st.burst[x] = dev
		nextFB[x] = got * (1 - st.w[t])
	}
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
