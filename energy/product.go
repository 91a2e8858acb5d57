package energy

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"gonum.org/v1/gonum/integrate/quad"
)

// productLaw is the law of Z = X·Y for independent X, Y >= 0 that are both
// continuous: the energy (P − P_floor)·t of a state whose power and duration
// are both continuous laws. It is computed on the quantile scale of Y:
//
//	P(Z <= z) = ∫₀¹ F_X(z / Q_Y(u)) du,   P(Z > z) = ∫₀¹ S_X(z / Q_Y(u)) du
//
// each tail integrated directly, by composite Gauss–Legendre rules on
// panels graded geometrically towards u = 0 and u = 1 (down to 1e-16 of
// either end, the mass left out being at most 2e-16). The density is
// ∫ f_X(z/Q_Y(u))/Q_Y(u) du and the characteristic function ∫ φ_X(t·Q_Y(u)) du
// (with the factors swapped when only Y has a characteristic function).
// The error is estimated at construction by comparing the 20-point rule
// with a 10-point rule on the same panels over a grid of quantiles of Z, and
// reported by Accuracy. This stands in for a numerical product in package
// dist until one lands there.
type productLaw struct {
	x, y      dist.Law // Y is integrated on its quantile scale
	yq, w     []float64
	yq10, w10 []float64
	mean, vr  float64
	lo, hi    float64
	acc       dist.Accuracy
}

// newProduct returns the law of x·y for independent continuous x, y with
// support in [0, ∞) and finite variances.
func newProduct(x, y dist.Law) (dist.Law, error) {
	if _, ok := x.(dist.CharFunc); !ok {
		if _, ok := y.(dist.CharFunc); ok {
			x, y = y, x
		}
	}
	p := productLaw{x: x, y: y}
	p.yq, p.w = productNodes(y, 20)
	p.yq10, p.w10 = productNodes(y, 10)
	mx, my := x.Mean(), y.Mean()
	vx, vy := x.Variance(), y.Variance()
	p.mean = mx * my
	p.vr = (vx+mx*mx)*(vy+my*my) - mx*mx*my*my
	xl, xh := x.Support()
	yl, yh := y.Support()
	p.lo, p.hi = xl*yl, xh*yh
	if math.IsNaN(p.hi) {
		p.hi = math.Inf(1)
	}
	if !finite(p.mean) || !finite(p.vr) {
		return nil, fmt.Errorf("product of %v and %v: moments %g, %g are not finite", x, y, p.mean, p.vr)
	}
	// Error estimate: the 20-point and 10-point rules over quantiles of Z
	// (taken from a log-normal fit by moments, only to place the points).
	est := 0.0
	s2 := math.Log1p(p.vr / (p.mean * p.mean))
	mu := math.Log(p.mean) - s2/2
	for _, z := range []float64{-4, -3, -2, -1, -0.5, 0, 0.5, 1, 2, 3, 4, 5} {
		v := math.Exp(mu + z*math.Sqrt(s2))
		a := p.integrate(p.yq, p.w, func(y float64) float64 { return p.x.CDF(v / y) })
		b := p.integrate(p.yq10, p.w10, func(y float64) float64 { return p.x.CDF(v / y) })
		est = math.Max(est, math.Abs(a-b))
	}
	p.acc = dist.Accuracy{CDFAbs: est + 2e-16, SurvivalRel: 1e-6, TailFloor: 1e-12,
		Method: "product of two continuous factors, Gauss–Legendre on the quantile scale of one"}
	return p, nil
}

