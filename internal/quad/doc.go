// Package quad is joulelaw's one adaptive quadrature: a globally adaptive
// bisection driver in the manner of QUADPACK's DQAG/DQAGP/DQAGI (Piessens,
// de Doncker-Kapenga, Überhuber and Kahaner, "QUADPACK", Springer 1983),
// with the Gauss–Kronrod 7–15 rule plugged in (or, by Options.Rule, the
// 3–7 rule: seven evaluations a panel, for integrands smooth on each
// panel's scale), for scalar and vector-valued integrands, finite and
// infinite intervals, and intervals with breakpoints.
//
// The driver keeps the panels of the interval in a heap ordered by their
// error estimate and bisects the worst one until the summed estimate
// meets the tolerance:
//
//	Error = Σ_panels max_j (|K15_j − G7_j| + R_j) <= max(AbsTol, RelTol·max_j |Value_j|)
//
// where K15 and G7 are the Kronrod and Gauss estimates of a panel (K7
// and G3 with GK7; for a vector integrand, the worst component) and R the
// panel's rounding:
//
//	R = 2·ulp(max(|a|, |b|))·Σ_adjacent nodes |f_{i+1} − f_i| + 4ε·h·Σ w_i·|f_i|,
//
// the rounding of the abscissae (nodes are known only to an ulp of the
// panel's ends, which matters for a narrow panel far from 0; the Gauss and
// Kronrod values share their nodes, so their difference cannot see it)
// and of the weighted sum. Bisection cannot lower R: a panel whose
// difference is below R/4 is not bisected again, and a target below the
// summed R is reported with ErrResolution. Error is otherwise the plain
// Gauss–Kronrod difference, without QUADPACK's heuristic rescaling
// (200·|K − G|/resasc)^1.5: it is an estimate of the error of the 7-point
// (GK7: 3-point) Gauss rule, so for smooth integrands it overstates the
// error of the Kronrod value returned by orders of magnitude; the tests check
// that it bounds the true error on closed forms, square-root and log
// singularities and infinite intervals.
//
// Infinite ends are mapped to (0, 1] as in DQAGI: on [p, ∞)
//
//	∫_p^∞ f(x) dx = ∫_0^1 f(p + (1−t)/t) / t² dt,
//
// and on (−∞, p] with x = p − (1−t)/t. The rule never evaluates a panel's
// ends, so t = 0 is never used. An integral over (−∞, ∞) is split at 0.
//
// Caps: Options.MaxEvals at most 1<<20 integrand evaluations (so at most
// 69 905 panels, 15 evaluations each; 149 796 with GK7, 7 each); at most
// 1<<16 breakpoints (MaxBreaks; their first pass takes at most 983 025
// evaluations); at most
// 1<<16 components of a vector integrand (MaxDim). The workspace of one
// call is a panel slice (32 bytes a panel, the heap of panel indices in
// its padding, plus 8 bytes a panel and component for the values, plus
// 120 bytes a panel for Partition's node values) and 19 float64 (11 with
// GK7) a component of scratch, allocated once per call (room for the
// first pass's panels, an eighth more and two, to start; the values
// share the scratch's allocation) and grown by doubling; nothing is kept
// between calls, so every function is
// safe for concurrent use and deterministic: the same call gives the same
// bits whatever ran before.
//
// Bad input (a > b, a NaN end, a negative or NaN tolerance, a budget above
// the cap, unsorted breakpoints) returns an error wrapping ErrParam; an
// integrand that returns NaN or ±Inf stops the integration with an error
// wrapping ErrParam naming x. Running out of evaluations returns the best
// Result so far with an error wrapping ErrBudget; panels that can no
// longer be bisected in float64 before the tolerance is met give an error
// wrapping ErrResolution (the Result is still returned, and its Error
// still counts the unresolved panels).
package quad
