package orderstat

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/integrate/quad"

	loader "github.com/joulelaw/joulelaw/internal/binom"
)

// This file holds the law of the k-th smallest of n independent Uniform(0,1)
// values, Beta(k, n-k+1) (David & Nagaraja, Order Statistics, 3rd ed., §2.2),
// for integer parameters up to 10^15, and the binomial probabilities it is
// built from. The incomplete beta function of gonum (cephes) goes through
// log B(a, b), which loses every digit for parameters of 10^9 and more;
// here the density is computed by Loader's saddle-point form of the binomial
// probability and integrated by composite Gauss–Legendre quadrature on panels
// walked outwards from the point of interest.
//
// Why a fixed rule here and not internal/quad: the walk is an outward sum
// that stops as soon as a panel adds less than 1e-18 of the total, so the
// far tail of the Beta density is never visited (an adaptive driver needs
// the whole interval and its end points up front); each panel is at most
// two standard deviations wide and short enough that the log-density moves
// by at most 8 across it, where the density is e^{−(quadratic)} to within
// its skewness, which the 12-point rule (exact to degree 23) integrates to
// rounding. The tests check the values against gonum's incomplete beta
// where it is accurate and against x^n in 256-bit arithmetic
// (oracle_test.go: TestKthUniformIsBeta, TestMaxUniformIsBeta).

const ln2Pi = 1.8378770664093454835606594728112352797227949472755668 // log(2π)

// stirlerr, bd0, logBinomPMF and log1mp are Loader's binomial kernel, kept
// once in internal/binom (dist's k-fold sums use it too).
func stirlerr(n float64) float64             { return loader.StirlingError(n) }
func bd0(x, m float64) float64               { return loader.Deviance(x, m) }
func logBinomPMF(x, n, p, q float64) float64 { return loader.LogPMF(x, n, p, q) }
func log1mp(p, q float64) float64            { return loader.Log1mp(p, q) }

// betaLaw is Beta(a, b) for integers a, b >= 1 (held in float64), the law of
// the a-th smallest of a+b-1 independent uniforms.
type betaLaw struct {
	a, b float64
	m    float64 // a + b - 2
	c0   float64 // log density constant (a, b >= 2)
	sd   float64
}

func newBeta(a, b float64) betaLaw {
	bl := betaLaw{a: a, b: b, m: a + b - 2}
	s := a + b
	bl.sd = math.Sqrt(a / s * (b / s) / (s + 1))
	if a >= 2 && b >= 2 {
		x, m := a-1, bl.m
		bl.c0 = math.Log(m+1) + stirlerr(m) - stirlerr(x) - stirlerr(m-x) - 0.5*(ln2Pi+math.Log(x)+math.Log1p(-x/m))
	}
	return bl
}

// logDensity returns the log density at u, with w = 1 - u given exactly.
// The density is (a+b-1)·P(Bin(a+b-2, u) = a-1).
func (bl betaLaw) logDensity(u, w float64) float64 {
	switch {
	case bl.a == 1 && bl.b == 1:
		return 0
	case bl.a == 1:
		return math.Log(bl.b) + (bl.b-1)*log1mp(u, w)
	case bl.b == 1:
		return math.Log(bl.a) + (bl.a-1)*log1mp(w, u)
	}
	x := bl.a - 1
	return bl.c0 - bd0(x, bl.m*u) - bd0(bl.m-x, bl.m*w)
}

// Density returns the density at u (u + w = 1, both given).
func (bl betaLaw) density(u, w float64) float64 { return math.Exp(bl.logDensity(u, w)) }

// glRule holds the 12-point Gauss–Legendre rule on [-1, 1], computed
// through gonum's quad.Legendre (see gl12).
type glRule struct{ x, w [glOrder]float64 }

const glOrder = 12

// gl12 returns the 12-point Gauss–Legendre nodes and weights on [-1, 1].
func gl12() glRule {
	var r glRule
	quad.Legendre{}.FixedLocations(r.x[:], r.w[:], -1, 1)
	return r
}

