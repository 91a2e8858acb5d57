// Package packetsim plays a fleet scenario packet by packet: the
// independent path against which the library's laws are checked.
//
// It knows nothing of the library's laws. From a scenario it places every
// node uniformly over its group's annulus around its gateway, draws the
// node's shadowing once, lets adaptive data rate pick the node's data rate and
// transmit power from that geometry, and then runs each node's reports in
// time: a jittered period, the work steps with their drawn durations, the
// uplink on a channel drawn at random, the receive windows and, for confirmed
// uplinks, the retransmissions. An uplink is lost when another frame on the
// same gateway, data rate and channel overlaps it in time (no capture). The
// network answers a received uplink, in RX1 or RX2, and the answer is lost,
// with the scenario's probabilities. Each cycle's energy is the sum over the
// states the node went through of supply current × voltage × time, with the
// sleep current filling the rest of the period.
//
// Only the radio formulas are taken from package lora: time on air, symbol
// time, demodulation floors, the regional tables and class A timing.
//
// The rules it plays (they are the scenario's model, restated):
//
//   - ADR: the fastest data rate whose link surplus
//     EIRP(max) + gateway gain − path loss − floor(DR) keeps the installation
//     margin; at the fastest data rate, the lowest transmit power that keeps it.
//     A node that misses the margin at the slowest data rate and full power is
//     out of reach: it is placed again (and counted), so the fleet is made of
//     nodes in reach.
//   - Timeline of one attempt: uplink; wait RECEIVE_DELAY1 less the clock
//     margin; RX1 open for margin + preamble symbols (empty) or margin + the
//     downlink's airtime (answer received); if RX1 was empty, wait until
//     RECEIVE_DELAY2 less the margin and open RX2 likewise. A received answer
//     ends the attempts; otherwise, while attempts remain, wait a gap uniform
//     over the ACK_TIMEOUT range and transmit again.
//   - The next report starts one period after the previous one started,
//     whatever the attempts did.
package packetsim
