package dist

import (
	"math"
	"math/cmplx"
)

// Transforms on the equally spaced axis points s = i·k·h, for the series of
// a Sum (see invert.go). The atoms of a finite discrete law rotate:
// exp(i·(k+1)·h·v) = exp(i·k·h·v)·exp(i·h·v), so their transform at
// axisBlock consecutive points costs one Sincos per atom and a complex
// multiplication per point and atom instead of a complex exponential.
// The rotation is restarted from Sincos at each block. Each step's complex
// product has relative error at most √5·2^-53 (Brent, Percival &
// Zimmermann, Math. Comp. 76, 2007) and the rotation factor itself at most
// 2^-53, so after j < axisBlock = 32 steps an atom's term is off by at most
// 32·3.4·2^-53 ≈ 1.2e-14 of its mass from the rounding of the products;
// summed over atoms of total mass 1, with the summation's rounding, that is
// at most axisErr = 2e-14. The phase carries in addition the rounding of
// its argument: k0·h·v at the block start (two roundings) and j times that
// of h·v in the steps, at most 2^-52·|t|·max|v| in all at t = k·h; the
// stated bound takes twice that, axisPhase·|t|·max|v|. It is used only by
// Sum (whose transform is exponentiated once), not by SumIID (which raises
// it to the power k and needs M - 1 to relative precision).

const (
	axisBlock = 32
	axisErr   = 2e-14   // absolute error of a discrete law's axis value from products
	axisPhase = 4.4e-16 // phase error per unit of |t|·max|v|
)

// axisAdder adds log M(i·k·h) of one law to out[j], k = k0 + j.
type axisAdder func(h float64, k0 int, out []complex128)

// discreteAxis returns the axis adder of a finite discrete law and the
// largest |value| of its atoms.
func discreteAxis(d Discrete) (axisAdder, float64) {
	vs, ps := d.values(), d.probs()
	var vmax float64
	for _, v := range vs {
		vmax = max(vmax, math.Abs(v))
	}
	return func(h float64, k0 int, out []complex128) {
		var mr, mi [axisBlock]float64
		n := min(len(out), axisBlock)
		k0h := float64(k0) * h
		// atoms four at a time: four independent rotations per step
		i := 0
		for ; i+3 < len(vs); i += 4 {
			var zr, zi, cr, ci [4]float64
			for a := range 4 {
				zi[a], zr[a] = math.Sincos(k0h * vs[i+a])
				ci[a], cr[a] = math.Sincos(h * vs[i+a])
			}
			p0, p1, p2, p3 := ps[i], ps[i+1], ps[i+2], ps[i+3]
			ar, ai, br, bi := zr[0], zi[0], zr[1], zi[1]
			er, ei, fr, fi := zr[2], zi[2], zr[3], zi[3]
			for j := 0; j < n; j++ {
				mr[j] += (p0*ar + p1*br) + (p2*er + p3*fr)
				mi[j] += (p0*ai + p1*bi) + (p2*ei + p3*fi)
				ar, ai = ar*cr[0]-ai*ci[0], ar*ci[0]+ai*cr[0]
				br, bi = br*cr[1]-bi*ci[1], br*ci[1]+bi*cr[1]
				er, ei = er*cr[2]-ei*ci[2], er*ci[2]+ei*cr[2]
				fr, fi = fr*cr[3]-fi*ci[3], fr*ci[3]+fi*cr[3]
			}
		}
		for ; i < len(vs); i++ {
			zi, zr := math.Sincos(k0h * vs[i])
			s1, c1 := math.Sincos(h * vs[i])
			p := ps[i]
			for j := 0; j < n; j++ {
				mr[j] += p * zr
				mi[j] += p * zi
				zr, zi = zr*c1-zi*s1, zr*s1+zi*c1
			}
		}
		for j := 0; j < n; j++ {
			out[j] += logOf(complex(mr[j], mi[j]))
		}
	}, vmax
}

// logmAdder returns the adder that evaluates tr.logm point by point.
func logmAdder(tr transform) axisAdder {
	return func(h float64, k0 int, out []complex128) {
		for j := range out {
			out[j] += tr.logm(complex(0, float64(k0+j)*h))
		}
	}
}

