// Package packetsim plays a fleet scenario packet by packet: the
// independent path against which the library's laws are checked.
//
// It knows nothing of the library's laws. From a scenario it places every
// node uniformly over its group's annulus around its gateway, draws the
// node's shadowing once, lets adaptive data rate pick the node's data rate and
// transmit power from that geometry, and then runs each node's reports in
// time: a jittered period, the work steps with their drawn durations, the
// uplink on a channel drawn at random among those of its gateway that carry
// its data rate, the receive windows and the repetitions or retransmissions.
// An uplink is lost when another frame on the same gateway, data rate and
// channel overlaps it in time (no capture). The network answers a received
// uplink, in RX1 or RX2, with the scenario's probabilities; the gateway
// takes the answer on or loses it (below); a sent answer is lost on the way
// with the scenario's probability. Each cycle's energy is the sum over the
// states the node went through of supply current × voltage × time, with the
// sleep current filling the rest of the period.
//
// Only the radio formulas are taken from package lora: time on air, symbol
// time, demodulation floors, the regional tables (RX1 data rates and
// frequencies, sub-bands and their duty cycles) and class A timing.
//
// The rules it plays (they are the site model's, restated):
//
//   - ADR: the fastest data rate whose link surplus
//     EIRP(max) + gateway gain − path loss − floor(DR) keeps the installation
//     margin; at the fastest data rate, the lowest transmit power that keeps it.
//     A node that misses the margin at the slowest data rate and full power is
//     out of reach: it is kept at the ADR back-off (slowest data rate,
//     TXPower 0), every uplink of it is lost, it is answered never, and its
//     frames are left out of the collision domains (they arrive below the
//     margin, where a stronger frame survives the overlap).
//   - Timeline of one attempt: uplink; wait RECEIVE_DELAY1 less the clock
//     margin; RX1 open for margin + preamble symbols (empty) or margin + the
//     downlink's airtime (answer received); if RX1 was empty, wait until
//     RECEIVE_DELAY2 less the margin and open RX2 likewise. A received answer
//     ends the attempts; otherwise, while attempts remain, the next one starts
//     after a gap uniform over the ACK_TIMEOUT range (confirmed) or at once
//     (a repetition), but never before airtime/d after the previous start
//     (the off-time rule of the node's sub-band, duty cycle d).
//   - The gateway: an answer is booked when its uplink ends, to be sent
//     RECEIVE_DELAY1 (RX1, on the RX1 frequency of the uplink's channel) or
//     RECEIVE_DELAY2 (RX2) later; it is lost when it would overlap, on the
//     gateway's one transmitter or within its sub-band's closed time
//     (airtime/d from a start), an answer taken on before. An answer
//     refused in RX1 is booked at once in RX2 (the network server's
//     fallback) and taken on there or lost by the same rule.
//   - The next report starts one period after the previous one started,
//     whatever the attempts did.
package packetsim
