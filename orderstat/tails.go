package orderstat

import (
	"cmp"
	"math"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/joulelaw/joulelaw/dist"
)

// TwoTails is implemented by laws that return both tails at a point from
// one evaluation, each accurate relative to its own value (the smaller
// computed directly, the larger its complement). A group whose law
// implements it needs no median to choose between CDF and Survival: the
// group laws of this package then ask the law's median only when a
// quantile is solved for (cheapBracket), not when they are built.
type TwoTails interface {
	dist.Law
	// Tails returns P(X <= x) and P(X > x), in [0, 1], summing to 1 up to
	// rounding; NaN, NaN for NaN x.
	Tails(x float64) (cdf, survival float64)
}

// TailBounded is implemented by laws that bound their tails in closed form
// (for a sum of independent terms, Hoeffding's or Bernstein's inequality):
// proven bounds, not estimates, at the cost of a few arithmetic
// operations. MinOfGroups and MaxOfGroups use them to leave out, at each
// point, the groups whose whole contribution is below pruneRel of the
// answer (see extremeLog).
type TailBounded interface {
	dist.Law
	// LowerBoundPoint returns a point x0 with P(X <= x) <= exp(logP) for
	// every x <= x0, for logP < 0; −Inf where none is known.
	LowerBoundPoint(logP float64) float64
	// UpperBoundPoint returns a point x1 with P(X > x) <= exp(logP) for
	// every x >= x1, for logP < 0; +Inf where none is known.
	UpperBoundPoint(logP float64) float64
}

// pruneRel is the relative share of l = Σ n_i·log S_i(x) (the minimum;
// log F_i for the maximum) that the groups left out by their tail bounds
// may make up together: a group is left out only where its bound b on
// F_i(x) (S_i(x) for the maximum) gives n_i·(−log1p(−b)) <= 2·n_i·b <=
// pruneRel/G times the part of the sum already evaluated (G groups), so
// that all of them together are at most pruneRel·|l|. The CDF of the
// minimum, −expm1(l), then moves by at most pruneRel relative (pruneRel/e
// absolute), its survival exp(l) by at most pruneRel·|l| <= 745·pruneRel
// relative (exp(l) underflows below l = −745): about the rounding of the
// sum itself. Accuracy adds both.
const pruneRel = 1e-16

// pruneStep and pruneLevels: a TailBounded group keeps its bound points at
// the levels exp(−pruneStep·m), m = 1, …, pruneLevels (a factor e^46 ≈
// 10^20 apart, down to e^−368 ≈ 10^−160), each computed when first
// needed and kept (the first when the law is built, for the order); at a
// point, the level used is the largest that meets the group's share of
// pruneRel (none where the answer is so small that the share is
// below the last level: every group is evaluated there).
const (
	pruneStep   = 46.0
	pruneLevels = 8
)

// boundPoints holds a TailBounded law's bound points at the levels
// exp(−pruneStep·(m+1)), each asked of the law when first needed (the
// same value whenever that is: a law's bound point depends on the level
// alone, so goroutines that ask it at once store the same bits; without
// a lock, which costs more than the bound).
type boundPoints struct {
	law   TailBounded
	upper bool // UpperBoundPoint (the maximum); else LowerBoundPoint
	set   [pruneLevels]atomic.Bool
	x     [pruneLevels]atomic.Uint64 // the points' bits, valid once set
}

// at returns the bound point of level m+1.
func (b *boundPoints) at(m int) float64 {
	if b.set[m].Load() {
		return math.Float64frombits(b.x[m].Load())
	}
	lp := -pruneStep * float64(m+1)
	var x float64
	if b.upper {
		x = b.law.UpperBoundPoint(lp)
	} else {
		x = b.law.LowerBoundPoint(lp)
	}
	b.x[m].Store(math.Float64bits(x))
	b.set[m].Store(true)
	return x
}

