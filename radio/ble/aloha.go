package ble

import (
	"fmt"
	"math"
)

// MaxNeighbours caps Neighbours.Count.
const MaxNeighbours = 1 << 20

// Neighbours are the other advertisers within range of a receiver, all
// alike: each sends one PDU of airtime PDU on every primary channel per
// advertising event, every advInterval Interval plus advDelay.
type Neighbours struct {
	Count    int     // number of other advertisers, 0 … MaxNeighbours
	PDU      float64 // airtime of each of their PDUs, s, > 0
	Interval float64 // their advInterval, s, 20 ms … 10.24 s in steps of 0.625 ms
}

// PDUSuccess returns the probability that an advertising PDU of airtime pdu
// (s, > 0) overlaps no PDU of the neighbours on its channel:
//
//	P = (1 − (pdu + nb.PDU) / (nb.Interval + AdvDelayMax/2))^nb.Count
//
// The model (unslotted ALOHA, as Abramson, "The ALOHA System", AFIPS 1970,
// but with renewal rather than Poisson traffic): every neighbour runs its
// advertising events as a stationary renewal process with intervals
// advInterval + advDelay (mean nb.Interval + 5 ms), independent of the
// others and of the PDU heard; any overlap, however short, loses the PDU
// (no capture); scan requests and responses are not counted. A neighbour's
// PDUs on one channel are at least advInterval ≥ 20 ms apart, longer than
// pdu + nb.PDU, so at most one can overlap, and by the renewal-reward
// theorem it does with probability (pdu + nb.PDU)/E[interval]: the formula
// is exact for the model. For many neighbours it approaches the Poisson
// form exp(−2G) with G the offered load per channel.
func PDUSuccess(pdu float64, nb Neighbours) (float64, error) {
	const fn = "PDUSuccess"
	if !finite(pdu) || pdu <= 0 {
		return 0, paramErr(fn, "pdu", pdu, "must be finite and > 0 s")
	}
	if nb.Count < 0 || nb.Count > MaxNeighbours {
		return 0, paramErr(fn, "Neighbours.Count", nb.Count, fmt.Sprintf("must be 0 … %d", MaxNeighbours))
	}
	if !finite(nb.PDU) || nb.PDU <= 0 {
		return 0, paramErr(fn, "Neighbours.PDU", nb.PDU, "must be finite and > 0 s")
	}
	if err := checkAdvInterval(fn, "Neighbours.Interval", nb.Interval); err != nil {
		return 0, err
	}
	if pdu+nb.PDU >= nb.Interval {
		return 0, paramErr(fn, "pdu", pdu, fmt.Sprintf("plus Neighbours.PDU must be shorter than the neighbours' advInterval %g s", nb.Interval))
	}
	q := (pdu + nb.PDU) / (nb.Interval + AdvDelayMax/2)
	if nb.Count == 0 {
		return 1, nil
	}
	return math.Exp(float64(nb.Count) * math.Log1p(-q)), nil
}
