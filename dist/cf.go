package dist

import (
	"math"
	"math/cmplx"
)

// This file holds the transforms the sum engine works with: for each law it
// knows, the logarithm of the two-sided Laplace transform
//
//	log M(s) = log E[exp(s·X)],  s complex,
//
// on a vertical strip lo < Re s < hi (Re s = 0, the characteristic
// function φ(t) = M(i·t), is always allowed). Closed forms are used where
// they exist (normal, exponential, gamma, uniform, discrete); log-normal
// laws and truncations are integrated by composite Gauss–Legendre
// quadrature with a stated error. Each closed form is written so that
// M(s) - 1 is computed directly (no cancellation for small |s|), which is
// what lets SumIID raise a transform to the power 10^7 as exp(k·log M).

// transform is the log-transform of one law.
type transform struct {
	logm   func(s complex128) complex128 // log E[exp(sX)]
	lo, hi float64                       // open strip of Re s where it is finite (lo <= 0 <= hi)
	err    float64                       // bound on |M error| relative to M(Re s), 0 for closed forms
}

// allowed reports whether Re s = x is inside the strip (or on the axis).
func (tr transform) allowed(x float64) bool { return x == 0 || (x > tr.lo && x < tr.hi) }

// glNodes and glWeights are the 16-point Gauss–Legendre rule on [-1, 1];
// computed once, never modified.
//
// Why a fixed rule here and not internal/quad: the log-normal and truncated
// transforms are evaluated at thousands of complex s per law (every value of
// a Fourier series), each an oscillatory integral exp(s·x)·g(x) whose
// amplitude g is analytic on the panels (a normal density on panels at most
// half a standard deviation wide, or the law's own density between its
// kinks). On a panel where the phase moves by at most six radians the
// 16-point rule, exact for polynomials of degree 31, integrates the
// oscillating factor with an error of about (ωw/2)^32/32! < 1e-15 (a proven
// bound for the Taylor remainder of the exponential), so one pass with no
// error estimation meets the stated error; an adaptive driver would spend
// twice the evaluations on its Kronrod check and a heap per transform value.
var glNodes, glWeights = legendreRule(16)

// cexpm1 returns exp(z) - 1 without cancellation for small |z|.
func cexpm1(z complex128) complex128 {
	a, b := real(z), imag(z)
	if b == 0 && math.Abs(a) < 1 {
		// on the real axis: the branch below's value with sin b = b
		// (±0) and cos b = 1, without the calls
		return complex(math.Expm1(a), b)
	}
	if math.Abs(a) < 1 && math.Abs(b) < 1 {
		// cos b − 1 = −sin²b/(1 + cos b), without cancellation for
		// |b| < 1 (1 + cos b > 1.5): no second sine
		sb, cb := math.Sincos(b)
		em := math.Expm1(a)
		return complex(em*cb-sb*sb/(1+cb), (em+1)*sb)
	}
	return cmplx.Exp(z) - 1
}

// clog1p returns log(1 + z) without cancellation for small |z|.
func clog1p(z complex128) complex128 {
	x, y := real(z), imag(z)
	if y == 0 && math.Abs(x) < 0.5 {
		// on the real axis: atan2(±0, 1 + x) = ±0 for 1 + x > 0
		return complex(0.5*math.Log1p(2*x+x*x+y*y), y)
	}
	if math.Abs(x) < 0.5 && math.Abs(y) < 0.5 {
		return complex(0.5*math.Log1p(2*x+x*x+y*y), math.Atan2(y, 1+x))
	}
	return cmplx.Log(1 + z)
}

// sinhcm1 returns sinh(z)/z - 1, by its Taylor series for small |z|.
func sinhcm1(z complex128) complex128 {
	if cmplx.Abs(z) < 0.5 {
		z2 := z * z
		// Σ_{n>=1} z^{2n}/(2n+1)!, to z^16 (next term < 1e-22 relative).
		// Each quotient by the real (2n)(2n+1) is taken part by part: the
		// runtime's division by c + 0i (Smith's algorithm) gives the same
		// nonzero parts, at the cost of a call.
		term := complex(real(z2)/6, imag(z2)/6)
		sum := term
		for n := 2; n <= 8; n++ {
			c := float64((2 * n) * (2*n + 1))
			term *= complex(real(z2)/c, imag(z2)/c)
			sum += term
		}
		return sum
	}
	return cmplx.Sinh(z)/z - 1
}

