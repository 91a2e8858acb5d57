// Package scenario is the LoRaWAN site model: a site's gateways, groups of
// class A nodes, radio environment, node hardware and cells per group,
// traffic, climate and shared factors, read from the documented JSON format
// (Parse, Load) or built in Go (the Scenario value), and turned into the
// plan's probability laws: Build assembles the model (ADR settlement per
// group, collisions and retransmissions per gateway and data rate, the class
// A cycle), Model.Laws computes the per-setting cycles, the per-cycle energy
// laws of the groups and the fleet (and the fleet's extremes) and the
// fleet's lifetime model (energy.Site); Compute does both. The fleet planner
// (examples/fleetplan) is a report over these laws, and the packet-level
// sampler (internal/packetsim) plays the same scenarios packet by packet.
//
// # The file format
//
// A scenario file is one JSON object in UTF-8 (a leading byte-order mark is
// accepted). FORMAT.md beside this package documents every field, its unit
// and its range, the rules across fields and the reader's caps;
// scenario.schema.json (also SchemaJSON) is its JSON Schema for editors.
// The current format is "joulelaw-scenario/2" (FormatVersion); files of the
// first format, "joulelaw-scenario/1", are still read. Every field is
// required: nothing is filled in by default, and a field the format does not
// know is an error. Start from the demo (DemoJSON, or fleetplan
// -print-demo).
//
// A Scenario built in Go holds the same things in SI units; Build checks it
// (Scenario.Check) before it assembles the model.
//
// # Regions
//
// The region is any that package lora models (lora.Regions: EU863-870,
// US902-928, AU915-928 and IN865-867 at this writing; the schema's list is
// tested against it), with its tables (RP002-1.0.3). It decides the TXPower levels the
// node's transmit_current_ma must list, one each (EU863-870: 16 … 2 dBm in
// 2 dB steps, 8 levels; US902-928: 30 … 2 dBm, 15 levels), the largest
// payload (the slowest ADR data rate's: 51 bytes at EU863-870 DR0, 11 at
// US902-928 DR0) and the channels a data rate's frames spread over
// (Channels: EU863-870's 3 default channels; US902-928's 64 channels of
// 125 kHz for DR0 … DR3 and 8 of 500 kHz for DR4, all taken to be heard by
// the gateway, unless a gateway names its channels). EU863-870's duty
// cycle and US902-928's 400 ms dwell time are checked by
// GroupModel.DutyCheck. testdata/us902-928.json is a small invented
// US902-928 site.
//
// Nodes out of reach (whose link misses installation_margin_db even at the
// slowest data rate and full power) stay in the plan: they are taken to sit
// at that data rate and TXPower 0 for life, as the ADR back-off of the
// LoRaWAN specification leaves an unheard device (LoRaWAN L2 1.0.4
// §4.3.1.1; ADR_ACK_LIMIT, ADR_ACK_DELAY), with every uplink lost and no
// downlink (a confirmed group's unheard node sends every one of its
// max_transmissions), and they count in every energy and lifetime law. Their
// frames are not counted in the collisions of the nodes in reach (see
// Build). A group may be entirely out of reach.
//
// Each group is served by its own gateway only: collisions are counted among
// the nodes of one gateway, so the service disks of different gateways must
// not overlap (the check enforces it). Every current except the sleep current
// must be at least the sleep current.
//
// # Warnings
//
// The model decides what a person should look at, so that a back-end gets
// the fleet planner's warnings: Laws.Warnings lists, group by group, an
// out-of-reach share of at least OutOfReachWarnShare (with what those nodes
// draw against the group, Laws.Drain), every data rate whose uplink
// success is below SaturationThreshold (Model.CollisionWarnings), a
// reporting interval that breaks the uplinks' duty cycle or a payload that
// breaks the dwell time (Model.DutyWarnings, GroupModel.DutyCheck), a state
// above the cell's pulse rating and a climate outside the cell's rated range
// (Laws.CellWarnings); then every gateway sub-band whose booked answers
// exceed its duty cycle (Model.GatewayWarnings). Each Warning carries its
// kind, group and gateway beside its text. Model.GatewayBudgets gives the
// gateways' downlink airtime per sub-band and receive window as a table (an
// answer refused in RX1 is tried in RX2, GatewayModel). The limits are for
// planning, not certification: check the local rules and defer to the
// regulator.
//
// # Cost
//
// With a fixed schedule (jitter 0), work of fixed length (spread 0) and a
// wait current equal to the sleep current, every per-cycle law is finite
// discrete and exact; the lifetimes mix them over the per-node spreads and
// the shared factors (energy.Site). A jitter, a spread or a wait current
// above the floor makes the laws partly continuous: package dist then
// computes them numerically, at a stated accuracy, and at a cost that grows
// with the number of settings and retries (a confirmed group whose retry
// gaps draw more than the floor is the slowest). No time is promised here:
// BenchmarkDemo in examples/fleetplan measures the demo, and BENCHMARKS.md
// records it.
//
// # Errors
//
// Parse reports every problem it finds (up to MaxProblems), each as a
// *FieldError that names the field by its path (groups[2].payload_bytes),
// the value found (cut after MaxEcho characters) and the rule it breaks,
// joined with errors.Join; every one wraps ErrInvalid, and a message never
// holds a control character from the file (they are escaped). A scenario
// with any problem is rejected whole. What can be checked before the laws
// are computed is checked by Parse (and Scenario.Check): a cell that cannot
// power one report, work that cannot end within the reporting period.
// Errors met later, while Build assembles the model or Model.Laws computes
// it, come back as a *FieldError on the group or cell concerned that also
// wraps the cause (energy.ErrParam, lora.ErrParam …).
//
// # The demo
//
// Demo and DemoJSON give the built-in scenario: an invented site (the
// Lower Quillmoor polder district is fictional, and so are its numbers),
// with 304 nodes in four groups around two gateways, EU863-870, one node
// design behind a 3.3 V linear regulator, a lithium–thionyl chloride AA
// bobbin cell and an A-size spiral cell described with typical values from
// memory, a temperate invented climate and plausible spreads (common
// practice, from memory). Use your own radio's and cell's data sheets and
// your site's climate records.
package scenario
