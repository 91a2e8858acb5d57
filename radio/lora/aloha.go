package lora

import (
	"fmt"
	"math"
)

// AlohaSuccess returns the probability that a frame of pure ALOHA traffic
// escapes collision at offered load G (frames per frame time, ≥ 0):
//
//	P = exp(−2G)
//
// (Abramson, "The ALOHA System", AFIPS Fall Joint Computer Conference,
// 1970): no other frame may start within one frame time before or after.
func AlohaSuccess(load float64) (float64, error) {
	if !finite(load) || load < 0 {
		return 0, paramErr("AlohaSuccess", "load", load, "must be finite and >= 0")
	}
	return math.Exp(-2 * load), nil
}

// AlohaThroughput returns the pure-ALOHA throughput S = G·exp(−2G), the
// share of time carrying frames that get through; its maximum is 1/(2e) at
// G = 1/2.
func AlohaThroughput(load float64) (float64, error) {
	p, err := AlohaSuccess(load)
	if err != nil {
		return 0, fmt.Errorf("lora.AlohaThroughput: %w", err)
	}
	return load * p, nil
}

// OfferedLoad returns the pure-ALOHA offered load G on one channel of
// nodes nodes (≥ 0) that each send frames frames (the mean number of
// transmissions per report, ≥ 0) of the given airtime (s, > 0) every
// interval seconds (> 0), spread evenly over channels channels (≥ 1):
//
//	G = nodes · frames · airtime / (interval · channels)
func OfferedLoad(nodes, frames, airtime, interval float64, channels int) (float64, error) {
	const fn = "OfferedLoad"
	switch {
	case !finite(nodes) || nodes < 0:
		return 0, paramErr(fn, "nodes", nodes, "must be finite and >= 0")
	case !finite(frames) || frames < 0:
		return 0, paramErr(fn, "frames", frames, "must be finite and >= 0")
	case !finite(airtime) || airtime <= 0:
		return 0, paramErr(fn, "airtime", airtime, "must be finite and > 0 s")
	case !finite(interval) || interval <= 0:
		return 0, paramErr(fn, "interval", interval, "must be finite and > 0 s")
	case channels < 1:
		return 0, paramErr(fn, "channels", channels, "must be >= 1")
	}
	return nodes * frames * airtime / (interval * float64(channels)), nil
}

// Traffic describes the uplinks that share a gateway's channels.
type Traffic struct {
	Nodes    float64 // number of nodes, >= 0
	Interval float64 // mean reporting interval of each node, s, > 0
	Channels int     // uplink channels the nodes hop over evenly, >= 1
	App      int     // application payload per uplink, bytes
	FOpts    int     // FOpts per uplink, bytes
	// Frames is the mean number of transmissions per report (first
	// transmission and retransmissions), >= 1; 0 means 1.
	Frames float64
}

// Collisions is the pure-ALOHA outcome for one data rate.
type Collisions struct {
	DR      int     // data rate
	Nodes   float64 // expected number of nodes at this data rate
	Airtime float64 // time on air of one uplink, s
	Load    float64 // offered load G per channel
	Success float64 // probability an uplink escapes collision, exp(−2G)
}

// UplinkCollisions returns, per data rate present in settings, the
// pure-ALOHA load and success probability of an uplink when
// traffic.Nodes nodes are spread over the settings with their
// probabilities (for example Settled.Settings(); probabilities summing to
// less than 1 leave the rest of the nodes out, such as the out-of-reach
// share). Each data rate is its own collision domain (spreading factors
// treated as orthogonal, and capture ignored: a common simplification that
// is optimistic for inter-SF interference and pessimistic for capture).
func UplinkCollisions(reg Region, settings []Setting, traffic Traffic) ([]Collisions, error) {
	const fn = "UplinkCollisions"
	if reg.t == nil {
		return nil, errZeroRegion()
	}
	frames := traffic.Frames
	if frames == 0 {
		frames = 1
	}
	if !finite(frames) || frames < 1 {
		return nil, paramErr(fn, "traffic.Frames", traffic.Frames, "must be finite and >= 1 (0 means 1)")
	}
	share := map[int]float64{}
	var order []int
	total := 0.0
	for i, s := range settings {
		if !(s.Prob >= 0 && s.Prob <= 1) {
			return nil, paramErr(fn, fmt.Sprintf("settings[%d].Prob", i), s.Prob, "must be in [0, 1]")
		}
		if _, ok := share[s.DR]; !ok {
			order = append(order, s.DR)
		}
		share[s.DR] += s.Prob
		total += s.Prob
	}
	if total > 1+1e-9 {
		return nil, paramErr(fn, "settings", fmt.Sprintf("sum %g", total), "probabilities must sum to at most 1")
	}
	var out []Collisions
	for _, dr := range order {
		t, err := reg.UplinkAirtime(dr, traffic.App, traffic.FOpts)
		if err != nil {
			return nil, err
		}
		n := traffic.Nodes * share[dr]
		g, err := OfferedLoad(n, frames, t, traffic.Interval, traffic.Channels)
		if err != nil {
			return nil, fmt.Errorf("lora.%s: traffic: %w", fn, err)
		}
		p, _ := AlohaSuccess(g)
		out = append(out, Collisions{DR: dr, Nodes: n, Airtime: t, Load: g, Success: p})
	}
	return out, nil
}

// DownlinkProbability returns the probability that a node receives the
// downlink that answers one uplink: the uplink is received (upReceived),
// the network answers it (answers) and the answer reaches the node
// (downReceived), independently:
//
//	P = upReceived · answers · downReceived
//
// Each factor must be a probability in [0, 1].
func DownlinkProbability(upReceived, answers, downReceived float64) (float64, error) {
	for _, f := range []struct {
		name string
		v    float64
	}{{"upReceived", upReceived}, {"answers", answers}, {"downReceived", downReceived}} {
		if !(f.v >= 0 && f.v <= 1) {
			return 0, paramErr("DownlinkProbability", f.name, f.v, "must be a probability in [0, 1]")
		}
	}
	return upReceived * answers * downReceived, nil
}