// split returns P(U <= p) and P(U > p) for U ~ Beta(a, b), p + q = 1 (both
// given; the smaller must be exact). Each is accurate relative to its value:
// the tail away from the mode is integrated and the other is its complement.
func (bl betaLaw) split(p, q float64) (lower, upper float64) {
	switch {
	case !(p > 0):
		return 0, 1
	case !(q > 0):
		return 1, 0
	case bl.a == 1:
		// P(U > p) = (1-p)^b.
		l := bl.b * log1mp(p, q)
		return -math.Expm1(l), math.Exp(l)
	case bl.b == 1:
		// P(U <= p) = p^a.
		l := bl.a * log1mp(q, p)
		return math.Exp(l), -math.Expm1(l)
	}
	mode := (bl.a - 1) / bl.m
	below := p <= mode
	if p > 0.5 {
		below = q >= (bl.b-1)/bl.m
	}
	if below {
		lower = clamp01(bl.mass(0, 1, p, q))
		return lower, 1 - lower
	}
	upper = clamp01(bl.mass(p, q, 1, 0))
	return 1 - upper, upper
}

// mass returns P(u1 < U <= u2) for u1 <= u2, each point given with its
// complement (u + w = 1).
func (bl betaLaw) mass(u1, w1, u2, w2 float64) float64 {
	if !(u1 < u2) {
		return 0
	}
	r := gl12()
	total := 0.0
	// Part in [0, 1/2], in the coordinate u.
	if u1 < 0.5 {
		hi := min(u2, 0.5)
		total += bl.piece(&r, false, u1, hi)
	}
	// Part in [1/2, 1], in the coordinate w = 1 - u (so that w is exact).
	if u2 > 0.5 {
		lo := min(w1, 0.5)
		total += bl.piece(&r, true, w2, lo)
	}
	return total
}

// piece integrates the density over [t1, t2] (t1 <= t2) of the coordinate
// t = u (inW false) or t = w = 1 - u (inW true), walking away from the mode
// on panels short enough that the log density changes by at most about 8 on
// each, and stopping once a panel adds less than 1e-18 of the sum.
func (bl betaLaw) piece(r *glRule, inW bool, t1, t2 float64) float64 {
	if !(t1 < t2) {
		return 0
	}
	alpha, beta := bl.a, bl.b
	if inW {
		alpha, beta = bl.b, bl.a
	}
	mode := 0.0
	if bl.m > 0 {
		mode = (alpha - 1) / bl.m
	}
	dens := func(t float64) float64 {
		if inW {
			return bl.density(1-t, t)
		}
		return bl.density(t, 1-t)
	}
	walk := func(from, to float64) float64 {
		dir := 1.0
		if to < from {
			dir = -1
		}
		pos, sum := from, 0.0
		for iter := 0; iter < 4000; iter++ {
			rem := math.Abs(to - pos)
			if rem <= 0 {
				break
			}
			h := 2 * bl.sd
			slope := math.Abs((alpha-1)/pos - (beta-1)/(1-pos))
			if slope*h > 8 {
				h = 8 / slope
			}
			if !(h < rem) {
				h = rem
			}
			next := pos + dir*h
			if !(h < rem) {
				next = to
			}
			lo, hi := min(pos, next), max(pos, next)
			c, half := (lo+hi)/2, (hi-lo)/2
			part := 0.0
			for i := 0; i < glOrder; i++ {
				part += r.w[i] * dens(c+half*r.x[i])
			}
			part *= half
			sum += part
			pos = next
			if part <= 1e-18*sum {
				break
			}
		}
		return sum
	}
	switch {
	case mode <= t1:
		return walk(t1, t2)
	case mode >= t2:
		return walk(t2, t1)
	}
	return walk(mode, t1) + walk(mode, t2)
}

