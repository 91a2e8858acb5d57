// Package ble supplies the Bluetooth Low Energy building blocks of a sensor
// node's energy model: how long each packet and each listening window lasts
// on the LE 1M, LE 2M and LE Coded PHYs, advertising events and connection
// events as energy cycles (package energy), the law of the time a scanner
// takes to discover an advertiser, and collisions among advertisers.
//
// The source throughout is the Bluetooth Core Specification, version 5.3
// (cited as "v5.3 Vol V Part P §S"); section numbers and values given "from
// memory" were recalled, not re-read, and are marked so.
//
// # PHYs and packets
//
// PHY.Airtime gives a packet's time on air from the packet formats of
// Vol 6 Part B §2.1 (uncoded: preamble, access address, PDU header and
// payload, CRC; 8 µs an octet on LE 1M, 4 µs on LE 2M) and §2.2 (coded,
// S = 2 and S = 8; from memory): exact up to one rounding. TIFS is the
// inter frame space T_IFS = 150 µs (Vol 6 Part B §4.1.1).
//
// # Advertising
//
// Advertiser describes legacy advertising (ADV_IND, ADV_DIRECT_IND in low
// duty cycle, ADV_NONCONN_IND, ADV_SCAN_IND; LE 1M): the primary channels
// used (37, 38, 39 by default) and the gap between their PDUs (a setting,
// DefaultChannelGap by default), optional listening for and answering of
// scan requests, and advInterval (20 ms … 10.24 s in steps of 0.625 ms)
// plus advDelay, uniform on 0 … 10 ms afresh each event (Vol 6 Part B
// §4.4.2.2). Advertiser.Cycle returns the energy cycle; its law is exact
// (a finite mixture over the requests of the floor power times a uniform
// interval).
//
// # Connections
//
// Connection describes a peripheral's side of a connection: connInterval
// (7.5 ms … 4 s in steps of 1.25 ms), connPeripheralLatency (0 … 499),
// connSupervisionTimeout (100 ms … 32 s in steps of 10 ms, and more than
// (1 + latency)·connInterval·2), all checked with the constraints between
// them (Vol 6 Part B §4.5.1, §4.5.2), the PHY, the packets exchanged per
// event (a law; empty PDUs when there is no data) and the window widening
// from both sleep clock accuracies (§4.5.7). The node wakes every
// (latency + 1) intervals; the listen before the central's packet is
// uniform over the widened window (a stated model). Connection.Cycle's law
// is exact: a finite mixture of uniforms.
//
// # Discovery and collisions
//
// NewDiscovery returns the law of the time a passive scanner (scanWindow
// every scanInterval, cycling channels 37, 38, 39) takes to receive an
// advertiser's PDU, censored at a horizon: CDF(t) is the probability of
// discovery within t. The model (stated on Discovery): the advertiser in
// its stationary regime when scanning starts, advDelay uniform and
// independent per event, the channel order 37 → 38 → 39 within each event,
// a PDU received only if wholly inside a window on its channel and, with a
// given probability, not collided. It is computed on a time grid to a
// stated CDF error of about DiscoveryTolerance (2.5e-4; NewDiscoveryWithin
// refines the grid to a tolerance of the caller's), an error estimate
// (Accuracy; 3.7e-5 to 2.3e-4 in the tests, true errors at most 8.7e-5)
// checked against an exact first-event integral and an event-level sampler;
// Discovery.Rand samples the model itself. PDUSuccess gives the
// probability that a PDU escapes overlap with n alike neighbours,
// (1 − (T + T')/E[interval])^n: exact for independent stationary
// advertisers (an ALOHA-like model without capture).
//
// # Sizes
//
// PDU payloads are capped by the specification (MaxPayload, MaxAdvData,
// MaxDataPayload); the exchanges per connection event by MaxExchanges; the
// neighbours by MaxNeighbours; a discovery law's horizon by
// MaxDiscoveryHorizon and its grid by MaxDiscoveryCells (24 MiB at most).
//
// All quantities are SI (seconds, joules, amperes, volts); channel indices
// and octet counts are plain integers.
//
// # Cautions
//
// These are planning figures, not certification. Channel use, transmit
// power and duty limits at 2.4 GHz are set by local regulations (in Europe
// ETSI EN 300 328, in the United States FCC Part 15, elsewhere the national
// regulator) and by the current edition of the Bluetooth Core
// Specification: check them before relying on any figure here. Example
// currents are typical values from memory; use your radio's data sheet.
package ble
