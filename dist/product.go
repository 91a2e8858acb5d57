package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sync"
)

// Product returns the law of X·Y for independent X and Y with the given
// laws (a power times a duration, say: W·s = J).
//
//   - Exact when either factor is a finite discrete law (a constant is a
//     point mass): the mixture of scaled copies, as ScaleByDiscrete.
//
//   - Exact for two log-normals: log X + log Y is normal.
//
//   - Numerical for two continuous factors on [0, ∞) without atoms:
//
//     F(z) = ∫_0^1 F_X(z/Q_Y(u)) du,  S(z) = ∫_0^1 S_X(z/Q_Y(u)) du,
//
//     by composite 20-point Gauss–Legendre quadrature in u over panels that
//     reach geometrically towards both ends (from 1e-16 to 1 - 1e-16, the
//     mass beyond left out), the quantiles of Y computed once. Accurate to
//     about 1e-10 for factors with smooth densities; a density with a jump
//     inside (0, ∞) puts a kink in the integrand that the fixed panels do
//     not see, and the error grows to about 1e-5 (the estimate says so). Survival is
//     summed directly, so the upper tail keeps its relative accuracy down
//     to about 1e-12. The law implements Estimated: its error estimate is
//     the difference to a rule of half the order on the same panels, times
//     ten, plus the mass left out (tested against the closed forms for
//     uniforms and log-normals).
//
//     When one factor has a known transform, the product has one too,
//     φ(t) = ∫_0^1 φ_X(t·Q_Y(u)) du on the same nodes (so a product can be a
//     term of Sum), with its error estimated the same way at a few t across
//     the scale of X·Y and stated to Sum; when one has a density, so has
//     the product, ∫_0^1 f_X(z/Q_Y(u))/Q_Y(u) du.
//
// Mean = E[X]·E[Y]; Variance = E[X²]·E[Y²] - (E[X]·E[Y])². Rand multiplies
// one draw of each. Errors wrap ErrParam: a nil law, or two factors neither
// of which is discrete, not both log-normal and not both continuous and
// non-negative.
func Product(x, y Law) (Law, error) {
	const fn = "Product"
	if x == nil {
		return nil, paramErr(fn, "x", nil, "must not be nil")
	}
	if y == nil {
		return nil, paramErr(fn, "y", nil, "must not be nil")
	}
	if d, ok := x.(Discrete); ok {
		return ScaleByDiscrete(y, d)
	}
	if d, ok := y.(Discrete); ok {
		return ScaleByDiscrete(x, d)
	}
	if a, ok := x.(LogNormal); ok {
		if b, ok := y.(LogNormal); ok {
			return NewLogNormal(a.mu+b.mu, math.Hypot(a.sigma, b.sigma))
		}
	}
	for _, f := range []struct {
		name string
		l    Law
	}{{"x", x}, {"y", y}} {
		if lo, _ := f.l.Support(); !(lo >= 0) {
			return nil, paramErr(fn, f.name, f.l, "must be discrete, or continuous on [0, ∞), for a numerical product")
		}
		if hasAtoms(f.l) {
			return nil, paramErr(fn, f.name, f.l, "must be discrete or without atoms for a numerical product")
		}
	}
	if _, ok := transformOf(x); !ok {
		if _, ok := transformOf(y); ok {
			x, y = y, x // the transform is integrated over the other factor
		}
	}
	p := newProductLaw(x, y)
	if _, ok := x.(Densitied); ok {
		return productLawDensity{p}, nil
	}
	return p, nil
}

// productTail is the probability of Y left out at each end by the
// quadrature of Product.
const productTail = 1e-16

// productLaw is the numerical product of two non-negative continuous laws.
type productLaw struct {
	x, y           Law
	ys, ws         []float64 // quantiles of Y and the quadrature weights in u
	mean, variance float64
	acc            Accuracy
	cf             *productCF // stated error of the transform, computed on first use
}