// setBounds prepares the leaving out of groups for a minimum or maximum
// over several groups some of whose laws are TailBounded: each such
// group's bound points (the lower ones for the minimum, the upper for the
// maximum) and the order of evaluation — the groups without bounds first,
// then those whose tail reaches e^−46 first (lowest lower point for the
// minimum, highest upper point for the maximum), ties in the given order.
func (c *core) setBounds() {
	if len(c.groups) < 2 || (c.kind != kindMin && c.kind != kindMax) {
		return
	}
	key := make([]float64, len(c.groups))
	points := make([]boundPoints, len(c.groups)) // one allocation for all groups
	for i := range c.groups {
		g := &c.groups[i]
		key[i] = math.Inf(-1)
		b, ok := g.law.(TailBounded)
		if !ok {
			continue
		}
		points[i].law, points[i].upper = b, c.kind == kindMax
		g.horizon = &points[i]
		g.logN2 = math.Log(2 * g.nf)
		key[i] = g.horizon.at(0)
		if c.kind == kindMax {
			key[i] = -key[i]
		}
		if math.IsNaN(key[i]) {
			g.horizon, key[i] = nil, math.Inf(-1)
			continue
		}
		c.bounded = true
	}
	c.order = make([]int, len(c.groups))
	for i := range c.order {
		c.order[i] = i
	}
	slices.SortStableFunc(c.order, func(a, b int) int { return cmp.Compare(key[a], key[b]) })
	if !c.bounded {
		return
	}
	c.rest = &restBounds{logN2: make([]float64, len(c.order))}
	top := math.Inf(-1)
	for p := len(c.order) - 1; p >= 0; p-- {
		if g := &c.groups[c.order[p]]; g.horizon != nil {
			top = max(top, g.logN2)
		} else {
			top = math.Inf(1) // a group without bounds: never left out
		}
		c.rest.logN2[p] = top
	}
}

// restBounds lets extremeLog leave out all the groups from a position of
// its order on with one comparison: logN2[p] is the largest log(2·n) of
// the groups from position p on (+Inf where one of them has no bounds),
// and at level m+1 lim[m][p] is the smallest of their lower bound points
// for the minimum (the largest upper one for the maximum; −Inf, +Inf where
// a group has none there), each level's computed once, when first needed,
// from the groups' own bound points (the same values whenever that is).
type restBounds struct {
	logN2 []float64
	once  [pruneLevels]sync.Once
	lim   [pruneLevels][]float64
}

// restLimit returns lim[m] (see restBounds).
func (c *core) restLimit(m int) []float64 {
	r := c.rest
	r.once[m].Do(func() {
		upper := c.kind == kindMax
		lim := make([]float64, len(c.order))
		acc := math.Inf(1)
		if upper {
			acc = math.Inf(-1)
		}
		for p := len(c.order) - 1; p >= 0; p-- {
			h := math.NaN()
			if g := &c.groups[c.order[p]]; g.horizon != nil {
				h = g.horizon.at(m)
			}
			switch {
			case math.IsNaN(h) && upper:
				acc = math.Inf(1)
			case math.IsNaN(h):
				acc = math.Inf(-1)
			case upper:
				acc = max(acc, h)
			default:
				acc = min(acc, h)
			}
			lim[p] = acc
		}
		r.lim[m] = lim
	})
	return r.lim[m]
}

// extremeLog returns Σ n_i·log S_i(x) for the minimum or
// Σ n_i·log F_i(x) for the maximum (upper), or with left the same just below x.
// With TailBounded groups (and not left) the groups are taken in the order
// setBounds chose, and each bounded group is left out where its bound
// point at the level that meets its share of pruneRel·|sum so far| says
// its tail is below that level; the choice depends on x alone, so the
// answer does too.
func (c *core) extremeLog(x float64, left, upper bool) float64 {
	term := func(g *group) float64 {
		p := g.eval(x)
		if left {
			p = g.evalLeft(x)
		}
		if upper {
			return g.nf * p.logF()
		}
		return g.nf * p.logS()
	}
	var l float64
	if !c.bounded || left {
		for i := range c.groups {
			l += term(&c.groups[i])
		}
		return l
	}
	share := pruneRel / float64(len(c.groups))
	thr := math.NaN() // log(share·|l|) once l is not 0
	for p, i := range c.order {
		g := &c.groups[i]
		if !math.IsNaN(thr) {
			// the groups from p on, all at once: the level that meets
			// the share of the one with the most nodes meets every
			// group's, and x at or beyond the rest's limit at that level
			// is beyond each group's own bound point there
			if need := (c.rest.logN2[p] - thr) / pruneStep; need <= pruneLevels {
				lim := c.restLimit(max(1, int(math.Ceil(need))) - 1)[p]
				if (upper && x >= lim) || (!upper && x <= lim) {
					break
				}
			}
		}
		if g.horizon != nil && !math.IsNaN(thr) {
			// a bound b <= exp(−pruneStep·m) <= share·|l|/(2n) gives
			// n·(−log1p(−b)) <= 2·n·b <= share·|l|
			if need := (g.logN2 - thr) / pruneStep; need <= pruneLevels {
				m := max(1, int(math.Ceil(need)))
				h := g.horizon.at(m - 1)
				if (upper && x >= h) || (!upper && x <= h) {
					continue
				}
			}
		}
		l += term(g)
		if math.IsInf(l, -1) {
			return l
		}
		if a := math.Abs(l); a > 0 && !math.IsInf(a, 0) {
			thr = math.Log(share * a)
		}
	}
	return l
}
