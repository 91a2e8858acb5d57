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
	ccas1    int // CCAs of the first CSMA-CA run
	backoff1 int // backoff of the first run, unit backoff periods
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
func simFrame(r *rand.Rand, n ieee802154.Node) simOut {
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
			u := r.IntN(1 << be)
			spend(boCurrent, float64(u)*unit)
			if n.Backoff == ieee802154.BackoffSleep && u > 0 {
				spend(cur.Idle, n.Wake)
			}
			spend(cur.RX, cca)
			if run == 1 {
				o.ccas1++
				o.backoff1 += u
			}
			if r.Float64() >= n.Busy {
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
		if r.Float64() >= n.AckLoss {
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
