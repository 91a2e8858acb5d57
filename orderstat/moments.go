package orderstat

import (
	"math"
	"sort"
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
// few quantiles, by adaptive composite 12-point Gauss–Legendre quadrature
// (each panel accepted when it agrees with the sum over its halves).
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
	in := &integrator{eval: func(x float64) (float64, float64) { return c.eval(x, false) }, med: med, width: xhi - xlo, tol0: tol * scale, tol1: tol * scale * scale, r: gl12()}
	var i0, i1, e0, e1 float64
	for i := 0; i+1 < len(pts); i++ {
		a, b := pts[i], pts[i+1]
		v0, v1 := in.panel(a, b)
		r0, r1, err0, err1 := in.adapt(a, b, v0, v1, 0)
		i0 += r0
		i1 += r1
		e0 += err0
		e1 += err1
	}
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

// maxPanels bounds the work of one moment quadrature: past it, panels are
// accepted as they are (their disagreement still enters the error
// estimate). It only binds where rounding of x itself limits the accuracy
// (a law whose spread is a few million units in the last place of its
// location).
const maxPanels = 3000

type integrator struct {
	eval       func(x float64) (cdf, sf float64)
	work       int // panels evaluated so far (bounded by maxPanels)
	med, width float64
	tol0, tol1 float64
	r          glRule
}

// panel returns the 12-point Gauss–Legendre values on [a, b] of
// ±S or ∓F (the signed contribution to E[X] − c) and of 2|x−c|·(S or F).
func (in *integrator) panel(a, b float64) (v0, v1 float64) {
	in.work++
	mid, half := (a+b)/2, (b-a)/2
	above := mid >= in.med
	for i := 0; i < glOrder; i++ {
		x := mid + half*in.r.x[i]
		cdf, sf := in.eval(x)
		if above {
			v0 += in.r.w[i] * sf
			v1 += in.r.w[i] * 2 * (x - in.med) * sf
		} else {
			v0 -= in.r.w[i] * cdf
			v1 += in.r.w[i] * 2 * (in.med - x) * cdf
		}
	}
	return v0 * half, v1 * half
}

// adapt refines [a, b] (whose whole-panel values are v0, v1) until the
// halves agree with the whole within the panel's share of the tolerance.
func (in *integrator) adapt(a, b, v0, v1 float64, depth int) (r0, r1, e0, e1 float64) {
	m := a + (b-a)/2
	l0, l1 := in.panel(a, m)
	h0, h1 := in.panel(m, b)
	s0, s1 := l0+h0, l1+h1
	err0, err1 := math.Abs(s0-v0), math.Abs(s1-v1)
	share := (b - a) / in.width
	if (err0 <= in.tol0*share && err1 <= in.tol1*share) || depth >= 30 || in.work >= maxPanels || (b-a) <= 1e-13*in.width || m <= a || m >= b {
		return s0, s1, err0, err1
	}
	a0, a1, ae0, ae1 := in.adapt(a, m, l0, l1, depth+1)
	b0, b1, be0, be1 := in.adapt(m, b, h0, h1, depth+1)
	return a0 + b0, a1 + b1, ae0 + be0, ae1 + be1
}
