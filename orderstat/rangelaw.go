package orderstat

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
)

// maxRangeAtoms bounds the number of atoms of a discrete parent for Range.
const maxRangeAtoms = 1024

// Range returns the law of the sample range R = max − min of n >= 2
// independent copies of l (David & Nagaraja, Order Statistics, 3rd ed.,
// §2.3). For a continuous parent (one with a Density and no atoms), with
// ρ(x) = S(x+r)/S(x),
//
//	P(R > r)  = E[1 − (1 − ρ(X₁))^{n−1}],   X₁ the minimum,
//	f_R(r)    = E[(n−1)·f(X₁+r)/S(X₁)·(1 − ρ(X₁))^{n−2}]
//
// integrated over the minimum's law in its probability scale (so that the
// upper tail of R is computed directly, not as 1 − CDF), by Gauss–Legendre
// quadrature on decades of P(X₁ <= x) and P(X₁ > x) down to 1e-60 (split where
// x + r reaches the parent's upper end). For a
// purely atomic parent (at most 1024 atoms) the range is exact: the mass at
// a_j − a_i is P(min = a_i, max = a_j) by inclusion–exclusion over the
// masses between. Parents with both atoms and a continuous part return an
// error wrapping ErrParam; n = 1 gives the point mass at 0. Mean is
// E[max] − E[min] from the exact order-statistic laws.
func Range(l dist.Law, n int64) (dist.Law, error) {
	const fn = "Range"
	if l == nil {
		return nil, paramErr(fn, "l", nil, "must not be nil")
	}
	if n < 1 || n > MaxCount {
		return nil, paramErr(fn, "n", n, fmt.Sprintf("must be in [1, %d]", MaxCount))
	}
	g, err := newGroup(fn, "l", -1, l, n)
	if err != nil {
		return nil, err
	}
	if n == 1 {
		return dist.MustPointMass(0), nil
	}
	switch {
	case g.pureAtomic:
		if len(g.atoms) > maxRangeAtoms {
			return nil, rangeErr(fn, fmt.Sprintf("%d atoms exceed %d", len(g.atoms), maxRangeAtoms))
		}
		return discreteRange(fn, g.atoms, float64(n))
	case len(g.atoms) > 0 || g.dens == nil:
		return nil, paramErr(fn, "l", fmt.Sprintf("%v", l), "must be continuous (with a Density and no atoms) or purely atomic")
	}
	mx, _ := Max(l, n)
	mn, _ := Min(l, n)
	rl := &rangeLaw{g: g, n: float64(n), max: mx, min: mn, r: gl12()}
	return rangeDensity{rangeLaw: rl}, nil
}

// discreteRange is the exact range of n copies of a finite discrete law.
func discreteRange(fn string, atoms []dist.Atom, n float64) (dist.Law, error) {
	// powDiff returns G^n − H^n for 0 <= H <= G, without cancellation.
	powDiff := func(g, h float64) float64 {
		if g <= 0 {
			return 0
		}
		lg := n * math.Log(g)
		if h <= 0 {
			return math.Exp(lg)
		}
		return math.Exp(lg) * -math.Expm1(n*math.Log(h/g))
	}
	m := len(atoms)
	vals := make([]float64, 0, m*(m+1)/2)
	probs := make([]float64, 0, m*(m+1)/2)
	for i := 0; i < m; i++ {
		vals = append(vals, 0)
		probs = append(probs, math.Exp(n*math.Log(atoms[i].Mass)))
		inner := 0.0 // mass strictly between a_i and a_j
		for j := i + 1; j < m; j++ {
			pi, pj := atoms[i].Mass, atoms[j].Mass
			// P(all in [a_i, a_j]) − P(all in (a_i, a_j]) − P(all in [a_i, a_j)) + P(all in (a_i, a_j)).
			p := powDiff(pi+inner+pj, inner+pj) - powDiff(pi+inner, inner)
			if p > 0 {
				vals = append(vals, atoms[j].Value-atoms[i].Value)
				probs = append(probs, p)
			}
			inner += pj
		}
	}
	// Equal differences (a_j − a_i = a_l − a_k) are one atom: merge them
	// here, keeping the value exact.
	idx := make([]int, len(vals))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return vals[idx[a]] < vals[idx[b]] })
	var mv, mp []float64
	total := 0.0
	for _, i := range idx {
		v, p := vals[i], probs[i]
		total += p
		if k := len(mv); k > 0 && math.Abs(v-mv[k-1]) <= dist.AtomMergeTolerance*max(math.Abs(v), math.Abs(mv[k-1])) {
			mp[k-1] += p
			continue
		}
		mv, mp = append(mv, v), append(mp, p)
	}
	for i := range mp {
		mp[i] /= total
	}
	d, err := dist.NewDiscrete(mv, mp)
	if err != nil {
		return nil, fmt.Errorf("orderstat.%s: %w", fn, err)
	}
	return d, nil
}