// productCF holds the error estimate of a product's transform, computed
// once (it costs some 20 000 transform values of the first factor, which a
// product used only for its CDF need not pay).
type productCF struct {
	once sync.Once
	c    productLaw // the 10-point rule
	err  float64
}

// productNodes returns the nodes u and weights of composite n-point
// Gauss–Legendre quadrature on (productTail, 1 - productTail), in the
// lower half as u and in the upper half as 1 - u (uc, the upper-tail
// probability), so the quantiles near 1 are asked as upper quantiles.
func productNodes(n int) (u, uc, w []float64) {
	xs, ws := legendreRule(n)
	br := []float64{productTail, 1e-14, 1e-12, 1e-10, 1e-9, 1e-8, 1e-7, 1e-6, 1e-5, 1e-4, 3e-4, 1e-3, 3e-3, 0.01, 0.025, 0.05, 0.1, 0.15, 0.2, 0.3, 0.4, 0.5}
	for half := 0; half < 2; half++ {
		for i := 0; i+1 < len(br); i++ {
			a, b := br[i], br[i+1]
			h, c := (b-a)/2, (b+a)/2
			for k, t := range xs {
				p := c + h*t
				if half == 0 {
					u, uc = append(u, p), append(uc, -1)
				} else {
					u, uc = append(u, -1), append(uc, p)
				}
				w = append(w, ws[k]*h)
			}
		}
	}
	return u, uc, w
}

func productQuantiles(y Law, n int) (ys, ws []float64) {
	u, uc, w := productNodes(n)
	ys = make([]float64, len(w))
	for i := range w {
		if u[i] >= 0 {
			ys[i] = y.Quantile(u[i])
		} else {
			ys[i] = y.UpperQuantile(uc[i])
		}
	}
	return ys, w
}

func newProductLaw(x, y Law) productLaw {
	p := productLaw{x: x, y: y}
	p.ys, p.ws = productQuantiles(y, 20)
	mx, my := x.Mean(), y.Mean()
	p.mean = mx * my
	p.variance = (x.Variance()+mx*mx)*(y.Variance()+my*my) - mx*mx*my*my
	// error estimate: against the 10-point rule on the same panels
	c := productLaw{x: x, y: y}
	c.ys, c.ws = productQuantiles(y, 10)
	var dAbs, dRel float64
	for _, q := range []float64{1e-12, 1e-8, 1e-5, 1e-3, 0.05, 0.3, 0.5} {
		for _, z := range []float64{x.Quantile(q) * y.Quantile(q), x.UpperQuantile(q) * y.UpperQuantile(q), x.Quantile(0.5) * y.UpperQuantile(q), x.UpperQuantile(q) * y.Quantile(0.5)} {
			if !finite(z) {
				continue
			}
			dAbs = max(dAbs, math.Abs(p.CDF(z)-c.CDF(z)))
			if s := p.Survival(z); s > 1e-12 {
				dRel = max(dRel, math.Abs(s-c.Survival(z))/s)
			}
		}
	}
	p.cf = &productCF{c: c}
	p.acc = Accuracy{
		CDFAbs:      10*dAbs + 4*productTail + 1e-14,
		SurvivalRel: 10*dRel + 1e-12,
		TailFloor:   1e-12,
		Method:      fmt.Sprintf("quadrature over the quantiles of the second factor, %d nodes", len(p.ws)),
	}
	return p
}

// CDF returns P(XY <= z); NaN for NaN.
func (p productLaw) CDF(z float64) float64 {
	lo, hi := p.Support()
	if v, ok := edgeCDF(z, lo, hi); ok {
		return v
	}
	s := 0.0
	for i, y := range p.ys {
		if y > 0 {
			s += p.ws[i] * p.x.CDF(z/y)
		} else {
			s += p.ws[i] // X·0 = 0 <= z
		}
	}
	return min(1, max(0, s))
}

// Survival returns P(XY > z), summed directly.
func (p productLaw) Survival(z float64) float64 {
	lo, hi := p.Support()
	if v, ok := edgeSurvival(z, lo, hi); ok {
		return v
	}
	s := 0.0
	for i, y := range p.ys {
		if y > 0 {
			s += p.ws[i] * p.x.Survival(z/y)
		}
	}
	return min(1, max(0, s))
}

