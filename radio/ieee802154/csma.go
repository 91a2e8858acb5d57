package ieee802154

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// CSMA holds the MAC attributes of the unslotted CSMA-CA algorithm and of
// the retransmissions (IEEE Std 802.15.4-2020, CSMA-CA algorithm §6.2.5.1
// and the MAC PIB attributes; ranges and defaults as in IEEE Std
// 802.15.4-2006 §7.5.1.4 and Table 86, from memory). The zero value is not
// valid (macMaxBE must be at least 3): start from DefaultCSMA.
//
// The algorithm, for one CSMA-CA run: NB = 0, BE = macMinBE; wait a number
// of unit backoff periods drawn uniformly from 0 … 2^BE − 1; perform a CCA;
// if the channel is idle, transmit; otherwise NB = NB + 1 and
// BE = min(BE + 1, macMaxBE), and if NB > macMaxCSMABackoffs the run ends
// in a channel-access failure, else wait again. A run thus performs
// 1 … macMaxCSMABackoffs + 1 backoffs, each followed by one CCA.
//
// A frame sent with an acknowledgement request that gets none within
// macAckWaitDuration is sent again, with a fresh CSMA-CA run, up to
// macMaxFrameRetries times. A channel-access failure ends the frame's
// sending (the MAC reports CHANNEL_ACCESS_FAILURE to the next higher layer
// and does not retry).
type CSMA struct {
	MinBE           int // macMinBE, 0 … MaxBE (default 3)
	MaxBE           int // macMaxBE, 3 … 8 (default 5)
	MaxCSMABackoffs int // macMaxCSMABackoffs, 0 … 5 (default 4)
	MaxFrameRetries int // macMaxFrameRetries, 0 … 7 (default 3)
}

// DefaultCSMA returns the standard's defaults: macMinBE 3, macMaxBE 5,
// macMaxCSMABackoffs 4, macMaxFrameRetries 3.
func DefaultCSMA() CSMA {
	return CSMA{MinBE: 3, MaxBE: 5, MaxCSMABackoffs: 4, MaxFrameRetries: 3}
}

// Validate returns an error wrapping ErrParam naming the first attribute
// outside the standard's range, or nil.
func (c CSMA) Validate() error {
	const fn = "CSMA.Validate"
	if c.MaxBE < 3 || c.MaxBE > 8 {
		return paramErr(fn, "MaxBE (macMaxBE)", c.MaxBE, "must be 3 … 8")
	}
	if c.MinBE < 0 || c.MinBE > c.MaxBE {
		return paramErr(fn, "MinBE (macMinBE)", c.MinBE, fmt.Sprintf("must be 0 … macMaxBE (%d)", c.MaxBE))
	}
	if c.MaxCSMABackoffs < 0 || c.MaxCSMABackoffs > 5 {
		return paramErr(fn, "MaxCSMABackoffs (macMaxCSMABackoffs)", c.MaxCSMABackoffs, "must be 0 … 5")
	}
	if c.MaxFrameRetries < 0 || c.MaxFrameRetries > 7 {
		return paramErr(fn, "MaxFrameRetries (macMaxFrameRetries)", c.MaxFrameRetries, "must be 0 … 7")
	}
	return nil
}

// BE returns the backoff exponent of the i-th backoff of a run (i = 0 for
// the first): min(MinBE + i, MaxBE).
func (c CSMA) BE(i int) int { return min(c.MinBE+i, c.MaxBE) }

