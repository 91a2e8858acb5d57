package disttest

import (
	"fmt"
	"math"
	"slices"
)

// maxBreakAtoms caps the atoms used as quadrature breakpoints.
const maxBreakAtoms = 2048

// breakpoints returns the sorted, distinct pieces' ends for quadrature: the
// finite support ends, quantiles from both ends at the levels of
// tailLevels from 1e-12 to 1/2 (the quadrature adapts within each piece),
// the median, and each atom v with the float below it, so that an atom
// sits at the right end of a piece of zero width. With extend, unbounded
// tails are followed to the 1e-16 and 1e-30 quantiles (not below the law's
// reported tail floor), for the moment integrals.
func (c *checker) breakpoints(extend bool) []float64 {
	pts := []float64{c.median}
	if finite(c.lo) {
		pts = append(pts, c.lo)
	}
	if finite(c.hi) {
		pts = append(pts, c.hi)
	}
	floor := 1e-12
	if extend {
		floor = max(1e-30, c.cfg.tailFloor)
	}
	for _, p := range tailLevels {
		if p < floor {
			continue
		}
		if p >= 1e-12 || math.IsInf(c.lo, -1) {
			pts = append(pts, c.quantile(p))
		}
		if p >= 1e-12 || math.IsInf(c.hi, 1) {
			pts = append(pts, c.upperQuantile(p))
		}
	}
	atoms := c.atoms
	if len(atoms) > maxBreakAtoms {
		atoms = c.sampled
	}
	for _, a := range atoms {
		pts = append(pts, a.Value, down(a.Value))
	}
	out := pts[:0]
	for _, x := range pts {
		if finite(x) && math.Abs(x) < 1e300 && x >= c.lo && x <= c.hi {
			out = append(out, x)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// continuousOutside returns the probability of the continuous part below
// a and above b: CDF(a) and Survival(b) less the atoms there.
func (c *checker) continuousOutside(a, b float64) float64 {
	m := c.law.CDF(a) + c.law.Survival(b)
	for _, at := range c.atoms {
		if at.Value <= a || at.Value > b {
			m -= at.Mass
		}
	}
	return max(m, 0)
}

// pieceTolerance is the tolerance of a comparison of P(a < X <= b) (value
// p, from values of magnitude mag) with an integral: the density
// tolerance, rounding of the subtraction, and the CDF and survival
// tolerances of the two values.
func (c *checker) pieceTolerance(a, b, p, mag float64) float64 {
	t := c.cfg.densityRel*math.Abs(p) + 8*eps*mag + 2*c.cfg.cdfAbs
	if b > c.median {
		t += 2 * c.cfg.survivalRel * mag
	}
	return t
}

// checkMass: Σ atom masses + ∫ Density = 1. For a Densitied law the
// integral is taken piece by piece over breakpoints and the continuous mass
// beyond the outer breakpoints (about 1e-12 on each unbounded side) is
// taken from CDF and Survival. A law that is Atomic but not Densitied must
// have masses summing to 1 unless it has a continuous part, which this
// check cannot then see.
func (c *checker) checkMass() {
	atomSum := 0.0
	for _, a := range c.atoms {
		atomSum += a.Mass
	}
	if c.density == nil {
		return
	}
	br := c.breakpoints(false)
	if len(br) < 2 {
		if math.Abs(atomSum-1) > 1e-12 {
			c.fail(CheckMass, "the atoms (support of one point)", "masses summing to 1", g(atomSum))
		}
		return
	}
	in := newIntegrator(integrationBudget)
	rel := c.integrationRel(c.cfg.densityRel)
	total, errSum := atomSum, 0.0
	for i := 0; i+1 < len(br); i++ {
		a, b := br[i], br[i+1]
		p, mag := c.massBetween(a, b)
		base := c.pieceTolerance(a, b, p, mag)
		atoms := c.atomsIn(a, b)
		v, e := in.closest(scalar(c.density), a, b, p-atoms, rel, func(e float64) float64 { return base + 2*e })
		total += v
		errSum += e
		tol := base + 2*e
		got := v + atoms
		if !(math.Abs(got-p) <= tol) {
			c.fail(CheckDensity, fmt.Sprintf("(%s, %s]", g(a), g(b)),
				fmt.Sprintf("∫Density + atoms = P(a < X <= b) = %s within %.3g", g(p), tol), g(got))
		}
	}
	total += c.continuousOutside(br[0], br[len(br)-1])
	tol := 1e-11 + 2*c.cfg.densityRel + 4*c.cfg.cdfAbs + 2*errSum
	if !(math.Abs(total-1) <= tol) {
		c.fail(CheckMass, fmt.Sprintf("[%s, %s] and the tails beyond", g(br[0]), g(br[len(br)-1])),
			fmt.Sprintf("Σ atoms + ∫Density = 1 within %.3g", tol), g(total))
	}
}

// checkDensity, for a Densitied law: Density is >= 0 (not NaN) on the
// grid and 0 outside a finite support; and at interior quantiles away from
// atoms it matches the derivative of the CDF, taken as a central
// difference (of CDF below the median, of Survival above), extrapolated
// from steps h and h/2, where the CDF is smooth at that scale. (The
// piecewise integral comparison is made by checkMass.)
func (c *checker) checkDensity() {
	if c.density == nil {
		return
	}
	for _, x := range c.grid {
		if d := c.density(x); !(d >= 0) {
			c.fail(CheckDensity, "x = "+g(x), "Density >= 0", g(d))
		}
	}
	for _, x := range []float64{c.lo - c.spread, c.hi + c.spread} {
		if finite(x) && (x < c.lo || x > c.hi) {
			if d := c.density(x); d != 0 {
				c.fail(CheckDensity, fmt.Sprintf("x = %s (outside the support)", g(x)), "0", g(d))
			}
		}
	}
	var xs []float64
	for _, p := range []float64{1e-6, 0.01, 0.05, 0.1, 0.25, 0.5} {
		xs = append(xs, c.quantile(p), c.upperQuantile(p))
	}
	for _, x := range sortedFinite(xs) {
		if !(x > c.lo && x < c.hi) {
			continue
		}
		h := 1e-4 * min(c.spread, min(x-c.lo, c.hi-x))
		if !(h > 0) || c.nearAtom(x, 2*h) {
			continue
		}
		f := c.density(x)
		diff := func(h float64) (d, mag float64) {
			lo, hi := x-h, x+h // divide by the step as rounded
			p, m := c.massBetween(lo, hi)
			return (p - c.atomsIn(lo, hi)) / (hi - lo), m
		}
		d1, mag := diff(h)
		d2, _ := diff(h / 2)
		trunc := math.Abs(d1 - d2)
		pl, _ := c.massBetween(x-h, x)
		pr, _ := c.massBetween(x, x+h)
		if !(trunc <= 0.01*max(f, math.Abs(d2))) || !(math.Abs(pl-pr) <= 0.01*max(pl, pr)) {
			continue // not smooth at this scale (a kink or a jump at or near x)
		}
		est := (4*d2 - d1) / 3
		tol := max(1e-6, c.cfg.densityRel)*f + trunc +
			(1e3*eps*mag+2*c.cfg.cdfAbs+2*c.cfg.survivalRel*mag)/h
		if !(math.Abs(est-f) <= tol) {
			c.fail(CheckDensity, fmt.Sprintf("x = %s (step %s)", g(x), g(h)),
				fmt.Sprintf("Density = dCDF/dx = %s within %.3g", g(est), tol), g(f))
		}
	}
}

// checkMoments: a finite Mean equals c + ∫_c^∞ S(x) dx - ∫_{-∞}^c F(x) dx
// and a finite Variance equals 2∫_c^∞ (x-c)·S(x) dx + 2∫_{-∞}^c (c-x)·F(x) dx
// - (Mean - c)², with c the median (for a law on [0, ∞) and c = 0 these are
// the familiar E[X] = ∫ S and E[X²] = 2∫ x·S). The integrals run over
// breakpoints extended into the tails down to probability 1e-30.
func (c *checker) checkMoments() {
	l := c.law
	m, v := l.Mean(), l.Variance()
	if !finite(m) {
		return
	}
	c0 := c.median
	if !finite(c0) {
		c0 = m
	}
	br := sortedFinite(append(c.breakpoints(true), c0))
	if len(br) < 2 {
		if len(br) == 1 && (m != br[0] || (finite(v) && v != 0)) {
			c.fail(CheckMoments, "a one-point law at "+g(br[0]), fmt.Sprintf("mean %s, variance 0", g(br[0])),
				fmt.Sprintf("mean %s, variance %s", g(m), g(v)))
		}
		return
	}
	width := br[len(br)-1] - br[0]
	sd := math.Sqrt(v)
	if !finite(sd) || sd == 0 {
		sd = c.spread
	}
	// A kink of the CDF near a piece's end can fool the adaptive
	// quadrature; before reporting, integrate again on finer splits.
	var mean, variance, tolM, tolV float64
	for _, n := range append([]int{1}, splits[:]...) {
		e1, e2, err1, err2 := c.momentIntegrals(refine(br, n), c0)
		mean = c0 + e1
		tolM = c.cfg.momentRel*(math.Abs(m-c0)+sd) + c.cfg.cdfAbs*width + 2*err1 + 1e-14*math.Abs(m)
		variance = e2 - e1*e1
		tolV = c.cfg.momentRel*(v+(m-c0)*(m-c0)) + c.cfg.cdfAbs*width*width + 2*err2 + 2*math.Abs(e1)*tolM
		if math.Abs(mean-m) <= tolM && (!finite(v) || math.Abs(variance-v) <= tolV) {
			return
		}
	}
	at := fmt.Sprintf("∫ over [%s, %s], split at %s", g(br[0]), g(br[len(br)-1]), g(c0))
	if !(math.Abs(mean-m) <= tolM) {
		c.fail(CheckMoments, at, fmt.Sprintf("Mean() = %s = c + ∫S - ∫F within %.3g", g(m), tolM), g(mean))
	}
	if finite(v) && !(math.Abs(variance-v) <= tolV) {
		c.fail(CheckMoments, at,
			fmt.Sprintf("Variance() = %s = 2∫(x-c)S + 2∫(c-x)F - (mean-c)² within %.3g", g(v), tolV), g(variance))
	}
}

// momentIntegrals returns e1 = ∫_c^∞ S - ∫_{-∞}^c F and
// e2 = 2∫_c^∞ (x-c)S + 2∫_{-∞}^c (c-x)F over the pieces of br (c among
// them), with error estimates of each.
func (c *checker) momentIntegrals(br []float64, c0 float64) (e1, e2, err1, err2 float64) {
	l := c.law
	in := newIntegrator(integrationBudget)
	rel := c.integrationRel(c.cfg.momentRel)
	for i := 0; i+1 < len(br); i++ {
		a, b := br[i], br[i+1]
		var f func(float64, []float64)
		sign := 1.0
		if b <= c0 {
			sign = -1
			f = func(x float64, out []float64) { F := l.CDF(x); out[0], out[1] = F, (c0-x)*F }
		} else {
			f = func(x float64, out []float64) { S := l.Survival(x); out[0], out[1] = S, (x-c0)*S }
		}
		// The integrand is known to cdfAbs at best: no finer target.
		val, e, _ := in.integrate(2, f, a, b, rel, max(c.cfg.cdfAbs*(b-a), 1e-300))
		e1 += sign * val[0]
		e2 += 2 * val[1]
		err1 += e
		err2 += 2 * e * max(math.Abs(a-c0), math.Abs(b-c0))
	}
	return e1, e2, err1, err2
}