// axisAdderOf returns the axis adder of a non-discrete part of a Sum: real
// closed forms on the axis for the uniform, gamma, exponential and normal
// laws (the same closed forms as cf.go, written for s = i·t, to rounding),
// tr.logm point by point otherwise.
//
//	uniform on m ± w:  log M(it) = i·t·m + log(sin(t·w)/(t·w))
//	gamma(k, λ):       log M(it) = -k/2·log1p((t/λ)²) + i·k·atan(t/λ)
//	normal(μ, σ):      log M(it) = i·μ·t - σ²·t²/2
//
// (the logarithm of a negative sinc is taken as log|sinc| + iπ: only
// exp(log M) is used, so the branch does not matter).
func axisAdderOf(p Law, tr transform) axisAdder {
	switch b := p.(type) {
	case Uniform:
		w := (b.hi - b.lo) / 2
		m := b.lo + w
		return func(h float64, k0 int, out []complex128) {
			for j := range out {
				t := float64(k0+j) * h
				x := t * w
				sc := 1.0
				if x != 0 {
					sc = math.Sin(x) / x
				}
				im := t * m
				if sc < 0 {
					im += math.Pi
				}
				out[j] += complex(math.Log(math.Abs(sc)), im)
			}
		}
	case Gamma:
		return gammaAxis(b.shape, b.rate)
	case Exponential:
		return gammaAxis(1, b.rate)
	case Normal:
		return func(h float64, k0 int, out []complex128) {
			for j := range out {
				t := float64(k0+j) * h
				out[j] += complex(-0.5*b.sigma*b.sigma*t*t, b.mu*t)
			}
		}
	case truncatedDensity:
		if nb, ok := b.base.(Normal); ok {
			return truncNormalAxis(nb.mu, nb.sigma, b.lo, b.hi, b.mass)
		}
	}
	return logmAdder(tr)
}

func gammaAxis(k, rate float64) axisAdder {
	return func(h float64, k0 int, out []complex128) {
		for j := range out {
			u := float64(k0+j) * h / rate
			out[j] += complex(-0.5*k*math.Log1p(u*u), k*math.Atan(u))
		}
	}
}

// logOf is cmplx.Log without the hypotenuse: ½·log(x² + y²) + i·atan2(y, x)
// (the squared modulus rounds to 2^-53 relative, so the real part is off by
// at most 1.2e-16 more than cmplx.Log's); cmplx.Log where the square would
// underflow or overflow.
func logOf(z complex128) complex128 {
	x, y := real(z), imag(z)
	n2 := x*x + y*y
	if !(n2 > 1e-300 && n2 < 1e300) {
		return cmplx.Log(z)
	}
	return complex(0.5*math.Log(n2), math.Atan2(y, x))
}

// Truncated normal on the axis. For X normal (μ, σ) conditioned on
// [lo, hi] (mass Z under the parent, density f/Z there), integration by
// parts n times gives
//
//	Z·M(it) = Σ_{m<n} [exp(itx)·f(x)·He_m(z)/(σ^m·(it)^(m+1))]_lo^hi + R_n,
//	|R_n| <= |t|^-n·∫|f^(n)| dx <= √(n!)·q^n,  q = 1/(σ|t|),  z = (x - μ)/σ,
//
// from f^(m)(x) = (-1/σ)^m·He_m(z)·f(x) (He the probabilists' Hermite
// polynomials) and ∫|He_n(z)|·φ(z) dz <= √(E He_n(Z)²) = √(n!) (Cauchy–
// Schwarz). With A + iB = Σ_m He_m(z)·(-iq)^m an end contributes
// exp(itx)·f(x)·(B - iA)/t. The expansion is used where n <= truncEndTerms
// terms bring √(n!)·q^n below truncEndTol·Z and the rounding of the sum
// (4e-16·(n+2) times the sum of the terms' magnitudes) below truncEndRound:
// absolute error in M at most 1e-16 + 1e-14, inside the 1e-13 stated for
// the transform (and counted in the Sum's bound through it). Nearer t = 0
// (σ|t| below about 9 for an end within a few σ of μ; larger when the mass
// Z is small) the Faddeeva closed form truncNormalLogM is used, as
// everywhere else.

const (
	truncEndTerms = 64    // most terms of the expansion
	truncEndMinSt = 8.5   // smallest σ|t| tried (64 terms reach 1e-16 from about 9)
	truncEndTol   = 1e-16 // remainder bound, absolute in M
	truncEndRound = 1e-14 // rounding bound, absolute in M
)

// truncEnd is one finite end x of a truncated normal: ±f(x) (+ at hi, - at
// lo) and He_m(u)·(-i)^m folded into real coefficients (he[m] = ±He_m(u):
// even m go into A with sign (-1)^(m/2), odd m into B with sign
// -(-1)^((m-1)/2)).
type truncEnd struct {
	x, g      float64
	he, heAbs [truncEndTerms]float64
}

// truncSeries is the end expansion of one truncated normal: its finite ends
// (those whose density does not underflow) and, for each number of terms n,
// the largest q for which √(n!)·q^n <= truncEndTol·Z.
type truncSeries struct {
	sigma, z float64
	ends     []truncEnd
	qmax     [truncEndTerms + 1]float64
	nTop     int // qmax increases up to nTop (√(n!)·q^n is smallest near n = 1/q²)
}