// logSinhc returns log(sinh(z)/z), stable for large |Re z|.
func logSinhc(z complex128) complex128 {
	if x, y := real(z), imag(z); x*x+y*y < 0.25 {
		return clog1p(sinhcm1(z))
	}
	if real(z) < 0 {
		z = -z // sinh(z)/z is even
	}
	// sinh(z) = exp(z)·(1 - exp(-2z))/2. With Re z >= 0 both 1 - exp(-2z)
	// and z lie in the closed right half-plane, so the principal log of
	// their quotient is the difference of their principal logs (one log
	// instead of two; the quotient rounds to 2^-53 relative).
	return z + logOf(-cexpm1(-2*z)/z) - complex(math.Ln2, 0)
}

// massDefect returns log M(0): not exactly 0 where a law's masses do not
// sum to 1 in floating point (six atoms of a cycle law summed to
// 1 + 2.2e-16), which a k-fold sum would carry as a mass of
// (1 + 2.2e-16)^k: 3.3e-11 too much at k = 1.5·10^5, against stated
// errors of a few 1e-12. Subtracting it normalises the transform (SumIID's
// numerical path, IIDSums). 0 where there is no transform or the value is
// not finite.
func (t transform) massDefect() float64 {
	if t.logm == nil {
		return 0
	}
	v := real(t.logm(0))
	if !finite(v) {
		return 0
	}
	return v
}

// normalTransform: log M(s) = μs + σ²s²/2, entire.
func normalTransform(mu, sigma float64) transform {
	return transform{
		logm: func(s complex128) complex128 { return complex(mu, 0)*s + complex(sigma*sigma/2, 0)*s*s },
		lo:   math.Inf(-1), hi: math.Inf(1),
	}
}

// gammaTransform: log M(s) = -k·log(1 - s/λ), for Re s < λ.
func gammaTransform(shape, rate float64) transform {
	return transform{
		logm: func(s complex128) complex128 { return complex(-shape, 0) * clog1p(-s/complex(rate, 0)) },
		lo:   math.Inf(-1), hi: rate,
	}
}

// uniformTransform: log M(s) = s·m + log(sinh(s·h)/(s·h)), entire.
func uniformTransform(lo, hi float64) transform {
	h := (hi - lo) / 2
	m := lo + h
	return transform{
		logm: func(s complex128) complex128 { return s*complex(m, 0) + logSinhc(s*complex(h, 0)) },
		lo:   math.Inf(-1), hi: math.Inf(1),
	}
}

// atomsTransform: log Σ p_k exp(s·v_k), as log1p(Σ p_k expm1(s·v_k)) near
// s = 0 and as a shifted log-sum-exp elsewhere. Entire. The masses may sum
// to less than one (the atomic part of a mixed law).
func atomsTransform(atoms []Atom) transform {
	values, masses := make([]float64, len(atoms)), make([]float64, len(atoms))
	for i, a := range atoms {
		values[i], masses[i] = a.Value, a.Mass
	}
	return valuesTransform(values, masses)
}

// valuesTransform is atomsTransform of the atoms (values[i], masses[i]),
// which it keeps without a copy: the caller's slices must not change (a
// Discrete's own, say).
func valuesTransform(values, masses []float64) transform {
	vmax := 0.0
	total := 0.0
	for i, v := range values {
		vmax = max(vmax, math.Abs(v))
		total += masses[i]
	}
	return transform{
		logm: func(s complex128) complex128 {
			if cmplx.Abs(s)*vmax < 0.5 {
				var sum complex128
				for i, v := range values {
					sum += complex(masses[i], 0) * cexpm1(s*complex(v, 0))
				}
				return clog1p(complex(total-1, 0) + sum)
			}
			mx := math.Inf(-1)
			for _, v := range values {
				mx = max(mx, real(s)*v)
			}
			var sum complex128
			for i, v := range values {
				sum += complex(masses[i], 0) * cmplx.Exp(s*complex(v, 0)-complex(mx, 0))
			}
			if sum == 0 {
				return complex(math.Inf(-1), 0)
			}
			return cmplx.Log(sum) + complex(mx, 0)
		},
		lo: math.Inf(-1), hi: math.Inf(1),
	}
}

