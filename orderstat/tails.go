package orderstat

import "github.com/joulelaw/joulelaw/dist"

// TwoTails is implemented by laws that return both tails at a point from
// one evaluation, each accurate relative to its own value (the smaller
// computed directly, the larger its complement). A group whose law
// implements it needs no median to choose between CDF and Survival: the
// group laws of this package then ask the law's median only when a
// quantile is solved for (cheapBracket), not when they are built.
type TwoTails interface {
	dist.Law
	// Tails returns P(X <= x) and P(X > x), in [0, 1], summing to 1 up to
	// rounding; NaN, NaN for NaN x.
	Tails(x float64) (cdf, survival float64)
}

// extremeLog returns Σ n_i·log S_i(x) for the minimum (max false) or
// Σ n_i·log F_i(x) for the maximum, or with left the same just below x.
func (c *core) extremeLog(x float64, left, max bool) float64 {
	var l float64
	for i := range c.groups {
		g := &c.groups[i]
		p := g.eval(x)
		if left {
			p = g.evalLeft(x)
		}
		if max {
			l += g.nf * p.logF()
		} else {
			l += g.nf * p.logS()
		}
	}
	return l
}
