// Package root is joulelaw's one root finder for a nondecreasing function
// of one variable: the smallest point of a bracket where the function
// reaches zero, by regula falsi with the Illinois modification (M. Dowell
// and P. Jarratt, "A modified regula falsi method for computing the root
// of an equation", BIT 11 (1971) 168–174), safeguarded by bisection.
// Package orderstat (quantiles of order statistics, ranges and the
// Beta law of the k-th of n) and package energy (quantiles of the shared
// mixtures and of a device's posterior law) use it. A pure function of its
// arguments: safe for concurrent use.
package root

import "math"

// epsilon is the float64 machine epsilon, 2^-52.
const epsilon = 0x1p-52

// MaxSteps caps the evaluations of g in one call to Illinois. Bisection
// alone reaches the resolution of float64 in at most about 2100 halvings
// of a bracket spanning the whole range; the safeguard below makes at
// least every fourth step halve the bracket, so MaxSteps is reached only
// by a g that is not monotone.
const MaxSteps = 400

// Illinois returns inf{x in [a, b] : g(x) >= 0} for g nondecreasing with
// g(a) < 0 <= g(b), given ga = g(a) and gb = g(b): the right end of a
// bracket that holds the answer and is at most tol wide (tol >= 0, in x's
// units), or four units in the last place of its larger end where tol is
// finer than that. Each step takes the regula falsi point of the ends'
// values, the value kept at an end that stays twice running being halved
// (Illinois), kept at least half the width asked for from either end (so
// that a point next to the answer is followed by one that closes the
// bracket, R. P. Brent, Algorithms for Minimization without Derivatives,
// 1973, ch. 4); it bisects instead where a value is infinite or where the
// bracket has not halved in the last three steps, so a step-shaped g
// (point masses) still halves the bracket at least every fourth step.
// About ten evaluations for a g that is nearly linear, against the forty
// to fifty of bisection. A NaN value of g counts as negative (the search
// stays inside [a, b]).
func Illinois(g func(float64) float64, a, b, ga, gb, tol float64) float64 {
	side := 0 // the end moved last: -1 the left, +1 the right
	width := b - a
	stale := 0
	for range MaxSteps {
		w := max(tol, 4*epsilon*max(math.Abs(a), math.Abs(b)))
		if b-a <= w || b-a <= 4*math.SmallestNonzeroFloat64 {
			break
		}
		x := a + (b-a)/2
		if stale < 3 && !math.IsInf(ga, 0) && !math.IsInf(gb, 0) && gb > ga {
			s := b - gb*((b-a)/(gb-ga))
			// At least half the width asked for from either end (Brent's
			// minimal step), so that a point that lands next to the
			// answer is followed by one that closes the bracket instead
			// of many that creep towards it.
			if h := w / 2; b-a > 2*h {
				x = max(a+h, min(b-h, s))
			} else if s > a && s < b {
				x = s
			}
		}
		if x <= a || x >= b {
			break
		}
		gx := g(x)
		if math.IsNaN(gx) {
			gx = math.Inf(-1)
		}
		if gx >= 0 {
			b, gb = x, gx
			if side == 1 {
				ga /= 2
			}
			side = 1
		} else {
			a, ga = x, gx
			if side == -1 {
				gb /= 2
			}
			side = -1
		}
		if b-a <= width/2 {
			width, stale = b-a, 0
		} else {
			stale++
		}
	}
	return b
}