// transformOf returns the log-transform of l and whether one is known.
func transformOf(l Law) (transform, bool) {
	switch b := l.(type) {
	case Normal:
		return normalTransform(b.mu, b.sigma), true
	case Exponential:
		return gammaTransform(1, b.rate), true
	case Gamma:
		return gammaTransform(b.shape, b.rate), true
	case Uniform:
		return uniformTransform(b.lo, b.hi), true
	case Discrete:
		return valuesTransform(b.values(), b.probs()), true
	case latticeDiscrete:
		return valuesTransform(b.values(), b.probs()), true
	case LogNormal:
		return logNormalTransform(b.mu, b.sigma), true
	case truncated:
		return truncatedTransform(b)
	case truncatedDensity:
		return truncatedTransform(b.truncated)
	case affine:
		return affineTransform(b)
	case affineDensity:
		return affineTransform(b.affine)
	case mixture:
		return mixtureTransform(b)
	case mixtureDensity:
		return mixtureTransform(b.mixture)
	case statedMixture:
		return mixtureTransform(b.mixture)
	case statedMixtureDensity:
		return mixtureTransform(b.mixture)
	case *numLaw:
		return b.transform(), true
	case hypoExp:
		return b.transform(), true
	case shiftMixture:
		return b.transform()
	case shiftMixtureDensity:
		return b.transform()
	case shiftMixtureEst:
		return b.transform()
	case shiftMixtureEstDensity:
		return b.transform()
	case uniformPair:
		return b.transform(), true
	case *expTailLaw:
		return b.numLaw.transform(), true
	case expSmoothedDensity:
		return b.transform()
	case productLaw:
		return b.transform()
	case productLawDensity:
		return b.transform()
	case CharFunc:
		return transform{
			logm: func(s complex128) complex128 { return cmplx.Log(b.CF(imag(s))) },
		}, true
	}
	return transform{}, false
}

// affineTransform: M_{aX+b}(s) = exp(s·b)·M_X(a·s).
func affineTransform(a affine) (transform, bool) {
	tb, ok := transformOf(a.base)
	if !ok {
		return transform{}, false
	}
	lo, hi := tb.lo/a.scale, tb.hi/a.scale
	if a.scale < 0 {
		lo, hi = hi, lo
	}
	sc, sh := complex(a.scale, 0), complex(a.shift, 0)
	return transform{
		logm: func(s complex128) complex128 { return s*sh + tb.logm(s*sc) },
		lo:   lo, hi: hi, err: tb.err,
	}, true
}

// mixtureTransform: M(s) = Σ w_i M_i(s), as log1p(Σ w_i expm1(log M_i)).
func mixtureTransform(m mixture) (transform, bool) {
	parts := make([]transform, len(m.laws))
	out := transform{lo: math.Inf(-1), hi: math.Inf(1)}
	for i, l := range m.laws {
		t, ok := transformOf(l)
		if !ok {
			return transform{}, false
		}
		parts[i] = t
		out.lo, out.hi = max(out.lo, t.lo), min(out.hi, t.hi)
		out.err = max(out.err, t.err)
	}
	w := append([]float64(nil), m.weights...)
	out.logm = func(s complex128) complex128 {
		var sum complex128
		small := true
		ls := make([]complex128, len(parts))
		for i, p := range parts {
			ls[i] = p.logm(s)
			if math.Abs(real(ls[i])) > 0.5 || math.Abs(imag(ls[i])) > 0.5 {
				small = false
			}
		}
		if small {
			for i := range parts {
				sum += complex(w[i], 0) * cexpm1(ls[i])
			}
			return clog1p(sum)
		}
		mx := math.Inf(-1)
		for i := range parts {
			mx = max(mx, real(ls[i]))
		}
		for i := range parts {
			sum += complex(w[i], 0) * cmplx.Exp(ls[i]-complex(mx, 0))
		}
		return cmplx.Log(sum) + complex(mx, 0)
	}
	return out, true
}

// quadTail is the probability left out at each end by the quadrature
// transforms (log-normal and truncated laws); it is their stated error.
const quadTail = 1e-17

