// Package scenario reads and checks the fleet description that the fleet
// planner (examples/fleetplan) and the packet-level sampler
// (internal/packetsim) both work from, and holds the built-in demo scenario.
//
// # The file format
//
// A scenario is one JSON object. Every field listed below is required: no
// field is filled in by default, and a field the format does not know is an
// error (so a misspelt name never passes silently). Units are in the field
// names: _m metres, _s seconds, _ms milliseconds, _ma milliamperes, _ua
// microamperes, _mah milliampere-hours, _v volts, _db decibels, _dbm
// decibel-milliwatts, _years Julian years (365.25 days); a _share or
// _probability is a number in [0, 1].
//
//	{
//	  "format": "joulelaw-scenario/1",      the only format version so far
//	  "site": "…",                           a name for the site, non-empty
//	  "description": "…",                    free text (may be "")
//	  "region": "EU863-870",                 the LoRaWAN region (only EU863-870 so far)
//	  "radio_environment": {                 one path-loss model for the site
//	    "reference_distance_m": 1,           d0 > 0
//	    "reference_loss_db": 40,             PL(d0), 0 … 200
//	    "loss_exponent": 3.0,                n, 1 … 8:  PL(d) = PL(d0) + 10·n·log10(d/d0) + X
//	    "shadowing_sd_db": 6,                sd of the log-normal shadowing X, 0 … 20
//	    "gateway_gain_db": 3,                gateway antenna gain less cable losses, −20 … 30
//	    "gateway_noise_figure_db": 6,        0 … 20
//	    "installation_margin_db": 10         kept above the demodulation floor, 0 … 40
//	  },
//	  "node": {                              the electrical description shared by all nodes
//	    "supply_voltage_v": 3.6,             0 < V <= 60
//	    "sleep_current_ua": 2.5,             the floor between cycles, >= 0
//	    "wait_current_ua": 2.5,              between the uplink and the windows and between attempts
//	    "receive_current_ma": 11,            radio listening or receiving
//	    "receive_window_symbols": 8,         preamble symbols listened for before giving up, 4 … 64
//	    "receive_window_margin_ms": 10,      extra listening for clock error, 0 … 1000
//	    "transmit_current_ma": [             one entry per TXPower level of the region
//	      {"eirp_dbm": 16, "current_ma": 87}, …
//	    ]
//	  },
//	  "cell": {                              the battery every node carries
//	    "name": "…", "chemistry": "…",      free text, name non-empty
//	    "capacity_mah": 2400,                > 0
//	    "nominal_voltage_v": 3.6,            > 0
//	    "cutoff_voltage_v": 2.0,             0 <= cut-off < nominal
//	    "usable_fraction": 0.9,              (0, 1]
//	    "self_discharge_percent_per_year": 1, [0, 100)
//	    "temperature_derating": 0.95,        (0, 1]
//	    "pulse_current_ma": 100              rated pulse current, >= 0 (0: not rated, no pulse check)
//	  },
//	  "gateways": [ {"name": "…", "x_m": 0, "y_m": 0}, … ],   1 … 8, names unique
//	  "groups": [ {                          1 … 64 groups, names unique
//	    "name": "…",
//	    "nodes": 120,                        1 … 100000
//	    "gateway": "…",                      the gateway that serves the group
//	    "inner_radius_m": 100,               nodes uniform over the annulus inner … outer
//	    "outer_radius_m": 2500,              around that gateway, inner < outer <= 50000
//	    "payload_bytes": 12,                 application payload; must fit every ADR data rate
//	    "report_interval_s": 900,            mean time between uplinks, 10 … 31 days
//	    "interval_jitter_s": 30,             each period uniform in interval ± jitter, 0 <= jitter < interval/2
//	    "confirmed": false,                  confirmed uplinks are acknowledged and retransmitted
//	    "max_transmissions": 1,              NbTrans for confirmed uplinks, 1 … 15; 1 for unconfirmed
//	    "answer_share": 0.05,                share of received uplinks the network answers
//	                                         (for confirmed uplinks it must be 1: every one is acknowledged)
//	    "rx1_share": 0.9,                    share of answers sent in RX1; the rest go in RX2
//	    "downlink_payload_bytes": 4,         application payload of an answer, must fit RX2's data rate
//	    "downlink_loss_probability": 0.02,   a sent answer is not received, [0, 1)
//	    "work": [                            what the node does before each uplink, in order (may be [])
//	      {"name": "…", "current_ma": 4.5, "duration_ms": 250, "duration_spread_ms": 50}
//	    ]                                    duration uniform in duration ± spread, 0 <= spread < duration
//	  } ],
//	  "plan": {
//	    "replacement_after_years": 6,        the planned battery replacement, > 0 … 50
//	    "acceptable_risk": 0.05              tolerated probability of any failure before it, (0, 1)
//	  }
//	}
//
// Each group is served by its own gateway only: collisions are counted among
// the nodes of one gateway, so the service disks of different gateways must
// not overlap (the check enforces it). Every current except the sleep current
// must be at least the sleep current.
//
// # Speed
//
// With a fixed schedule (jitter 0), work of fixed length (spread 0) and a
// wait current equal to the sleep current, every per-cycle law is finite
// discrete and exact, and the plan takes well under a second. A jitter, a
// spread or a wait current above the floor makes the laws partly continuous:
// package dist then computes them numerically, at a stated accuracy, and the
// plan takes from seconds to minutes (a confirmed group whose retry gaps
// draw more than the floor is the slowest).
//
// # Errors
//
// Parse reports every problem it finds, each as a *FieldError that names the
// field by its path (groups[2].payload_bytes), the value found and the rule
// it breaks, joined with errors.Join; every one wraps ErrInvalid. A scenario
// with any problem is rejected whole.
//
// # The demo
//
// Demo and DemoJSON give the built-in scenario: an invented site (the
// Fenwick Marsh water-management district is fictional, and so are its
// numbers), with about 300 nodes in four groups around two gateways,
// EU863-870, and a lithium–thionyl chloride AA cell described with typical
// values from memory. Use your own radio's and cell's data sheets.
package scenario