func (p productLaw) Quantile(q float64) float64      { return quantileByInversion(p, q) }
func (p productLaw) UpperQuantile(q float64) float64 { return upperQuantileByInversion(p, q) }
func (p productLaw) Mean() float64                   { return p.mean }
func (p productLaw) Variance() float64               { return p.variance }

// Support returns [lo_X·lo_Y, hi_X·hi_Y].
func (p productLaw) Support() (lo, hi float64) {
	a, b := p.x.Support()
	c, d := p.y.Support()
	return prodInf(a, c), prodInf(b, d)
}

// Rand multiplies one draw of each factor.
func (p productLaw) Rand(r *rand.Rand) float64 { return p.x.Rand(r) * p.y.Rand(r) }

// Accuracy reports the error estimate described at Product.
func (p productLaw) Accuracy() Accuracy { return p.acc }

// CF returns φ(t) = Σ_i w_i·φ_X(t·y_i) over the quadrature nodes of Product
// (NaN when neither factor has a known transform, or for NaN t).
func (p productLaw) CF(t float64) complex128 {
	tr, ok := p.transform()
	if !ok || math.IsNaN(t) {
		return complex(math.NaN(), math.NaN())
	}
	return cexpm1(tr.logm(complex(0, t))) + 1
}

// transform returns the log-transform of the product on the imaginary axis
// (Re s = 0 only): log(1 + Σ_i w_i·(M_X(s·y_i) - 1)), the mass the nodes
// leave out counted at M = 1, with the error p.cfErr.
func (p productLaw) transform() (transform, bool) {
	tx, ok := transformOf(p.x)
	if !ok {
		return transform{}, false
	}
	tr := p.rawTransform(tx)
	if p.cf != nil {
		p.cf.once.Do(func() { p.cf.err = p.cfError(tr, p.cf.c.rawTransform(tx)) })
		tr.err = p.cf.err
	}
	return tr, true
}

// rawTransform is the transform of the product on the nodes of p, without
// its error.
func (p productLaw) rawTransform(tx transform) transform {
	ys, ws := p.ys, p.ws
	return transform{
		logm: func(s complex128) complex128 {
			var sum complex128
			for i, y := range ys {
				sum += complex(ws[i], 0) * cexpm1(tx.logm(s*complex(y, 0)))
			}
			return clog1p(sum)
		},
	}
}

// cfError estimates the error of the product's characteristic function tp:
// ten times the largest difference to the 10-point rule tc at t across the
// scale of X·Y (t·sd from 1/8 to 64), plus the mass left out.
func (p productLaw) cfError(tp, tc transform) float64 {
	sd := math.Sqrt(p.variance)
	if !(sd > 0) || !finite(sd) {
		return 0
	}
	d := 0.0
	for ts := 0.125; ts <= 64; ts *= 2 {
		s := complex(0, ts/sd)
		a, b := cexpm1(tp.logm(s)), cexpm1(tc.logm(s))
		d = max(d, cmplx.Abs(a-b))
	}
	return 10*d + 4*productTail + 1e-14
}

// productLawDensity is a productLaw whose first factor has a density.
type productLawDensity struct{ productLaw }

// Density returns Σ_i w_i·f_X(z/y_i)/y_i, the density of the continuous
// product at z (NaN for NaN z).
func (p productLawDensity) Density(z float64) float64 {
	if math.IsNaN(z) {
		return z
	}
	lo, hi := p.Support()
	if z < lo || z > hi {
		return 0
	}
	f := p.x.(Densitied)
	s := 0.0
	for i, y := range p.ys {
		if y > 0 {
			s += p.ws[i] * f.Density(z/y) / y
		}
	}
	return s
}

func (p productLaw) String() string {
	return fmt.Sprintf("Product(%v × %v: %s)", p.x, p.y, summary(p))
}