// logNormalTransform integrates M(s) = ∫ exp(s·e^(μ+σz)) φ(z) dz over
// |z| <= 8.9 (2·Φ(-8.9) < 1e-18) by composite 16-point Gauss–Legendre
// quadrature, with panels no wider than 0.5 in z and short enough that
// |s|·σ·x changes the phase by at most one radian per panel. M exists for
// Re s <= 0 only (the right tail is heavier than any exponential).
// Stated error: 1e-15 relative to M(Re s), plus quadTail.
func logNormalTransform(mu, sigma float64) transform {
	return transform{
		logm: func(s complex128) complex128 {
			return cmplx.Log(logNormalM(mu, sigma, s))
		},
		lo: math.Inf(-1), hi: 0, err: 1e-15 + 2*quadTail,
	}
}

func logNormalM(mu, sigma float64, s complex128) complex128 {
	const zmax = 8.9
	var sum complex128
	as := cmplx.Abs(s)
	z := -zmax
	for z < zmax {
		x := math.Exp(mu + sigma*(z+0.5))
		rate := as * sigma * x
		dz := 0.5
		if rate*dz > 1 {
			dz = 1 / rate
		}
		// Beyond the point where the integrand has decayed (Re s < 0) or
		// oscillates so fast that the remaining integral is below the
		// stated error (bound φ(z)/rate by one integration by parts), stop.
		phiz := math.Exp(-z*z/2) / math.Sqrt(2*math.Pi)
		if real(s)*math.Exp(mu+sigma*z) < -50 || (rate > 1 && phiz/rate < 1e-18) {
			break
		}
		z1 := min(z+dz, zmax)
		hw, c := (z1-z)/2, (z1+z)/2
		for i, t := range glNodes {
			zz := c + hw*t
			xx := math.Exp(mu + sigma*zz)
			sum += complex(glWeights[i]*hw*math.Exp(-zz*zz/2)/math.Sqrt(2*math.Pi), 0) * cmplx.Exp(s*complex(xx, 0))
		}
		z = z1
	}
	return sum
}

// CF returns the characteristic function φ(t) = E[exp(i·t·X)] of the
// log-normal law, which has no closed form. It is integrated over the
// normal score z = (ln x - μ)/σ, |z| <= 8.9, by composite 16-point
// Gauss–Legendre quadrature with panels short enough that the phase moves
// by at most one radian on each; absolute error about 1e-15 (mass left out
// below 1e-18). The cost grows with |t|·exp(μ + 8.9σ).
func (l LogNormal) CF(t float64) complex128 {
	if math.IsNaN(t) {
		return complex(math.NaN(), math.NaN())
	}
	return logNormalM(l.mu, l.sigma, complex(0, t))
}

// CF returns the characteristic function of the gamma law,
//
//	φ(t) = (1 - i·t/λ)^(-k),
//
// computed as exp(-k·log1p(-i·t/λ)) (principal branch).
func (g Gamma) CF(t float64) complex128 {
	return cmplx.Exp(gammaTransform(g.shape, g.rate).logm(complex(0, t)))
}

// truncatedTransform integrates E[exp(sX) | lo <= X <= hi]. For a normal,
// exponential or gamma parent, exp(θx)·f(x) is again a density of the same
// family (mean shifted by θσ², or rate lowered by θ), so the transform is
// known on the whole strip of the parent: the integral of exp(i·t·x) against
// that tilted density is taken over [lo, hi] intersected with its own
// central range (mass left out below quadTail) by composite 16-point
// Gauss–Legendre quadrature, panels at most two standard deviations
// and six radians of phase wide. For other parents with a density
// only the characteristic function (Re s = 0) is integrated, the same way,
// between the parent's quantiles quadTail and 1-quadTail. Stated error
// 1e-14 relative to M(Re s), plus the mass left out.
func truncatedTransform(t truncated) (transform, bool) {
	if m, ok := mixtureOf(t.base); ok {
		return truncatedMixtureTransform(t, m)
	}
	if al, ok := Law(t).(Atomic); ok && len(al.Atoms()) > 0 {
		return transform{}, false
	}
	switch b := t.base.(type) {
	case Normal:
		lz := math.Log(t.mass)
		return transform{
			logm: func(s complex128) complex128 { return truncNormalLogM(s, b.mu, b.sigma, t.lo, t.hi, lz) },
			lo:   math.Inf(-1), hi: math.Inf(1), err: 1e-13,
		}, true
	case Exponential:
		return truncExpTransform(t, b.rate), true
	case Gamma:
		return truncGammaTransform(t, b.shape, b.rate), true
	case Densitied:
		lo, hi := max(t.lo, b.Quantile(quadTail)), min(t.hi, b.UpperQuantile(quadTail))
		sd := math.Sqrt(t.variance)
		if !(lo < hi) || !finite(sd) || sd <= 0 {
			return transform{}, false
		}
		return transform{
			logm: func(s complex128) complex128 {
				I := oscQuad(lo, hi, imag(s), sd/2, func(x float64) float64 { return b.Density(x) })
				return cmplx.Log(I / complex(t.mass, 0))
			},
			err: 1e-12 + 2*quadTail/t.mass,
		}, true
	}
	return transform{}, false
}

