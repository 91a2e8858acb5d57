package orderstat

import (
	"errors"
	"math"
	"sort"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// moments holds a law's mean and variance with their estimated errors.
type moments struct {
	mean, variance float64
	meanErr        float64
	varErr         float64
}

// momentTail is the probability beyond which the tails are left out of the
// moment quadrature (their contribution is bounded and added to the error).
const momentTail = 1e-20

func (c *core) moments() moments {
	c.once.Do(func() { c.mom = c.computeMoments() })
	return c.mom
}

func (c *core) computeMoments() moments {
	// Non-finite parent moments decide the answer's.
	infMean, infVar := false, false
	for _, g := range c.groups {
		m, v := g.law.Mean(), g.law.Variance()
		if !finite(m) {
			infMean = true
			switch {
			case c.kind == kindMax && math.IsInf(m, 1):
				return moments{mean: m, variance: math.Inf(1), meanErr: 0, varErr: 0}
			case c.kind == kindMin && math.IsInf(m, -1):
				return moments{mean: m, variance: math.Inf(1)}
			}
		}
		if !finite(v) {
			infVar = true
		}
	}
	if infMean {
		return moments{mean: math.NaN(), variance: math.NaN(), meanErr: math.NaN(), varErr: math.NaN()}
	}
	if c.pure {
		mean := 0.0
		for _, a := range c.atoms {
			mean += a.Value * a.Mass
		}
		v := 0.0
		for _, a := range c.atoms {
			v += (a.Value - mean) * (a.Value - mean) * a.Mass
		}
		return moments{mean: mean, variance: v, meanErr: 1e-15 * math.Abs(mean), varErr: 1e-14 * v}
	}
	m := c.quadMoments()
	if infVar {
		m.variance, m.varErr = math.Inf(1), 0
	}
	return m
}

// quadMoments integrates the tails:
//
//	E[X] − c   = ∫_c^∞ S(x) dx − ∫_{−∞}^c F(x) dx
//	E[(X−c)²]  = 2∫_c^∞ (x−c) S(x) dx + 2∫_{−∞}^c (c−x) F(x) dx
//
// with c the median (for groups a point between its brackets), over
// [Q(1e-20), UQ(1e-20)] (for groups, their brackets) split at the atoms and at a
// few quantiles, by the library's adaptive Gauss–Kronrod quadrature
// (tailIntegrals).
func (c *core) quadMoments() moments {
	q := func(p float64) float64 { return c.quantile(p, 1-p, false) }
	uq := func(v float64) float64 { return c.quantile(1-v, v, true) }
	var xlo, xhi, med float64
	if len(c.groups) > 1 && c.kind != kindKth && !c.costly {
		// The brackets of the quantiles (one parent quantile per group
		// each) bound the region well enough and cost less than solving.
		xlo, _ = c.bracket(momentTail, 1-momentTail)
		_, xhi = c.bracket(1-momentTail, momentTail)
		a, b := c.bracket(0.5, 0.5)
		med = a + (b-a)/2
	} else {
		xlo, xhi, med = q(momentTail), uq(momentTail), q(0.5)
	}
	lo, hi := c.lo, c.hi
	if xlo < lo {
		xlo = lo
	}
	if xhi > hi {
		xhi = hi
	}
	if !finite(xlo) || !finite(xhi) || !finite(med) {
		return moments{mean: math.NaN(), variance: math.NaN(), meanErr: math.Inf(1), varErr: math.Inf(1)}
	}
	breaks := []float64{xlo, med, xhi}
	levels := []float64{1e-15, 1e-10, 1e-6, 1e-3, 0.05, 0.25}
	switch {
	case len(c.groups) == 1 && c.kind != kindKth:
		// Quantiles are cheap (one parent quantile each): use them as
		// panel edges so that the integrand changes smoothly on each.
		for _, p := range levels {
			breaks = append(breaks, q(p), uq(p))
		}
	}
	for _, a := range c.atoms {
		if a.Value > xlo && a.Value < xhi {
			breaks = append(breaks, a.Value)
		}
	}
	sort.Float64s(breaks)
	pts := breaks[:0]
	for _, b := range breaks {
		if !finite(b) || b < xlo || b > xhi {
			continue
		}
		if len(pts) == 0 || b > pts[len(pts)-1] {
			pts = append(pts, b)
		}
	}
	scale := xhi - xlo
	if scale == 0 {
		return moments{mean: med}
	}
	tol := 1e-14
	if len(c.groups) > 1 {
		tol = 1e-11 // each evaluation costs one parent call per group
	}
	if c.kind == kindKth {
		tol = 1e-11
	}
	i0, i1, e0, e1 := tailIntegrals(func(x float64) (float64, float64) { return c.eval(x, false) }, med, scale, pts, tol)
	// Bounds on what lies beyond [xlo, xhi]: the tail probability times the
	// tail's decay length (estimated from the quantile at 100 × the level).
	if len(c.groups) > 1 && c.kind != kindKth {
		// For groups, skip the two extra quantiles: bound each tail's
		// decay length by the width of the region.
		q = func(float64) float64 { return xlo - (xhi - xlo) }
		uq = func(float64) float64 { return xhi + (xhi - xlo) }
	}
	if xhi < hi {
		l := math.Abs(xhi - uq(100*momentTail))
		e0 += momentTail * l
		e1 += 2 * momentTail * l * (xhi - med + l)
	}
	if xlo > lo {
		l := math.Abs(q(100*momentTail) - xlo)
		e0 += momentTail * l
		e1 += 2 * momentTail * l * (med - xlo + l)
	}
	d := i0
	v := i1 - d*d
	if v < 0 {
		v = 0
	}
	return moments{
		mean:     med + d,
		variance: v,
		meanErr:  e0 + 4*epsilon*math.Abs(med+d),
		varErr:   e1 + 2*math.Abs(d)*e0 + 8*epsilon*v,
	}
}

// momentEvals bounds the work of one moment quadrature (integrand
// evaluations, each one CDF and Survival of the statistic): past it, the
// panels are kept as they are and their error estimate stands. It only
// binds where rounding of x itself limits the accuracy (a law whose spread
// is a few million units in the last place of its location).
const momentEvals = 45000

// tailIntegrals returns
//
//	i0 = ∫_{x > c} S(x) dx − ∫_{x < c} F(x) dx
//	i1 = 2∫_{x > c} (x − c)·S(x) dx + 2∫_{x < c} (c − x)·F(x) dx
//
// over [pts[0], pts[len(pts)−1]] (pts sorted, c = med among them or
// outside, so that no piece straddles it), with the stated errors e0 and
// e1, aiming at tol·scale and tol·scale², by the library's one adaptive
// quadrature (internal/quad.BreaksVec; the second integrand divided by
// scale so that both are in x's units). A budget or resolution that stops
// short keeps the result with its (larger) stated error; an integrand that
// is NaN or infinite gives NaN with infinite errors.
func tailIntegrals(eval func(x float64) (cdf, sf float64), med, scale float64, pts []float64, tol float64) (i0, i1, e0, e1 float64) {
	f := func(x float64, y []float64) {
		cdf, sf := eval(x)
		if x >= med {
			y[0], y[1] = sf, 2*(x-med)/scale*sf
			return
		}
		y[0], y[1] = -cdf, 2*(med-x)/scale*cdf
	}
	var v [2]float64
	r, err := quad.BreaksVec(v[:], f, pts, quad.Options{AbsTol: tol * scale, MaxEvals: momentEvals})
	if errors.Is(err, quad.ErrParam) {
		return math.NaN(), math.NaN(), math.Inf(1), math.Inf(1)
	}
	return v[0], v[1] * scale, r.Error, r.Error * scale
}
