package disttest

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/joulelaw/joulelaw/dist"
)

// checkCF, for a CharFunc law: CF(0) = 1; |CF(t)| <= 1 and
// CF(-t) = conj(CF(t)) at t from 0.01 to 100 over the spread; the mean and
// variance from central differences of CF at 0 (extrapolated from steps h
// and h/2, loose tolerance); and, where atoms and density account for the
// whole law, CF(t) against Σ m·exp(itv) + ∫ exp(itx)·Density(x) dx at two
// values of t.
func (c *checker) checkCF() {
	cl, ok := c.law.(dist.CharFunc)
	if !ok {
		return
	}
	cf := cl.CF
	tol := c.cfg.cfAbs
	if z := cf(0); !(cmplx.Abs(z-1) <= tol) {
		c.fail(CheckCF, "t = 0", "CF(0) = 1", fmt.Sprint(z))
	}
	for _, s := range []float64{0.01, 0.1, 0.3, 1, 3, 10, 30, 100} {
		t := s / c.spread
		z, zm := cf(t), cf(-t)
		at := "t = " + g(t)
		if cmplx.IsNaN(z) || cmplx.IsInf(z) {
			c.fail(CheckCF, at, "a finite value", fmt.Sprint(z))
			continue
		}
		if a := cmplx.Abs(z); !(a <= 1+tol+4*eps) {
			c.fail(CheckCF, at, "|CF(t)| <= 1", g(a))
		}
		if d := cmplx.Abs(zm - cmplx.Conj(z)); !(d <= 2*tol+4*eps) {
			c.fail(CheckCF, at, fmt.Sprintf("CF(-t) = conj(CF(t)) = %v", cmplx.Conj(z)), fmt.Sprint(zm))
		}
	}
	c.checkCFMoments(cf)
	c.checkCFIntegral(cf)
}

// checkCFMoments compares the mean and variance with derivatives of
// ψ(t) = CF(t)·exp(-i·t·Mean) at 0: Im ψ'(0) = 0 and -ψ”(0) = Variance.
func (c *checker) checkCFMoments(cf func(float64) complex128) {
	m, v := c.law.Mean(), c.law.Variance()
	if !finite(m) {
		return
	}
	sd := math.Sqrt(v)
	if !finite(sd) || sd == 0 {
		sd = c.spread
	}
	psi := func(t float64) complex128 { return cf(t) * cmplx.Exp(complex(0, -t*m)) }
	first := func(h float64) float64 { return imag(psi(h)-psi(-h)) / (2 * h) }
	second := func(h float64) float64 { return -real(psi(h)+psi(-h)-2*psi(0)) / (h * h) }
	h := 1e-3 / sd
	d1, d2 := first(h), first(h/2)
	trunc := math.Abs(d1 - d2)
	dm := (4*d2 - d1) / 3 // E[X] - Mean()
	tolM := 1e-6*sd + 2*trunc + 4*c.cfg.cfAbs/h + 1e-13*math.Abs(m)
	if !(math.Abs(dm) <= tolM) {
		c.fail(CheckCF, fmt.Sprintf("t = ±%s, ±%s", g(h), g(h/2)),
			fmt.Sprintf("mean from CF'(0) = Mean() = %s within %.3g", g(m), tolM), g(m+dm))
	}
	if !finite(v) {
		return
	}
	s1, s2 := second(h), second(h/2)
	trunc = math.Abs(s1 - s2)
	est := (4*s2 - s1) / 3
	tolV := 1e-5*v + 2*trunc + 16*c.cfg.cfAbs/(h*h) + 1e3*eps*(1+m*m*h*h)/(h*h)
	if !(math.Abs(est-v) <= tolV) {
		c.fail(CheckCF, fmt.Sprintf("t = ±%s, ±%s", g(h), g(h/2)),
			fmt.Sprintf("variance from -CF''(0) = Variance() = %s within %.3g", g(v), tolV), g(est))
	}
}

// checkCFIntegral compares CF with the transform of the law's own atoms and
// density, where they account for all its mass.
func (c *checker) checkCFIntegral(cf func(float64) complex128) {
	atomSum := 0.0
	for _, a := range c.atoms {
		atomSum += a.Mass
	}
	if c.density == nil && math.Abs(atomSum-1) > 1e-12 {
		return // the law's continuous part cannot be seen
	}
	ts := []float64{0.5 / c.spread, 2 / c.spread}
	// A kink of the density near a piece's end can fool the adaptive
	// quadrature; before reporting, integrate again on finer splits.
	var got []complex128
	var want []complex128
	var slack float64
	for _, n := range append([]int{1}, splits[:]...) {
		want, slack = c.transform(ts, n)
		got = got[:0]
		ok := true
		for k, t := range ts {
			got = append(got, cf(t))
			ok = ok && cmplx.Abs(got[k]-want[k]) <= slack
		}
		if ok {
			return
		}
	}
	for k, t := range ts {
		if !(cmplx.Abs(got[k]-want[k]) <= slack) {
			c.fail(CheckCF, "t = "+g(t),
				fmt.Sprintf("CF = Σ atoms·e^{itv} + ∫e^{itx}·Density = %v within %.3g", want[k], slack), fmt.Sprint(got[k]))
		}
	}
}

// transform returns Σ m·exp(itv) + ∫ exp(itx)·Density(x) dx at each t of
// ts, the pieces of the quadrature cut n times finer than breakpoints, and
// the error allowed in comparing CF with it: tolerances, quadrature error,
// and the mass of pieces too light to integrate or left unresolved.
func (c *checker) transform(ts []float64, n int) ([]complex128, float64) {
	want := make([]complex128, len(ts))
	for _, a := range c.atoms {
		for k, t := range ts {
			s, co := math.Sincos(t * a.Value)
			want[k] += complex(a.Mass*co, a.Mass*s)
		}
	}
	slack := 1e-9 + c.cfg.cfAbs + 2*c.cfg.densityRel + 2*c.cfg.cdfAbs
	if c.density == nil {
		return want, slack
	}
	br := refine(c.breakpoints(false), n)
	in := newIntegrator(integrationBudget / 2)
	f := func(x float64, out []float64) {
		d := c.density(x)
		for k, t := range ts {
			s, co := math.Sincos(t * x)
			out[2*k], out[2*k+1] = d*co, d*s
		}
	}
	for i := 0; i+1 < len(br); i++ {
		a, b := br[i], br[i+1]
		p, _ := c.massBetween(a, b)
		p -= c.atomsIn(a, b)
		if p < 1e-11 {
			slack += max(p, 0) + 1e-13
			continue
		}
		val, e, ok := in.integrate(2*len(ts), f, a, b, c.integrationRel(c.cfg.densityRel), 1e-15)
		if !ok {
			slack += p
			continue
		}
		slack += 2 * e
		for k := range ts {
			want[k] += complex(val[2*k], val[2*k+1])
		}
	}
	if len(br) >= 2 {
		slack += c.continuousOutside(br[0], br[len(br)-1])
	}
	return want, slack
}
