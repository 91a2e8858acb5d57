package lora

import "fmt"

// IntervalCheck is the duty-cycle verdict for one data rate: whether a node
// sending attempts frames per reporting interval keeps the sub-band's limit.
type IntervalCheck struct {
	DR          int     // the uplink data rate
	Fits        bool    // whether the payload fits the data rate at all
	Airtime     float64 // time on air of one frame, s (0 when !Fits)
	OffTime     float64 // shortest silence after each frame, s: Airtime·(1/d − 1)
	OnTime      float64 // time on air per reporting interval, s: attempts·Airtime
	MinInterval float64 // shortest feasible reporting interval, s: OnTime / d
	Feasible    bool    // Fits and interval >= MinInterval
	Warning     string  // why the interval is infeasible; empty when Feasible
}

// CheckInterval tells, for every uplink LoRa data rate of the region,
// whether a node that sends attempts frames (the first transmission and its
// retransmissions, ≥ 1) of app application bytes and fOpts bytes of FOpts
// every interval seconds keeps the duty-cycle limit of the sub-band holding
// freq (Hz). The limit is the share d of time on air in the sub-band,
// counted over the node's own frames (ETSI EN 300 220 / ERC Recommendation
// 70-03 Annex 1); the node then needs
//
//	interval ≥ attempts · airtime / d
//
// and, after each frame, a silence of airtime·(1/d − 1) (common practice,
// spreading the hour's budget evenly). Every channel of a sub-band shares
// its budget, so hopping between the default channels does not add to it.
//
// It fails, wrapping ErrParam, when freq lies outside every duty-cycle
// sub-band of the region (US902-928 has none: use CheckDwellTime), when
// attempts < 1 or when interval is not finite and > 0. A payload too large
// for a data rate gives that data rate's row Fits = false and a warning.
//
// The limits are for planning, not certification: local regulations govern.
func (r Region) CheckInterval(freq float64, app, fOpts, attempts int, interval float64) ([]IntervalCheck, error) {
	const fn = "Region.CheckInterval"
	sb, err := r.SubBandAt(freq)
	if err != nil {
		return nil, err
	}
	if attempts < 1 {
		return nil, paramErr(fn, "attempts", attempts, "must be >= 1")
	}
	if !finite(interval) || interval <= 0 {
		return nil, paramErr(fn, "interval", interval, "must be finite and > 0 s")
	}
	if _, err := PHYPayloadBytes(app, fOpts); err != nil {
		return nil, err
	}
	var out []IntervalCheck
	for _, d := range r.DataRates() {
		if !d.Uplink {
			continue
		}
		c := IntervalCheck{DR: d.Index}
		t, err := r.UplinkAirtime(d.Index, app, fOpts)
		if err != nil {
			c.Warning = fmt.Sprintf("DR%d: %v", d.Index, err)
			out = append(out, c)
			continue
		}
		c.Fits = true
		c.Airtime = t
		c.OffTime, _ = sb.OffTime(t)
		c.OnTime = float64(attempts) * t
		c.MinInterval = c.OnTime / sb.DutyCycle
		c.Feasible = interval >= c.MinInterval
		if !c.Feasible {
			c.Warning = fmt.Sprintf("DR%d: %d × %.4g s on air per %.4g s interval is %.3g %% of the time, above the %g %% limit of %s; the interval must be at least %.4g s",
				d.Index, attempts, t, interval, 100*c.OnTime/interval, 100*sb.DutyCycle, sb, c.MinInterval)
		}
		out = append(out, c)
	}
	return out, nil
}