// mixtureOf returns l as a mixture, if it is one.
func mixtureOf(l Law) (mixture, bool) {
	switch b := l.(type) {
	case mixture:
		return b, true
	case mixtureDensity:
		return b.mixture, true
	}
	return mixture{}, false
}

// truncatedMixtureTransform: a mixture Σ w_i·P_i conditioned on [lo, hi] is
// the mixture of the conditioned components with weights
// w_i·P_i([lo, hi])/P([lo, hi]) (components with no mass there dropped), so
// its transform is that mixture's: atoms stay exact, continuous components
// use their own (closed-form or quadrature) truncated transforms.
func truncatedMixtureTransform(t truncated, m mixture) (transform, bool) {
	var ws []float64
	var ls []Law
	for i, c := range m.laws {
		tc, err := NewTruncated(c, t.lo, t.hi)
		if err != nil {
			continue // no mass in [lo, hi]
		}
		am := atomMass(c, t.lo)
		p := c.Survival(t.lo) + am - c.Survival(t.hi) // P(lo <= X <= hi), upper tails
		if c.Survival(t.lo)+am > 0.5 {
			p = c.CDF(t.hi) - c.CDF(t.lo) + am // lower tails
		}
		if !(p > 0) {
			continue
		}
		ws, ls = append(ws, m.weights[i]*p), append(ls, tc)
	}
	if len(ls) == 0 {
		return transform{}, false
	}
	total := 0.0
	for _, w := range ws {
		total += w
	}
	for i := range ws {
		ws[i] /= total
	}
	return mixtureTransform(mixture{weights: ws, laws: ls})
}

// truncGammaTransform: exp(θx)·x^(k-1)·exp(-λx) is a gamma density with rate
// λ-θ; integrated in v = x^k when k < 1 (which removes the singularity at 0).
func truncGammaTransform(t truncated, shape, rate float64) transform {
	return transform{
		logm: func(s complex128) complex128 {
			th := real(s)
			r := rate - th // tilted rate > 0 on the strip
			g := Gamma{shape: shape, rate: r}
			lo, hi := max(t.lo, g.Quantile(quadTail)), min(t.hi, g.UpperQuantile(quadTail))
			if !(lo < hi) {
				if t.lo >= g.UpperQuantile(quadTail) {
					lo, hi = t.lo, min(t.hi, t.lo+40/r)
				} else {
					lo, hi = max(t.lo, t.hi-40/r), t.hi
				}
			}
			// log of the constant: λ^k/Γ(k) · Γ(k)/r^k = (λ/r)^k, over the mass
			logScale := shape*math.Log(rate/r) - math.Log(t.mass)
			lg, _ := math.Lgamma(shape)
			sd := math.Sqrt(shape) / r
			ref := math.Inf(-1)
			for _, x := range []float64{lo, hi, min(hi, max(lo, (shape-1)/r))} {
				if x > 0 {
					ref = max(ref, (shape-1)*math.Log(x)-r*x)
				}
			}
			if math.IsInf(ref, -1) {
				ref = 0
			}
			logC := shape*math.Log(r) - lg
			var I complex128
			if shape < 1 {
				// ∫ e^{itx} x^{k-1} e^{-rx} dx = (1/k)∫ e^{itx - rx} dv, x = v^(1/k)
				v1, v2 := math.Pow(lo, shape), math.Pow(hi, shape)
				I = oscQuadMap(v1, v2, imag(s), (v2-v1)/64, func(v float64) float64 { return math.Pow(v, 1/shape) },
					func(v float64) float64 { return math.Exp(-r*math.Pow(v, 1/shape)-ref) / shape })
			} else {
				I = oscQuad(lo, hi, imag(s), sd, func(x float64) float64 {
					if x <= 0 {
						if shape == 1 {
							return math.Exp(-ref)
						}
						return 0
					}
					return math.Exp((shape-1)*math.Log(x) - r*x - ref)
				})
			}
			return cmplx.Log(I) + complex(logScale+logC+ref, 0)
		},
		lo: math.Inf(-1), hi: rate, err: 1e-14 + 2*quadTail,
	}
}