// rangeLaw is the range of n copies of a continuous law.
type rangeLaw struct {
	g        group
	n        float64
	max, min dist.Law
	r        glRule
	once     sync.Once
	mom      moments
}

// rangeDecades is the number of decades of the minimum's probability scale
// over which the range integrals run on each side (down to 1e-60).
const rangeDecades = 60

// integrate returns E[h(X₁)] over the law of the minimum X₁, with h given
// the point x and the parent's values at x.
//
// Why a fixed rule here and not internal/quad: the two components of h are
// the two tails of R, one near 1 and the other down to 1e-40, and each must
// keep its own relative precision, which the vector driver's one error for
// all components cannot give (two scalar integrations would double the
// cost). In the minimum's log-probability scale t the integrand is smooth
// (panels of one decade, four in the bulk, three decades at a time in the
// far tail, split at the kink where x + r reaches the parent's end), so the
// 12-point rule meets the error that Accuracy states; that error is
// measured against closed forms (uniform, exponential and normal parents:
// TestRangeOracles), not proven.
func (rl *rangeLaw) integrate(kink float64, h func(x float64, px point) (float64, float64)) (float64, float64) {
	g := &rl.g
	sum, sum2 := 0.0, 0.0
	// The integrand has a kink where x + r reaches the parent's upper end:
	// find that point in the minimum's probability scale, on either side.
	kt, kside := math.NaN(), -1
	if finite(kink) && kink > g.lo && kink < g.hi {
		ls := g.nf * g.eval(kink).logS() // log P(X₁ > kink)
		if v := math.Exp(ls); v >= 0.5 {
			kt, kside = math.Log(-math.Expm1(ls)), 0
		} else {
			kt, kside = ls, 1
		}
	}
	panel := func(side int, a, b float64) {
		mid, half := (a+b)/2, (b-a)/2
		for i := range rl.r.x {
			t := mid + half*rl.r.x[i]
			w := math.Exp(t) // u (side 0) or v (side 1)
			// The minimum's level maps to the parent's: S = (1-u)^(1/n).
			var ls float64
			if side == 0 {
				ls = math.Log1p(-w) / rl.n
			} else {
				ls = math.Log(w) / rl.n
			}
			x := g.levelQuantile(-math.Expm1(ls), math.Exp(ls))
			if !finite(x) {
				continue
			}
			p, q := h(x, g.eval(x))
			sum += rl.r.w[i] * half * w * p
			sum2 += rl.r.w[i] * half * w * q
		}
	}
	// Lower half: u = P(X₁ <= x) on decades [10^-(d+1), 10^-d], then the
	// upper half in v = P(X₁ > x) likewise; in t = ln u, du = u dt.
	for side := 0; side < 2; side++ {
		for d := 0; d < rangeDecades; {
			// Panels of one decade (four sub-panels in the bulk, three
			// decades at a time in the far tail, where the integrand is
			// smooth in log scale).
			step, sub := 1, 1
			switch {
			case d < 4:
				sub = 4
			case d >= 15:
				step = 3
			}
			a, b := -float64(d+step)*math.Ln10, -float64(d)*math.Ln10
			if d == 0 {
				b = math.Log(0.5)
			}
			for k := 0; k < sub; k++ {
				pa, pb := a+(b-a)*float64(k)/float64(sub), a+(b-a)*float64(k+1)/float64(sub)
				if side == kside && kt > pa && kt < pb {
					panel(side, pa, kt)
					panel(side, kt, pb)
					continue
				}
				panel(side, pa, pb)
			}
			d += step
		}
	}
	return sum, sum2
}

