package ieee802154_test

import (
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/radio/ieee802154"
)

// Fates of a frame in the packet-level sampler.
const (
	fateDelivered = iota
	fateAccessFailure
	fateRetryLimit
)

// simOut is one frame played by simFrame.
type simOut struct {
	energy   float64 // Σ current·voltage·time over the states, J
	active   float64 // time in states, s
	fate     int
	runs, tx int
	ccas1    int     // CCAs of the first CSMA-CA run
	backoff1 int     // backoff of the first run, unit backoff periods
	run1     float64 // duration of the first run's backoffs and CCAs (no wake), s
}

// simFrame plays the sending of one frame packet by packet, written from
// the standard's description and independent of the package's laws: the
// unslotted CSMA-CA algorithm (IEEE Std 802.15.4-2020 §6.2.5.1: NB = 0,
// BE = macMinBE; a backoff uniform on 0 … 2^BE − 1 unit periods; a CCA; an
// idle channel starts the transmission, a busy one raises NB and BE (up to
// macMaxBE) and fails once NB > macMaxCSMABackoffs), then the turnaround
// and the PPDU, then the acknowledgement: received aTurnaroundTime after
// the frame, or waited for during macAckWaitDuration and the frame sent
// again with a fresh run while macMaxFrameRetries allow. The times are
// written out from the standard's symbol counts, not taken from the
// package: aUnitBackoffPeriod 20, CCA 8, aTurnaroundTime 12 symbols; a
// PPDU of SHR + PHR (6 octets) and the PSDU; an acknowledgement PSDU of 5
// octets; macAckWaitDuration = 20 + 12 + SHR symbols + 6 octets. It
// assumes the PHY has a 5-octet SHR and a 1-octet PHR and the frame the
// zero Addressing (11 octets of MAC overhead).
func simFrame(r *rand.Rand, n ieee802154.Node) simOut { return playFrame(sampled{r}, n) }

// draws is the randomness of a frame: a backoff uniform on 0 … n − 1 and
// a CCA or acknowledgement that comes out true with probability p.
type draws interface {
	intN(n int) int
	coin(p float64) bool
}

// sampled draws from a random source.
type sampled struct{ r *rand.Rand }

func (s sampled) intN(n int) int      { return s.r.IntN(n) }
func (s sampled) coin(p float64) bool { return s.r.Float64() < p }

// playFrame is simFrame with the draws passed in.
func playFrame(r draws, n ieee802154.Node) simOut {
	sym := 1 / n.PHY.SymbolRate
	spo := 8 / float64(n.PHY.BitsPerSymbol) // symbols per octet
	unit, cca, ta := 20*sym, 8*sym, 12*sym
	frame := float64(6+11+n.Payload) * spo * sym
	ackRx := ta + 11*spo*sym
	ackWait := (20 + 12 + 5*spo + 6*spo) * sym
	if n.AckWait > 0 {
		ackWait = n.AckWait
	}
	cur, v := n.Currents, n.Currents.Voltage
	var o simOut
	spend := func(current, t float64) {
		o.energy += current * v * t
		o.active += t
	}
	boCurrent := cur.Idle
	if n.Backoff == ieee802154.BackoffSleep {
		boCurrent = cur.Sleep
	}
	for run := 1; ; run++ {
		o.runs = run
		nb, be := 0, n.CSMA.MinBE
		for {
			u := r.intN(1 << be)
			spend(boCurrent, float64(u)*unit)
			if n.Backoff == ieee802154.BackoffSleep && u > 0 {
				spend(cur.Idle, n.Wake)
			}
			spend(cur.RX, cca)
			if run == 1 {
				o.ccas1++
				o.backoff1 += u
				o.run1 += float64(u)*unit + cca
			}
			if !r.coin(n.Busy) {
				break // idle channel
			}
			nb++
			be = min(be+1, n.CSMA.MaxBE)
			if nb > n.CSMA.MaxCSMABackoffs {
				o.fate = fateAccessFailure
				return o
			}
		}
		spend(cur.Turnaround, ta)
		spend(cur.TX, frame)
		o.tx++
		if !n.AckRequest {
			o.fate = fateDelivered
			return o
		}
		if !r.coin(n.AckLoss) {
			spend(cur.RX, ackRx)
			o.fate = fateDelivered
			return o
		}
		spend(cur.RX, ackWait)
		if run == n.CSMA.MaxFrameRetries+1 {
			o.fate = fateRetryLimit
			return o
		}
	}
}

// enumerated replays playFrame along every sequence of draws, depth first:
// path holds the outcome chosen at each draw so far, arity the number of
// outcomes there, prob the path's probability.
type enumerated struct {
	path, arity []int
	pos         int
	prob        float64
}

func (e *enumerated) next(arity int) int {
	if e.pos == len(e.path) {
		e.path = append(e.path, 0)
		e.arity = append(e.arity, arity)
	}
	e.pos++
	return e.path[e.pos-1]
}

func (e *enumerated) intN(n int) int {
	e.prob /= float64(n)
	return e.next(n)
}

func (e *enumerated) coin(p float64) bool {
	if e.next(2) == 0 {
		e.prob *= p
		return true
	}
	e.prob *= 1 - p
	return false
}

// enumFrames calls f with every path's frame and probability.
func enumFrames(n ieee802154.Node, f func(o simOut, p float64)) {
	e := &enumerated{}
	for {
		e.pos, e.prob = 0, 1
		o := playFrame(e, n)
		f(o, e.prob)
		e.path, e.arity = e.path[:e.pos], e.arity[:e.pos]
		i := len(e.path) - 1
		for i >= 0 && e.path[i] == e.arity[i]-1 {
			i--
		}
		if i < 0 {
			return
		}
		e.path[i]++
		e.path, e.arity = e.path[:i+1], e.arity[:i+1]
	}
}