// check validates c and the busy probability for the function fn.
func (c CSMA) check(fn string, busy float64) error {
	if err := c.Validate(); err != nil {
		return fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	if !probability(busy) {
		return paramErr(fn, "busy", busy, "must be a probability in [0, 1]")
	}
	return nil
}

// stages returns macMaxCSMABackoffs + 1, the most backoffs (and CCAs) of a
// run.
func (c CSMA) stages() int { return c.MaxCSMABackoffs + 1 }

// ccaProbs returns P(N = k) for k = 1 … m+1 (index k−1), the number of CCAs
// of a run, and the failure probability b^(m+1), with m =
// macMaxCSMABackoffs and each CCA busy with probability b independently:
//
//	P(N = k) = b^(k−1)·(1 − b)  for k <= m,   P(N = m+1) = b^m
//
// Runs that end with k CCAs and succeed have probability b^(k−1)·(1 − b);
// the failing run has m+1 CCAs. ok is 1 − b^(m+1), the probability that
// the run succeeds.
func (c CSMA) ccaProbs(b float64) (probs []float64, fail, ok float64) {
	n := c.stages()
	probs = make([]float64, n)
	pk := 1.0 // b^(k−1)
	for k := 1; k <= n; k++ {
		if k < n {
			probs[k-1] = pk * (1 - b)
		} else {
			probs[k-1] = pk
		}
		pk *= b
	}
	// ok = 1 − b^(m+1) from expm1, so that it keeps its digits for b near 1.
	return probs, math.Pow(b, float64(n)), -math.Expm1(float64(n) * math.Log(b))
}

// CCAs returns the law of the number of CCAs in one CSMA-CA run, which is
// also its number of backoffs, when each CCA finds the channel busy with
// probability busy, independently of the others (the decoupling
// assumption of Bianchi, IEEE JSAC 18(3):535–547, 2000):
//
//	P(N = k) = b^(k−1)·(1 − b)  for k = 1 … m,   P(N = m + 1) = b^m
//
// with m = MaxCSMABackoffs; the run fails exactly when its m + 1 CCAs are
// all busy. Exact (finite discrete).
func (c CSMA) CCAs(busy float64) (dist.Discrete, error) {
	if err := c.check("CSMA.CCAs", busy); err != nil {
		return dist.Discrete{}, err
	}
	probs, _, _ := c.ccaProbs(busy)
	vals := make([]float64, len(probs))
	for i := range vals {
		vals[i] = float64(i + 1)
	}
	return dist.NewDiscrete(vals, probs)
}

// AccessFailure returns the probability that one CSMA-CA run ends in a
// channel-access failure, b^(m+1) with m = MaxCSMABackoffs (every CCA
// busy), computed by math.Pow (relative error below 1e-15).
func (c CSMA) AccessFailure(busy float64) (float64, error) {
	if err := c.check("CSMA.AccessFailure", busy); err != nil {
		return 0, err
	}
	_, f, _ := c.ccaProbs(busy)
	return f, nil
}

// stageBackoff returns the law of the i-th backoff of a run in unit backoff
// periods: uniform on 0 … 2^BE(i) − 1.
func (c CSMA) stageBackoff(i int) (dist.Discrete, error) {
	n := 1 << c.BE(i)
	vals := make([]float64, n)
	probs := make([]float64, n)
	for j := range vals {
		vals[j], probs[j] = float64(j), 1/float64(n)
	}
	return dist.NewDiscrete(vals, probs)
}

// backoffSums returns, for k = 1 … m+1, the law of the sum of the first k
// backoffs of a run in unit backoff periods (dist.Sum of the discrete
// uniforms: exact).
func (c CSMA) backoffSums() ([]dist.Law, error) {
	out := make([]dist.Law, c.stages())
	for i := range out {
		u, err := c.stageBackoff(i)
		if err != nil {
			return nil, err
		}
		if i == 0 {
			out[i] = u
			continue
		}
		if out[i], err = dist.Sum(out[i-1], u); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// BackoffPeriods returns the law of the total backoff of one CSMA-CA run,
// in unit backoff periods: the random sum
//
//	B = U_0 + … + U_(N−1),   U_i uniform on 0 … 2^BE(i) − 1,
//
// with N the number of backoffs (CCAs), independent of the U_i. Exact: the
// mixture over N of the k-fold sums, each an exact convolution of discrete
// uniforms (dist.Sum), at most 1 + Σ_i (2^BE(i) − 1) <= 1531 atoms.
func (c CSMA) BackoffPeriods(busy float64) (dist.Law, error) {
	if err := c.check("CSMA.BackoffPeriods", busy); err != nil {
		return nil, err
	}
	probs, _, _ := c.ccaProbs(busy)
	sums, err := c.backoffSums()
	if err != nil {
		return nil, fmt.Errorf("ieee802154.CSMA.BackoffPeriods: %w", err)
	}
	l, err := dist.Mixture(probs, sums)
	if err != nil {
		return nil, fmt.Errorf("ieee802154.CSMA.BackoffPeriods: %w", err)
	}
	return l, nil
}

// BackoffTime returns the law of the time one CSMA-CA run spends in
// backoff, in seconds: BackoffPeriods scaled by the PHY's
// aUnitBackoffPeriod (320 µs on OQPSK2450). Exact (finite discrete).
func (c CSMA) BackoffTime(p PHY, busy float64) (dist.Law, error) {
	if err := p.Validate(); err != nil {
		return nil, fmt.Errorf("ieee802154.CSMA.BackoffTime: %w", err)
	}
	l, err := c.BackoffPeriods(busy)
	if err != nil {
		return nil, err
	}
	return dist.Affine(l, p.UnitBackoffPeriod(), 0)
}

// RunTime returns the law of the duration of one CSMA-CA run on the PHY
// p, in seconds: its backoffs and CCAs,
//
//	D = (U_0 + … + U_(N−1))·aUnitBackoffPeriod + N·CCATime,
//
// with N the number of CCAs (CSMA.CCAs) and the backoffs U_i as in
// BackoffPeriods. A run that succeeds is followed by the turnaround and the
// transmission; one that fails ends the frame's sending. Exact (finite
// discrete): the mixture over N of the shifted k-fold sums.
func (c CSMA) RunTime(p PHY, busy float64) (dist.Law, error) {
	const fn = "CSMA.RunTime"
	if err := p.Validate(); err != nil {
		return nil, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	if err := c.check(fn, busy); err != nil {
		return nil, err
	}
	probs, _, _ := c.ccaProbs(busy)
	sums, err := c.backoffSums()
	if err != nil {
		return nil, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	laws := make([]dist.Law, len(sums))
	for k, s := range sums {
		if laws[k], err = dist.Affine(s, p.UnitBackoffPeriod(), float64(k+1)*p.CCATime()); err != nil {
			return nil, fmt.Errorf("ieee802154.%s: %w", fn, err)
		}
	}
	l, err := dist.Mixture(probs, laws)
	if err != nil {
		return nil, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	return l, nil
}

// Outcomes are the fates of one frame and the laws of how many CSMA-CA runs
// and transmissions it takes.
type Outcomes struct {
	// Delivered is the probability that the frame is acknowledged (with an
	// acknowledgement request) or transmitted (without one).
	Delivered float64
	// AccessFailure is the probability that a CSMA-CA run ends the frame's
	// sending in a channel-access failure.
	AccessFailure float64
	// RetryLimit is the probability that macMaxFrameRetries + 1
	// transmissions all go unacknowledged (0 without an acknowledgement
	// request). Delivered + AccessFailure + RetryLimit = 1.
	RetryLimit float64
	// Runs is the law of the number of CSMA-CA runs, 1 … macMaxFrameRetries
	// + 1; the number of retries is Runs − 1.
	Runs dist.Discrete
	// Transmissions is the law of the number of times the frame goes on
	// air, 0 … macMaxFrameRetries + 1.
	Transmissions dist.Discrete
}

// attemptProbs returns, for one attempt (a CSMA-CA run that fails with
// probability f and succeeds with probability ok = 1 − f, then a
// transmission), the probability of a transmission without
// acknowledgement, lost = ok·a, and 1 − lost = f + ok·(1 − a), computed
// without cancellation.
func attemptProbs(f, ok, ackLoss float64) (lost, notLost float64) {
	return ok * ackLoss, f + ok*(1-ackLoss)
}

// Frame returns the outcomes of sending one frame when each CCA is busy
// with probability busy and each transmission goes unacknowledged (the
// frame or its acknowledgement lost) with probability ackLoss, all
// independently; ack tells whether the frame requests an acknowledgement
// (without one, ackLoss is ignored and the frame is sent once). With f the
// access-failure probability of a run and L = (1 − f)·ackLoss, the
// probability that an attempt is transmitted and not acknowledged:
//
//	P(delivered at attempt j) = L^(j−1)·(1 − f)·(1 − ackLoss),
//	P(access failure at attempt j) = L^(j−1)·f,   j = 1 … R + 1,
//	P(retry limit) = L^(R+1),   R = macMaxFrameRetries.
//
// Exact up to rounding (relative 1e-15).
func (c CSMA) Frame(busy, ackLoss float64, ack bool) (Outcomes, error) {
	const fn = "CSMA.Frame"
	if err := c.check(fn, busy); err != nil {
		return Outcomes{}, err
	}
	if !probability(ackLoss) {
		return Outcomes{}, paramErr(fn, "ackLoss", ackLoss, "must be a probability in [0, 1]")
	}
	_, f, ok := c.ccaProbs(busy)
	attempts := c.MaxFrameRetries + 1
	if !ack {
		attempts, ackLoss = 1, 0
	}
	lost, _ := attemptProbs(f, ok, ackLoss)
	var o Outcomes
	runs := make([]float64, attempts)
	tx := make([]float64, attempts+1)
	reach := 1.0 // L^(j−1)
	for j := 1; j <= attempts; j++ {
		pd, pf := reach*ok*(1-ackLoss), reach*f
		o.Delivered += pd
		o.AccessFailure += pf
		runs[j-1] += pd + pf
		tx[j] += pd
		tx[j-1] += pf
		reach *= lost
	}
	o.RetryLimit = reach
	runs[attempts-1] += reach
	tx[attempts] += reach
	rv := make([]float64, attempts)
	tv := make([]float64, attempts+1)
	for j := range tv {
		tv[j] = float64(j)
		if j > 0 {
			rv[j-1] = float64(j)
		}
	}
	var err error
	if o.Runs, err = dist.NewDiscrete(rv, runs); err != nil {
		return Outcomes{}, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	if o.Transmissions, err = dist.NewDiscrete(tv, tx); err != nil {
		return Outcomes{}, fmt.Errorf("ieee802154.%s: %w", fn, err)
	}
	return o, nil
}