// tails returns P(R <= r) and P(R > r).
func (rl *rangeLaw) tails(r float64) (cdf, sf float64) {
	switch {
	case math.IsNaN(r):
		return r, r
	case r < 0:
		return 0, 1
	case math.IsInf(r, 1):
		return 1, 0
	}
	g := &rl.g
	// With ρ = S(x+r)/S(x): log(1-ρ) from whichever form is exact.
	logKeep := func(x float64, px point) float64 {
		py := g.eval(x + r)
		if px.s <= 0 {
			return 0
		}
		rho := py.s / px.s
		if rho < 0.5 {
			return math.Log1p(-rho)
		}
		// 1 − ρ = (F(x+r) − F(x))/S(x), from the directly computed side.
		var d float64
		if py.direct {
			d = py.f - px.f
		} else {
			d = px.s - py.s
		}
		if d <= 0 {
			return math.Inf(-1)
		}
		return math.Log(d) - math.Log(px.s)
	}
	sfSum, cdfSum := rl.integrate(rl.g.hi-r, func(x float64, px point) (float64, float64) {
		lk := (rl.n - 1) * logKeep(x, px)
		return -math.Expm1(lk), math.Exp(lk)
	})
	// Both sums carry the same quadrature weights; normalise so that they
	// add to 1 (the weights sum to 1 − 2·10^-60).
	tot := sfSum + cdfSum
	if tot > 0 {
		sfSum /= tot
		cdfSum /= tot
	}
	return clamp01(cdfSum), clamp01(sfSum)
}

// CDF returns P(R <= r).
func (rl *rangeLaw) CDF(r float64) float64 { c, _ := rl.tails(r); return c }

// Survival returns P(R > r), computed directly.
func (rl *rangeLaw) Survival(r float64) float64 { _, s := rl.tails(r); return s }

// Quantile returns inf{r : CDF(r) >= p}.
func (rl *rangeLaw) Quantile(p float64) float64 {
	switch {
	case !(p >= 0 && p <= 1):
		return math.NaN()
	case p == 0:
		return 0
	case p == 1:
		_, hi := rl.Support()
		return hi
	}
	return rl.quantile(p, 1-p, false)
}

// UpperQuantile returns inf{r : Survival(r) <= q}, accurate for tiny q.
func (rl *rangeLaw) UpperQuantile(q float64) float64 {
	switch {
	case !(q >= 0 && q <= 1):
		return math.NaN()
	case q == 1:
		return 0
	case q == 0:
		_, hi := rl.Support()
		return hi
	}
	return rl.quantile(1-q, q, true)
}

func (rl *rangeLaw) quantile(p, q float64, upper bool) float64 {
	h := func(r float64) float64 {
		c, s := rl.tails(r)
		if !upper {
			return math.Log(c) - math.Log(p)
		}
		return math.Log(q) - math.Log(s)
	}
	// R > b needs max > UQ_max(q/2) or min < Q_min(q/2).
	b := rl.max.UpperQuantile(q/2) - rl.min.Quantile(q/2)
	if !finite(b) || b <= 0 {
		b = 1
	}
	a, b, ha, hb := widen(h, 0, b)
	switch {
	case ha >= 0:
		return a
	case hb < 0:
		return b
	}
	return solve(h, a, b, ha, hb)
}

// Mean returns E[max] − E[min].
func (rl *rangeLaw) Mean() float64 { return rl.moments().mean }

// Variance returns Var[R] = 2∫ r·P(R > r) dr − E[R]², by adaptive
// Gauss–Kronrod quadrature (tailIntegrals) up to the range's upper 1e-20
// quantile.
func (rl *rangeLaw) Variance() float64 { return rl.moments().variance }