// oscQuad returns ∫_a^b exp(i·t·x)·f(x) dx by composite 16-point
// Gauss–Legendre quadrature on panels no wider than maxW nor than six
// radians of phase (the rule is exact for polynomials of degree 31, so its
// error on exp(i·ω·x) over a panel of phase ωw is about (ωw/2)^32/32!, below
// 1e-15 for ωw <= 6).
func oscQuad(a, b, t, maxW float64, f func(x float64) float64) complex128 {
	return oscQuadMap(a, b, t, maxW, func(x float64) float64 { return x }, f)
}

// oscQuadMap returns ∫_a^b exp(i·t·x(v))·g(v) dv, with panels no wider
// than maxW in v and short enough that t·x(v) moves by at most six radians.
func oscQuadMap(a, b, t, maxW float64, x func(v float64) float64, g func(v float64) float64) complex128 {
	if !(b > a) {
		return 0
	}
	if !(maxW > 0) || maxW > b-a {
		maxW = b - a
	}
	var sum complex128
	v := a
	for n := 0; v < b && n < 1<<20; n++ {
		w := maxW
		// phase speed |t·dx/dv| estimated over the candidate panel
		for k := 0; k < 60; k++ {
			v2 := min(b, v+w)
			if math.Abs(t*(x(v2)-x(v))) <= 6 {
				break
			}
			w /= 2
		}
		v2 := min(b, v+w)
		hw, c := (v2-v)/2, (v2+v)/2
		for i, z := range glNodes {
			vv := c + hw*z
			s, co := math.Sincos(t * x(vv))
			gw := glWeights[i] * hw * g(vv)
			sum += complex(gw*co, gw*s)
		}
		v = v2
	}
	return sum
}

// CF returns the characteristic function of the truncated law, by the
// quadrature described at truncatedTransform (absolute error about 1e-14).
// It is NaN (documented, never silent: check with math.IsNaN on the real
// part) when the parent has atoms in the interval or has neither a density
// nor a known family; Sum then falls back to a lattice for such a term.
func (t truncated) CF(tt float64) complex128 {
	if tr, ok := truncatedTransform(t); ok && !math.IsNaN(tt) {
		return cmplx.Exp(tr.logm(complex(0, tt)))
	}
	return complex(math.NaN(), math.NaN())
}

// normalEnds returns the end contributions to ∫_lo^hi exp(i·t·x)·g(x) dx,
// g(x) = exp(-(x-μ)²/(2σ²) - ref), for σ|t| large:
//
//	[exp(i·t·x)·g(x)·Σ_n He_n(z)/(σ^n·(i·t)^(n+1))]_lo^hi,  z = (x-μ)/σ,
//
// from g^(n)(x) = (-1/σ)^n·He_n(z)·g(x) (He the probabilists' Hermite
// polynomials). The series is summed until its terms fall below 1e-17 of
// the first; at σ|t| > 20 and |z| <= 10 they shrink by at least 2 a step.
func normalEnds(lo, hi, mu, sigma, t, ref float64) complex128 {
	end := func(x float64) complex128 {
		if math.IsInf(x, 0) {
			return 0
		}
		z := (x - mu) / sigma
		g := math.Exp(-z*z/2 - ref)
		if g == 0 {
			return 0
		}
		it := complex(0, t)
		var sum complex128
		hPrev, h := 0.0, 1.0 // He_{-1}, He_0
		pow := 1 / it        // 1/(σ^n (it)^(n+1)) for n = 0
		first := 0.0
		for n := 0; n < 80; n++ {
			term := complex(h, 0) * pow
			sum += term
			a := cmplx.Abs(term)
			if n == 0 {
				first = a
			} else if a <= 1e-17*first {
				break
			}
			hPrev, h = h, z*h-float64(n)*hPrev
			pow /= complex(sigma, 0) * it
		}
		sn, cs := math.Sincos(t * x)
		return complex(g*cs, g*sn) * sum
	}
	return end(hi) - end(lo)
}
