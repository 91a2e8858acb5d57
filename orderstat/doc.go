// Package orderstat gives the laws of extremes and ranks across a fleet of
// independent nodes: the largest, the smallest and the k-th smallest of n
// values (per-cycle energies, lifetimes), for n identical nodes or for
// groups of nodes with different laws, the range of n values, the number of
// nodes beyond a threshold, and a screen that flags observed nodes whose
// values the fleet's law makes unlikely. Every answer is a dist.Law, so it
// has quantiles, intervals and samples of its own.
//
// # What is here
//
//   - Max, Min, Kth: the largest, smallest and k-th smallest of n
//     independent copies of one law (n up to MaxCount = 10^15).
//   - MaxOfGroups, MinOfGroups, KthOfGroups: the same over groups of nodes
//     with different laws (Group{Law, Count}).
//   - Range: the sample range max − min of n copies.
//   - PoissonBinomial, Exceedances, AtOrBelow: the number of nodes beyond
//     (or at or below) a threshold, as a Count law with its exact mean.
//   - Screen: flags observed nodes whose values are unlikely for the fleet.
//   - GumbelMax, GumbelMin, WeibullMax, WeibullMin: labelled extreme-value
//     approximations that carry their error against the exact law.
//
// The order-statistic constructors return a dist.Law whose concrete value
// is a Statistic (AsStatistic unwraps it, for Rank, Count, Groups and
// MomentError).
//
// # Numerical policy
//
// Everything is computed in log space from the parents' CDF and Survival:
//
//	P(max <= x) = exp(n·log1p(-S(x))),   P(max > x) = -expm1(n·log1p(-S(x)))
//
// and symmetrically for the minimum, never F^n or 1 - F^n, so that both
// tails keep their relative precision for counts up to MaxCount (10^15).
// Quantiles of the i.i.d. maximum and minimum are the parent's quantiles at
// transformed levels (Quantile(p) = l.UpperQuantile(-expm1(log(p)/n))); the
// k-th smallest maps Beta(k, n-k+1) through the parent's CDF (David &
// Nagaraja, Order Statistics, 3rd ed., 2003, §2.2). Atoms are exact: the
// mass of an order statistic at a parent's atom a is P(X <= a) - P(X < a)
// formed without cancellation from the parent's values at a and just below.
//
// Moments are exact sums for purely atomic laws and otherwise the
// library's adaptive Gauss–Kronrod quadrature (internal/quad) of the tails
// over the region where they matter (between the quantiles at 1e-20 and
// 1 - 1e-20), split at every atom.
//
// Counts of nodes beyond a threshold follow a Poisson-binomial law; it is
// computed by direct convolution of the groups' binomial probabilities
// (positive terms: relative precision everywhere) where that is cheaper,
// and otherwise by the discrete Fourier transform of its characteristic
// function (Hong 2013, Computational Statistics & Data Analysis 59:41–51),
// exponentially tilted window by window so that its far tails keep their
// relative precision. Both paths derive a bound for each value they return
// (the binomial walks' and the convolution's rounding; the inversion's
// bound, the tilt's rounding and the mass beyond the window); the k-th of
// groups states the largest of them at its quantiles (Statistic.Accuracy).
//
// # Cost
//
// Each evaluation of a group law costs one parent CDF or Survival call per
// group (a Tails call for a parent that implements TwoTails, such as a
// battery lifetime law, which also spares the parent's median when the law
// is built; a group whose law implements TailBounded is left out at the
// points where its proven tail bound puts its share below 1e-16 of the
// answer, which the stated accuracy includes); quantiles of group laws are bracketed by the parents' own quantiles
// and refined by Illinois regula falsi, about ten to twenty evaluations.
// With numerically computed parents (slow CDFs) prefer the i.i.d. forms
// where they apply, and reuse a returned law: its moments are computed once.
//
// # Approximations
//
// The extreme-value limits (Gumbel, reversed Weibull) are available as
// clearly labelled approximations that carry their measured error against
// the exact law; they are never used by default.
//
// # Bad input
//
// Counts below 1 or above MaxCount, ranks outside [1, n], nil or empty
// laws and groups, mismatched slices and probabilities outside (0, 1)
// return errors wrapping ErrParam (and dist.ErrParam), naming the parameter
// and its value. Problems too large for the exact methods return errors
// wrapping ErrRange.
//
// # Caution
//
// These laws describe models. A fleet's real failures also come from
// causes outside any model (damage, manufacturing defects, temperature,
// cell chemistry); battery replacement plans that matter for safety should
// follow the cell maker's guidance and local regulations.
package orderstat