func (rl *rangeLaw) moments() moments {
	rl.once.Do(func() {
		mean := rl.max.Mean() - rl.min.Mean()
		if !finite(mean) {
			rl.mom = moments{mean: mean, variance: math.NaN()}
			return
		}
		hi := rl.UpperQuantile(momentTail)
		pts := make([]float64, 9)
		for i := range pts {
			pts[i] = hi * float64(i) / 8
		}
		m1, m2, e1, _ := tailIntegrals(rl.tails, 0, hi, pts, 1e-12)
		v := m2 - mean*mean
		if v < 0 {
			v = 0
		}
		rl.mom = moments{mean: mean, variance: v, meanErr: math.Abs(m1 - mean), varErr: 2*mean*e1 + 1e-12*m2}
	})
	return rl.mom
}

// Support returns [0, hi − lo] of the parent's support.
func (rl *rangeLaw) Support() (lo, hi float64) { return 0, rl.g.hi - rl.g.lo }

// Rand draws the minimum and then the maximum of the other n−1 given it,
// both as uniform order statistics mapped through the parent's quantiles:
// 1−U₁ = V^(1/n), and (1−U_n) = (1−U₁)·(1 − W^(1/(n−1))).
func (rl *rangeLaw) Rand(r *rand.Rand) float64 {
	g := &rl.g
	ls1 := math.Log(openUniform(r)) / rl.n // log(1 − U₁)
	x1 := g.levelQuantile(-math.Expm1(ls1), math.Exp(ls1))
	lw := math.Log(openUniform(r)) / (rl.n - 1)
	lsn := ls1 + math.Log(-math.Expm1(lw)) // log(1 − U_n)
	xn := g.levelQuantile(-math.Expm1(lsn), math.Exp(lsn))
	return max(0, xn-x1)
}

// Atoms returns none: the range of a continuous law is continuous.
func (rl *rangeLaw) Atoms() []dist.Atom { return nil }

// String prints the law compactly.
func (rl *rangeLaw) String() string {
	return fmt.Sprintf("Range of %g × %v: %s", rl.n, rl.g.law, summary(rl))
}

// rangeDensity adds the density of the range.
type rangeDensity struct{ *rangeLaw }

// Density returns f_R(r) = E[(n−1)·f(X₁+r)/S(X₁)·(1 − ρ(X₁))^{n−2}].
func (rd rangeDensity) Density(r float64) float64 {
	rl := rd.rangeLaw
	switch {
	case math.IsNaN(r):
		return r
	case r < 0 || math.IsInf(r, 1):
		return 0
	}
	g := &rl.g
	d, _ := rl.integrate(rl.g.hi-r, func(x float64, px point) (float64, float64) {
		fy := g.dens.Density(x + r)
		if fy == 0 || px.s <= 0 {
			return 0, 0
		}
		py := g.eval(x + r)
		rho := py.s / px.s
		var lk float64
		if rho < 0.5 {
			lk = math.Log1p(-rho)
		} else {
			var dd float64
			if py.direct {
				dd = py.f - px.f
			} else {
				dd = px.s - py.s
			}
			if dd <= 0 {
				return 0, 0
			}
			lk = math.Log(dd) - math.Log(px.s)
		}
		return (rl.n - 1) * fy / px.s * math.Exp((rl.n-2)*lk), 0
	})
	return d
}

// Accuracy reports the error of CDF and Survival: the quadrature over the
// minimum's law (about 1e-13 absolute, 1e-10 relative in the upper tail
// down to about 1e-40, where the truncation of that law at 1e-60 starts to
// matter).
func (rl *rangeLaw) Accuracy() dist.Accuracy {
	return dist.Accuracy{CDFAbs: 1e-13, SurvivalRel: 1e-10, TailFloor: 1e-40,
		Method: "expectation over the minimum's law by Gauss–Legendre quadrature on decades of its probability scale"}
}
