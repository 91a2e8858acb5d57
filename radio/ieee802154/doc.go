// Package ieee802154 supplies the IEEE 802.15.4 building blocks of the
// energy model of a sensor node that sends its reports by unslotted
// CSMA-CA: how long each state of sending a frame lasts, and the exact laws
// of the random parts (backoffs, CCAs, channel-access failures, retries).
//
// # PHY and frames
//
// PHY gives symbol and octet times, PPDU times and the timing attributes in
// symbol periods (aUnitBackoffPeriod 20, CCA 8, aTurnaroundTime 12, the
// default macAckWaitDuration) for the O-QPSK and BPSK PHYs. OQPSK2450 is
// the 2.4 GHz O-QPSK PHY of IEEE Std 802.15.4-2020 (62.5 ksymbol/s, 4 bits
// per symbol, 250 kb/s, SHR 5 octets, PHR 1 octet, aMaxPhyPacketSize 127);
// the sub-GHz O-QPSK and BPSK PHYs (OQPSK915, OQPSK868, BPSK915, BPSK868)
// carry the values of IEEE Std 802.15.4-2006, Tables 1 and 19, recalled from
// memory. The SUN PHYs of later editions are not modelled. Addressing and
// DataFrameOctets give the MAC framing of a data frame (frame control,
// sequence number, PAN identifiers and addresses, security, FCS;
// IEEE Std 802.15.4-2006 §7.2.1); AckFrameOctets is the immediate
// acknowledgement (5 octets).
//
// # Unslotted CSMA-CA
//
// CSMA holds macMinBE, macMaxBE, macMaxCSMABackoffs and macMaxFrameRetries
// with the standard's ranges (values outside them are errors naming the
// attribute and its range) and defaults (DefaultCSMA). Given the
// probability b that a CCA finds the channel busy, independently of the
// other CCAs (Bianchi's decoupling assumption), it gives the exact laws of
// the number of CCAs (and backoffs) of a run (CCAs), the time spent in
// backoff (BackoffTime: a random sum of discrete uniform backoffs, through
// dist.Sum and dist.Mixture), the duration of a run with its CCAs
// (RunTime), the channel-access failure probability
// b^(m+1) (AccessFailure) and the frame's fates with the laws of its
// CSMA-CA runs and transmissions under an acknowledgement-loss
// probability (Frame). Node.BusyFromTraffic derives b from the offered
// load of n nodes by a stated Poisson model, measured against a simulation
// of the whole channel: a lower estimate (re-checks of a busy channel find
// it busy more often than b).
//
// The clause numbers cited are those of IEEE Std 802.15.4-2020 where the
// text says so (the CSMA-CA algorithm, §6.2.5.1) and of IEEE Std
// 802.15.4-2006 otherwise; the numbers and the tables' values were
// recalled from memory and checked against each other (for example the
// 54-symbol macAckWaitDuration of the 2.4 GHz PHY against its formula).
//
// # The cycle
//
// Node describes a node that wakes, senses (Before), sends one frame and
// sleeps: currents per state (TypicalCurrents is an example set, typical
// values from memory; use your radio's data sheet), the PHY, the MAC
// attributes, the payload and addressing, whether the frame requests an
// acknowledgement, the busy and acknowledgement-loss probabilities, and
// whether backoffs keep the radio idle or put the node to sleep (with a
// wake time before the CCA). Node.FrameEnergy returns the law of the
// energy of sending one frame; Node.Cycle the energy.Cycle of one frame
// per period. Within MaxFramePaths both are exact finite discrete laws:
// every state has a constant current and a constant or finite discrete
// duration, and package dist combines them exactly (atoms merged within
// dist.AtomMergeTolerance, relative 1e-12). Node.Timeline gives the
// durations and outcome probabilities as plain data. Settings whose frame
// has more than MaxFramePaths distinct paths (macMaxFrameRetries 7, or
// macMaxBE 8 with many retries) would run into package dist's caps: their
// paths are enumerated with those of probability below Node.PathTolerance
// (DefaultPathTolerance, 1e-12) pruned and the pruned mass ε put on the
// worst-case path, so the law dominates the exact one and is within
// total-variation distance ε of it; Node.PathError states ε (0 for exact
// laws) and FrameEnergy's law reports it as dist.Estimated. Only a setting
// that keeps more than the cap even so is refused, with an error naming
// the cap and the tolerance.
//
// # Cautions
//
// Channels, transmit powers and duty cycles are set by local regulations
// (in Europe ETSI EN 300 328 at 2.4 GHz and EN 300 220 at 868 MHz, in the
// United States FCC Part 15), not by this package: check them for the
// place of installation. Example currents are typical values from memory.
// Predicted energies are planning figures, not guarantees.
//
// All quantities are SI: seconds, hertz, joules, amperes, volts; frame
// sizes are in octets.
package ieee802154