// quantile returns the smallest u with P(U <= u) >= p, equivalently
// P(U > u) <= q, for p + q = 1 (both given, the smaller exact), as u and its
// complement w = 1 - u, the smaller of the two exact.
func (bl betaLaw) quantile(p, q float64) (u, w float64) {
	switch {
	case !(p > 0):
		return 0, 1
	case !(q > 0):
		return 1, 0
	case bl.a == 1:
		// (1-u)^b = q.
		l := log1mp(p, q) / bl.b
		return -math.Expm1(l), math.Exp(l)
	case bl.b == 1:
		// u^a = p.
		l := log1mp(q, p) / bl.a
		return math.Exp(l), -math.Expm1(l)
	}
	// Which half holds the answer?
	lo5, _ := bl.split(0.5, 0.5)
	inW := lo5 < p
	// In the coordinate t (u or w) on (0, 1/2], define an increasing h(t)
	// whose root is the answer.
	h := func(t float64) float64 {
		var lower, upper float64
		if inW {
			lower, upper = bl.split(1-t, t)
			// t = w rising means u falling: condition "P(U <= u) >= p"
			// holds for small t, so negate.
			if p <= 0.5 {
				return math.Log(p) - math.Log(lower)
			}
			return math.Log(upper) - math.Log(q)
		}
		lower, upper = bl.split(t, 1-t)
		if p <= 0.5 {
			return math.Log(lower) - math.Log(p)
		}
		return math.Log(q) - math.Log(upper)
	}
	// Bracket around the normal approximation, widened until it holds.
	mean := bl.a / (bl.a + bl.b)
	if inW {
		mean = bl.b / (bl.a + bl.b)
	}
	a, b := max(0, mean-12*bl.sd), min(0.5, mean+12*bl.sd)
	ha, hb := h(a), h(b)
	for i := 0; ha >= 0 && a > 0 && i < 60; i++ {
		a = max(0, mean-(mean-a)*4)
		if a < 1e-300 {
			a = 0
		}
		ha = h(a)
	}
	for i := 0; hb < 0 && b < 0.5 && i < 60; i++ {
		b = min(0.5, b+(b-mean+bl.sd)*4)
		hb = h(b)
	}
	var t float64
	switch {
	case ha >= 0:
		t = a
	case hb < 0:
		t = b
	default:
		t = solve(h, a, b, ha, hb)
	}
	if inW {
		// The root in w is the supremum of the w where the condition
		// holds; h was negated, so solve returned the first w where it
		// fails, i.e. the infimum of u where it holds.
		return 1 - t, t
	}
	return t, 1 - t
}

// rand draws U ~ Beta(a, b) as G1/(G1+G2) with G1 ~ Gamma(a), G2 ~ Gamma(b),
// returning U and 1 - U (= G2/(G1+G2), exact when small).
func (bl betaLaw) rand(r *rand.Rand) (u, w float64) {
	g1 := randGamma(r, bl.a)
	g2 := randGamma(r, bl.b)
	s := g1 + g2
	return g1 / s, g2 / s
}

// randGamma draws Gamma(shape, 1) for shape >= 1 by Marsaglia & Tsang
// (2000), ACM TOMS 26:363–372. For large shapes the acceptance test is
// evaluated with the x²/2 terms cancelled analytically, so that it keeps
// its precision for shapes up to 10^15.
func randGamma(r *rand.Rand, shape float64) float64 {
	if shape == 1 {
		return r.ExpFloat64()
	}
	d := shape - 1.0/3
	c := 1 / math.Sqrt(9*d)
	for {
		x := r.NormFloat64()
		t := c * x
		if t <= -1 {
			continue
		}
		v := (1 + t) * (1 + t) * (1 + t)
		lu := math.Log(openUniform(r))
		// Accept when log u < x²/2 + d·(1 - v + log v).
		var crit float64
		if math.Abs(t) < 0.05 {
			// 1 - v + log v = -(9/2)t² + Σ_{j>=4} 3(-1)^{j+1} t^j / j, and
			// d·(9/2)t² = x²/2 exactly (c² = 1/(9d)).
			s, tj := 0.0, t*t*t
			for j := 4; j < 40; j++ {
				tj *= t
				term := 3 * tj / float64(j)
				if j%2 == 0 {
					term = -term
				}
				s += term
				if math.Abs(term) < 1e-18*math.Abs(s) {
					break
				}
			}
			crit = d * s
		} else {
			crit = x*x/2 + d*(1-v+math.Log(v))
		}
		if lu < crit {
			return d * v
		}
	}
}

// openUniform returns a uniform value in the open interval (0, 1).
func openUniform(r *rand.Rand) float64 {
	return (float64(r.Uint64()>>11) + 0.5) / (1 << 53)
}
