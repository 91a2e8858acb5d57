// Package energy turns a description of a battery-powered sensor node into
// probability laws of the energy it spends: per cycle, over a day, month or
// year, over a battery's life, and across a fleet.
//
// # Describing a node
//
// A State is an operating mode: a current law (A) at a supply voltage (V),
// or a power law (W), for a duration law (s); its energy is power × duration.
// States are composed into stages:
//
//	Sequence(a, b, c)          // one after the other, independent (a sum)
//	Choice(probs, stages)      // exactly one of them (a mixture)
//	Repeat(count, stage)       // a random number of runs (a random sum)
//	Configured(config, build)  // a configuration drawn once per cycle, shared
//	Nothing()                  // the empty branch
//
// A Cycle is a stage run once per period (fixed or a law) above a floor power
// drawn at all other times; the floor is handled exactly:
//
//	E = P_floor·T + Σ_i (P_i − P_floor)·t_i
//
// Laws are exact (finite discrete) when every factor is constant or finite
// discrete, and numerical otherwise, with the accuracy package dist reports
// (dist.Estimated). A state whose power and duration are both continuous
// gets a numerical product law (Gauss–Legendre on one factor's quantile
// scale, error estimated and reported). Every Cycle also samples its energy
// from the structure itself (Cycle.Rand), the independent Monte Carlo path.
//
// # Numerical methods of the lifetime
//
// NewLifetime evaluates P(M >= k) = P(S_k <= C) for the k it needs, cached,
// all through dist.IIDSums: tilted Fourier-series inversion (whose work
// does not grow with k) for continuous or mixed cycle laws; closed forms for
// normal, exponential and gamma cycle laws; and for a purely discrete cycle
// law (every state fixed or finite discrete and the period fixed) exactly
// while the k-fold law is small, exactly as a binomial count for two
// energies, exactly as binomial tails summed over the rarest energy's count
// for three, and otherwise by the second-order saddlepoint of Lugannani &
// Rice (1980) with Daniels' (1987) terms, reported with a proven error bound
// (Esseen's smoothing inequality against the Edgeworth law, which meets the
// fine structure of nearly commensurate energies).
// Tails that Hoeffding's inequality puts below 1e-300 are returned as 0.
// Quantiles search k by secant steps on the probit of P(M <= k).
//
// # What it answers
//
//   - Cycle.Energy: the law of the energy per cycle (J); Cycle.Breakdown:
//     each state's mean, its share of the mean and its share of the variance.
//   - Cycle.Cycles, Cycle.Over, Cycle.AverageCurrent: horizon laws and the
//     average current with an interval.
//   - Battery: usable energy, self-discharge, temperature derating and a
//     pulse-current check.
//   - Lifetime: the law of the time until the battery is exhausted (s), exact
//     through P(N > k) = P(S_k ≤ C), with the renewal central-limit estimate
//     beside it as a labelled quick estimate.
//   - Fleet: first failure, time to a failed fraction, number failed by a
//     date and a replacement plan.
//
// Units are SI in float64 (J, s, W, A, V, C); the constants MilliAmp,
// MicroAmp, Millisecond, MilliAmpHour, MilliJoule, MicroJoule, Day, Year
// convert from the units practitioners use.
//
// # Three tiers of randomness and the cell over the calendar
//
// Per-cycle noise averages out over a life (the relative spread of a
// k-cycle sum falls as 1/√k); what spreads real lifetimes is what varies
// from node to node and what a fleet shares. NodeSpec describes a group's
// nodes with both: its settings (cycles with the share of nodes that keep
// each), its Battery, the Supply path (DirectSupply, LinearRegulator,
// SwitchingRegulator), how cell and board follow temperature (Thermal:
// Arrhenius self-discharge, sleep current doubling, capacity derating),
// an optional VoltageCurve (end of life by voltage under the largest pulse
// at the year's coldest temperature), the per-node NodeSpread (capacity,
// sleep current, active energy), and the cell's calendar life and storage
// time. NewNodeLifetime gives the law of a node's life in one Environment
// (a Climate and one realisation of the shared factors, Conditions); Site
// mixes over the shared factors (SharedSpread: the cell batch and the
// site's temperature offset) by a Gauss rule whose order adapts until its
// estimated error is below 0.01, the error stated, and gives the node
// laws, the first failure, the end-of-life dates and the failed count of a
// fleet whose nodes are independent only given what they share.
// Site.VarianceShares splits a group's lifetime variance by source.
//
// A node has energy left at t while c·b·(U − N·D(t)) − a·A(t) − f·Φ(t) −
// P_q·t >= 0 (capacity factor c, batch factor b, usable energy U, nominal
// energy N, self-discharge D taken month by month, active scale a, active
// energy A of the cycles run, sleep factor f, sleep energy Φ month by
// month, supply quiescent power P_q); its life ends at the earlier of that
// and the calendar limit. The normal factors enter in closed form, the
// lognormal sleep factor by quadrature, the per-cycle sum by its exact
// mean and variance (a five-cumulant Gaussian rule measures what the
// higher cumulants move), and each law reports its error (dist.Estimated).
//
// # What it takes: the design search and the replacement policies
//
// The planner's questions are often inverse: what is the shortest reading
// interval that meets a target, with which cell, link and batching, and how
// should the cells be replaced. SearchDesign answers the first: a
// DesignProblem holds the DesignSpace (the reading interval, searched in a
// range, and lists of cells, Links — confirmed or not, with the most
// transmissions —, readings per uplink and receive-window settings), a
// Target and a Builder that makes the nodes' NodeSpec of a DesignChoice
// (and the shortest interval the radio rules allow for it). A Target is
// one of three statements about p = P(flat by the date T):
//
//	NodeFlat:     P(a node is flat by T)            <= r
//	NodeQuantile: the q-quantile of a node's life   >= T
//	GroupFlat:    P(any of the group's n nodes flat by T) <= r
//
// For each discrete choice the interval is bisected geometrically on the
// monotone p, each candidate's law mixed over the shared factors as Site
// mixes (MixedNodeLifetime is that law), and a choice meets the target
// only when p plus its stated error does; the shortest truly feasible
// interval lies in (IntervalLow, Interval]. An infeasible choice is not an
// error: its DesignResult gives the best figure (at the longest interval)
// and what binds (the energy, the calendar, the duty cycle). Design.Best is
// the feasible choice with the shortest interval.
//
// Replacement over a horizon: a Policy replaces on a schedule (every node
// of a group at its dates: ReplaceAll, ReplaceGroups), on failure
// (ReplaceOnFailure: the renewal counts of the node law, Renewals, by
// exact k-fold sums or, for a tabulated node law, on a lattice with a
// stated error), or
// both (ReplaceGroupsAndFailures). Site.Replacement gives, for one policy,
// the laws of the visits, cells and failures over the horizon (mixtures
// over the shared factors of the nodes' exact counts) with their 90 %
// bands per year, the probability that any node is flat within the horizon
// (from the survivals directly, with its stated error) and the cost from
// Costs (per visit, per cell). Site.ComparePolicies picks the cheapest
// policy whose probability of any flat node, error included, is within the
// accepted risk; Site.Schedule finds the fewest equal replacement dates
// (for the site or per group) that keep it there. Site.Serviced leaves
// chosen settings of each group out of a plan (the node law conditioned
// on the others): a node out of radio reach is a coverage fault found at
// commissioning, not a reason to replace its whole group every year, and
// its Serviced value answers the same three questions for the nodes
// served.
//
// # Cautions
//
// Primary lithium cells (lithium–thionyl chloride, lithium–manganese
// dioxide) must not be charged, short-circuited, crushed, opened or heated
// beyond their rating; follow the cell maker's handling, storage, transport
// and disposal instructions. The example cells in this package are typical
// values from memory: use your cell's data sheet. Predicted energies and
// lifetimes are planning figures, not guarantees: they are only as good as
// the node description and cell data they are given, and real cells also
// fail from passivation, temperature, ageing and manufacturing spread. A
// sensor whose failure can hurt someone (safety-critical sensing, alarms)
// needs its own margin and the maintenance and inspection rules that apply
// locally.
package energy