// productNodes returns Q_Y at the nodes of an n-point Gauss–Legendre rule on
// each of the panels [0, 1e-16, 1e-15, …, 0.1, 0.5, 0.9, …, 1 − 1e-16, 1]
// (the two outermost panels left out) and the weights.
func productNodes(y dist.Law, n int) (yq, w []float64) {
	var edges []float64
	for e := -16; e <= -1; e++ {
		edges = append(edges, math.Pow(10, float64(e)))
	}
	edges = append(edges, 0.25, 0.5, 0.75)
	for e := -1; e >= -16; e-- {
		edges = append(edges, -math.Pow(10, float64(e))) // 1 − 10^e, stored negated
	}
	x := make([]float64, n)
	wt := make([]float64, n)
	for i := 0; i+1 < len(edges); i++ {
		a, b := edges[i], edges[i+1]
		upper := a < 0 || b < 0
		if upper {
			// Work with the upper tail q = 1 − u so that UpperQuantile keeps
			// its precision near u = 1.
			qa, qb := -a, -b
			if a > 0 {
				qa = 1 - a
			}
			quad.Legendre{}.FixedLocations(x, wt, qb, qa)
			for j := range x {
				yq = append(yq, y.UpperQuantile(x[j]))
				w = append(w, wt[j])
			}
			continue
		}
		quad.Legendre{}.FixedLocations(x, wt, a, b)
		for j := range x {
			yq = append(yq, y.Quantile(x[j]))
			w = append(w, wt[j])
		}
	}
	return yq, w
}

func (p productLaw) integrate(yq, w []float64, f func(y float64) float64) float64 {
	s := 0.0
	for i, y := range yq {
		if y > 0 {
			s += w[i] * f(y)
		}
	}
	return s
}

func (p productLaw) CDF(z float64) float64 {
	switch {
	case math.IsNaN(z):
		return z
	case z < p.lo:
		return 0
	case z >= p.hi:
		return 1
	}
	return math.Min(1, math.Max(0, p.integrate(p.yq, p.w, func(y float64) float64 { return p.x.CDF(z / y) })))
}

func (p productLaw) Survival(z float64) float64 {
	switch {
	case math.IsNaN(z):
		return z
	case z < p.lo:
		return 1
	case z >= p.hi:
		return 0
	}
	return math.Min(1, math.Max(0, p.integrate(p.yq, p.w, func(y float64) float64 { return p.x.Survival(z / y) })))
}

func (p productLaw) Density(z float64) float64 {
	d, ok := p.x.(dist.Densitied)
	if math.IsNaN(z) {
		return z
	}
	if !ok || z < p.lo || z > p.hi {
		return 0
	}
	return p.integrate(p.yq, p.w, func(y float64) float64 { return d.Density(z/y) / y })
}

func (p productLaw) CF(t float64) complex128 {
	c, ok := p.x.(dist.CharFunc)
	if !ok {
		return complex(math.NaN(), math.NaN())
	}
	var re, im float64
	for i, y := range p.yq {
		v := c.CF(t * y)
		re += p.w[i] * real(v)
		im += p.w[i] * imag(v)
	}
	return complex(re, im)
}

func (p productLaw) Quantile(q float64) float64 {
	return invertLaw(p, q, false)
}

func (p productLaw) UpperQuantile(q float64) float64 {
	return invertLaw(p, q, true)
}

func (p productLaw) Mean() float64             { return p.mean }
func (p productLaw) Variance() float64         { return p.vr }
func (p productLaw) Support() (lo, hi float64) { return p.lo, p.hi }
func (p productLaw) Rand(r *rand.Rand) float64 { return p.x.Rand(r) * p.y.Rand(r) }
func (p productLaw) Accuracy() dist.Accuracy   { return p.acc }
func (p productLaw) String() string            { return fmt.Sprintf("Product(%v, %v)", p.x, p.y) }

// invertLaw returns inf{z : CDF(z) >= q} (upper = false) or
// inf{z : Survival(z) <= q} (upper = true) by bracketing from the mean and
// bisecting to adjacent floating-point numbers; NaN for q outside [0, 1].
func invertLaw(l dist.Law, q float64, upper bool) float64 {
	lo, hi := l.Support()
	switch {
	case !(q >= 0 && q <= 1):
		return math.NaN()
	case (!upper && q == 0) || (upper && q == 1):
		return lo
	case (!upper && q == 1) || (upper && q == 0):
		return hi
	}
	ok := func(z float64) bool {
		if upper {
			return l.Survival(z) <= q
		}
		return l.CDF(z) >= q
	}
	a, b := lo, l.Mean()
	step := math.Sqrt(l.Variance())
	for !ok(b) {
		a = b
		b += step
		step *= 2
		if b >= hi {
			b = hi
			break
		}
	}
	for range 200 {
		m := a + (b-a)/2
		if m <= a || m >= b {
			break
		}
		if ok(m) {
			b = m
		} else {
			a = m
		}
	}
	return b
}
