// Package lifesim plays fleets of battery-powered nodes cycle by cycle to
// the end of every battery: the independent path against which package
// energy's lifetime laws (NodeLifetime, Site) are checked.
//
// It knows nothing of those laws. From the same descriptions
// (energy.SiteSpec, energy.NodeSpec, energy.Environment) it draws what a
// real fleet draws and spends energy the way the model states it:
//
//   - shared, once per fleet: the batch capacity factor b ~ N(1, σb) and the
//     temperature offset ΔT ~ N(0, σT) added to every month of the climate;
//   - per node, once for its life: the setting (by weight), the capacity
//     factor c ~ N(1, σc), the active factor a ~ N(1, σa) and the floor
//     factor f = exp(σf·Z), Z standard normal (lognormal of median 1);
//   - per cycle: the cycle's energy by Cycle.Rand, the sum over the states
//     run of power × time with the floor filling the rest of the period.
//
// The cell starts with c·b·(U − N·s·StorageTime) joules, U the usable
// energy (nominal energy × usable fraction × the year's mean capacity
// derating at the shifted monthly temperatures), N the nominal energy and
// s the self-discharge rate per second at the reference temperature. Each
// cycle of fixed period T, from t0 to t0 + T after deployment, takes from
// it
//
//	e = k·a·(E − P_f·T) + k·f·P_f·∫ F_floor + P_q·T + c·b·N·s·∫ F_sd
//
// with E the cycle's drawn energy at the rail, P_f the cycle's floor power,
// k the supply's energy scale, P_q its quiescent power at the cell's
// nominal voltage, and F_floor, F_sd the floor and self-discharge factors
// of Thermal at the month's temperature (monthly mean + ΔT, with the
// climate's daily swing), integrated exactly over the cycle month piece by
// month piece (each month is Year/12 long, the year repeats from the
// deployment month). A node whose cell cannot pay a cycle's e dies inside
// it, at the share of the period the energy left pays for (energy taken as
// spent evenly over the cycle), so its lifetime is known to within one
// period. A node alive at the calendar limit CalendarLife − StorageTime
// ends its life there (Node.Calendar).
//
// Only deterministic functions are taken from package energy: Cycle.Rand
// and Cycle.FloorPower, Battery.Spec and NominalEnergy, Supply.EnergyScale
// and QuiescentPower, Thermal.FloorFactor, SelfDischargeFactor and
// CapacityFactor, and Climate's months and swing.
//
// Not played: NodeSpec.Voltage (end of life by voltage; rejected),
// jittered or random periods (rejected: the active energy above the floor
// is Rand − P_f·T only for a fixed T).
//
// Caps: MaxNodes nodes in one fleet, MaxCycles cycles in one node's life
// (a node that would run longer is an error, not an endless loop).
//
// A Player is an immutable value, safe for concurrent use; every draw comes
// from the caller's *rand.Rand, in a documented order, so a seed fixes
// every result.
package lifesim
