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
// A scenario is one JSON object. Every field listed below is required: no
// field is filled in by default, and a field the format does not know is an
// error (so a misspelt name never passes silently). Units are in the field
// names: _m metres, _s seconds, _ms milliseconds, _ma milliamperes, _ua
// microamperes, _mah milliampere-hours, _v volts, _db decibels, _dbm
// decibel-milliwatts, _years Julian years (365.25 days), _months twelfths
// of one, _c degrees Celsius, _sd a standard deviation; a _share or
// _probability is a number in [0, 1].
//
//	{
//	  "format": "joulelaw-scenario/2",      this version; "joulelaw-scenario/1" files are still read (below)
//	  "site": "…",                           a name for the site, non-empty
//	  "description": "…",                    free text (may be "")
//	  "region": "EU863-870",                 the LoRaWAN region: "EU863-870" or "US902-928" (see below)
//	  "radio_environment": {                 one path-loss model for the site
//	    "reference_distance_m": 1,           d0 > 0
//	    "reference_loss_db": 40,             PL(d0), 0 … 200
//	    "loss_exponent": 3.0,                n, 1 … 8:  PL(d) = PL(d0) + 10·n·log10(d/d0) + X
//	    "shadowing_sd_db": 6,                sd of the log-normal shadowing X, 0 … 20
//	    "gateway_gain_db": 3,                gateway antenna gain less cable losses, −20 … 30
//	    "gateway_noise_figure_db": 6,        0 … 20
//	    "installation_margin_db": 10         kept above the demodulation floor, 0 … 40
//	  },
//	  "climate": {                           the site's year of temperature
//	    "monthly_mean_c": [3, 3.5, …],       exactly 12 monthly means, January first, −60 … 100 °C
//	    "daily_swing_c": 7,                  peak-to-peak daily range, 0 … 60 °C
//	    "deployment_month": 4                the month the nodes are deployed, 1 (January) … 12
//	  },
//	  "shared": {                            drawn once for the whole fleet
//	    "batch_capacity_sd": 0.02,           relative sd of the cell batch's capacity factor, 0 … 0.15
//	    "temperature_offset_sd_c": 1.0       sd of the site's temperature offset for the years deployed, 0 … 10 °C
//	  },
//	  "nodes": [ {                           1 … 16 node designs (board and radio), names unique
//	    "name": "…",
//	    "supply_voltage_v": 3.3,             the rail voltage the currents below are given at, 0 < V <= 60
//	    "sleep_current_ua": 2.5,             the floor between cycles, >= 0
//	    "wait_current_ua": 2.5,              between the uplink and the windows and between attempts
//	    "receive_current_ma": 11,            radio listening or receiving
//	    "receive_window_symbols": 8,         preamble symbols listened for before giving up, 4 … 64
//	    "receive_window_margin_ms": 10,      extra listening for clock error, 0 … 1000
//	    "transmit_current_ma": [             one entry per TXPower level of the region
//	      {"eirp_dbm": 16, "current_ma": 87}, …
//	    ],
//	    "supply": {                          the path from the cell to the rail
//	      "kind": "linear",                  "direct" (on the cell), "linear" or "switching"
//	      "efficiency": 1,                   (0, 1]; 1 for direct and linear
//	      "quiescent_current_ua": 1.0        drawn from the cell whatever the load; 0 for direct
//	    },
//	    "brownout_voltage_v": 2.6,           the cell voltage under a pulse below which the node resets (> 0)
//	    "sleep_current_log_sd": 0.35,        board-to-board log-sd of the sleep current (lognormal, median as given), 0 … 1
//	    "active_energy_sd": 0.04,            board-to-board relative sd of the active energy (normal), 0 … 0.15
//	    "sleep_current_doubling_c": 10       °C per doubling of the sleep current; 0 (none) or 1 … 100
//	  } ],
//	  "cells": [ {                           1 … 16 cell descriptions, names unique
//	    "name": "…", "chemistry": "…",      free text, name non-empty
//	    "capacity_mah": 2400,                > 0
//	    "nominal_voltage_v": 3.6,            > 0
//	    "cutoff_voltage_v": 2.0,             0 <= cut-off < nominal
//	    "usable_fraction": 0.85,             (0, 1]; used when voltage_curve is null
//	    "self_discharge_percent_per_year": 1, at reference_temperature_c, [0, 100)
//	    "pulse_current_ma": 100,             rated pulse current, >= 0 (0: not rated, no pulse check)
//	    "capacity_sd": 0.04,                 relative sd of a cell's capacity from unit to unit (normal), 0 … 0.15
//	    "calendar_life_years": 15,           rated service life from manufacture, 0 (none) … 100
//	    "reference_temperature_c": 20,       where self-discharge, currents and resistance were given, −100 … 150
//	    "self_discharge_activation_kj_per_mol": 50,   Arrhenius activation energy of self-discharge, 0 … 200
//	    "rated_temperature_c": [-55, 85],    the cell's rated operating range (warnings outside it)
//	    "derating": [ {"temperature_c": 0, "fraction": 0.9}, … ],   capacity vs temperature, 0 or 2 … 64 rows
//	    "voltage_curve": null | {            end of life by voltage under the node's largest pulse
//	      "depth_of_discharge": [0, …, 1],   ascending from 0 to 1
//	      "open_circuit_v": […],             V at each depth
//	      "resistance_ohm": […],             internal resistance at each depth, at reference_temperature_c
//	      "cold_temperature_c": […],         temperatures of the resistance multipliers (may be [])
//	      "cold_multiplier": […]             resistance multiplier at each
//	    }
//	  } ],
//	  "gateways": [ {"name": "…", "x_m": 0, "y_m": 0}, … ],   1 … 8, names unique
//	  "groups": [ {                          1 … 64 groups, names unique
//	    "name": "…",
//	    "nodes": 120,                        1 … 100000
//	    "node": "…", "cell": "…",            the group's node design and cell, by name
//	    "storage_months": 6,                 from the cells' manufacture to deployment, below the calendar life
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
// A file of the first format, "joulelaw-scenario/1", has one "node" object
// (without name, supply, brown-out, spreads and doubling) and one "cell"
// object (without the spread, calendar, temperature and voltage fields, and
// with a single "temperature_derating" factor in (0, 1]) for the whole site,
// and no "climate" or "shared" sections, and its groups name no node, cell
// or storage time. It is read as a site without spreads, climate or
// calendar: the lifetimes of format 1 files are those of the library before
// format 2.
//
// How the lifetime sections are used: see energy.NodeSpec and
// energy.SiteSpec. A node's life ends at the earlier of its energy running
// out and the cell's calendar life less the storage time; the usable share
// of the capacity comes from the voltage curve (under the largest pulse of
// the node's setting at the year's coldest temperature) or, when it is
// null, from usable_fraction.
//
// # Regions
//
// The region is any that package lora models (lora.Regions): EU863-870 or
// US902-928, with its tables (RP002-1.0.3). It decides the TXPower levels the
// node's transmit_current_ma must list, one each (EU863-870: 16 … 2 dBm in
// 2 dB steps, 8 levels; US902-928: 30 … 2 dBm, 15 levels), the largest
// payload (the slowest ADR data rate's: 51 bytes at EU863-870 DR0, 11 at
// US902-928 DR0) and the channels a data rate's frames spread over
// (Channels: EU863-870's 3 default channels; US902-928's 64 channels of
// 125 kHz for DR0 … DR3 and 8 of 500 kHz for DR4, all taken to be heard by
// the gateway). EU863-870's duty cycle and US902-928's 400 ms dwell time are
// checked by the fleet planner. testdata/us902-928.json is a small invented
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
// # Speed
//
// With a fixed schedule (jitter 0), work of fixed length (spread 0) and a
// wait current equal to the sleep current, every per-cycle law is finite
// discrete and exact; the lifetimes mix them over the per-node spreads and
// the shared factors (energy.Site), and the demo's plan takes about a
// second of CPU on the 2-core project machine. A jitter, a
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
// Lower Quillmoor polder district is fictional, and so are its numbers),
// with 304 nodes in four groups around two gateways, EU863-870, one node
// design behind a 3.3 V linear regulator, a lithium–thionyl chloride AA
// bobbin cell and an A-size spiral cell described with typical values from
// memory, a temperate invented climate and plausible spreads (common
// practice, from memory). Use your own radio's and cell's data sheets and
// your site's climate records.
package scenario