func newTruncSeries(mu, sigma, lo, hi, z float64) *truncSeries {
	ts := &truncSeries{sigma: sigma, z: z}
	for i, x := range [2]float64{lo, hi} {
		if math.IsInf(x, 0) {
			continue
		}
		u := (x - mu) / sigma
		g := math.Exp(-u*u/2) / (sigma * math.Sqrt(2*math.Pi))
		if g == 0 {
			continue
		}
		e := truncEnd{x: x, g: g}
		if i == 0 {
			e.g = -g
		}
		hp, hc := 0.0, 1.0
		for m := 0; m < truncEndTerms; m++ {
			sg := 1.0
			if m%4 == 1 || m%4 == 2 {
				sg = -1
			}
			e.he[m], e.heAbs[m] = sg*hc, math.Abs(hc)
			hp, hc = hc, u*hc-float64(m)*hp
		}
		ts.ends = append(ts.ends, e)
	}
	// q^n <= tol·Z/√(n!), in logarithms, shrunk by 1e-12 against their
	// rounding
	lt := math.Log(truncEndTol * z)
	var lf float64 // log n!
	for n := 1; n <= truncEndTerms; n++ {
		lf += math.Log(float64(n))
		ts.qmax[n] = math.Exp((lt-lf/2)/float64(n)) * (1 - 1e-12)
		if ts.nTop == n-1 && (n == 1 || ts.qmax[n] > ts.qmax[n-1]) {
			ts.nTop = n
		}
	}
	return ts
}

// truncNormalAxis returns the axis adder of a normal (μ, σ) truncated to
// [lo, hi] with parent mass z.
func truncNormalAxis(mu, sigma, lo, hi, z float64) axisAdder {
	ts := newTruncSeries(mu, sigma, lo, hi, z)
	lz := math.Log(z)
	return func(h float64, k0 int, out []complex128) {
		n := 0 // the term count at the previous point: a hint, t grows along the block
		for j := range out {
			t := float64(k0+j) * h
			if v, _, m, ok := ts.atHint(t, n); ok {
				out[j] += logOf(v)
				n = m
				continue
			}
			out[j] += truncNormalLogM(complex(0, t), mu, sigma, lo, hi, lz)
		}
	}
}

// at returns M(it) by the end expansion above, t > 0, with a bound on its
// absolute error (remainder and rounding), and whether it could be used:
// remainder at most truncEndTol, rounding at most truncEndRound.
func (ts *truncSeries) at(t float64) (complex128, float64, bool) {
	v, e, _, ok := ts.atHint(t, 0)
	return v, e, ok
}

// atHint is at with a guess of the term count (0: none); it also returns
// the count used.
func (ts *truncSeries) atHint(t float64, hint int) (complex128, float64, int, bool) {
	q := 1 / (ts.sigma * t)
	if !(q < 1/truncEndMinSt) || q > ts.qmax[ts.nTop] {
		return 0, 0, 0, false
	}
	// the smallest n <= nTop with q <= qmax[n] (qmax increases up to nTop)
	var n int
	if hint >= 1 && hint <= ts.nTop && q <= ts.qmax[hint] {
		n = hint
		for n > 1 && q <= ts.qmax[n-1] {
			n--
		}
	} else {
		lo := 0 // q > qmax[lo] (qmax[0] = 0), q <= qmax[n]
		n = ts.nTop
		for n-lo > 1 {
			m := (lo + n) / 2
			if q <= ts.qmax[m] {
				n = m
			} else {
				lo = m
			}
		}
	}
	q2 := q * q
	var sum complex128
	var mag float64
	for i := range ts.ends {
		e := &ts.ends[i]
		// A = Σ even he[m]·q^m, B = Σ odd he[m]·q^m, and the magnitudes, by
		// Horner in q² over the pairs (2j, 2j+1), m < n
		var a, b, ea, eb float64
		top := (n - 1) / 2
		if n%2 == 1 {
			a, ea = e.he[n-1], e.heAbs[n-1]
			top--
		}
		for j := top; j >= 0; j-- {
			a = a*q2 + e.he[2*j]
			b = b*q2 + e.he[2*j+1]
			ea = ea*q2 + e.heAbs[2*j]
			eb = eb*q2 + e.heAbs[2*j+1]
		}
		b *= q
		sn, cs := math.Sincos(t * e.x)
		gt := e.g * q * ts.sigma // g/t
		// exp(itx)·g·(B - iA)/t
		sum += complex(gt*(cs*b+sn*a), gt*(sn*b-cs*a))
		mag += math.Abs(gt) * (ea + q*eb)
	}
	iz := 1 / ts.z
	round := 4e-16 * float64(n+2) * mag * iz
	if round > truncEndRound {
		return 0, 0, 0, false
	}
	return complex(real(sum)*iz, imag(sum)*iz), truncEndTol + round, n, true
}
