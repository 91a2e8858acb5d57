package binom

import "math"

// Walk steps along the probabilities P(Bin(n, p) = x) of one binomial law
// by the ratio recurrence
//
//	P(x+1)/P(x) = (n−x)/(x+1) · p/q,   P(x−1)/P(x) = x/(n−x+1) · q/p,
//
// from Loader's saddle-point value at its start (LogPMF), taken afresh every
// Every steps where Every > 0: the module's one kernel for runs of
// consecutive binomial probabilities (dist's k-fold sums of two and three
// values, orderstat's counts). A step rounds four times (the ratio's
// quotient and product, the product with P; p/q and q/p once for the
// walk), so a value s steps from the last value taken afresh has relative
// error at most that value's (Rel) plus 4u·s to first order (u = 2^-53;
// RelAfter). A Walk is a value: copy it to walk both ways from one start.
type Walk struct {
	X, P float64 // the count and P(Bin(n, p) = X)

	n, p, q  float64
	up, down float64 // p/q and q/p
	every    int
	steps    int // steps taken since the start
}

// NewWalk starts a walk at the integer x in [0, n] (held in float64, n up
// to 2^53) of Bin(n, p), p + q = 1 with both given (as for LogPMF), 0 < p < 1;
// every > 0 takes the value afresh from LogPMF every that many steps, 0
// never.
func NewWalk(x, n, p, q float64, every int) Walk {
	return Walk{X: x, P: math.Exp(LogPMF(x, n, p, q)), n: n, p: p, q: q, up: p / q, down: q / p, every: every}
}

// WalkFrom is NewWalk with the value at its start given: P = P(Bin(n, p)
// = x) as a walk (or WithN) left it, so that a caller carrying a mass
// from one law to the next spares LogPMF. Its steps count from this start:
// the caller adds the error P had (RelAfter of its own start and steps).
func WalkFrom(x, n, p, q, P float64, every int) Walk {
	return Walk{X: x, P: P, n: n, p: p, q: q, up: p / q, down: q / p, every: every}
}

// WithN returns the walk of Bin(n2, p), n2 = n ± 1, at the same X (X <=
// min(n, n2)), its value from this one's by the ratio
//
//	P(Bin(n+1, p) = x)/P(Bin(n, p) = x) = (n+1)·q/(n+1−x)
//
// (C(n+1, x)/C(n, x) = (n+1)/(n+1−x)) or its inverse: one step, rounding
// three times (the product, the quotient, the product with P), so the
// walk's error bound (RelAfter) holds with the step counted. The value is
// not taken afresh here (a following step may do it).
func (w Walk) WithN(n2 float64) Walk {
	if n2 > w.n {
		w.P *= n2 * w.q / (n2 - w.X)
	} else {
		w.P *= (w.n - w.X) / (w.n * w.q)
	}
	w.n = n2
	w.steps++
	return w
}

// RatioUp returns P(X+1)/P(X) as Up applies it.
func (w *Walk) RatioUp() float64 { return (w.n - w.X) / (w.X + 1) * w.up }

// RatioDown returns P(X−1)/P(X) as Down applies it.
func (w *Walk) RatioDown() float64 { return w.X / (w.n - w.X + 1) * w.down }

// Up moves the walk to X+1 (X < n).
func (w *Walk) Up() { w.step(w.RatioUp(), 1) }

// Down moves the walk to X−1 (X > 0).
func (w *Walk) Down() { w.step(w.RatioDown(), -1) }

func (w *Walk) step(r, d float64) {
	w.X += d
	w.steps++
	if w.every > 0 && w.steps%w.every == 0 {
		w.P = math.Exp(LogPMF(w.X, w.n, w.p, w.q))
		return
	}
	w.P *= r
}

// Steps returns the number of steps taken since the start.
func (w *Walk) Steps() int { return w.steps }

// Rel bounds the relative error of exp(LogPMF(x, n, p, q)), the value a walk
// starts from: about 1e-14 where Loader's deviance takes its series (x
// within 10 % of n·p, in the sense of Deviance), and beyond that the
// cancellation of its terms, 4u times their sizes x·|log(x/np)| +
// |np − x| and the same for n − x.
func Rel(x, n, p, q float64) float64 {
	const u = 0x1p-53
	rel := 1e-14
	if m := n * p; math.Abs(x-m) >= 0.1*(x+m) {
		y, w := n-x, n*q
		d := math.Abs(x-m) + math.Abs(y-w)
		if x > 0 {
			d += x * math.Abs(math.Log(x/m))
		}
		if y > 0 {
			d += y * math.Abs(math.Log(y/w))
		}
		rel += 4 * u * d
	}
	return rel
}

// RelAfter bounds the relative error of a value s ratio steps from a start
// whose own relative error is at most rel (Rel): rel + 4.01u·s, the 0.01
// covering the second-order terms for s up to 2^40.
func RelAfter(rel float64, s int) float64 { return rel + 4.01*0x1p-53*float64(s) }
