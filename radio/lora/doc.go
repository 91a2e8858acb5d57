// Package lora supplies the LoRa and LoRaWAN building blocks of the energy
// model of a class A end device: how long each transmission and receive
// window lasts, and with what probability each branch of a cycle is taken.
//
// # Airtime and framing
//
// PHY describes a LoRa frame (SF, bandwidth, coding rate, preamble,
// header, CRC, low-data-rate optimisation) and PHY.Airtime gives its time
// on air from the published formula (Augustin, Yi, Clausen and Townsley,
// "A Study of LoRa: Long Range & Low Power Networks for the Internet of
// Things", Sensors 16(9):1466, 2016, eq. 3–4). PHYPayloadBytes adds the
// LoRaWAN 1.0.3 MAC framing (13 bytes plus FOpts); UplinkPHY and
// DownlinkPHY give the LoRaWAN frame settings (uplinks carry a payload CRC,
// downlinks do not).
//
// # Regions
//
// EU868, US915, AU915 and IN865 (all four: Regions) return immutable Region
// values holding the LoRaWAN Regional Parameters tables (RP002-1.0.3; which
// values are recalled from memory is said beside each table): data rates,
// payload limits, TXPower steps, the RX1 data-rate mapping and RX1
// frequencies, RX2 defaults, class A timing and ADR counters, the
// US902-928 dwell time and the European duty-cycle sub-bands.
// CheckInterval tells whether a reporting interval keeps the duty-cycle
// limit at each data rate. A ChannelMask selects the uplink channels a node
// or gateway uses (ChannelBlock: the eight-channel blocks of US902-928 and
// AU915-928); ChannelsCarrying counts a data rate's collision domains, and
// UplinkDutyCycle and DownlinkBand give the limits that bind.
//
// # Links, ADR and collisions
//
// Link describes where nodes sit (a law of the distance to the gateway), a
// log-distance path loss with log-normal shadowing, the gateway's noise
// figure and an installation margin. SettleADR turns it into the law of the
// data rate and transmit power that adaptive data rate settles on, and the
// share of nodes out of reach, by quadrature over distance. AlohaSuccess
// gives the pure-ALOHA success probability exp(−2G) (Abramson 1970) and
// UplinkCollisions applies it per data rate and channel.
//
// # Gateways
//
// GatewayDownlinks tells what share of the answers booked with a gateway it
// can send: each sub-band's duty cycle (the off-time rule) and its one
// transmitter, with Erlang's one-server loss formula per band and a stated
// error for the couplings between bands, and the fallback of an answer
// refused in RX1 to RX2 (DownlinkStream.Fallback; the fallbacks come in
// bursts, which the model takes into account); Region.DownlinkBand names
// the band of a downlink frequency. Answers beyond the budget are lost, and
// a site model feeds the loss and the fallback into the acknowledgement and
// retransmission laws and the node's receive energy (package scenario).
//
// # The class A cycle
//
// ClassA describes a node's reports: currents per state (TypicalCurrents is
// an example set: typical values, from memory; use your radio's data sheet),
// payload, region, the law of (data rate, power), confirmed or not,
// NbTrans and the downlink windows' probabilities (given, or derived with
// UplinkCollisions and DownlinkWindows). ClassA.Cycle returns the energy
// cycle (package energy): the setting drawn once per cycle and shared by
// every stage, the uplink, RX1 and RX2 (a downlink received, or a preamble
// listen), retransmissions after the ACK_TIMEOUT gap until a downlink
// arrives or NbTrans is spent (TruncatedGeometric attempts), then the
// floor. ClassA.Timelines gives the same timeline as plain data. The
// settings real networks use are fields: RX1DROffset, the RX2 window
// (RX2Window), the receive-window margin (DefaultClockMargin, 20 ms, common
// practice, from memory), the channel mask that sets the duty cycle timing
// retries and repetitions (after max(ACK_TIMEOUT, the off-time)), and
// Join-requests of a node that no longer hears its network (JoinEvery).
//
// # Cautions
//
// The regional tables and duty-cycle limits in this package are for
// planning, not for certification: they were transcribed by hand, they
// simplify the rules, and the rules change. Local regulations (in Europe
// ETSI EN 300 220 and the national implementation of ERC Recommendation
// 70-03; in the United States FCC Part 15) and the current edition of the
// LoRaWAN Regional Parameters govern. Example currents are typical values
// from memory; use your radio's data sheet. Predicted energies are
// planning figures, not guarantees.
//
// All quantities are SI (seconds, hertz, joules, amperes) except radio
// levels, which keep the trade's units: dBm for powers, dB for gains,
// losses and margins.
package lora
