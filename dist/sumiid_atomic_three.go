package dist

import (
	"math"

	"github.com/joulelaw/joulelaw/internal/binom"
)

// Exact k-fold sums of a three-valued law (a cycle of three energies, say)
// by conditioning.
//
// With cycle energies v_a < v_b and v_c (probabilities p_a, p_b, p_c) and
// counts N_a + N_b + N_c = k, the count N_c of the least likely energy is
// Binomial(k, p_c), and given N_c = n the count N_b is Binomial(k − n, q)
// with q = p_b/(p_a + p_b). So
//
//	P(S_k <= x) = Σ_n P(N_c = n) · P(N_b <= J(n) | N_c = n),
//	J(n) = ⌊(x − n·v_c − (k − n)·v_a)/(v_b − v_a)⌋,
//
// a sum of binomial tails, and P(S_k > x) the same with the upper tails.
// Every term is exact but for rounding; the sums are cut where the masses
// left (bounded by a geometric series, the mass ratios falling away from the
// mode) are below 1e-17 of the smaller tail, so both tails keep their
// relative precision. Each conditional tail is known to 1e-13 of itself or,
// where its weight in the sum is small, to an absolute error: the weighted
// errors of the tails so kept stay within 1e-13 of the sum (so far, so of
// the final one), sparing direct computations of tails the sum barely
// sees. The cost is about 8·sd(N_c) conditional tails of about
// 8·sd(N_b) masses each, independent of k's size otherwise.
//
// Ties: an atom counts as <= x when its value as atomValue3 rounds it is;
// Rand returns those same values, so samples and CDF agree on every atom.

// Stated bounds of the three-energy path, from the tests against
// multinomial enumeration, binomial laws and the exact k-fold atoms
// (repeated squaring) (worst measured about 1e-14 absolute and 1e-12 relative; see
// atomicthree_internal_test.go).
const (
	threeCDFAbs      = 1e-12
	threeSurvivalRel = 1e-10
	threeTailFloor   = 1e-290
)

// threeRoles returns the index c of the least likely of three energies and
// the indices ia, ib of the other two, v[ia] < v[ib].
func (a atomicSums) threeRoles() (c, ia, ib int) {
	for i := range a.p {
		if a.p[i] < a.p[c] {
			c = i
		}
	}
	ia, ib = (c+1)%3, (c+2)%3
	if a.v[ia] > a.v[ib] {
		ia, ib = ib, ia
	}
	return c, ia, ib
}

// atomValue3 returns the atom of S_k with n energies c, j energies ib and
// the rest ia: n·v_c + (k − n)·v_a + j·(v_b − v_a), each product rounded on
// its own (the conversions forbid a fused multiply-add). It is the one float
// that eval compares with x and that Rand returns, so that samples fall on
// the atoms the CDF counts.
func (a atomicSums) atomValue3(k, n, j int64, c, ia, ib int) float64 {
	return float64(float64(n)*a.v[c]) + float64(float64(k-n)*a.v[ia]) + float64(float64(j)*(a.v[ib]-a.v[ia]))
}

// atomJ returns the largest j with atomValue3(k, n, j) <= x (−1 if none,
// at most k − n): y = (x − n·v_c − (k − n)·v_a)/(v_b − v_a) put right
// against the atoms' own values.
func (a atomicSums) atomJ(k, n int64, x float64, c, ia, ib int) int64 {
	m := k - n
	y := (x - float64(n)*a.v[c] - float64(m)*a.v[ia]) / (a.v[ib] - a.v[ia])
	j := int64(max(-1, min(float64(m), math.Floor(y))))
	for j < m && a.atomValue3(k, n, j+1, c, ia, ib) <= x {
		j++
	}
	for j >= 0 && a.atomValue3(k, n, j, c, ia, ib) > x {
		j--
	}
	return j
}

// three returns P(S_k <= x) and P(S_k > x) for a three-atom law by the
// conditioning above.
func (a atomicSums) three(k int64, x float64) (below, above float64) {
	c, ia, ib := a.threeRoles()
	q := a.p[ib] / (a.p[ia] + a.p[ib])
	pc := a.p[c]
	jOf := func(n int64) int64 { return a.atomJ(k, n, x, c, ia, ib) }
	nm := int64(math.Floor(float64(k+1) * pc))
	if nm > k {
		nm = k
	}
	rp := pc / (1 - pc)
	var usedB, usedA float64 // absolute errors of tails kept beyond their relative bound, weighted
	// upward from the mode, then downward; each direction stops once the
	// masses left are below 1e-17 of the smaller tail found so far (or
	// below 1e-300).
	for _, dir := range []int64{1, -1} {
		n := nm
		if dir < 0 {
			n = nm - 1
		}
		var pm float64
		var ct condTails
		for step := 0; n >= 0 && n <= k; step, n = step+1, n+dir {
			if step%64 == 0 { // re-anchor the recurrence on Loader's mass
				pm = math.Exp(logBinom(float64(k), float64(n), pc))
			} else if dir > 0 {
				pm *= float64(k-n+1) / float64(n) * rp
			} else {
				pm *= float64(n+1) / float64(k-n) / rp
			}
			// A tail may keep an absolute error beyond its relative bound
			// while all such errors together stay within 1e-13 of the sum
			// so far (below the final one).
			var allowB, allowA float64
			if pm > 0 {
				allowB, allowA = (1e-13*below-usedB)/pm, (1e-13*above-usedA)/pm
			}
			ub, ua := ct.moveWithin(k-n, float64(jOf(n))+0.5, q, allowB, allowA)
			usedB += pm * ub
			usedA += pm * ua
			b, s := ct.lo, ct.hi
			below += pm * b
			above += pm * s
			// ratio of the next mass to this one (falling away from the mode)
			var r float64
			if dir > 0 {
				r = float64(k-n) / float64(n+1) * rp
			} else {
				r = float64(n) / float64(k-n+1) / rp
			}
			if r < 1 {
				rest := pm * r / (1 - r)
				if rest < 1e-300 || rest < 1e-17*min(below, above) {
					break
				}
			}
		}
	}
	return min(1, below), min(1, above) // sums of masses may round past 1
}

// condTails holds P(N <= j) (lo) and P(N > j) (hi) for N ~ Binomial(m, q)
// and moves them to a neighbouring m (m ± 1) and j by Pascal's rule
//
//	P(Bin(m, q) <= j) = P(Bin(m−1, q) <= j) − q·P(Bin(m−1, q) = j)
//
// and by adding the masses between the old and the new j, each tail
// updated on its own. The masses come from one walk that starts from the
// mass at the old j carried from the move before (walkTo: no Loader value
// for most moves), or from binomialRun for runs longer than 64 masses. They are computed afresh
// (binomialSideTails) every 256 moves, after a tail was clamped to 0 or 1,
// and whenever the rounding the updates may have brought to a tail
// (tracked for each) passes 1e-13 of it, as when a long run of masses is
// taken from a tail near 1, so each tail keeps its relative precision;
// moveWithin keeps a tail past that where the caller allows its absolute
// error.
type condTails struct {
	m, j   int64
	lo, hi float64
	moves  int     // since last computed afresh
	errLo  float64 // bounds on the rounding each tail took on since then
	errHi  float64
	valid  bool
	// P(Bin(m, q) = j) carried from move to move (0: none), a bound on
	// its relative error and its ratio steps since Loader's value
	pj, relPj float64
	since     int
}

// move sets the tails to m and j = ⌊y⌋ (clamped to [−1, m]), each tail
// to 1e-13 of itself (or 0 where it rounds to 0).
func (c *condTails) move(m int64, y, q float64) { c.moveWithin(m, y, q, 0, 0) }

// moveWithin is move where a tail that is no longer known to 1e-13 of
// itself is kept all the same when its absolute error bound is within
// allowLo (lo) or allowHi (hi) and it is not negative: three allows what
// its sum can take (the tail's weight in it being small) and spares the
// direct computation. It returns the absolute error bounds of the tails
// so kept (0 for a tail within its relative bound or computed afresh).
func (c *condTails) moveWithin(m int64, y, q, allowLo, allowHi float64) (usedLo, usedHi float64) {
	var j int64
	switch {
	case y < 0:
		*c = condTails{m: m, j: -1, lo: 0, hi: 1}
		return 0, 0
	case y >= float64(m):
		*c = condTails{m: m, j: m, lo: 1, hi: 0}
		return 0, 0
	}
	j = int64(y)
	// Far in a tail: by Bernstein's inequality (N a sum of m Bernoulli
	// terms, each within 1 of its mean; Bernstein 1924, in the form of
	// Boucheron, Lugosi & Massart 2013, Thm 2.10, from memory) and the
	// Chernoff–Hoeffding bound (Hoeffding 1963, J. Amer. Statist. Assoc.
	// 58:13–30, Thm 1), for δ = |i − mq| > 0 on either side,
	// P(N <= i), P(N >= i) <= exp(−B) and exp(−D),
	// B = δ²/(2(v + δ/3)) (v = mq(1 − q)), D = m·KL(i/m ‖ q), D the
	// sharper (Loader's two deviance terms, binom.Deviance), B free of
	// logarithms so tried first. Where a bound h on a tail (a margin of 1
	// taken off the exponent for its rounding) is below half the smallest
	// float (the tail rounds to 0) or within 1e-3 of what the caller
	// allows, the tail is 0 (the other 1, within rounding of its value),
	// with h its absolute error in the latter case, sparing masses that
	// may be too small for a walk. Tried only past 8 sd.
	if j > 0 && j+1 < m {
		mf := float64(m)
		mq, mr := mf*q, mf*(1-q)
		v := mq * (1 - q)
		const zero = 746 // past this exp(1 − x) < exp(−745) < 2^-1075
		farOff := func(i, delta, allow float64) (used float64, ok bool) {
			if b := delta * delta / (2 * (v + delta/3)); b > zero {
				return 0, true
			} else if h := math.Exp(1 - b); h <= 1e-3*allow {
				return h, true
			}
			d := binom.Deviance(i, mq) + binom.Deviance(mf-i, mr)
			if d > zero {
				return 0, true
			}
			h := math.Exp(1 - d)
			return h, h <= 1e-3*allow
		}
		if dl := mq - float64(j); dl > 0 && dl*dl > 64*v {
			if h, ok := farOff(float64(j), dl, allowLo); ok {
				*c = condTails{m: m, j: j, lo: 0, hi: 1}
				return h, 0
			}
		}
		if dh := float64(j+1) - mq; dh > 0 && dh*dh > 64*v {
			if h, ok := farOff(float64(j+1), dh, allowHi); ok {
				*c = condTails{m: m, j: j, lo: 1, hi: 0}
				return 0, h
			}
		}
	}
	if !c.valid || c.moves >= 256 || (c.m != m+1 && c.m != m-1) || c.j < 0 || c.j >= c.m {
		c.fresh(m, j, q)
		return 0, 0
	}
	d, s, sign, rel, ok := c.walkTo(m, j, q)
	if !ok {
		// Pascal's rule to m at the old j, the masses between from
		// Loader's values (a run too long for one walk, or masses near
		// the float range's end)
		mf := float64(m)
		if m == c.m-1 {
			d = q * math.Exp(logBinom(mf, float64(c.j), q)) // q·P(Bin(m) = j)
		} else {
			d = -q * math.Exp(logBinom(float64(c.m), float64(c.j), q)) // −q·P(Bin(m−1) = j)
		}
		// the masses of Bin(m) between the old and the new j
		a, b := c.j+1, j // add masses a..b
		sign = 1.0
		if j < c.j {
			a, b, sign = j+1, c.j, -1
		}
		s = binomialRun(m, a, b, q)
		// Each mass is within binom.Rel of itself at its walk's anchor
		// (Loader's value; the bound grows away from the mode, so the
		// run's ends and the old j bound it), plus at most 64 ratio steps
		// (binom.RelAfter; binomialRun re-anchors every 64), and the run's
		// sum rounds once a mass. (A flat 1e-14 was assumed before, below
		// the 64 steps' own 2.9e-14.)
		ra := binom.Rel(float64(a), mf, q, 1-q)
		rb := binom.Rel(float64(b), mf, q, 1-q)
		rj := binom.Rel(float64(c.j), float64(max(m, c.m)), q, 1-q)
		rel = binom.RelAfter(max(max(ra, rb), rj), 64) + 0x1p-53*float64(b-a+2)
		c.pj = 0 // not carried
	}
	c.lo += d + sign*s
	c.hi -= d + sign*s
	c.m, c.j = m, j
	c.moves++
	upd := rel * (math.Abs(d) + s)
	c.errLo += upd + 0x1p-52*c.lo
	c.errHi += upd + 0x1p-52*c.hi
	okLo, okHi := c.errLo <= 1e-13*c.lo, c.errHi <= 1e-13*c.hi
	if okLo && okHi {
		return 0, 0
	}
	if c.lo >= 0 && c.hi >= 0 && (okLo || c.errLo <= allowLo) && (okHi || c.errHi <= allowHi) {
		// known to within what the caller allows
		if !okLo {
			usedLo = c.errLo
		}
		if !okHi {
			usedHi = c.errHi
		}
		return usedLo, usedHi
	}
	// a tail is no longer known well enough (or went negative, or is
	// empty): compute afresh
	c.fresh(m, j, q)
	return 0, 0
}

// walkTo returns Pascal's term d (q·P(Bin(m) = j_old) for m = c.m − 1,
// −q·P(Bin(m−1) = j_old) for m = c.m + 1), the sum s of the masses of
// Bin(m) between the old j and the new (sign +1 where they are added, −1
// where taken away) and a bound rel on the relative error of d and of s,
// all from one walk (internal/binom) that starts at the old j from the
// mass carried from the last move (WithN to the new m: no LogPMF) or, where
// none is carried, from Loader's value, and leaves the mass at the new j
// for the next move. ok is false (nothing changed) where the run is longer
// than 64 masses or a mass at its ends is below 1e-280 (near the float
// range's end, where a ratio step loses precision).
func (c *condTails) walkTo(m, j int64, q float64) (d, s, sign, rel float64, ok bool) {
	dj := j - c.j
	if dj < 0 {
		dj = -dj
	}
	if dj > 64 {
		return 0, 0, 0, 0, false
	}
	var w binom.Walk
	var rel0 float64
	base := 0 // steps from the carried mass's start to the old j
	if c.pj >= 1e-280 && c.since+int(dj)+2 <= 64 {
		w = binom.WalkFrom(float64(c.j), float64(c.m), q, 1-q, c.pj, 0)
		rel0, base = c.relPj, c.since
	} else {
		w = binom.NewWalk(float64(c.j), float64(c.m), q, 1-q, 0)
		rel0 = binom.Rel(float64(c.j), float64(c.m), q, 1-q)
	}
	if m == c.m+1 {
		d = -q * w.P
	}
	w = w.WithN(float64(m))
	if m == c.m-1 {
		d = q * w.P
	}
	if w.P < 1e-280 {
		return 0, 0, 0, 0, false
	}
	n := 0 // masses summed
	switch {
	case j > c.j:
		sign = 1
		for w.X < float64(j) {
			w.Up()
			s += w.P
			n++
		}
	case j < c.j:
		sign = -1
		s = w.P
		n++
		for w.X > float64(j+1) {
			w.Down()
			s += w.P
			n++
		}
		w.Down()
	}
	if w.P < 1e-280 {
		return 0, 0, 0, 0, false
	}
	steps := base + w.Steps()
	c.pj, c.relPj, c.since = w.P, binom.RelAfter(rel0, steps), steps
	// every mass is at most steps from the start; the sum rounds once a
	// mass, d once more
	return d, s, sign, c.relPj + 0x1p-53*float64(n+1), true
}

// fresh computes the tails at m, j directly, and the mass at j that moves
// carry.
func (c *condTails) fresh(m, j int64, q float64) {
	lo, hi, pj, rel, steps := binomialSideTailsMass(m, j, q)
	*c = condTails{m: m, j: j, lo: lo, hi: hi, valid: true, pj: pj, relPj: rel, since: steps}
}

// binomialRun returns P(a <= N <= b) for N ~ Binomial(m, q) (0 for a > b),
// summed outward from the index in [a, b] nearest the mode by the mass
// ratios (internal/binom's Walk), so that masses too small to represent at
// one end do not hide the rest; re-anchored on Loader's mass every 64 steps.
func binomialRun(m, a, b int64, q float64) float64 {
	if a > b {
		return 0
	}
	mf := float64(m)
	i0 := min(b, max(a, int64(math.Floor((mf+1)*q))))
	up := binom.NewWalk(float64(i0), mf, q, 1-q, 64)
	down := up
	s := up.P
	for up.X < float64(b) && up.P > 0 {
		up.Up()
		s += up.P
	}
	for down.X > float64(a) && down.P > 0 {
		down.Down()
		s += down.P
	}
	return s
}

// binomialSideTails returns P(N <= j) and P(N > j) for N ~ Binomial(n, p),
// 0 <= j < n: the tail on j's side of the mode is summed outward from j
// (its masses fall away from the mode) by the mass ratio recurrence from
// Loader's (2000) mass at j (internal/binom's Walk, re-anchored every 64
// steps), cut where the geometric bound on the rest is below 1e-17 of the
// sum; the other tail is its complement (at least about 1/2, so it keeps
// its relative precision).
func binomialSideTails(n, j int64, p float64) (atMost, above float64) {
	atMost, above, _, _, _ = binomialSideTailsMass(n, j, p)
	return atMost, above
}

// binomialSideTailsMass is binomialSideTails with the mass P(N = j), a
// bound on its relative error (binom.Rel, binom.RelAfter) and its ratio
// steps from Loader's value (0 or 1).
func binomialSideTailsMass(n, j int64, p float64) (atMost, above, pj, rel float64, steps int) {
	nf := float64(n)
	mode := math.Floor((nf + 1) * p)
	if float64(j) < mode {
		w := binom.NewWalk(float64(j), nf, p, 1-p, 64)
		pj = w.P
		s := w.P
		for w.X > 0 && w.P > 0 {
			r := w.RatioDown() // P(i−1)/P(i)
			if r < 1 && w.P*r/(1-r) < 1e-17*s {
				break
			}
			w.Down()
			s += w.P
		}
		return s, 1 - s, pj, binom.Rel(float64(j), nf, p, 1-p), 0
	}
	w := binom.NewWalk(float64(j+1), nf, p, 1-p, 64)
	w0 := w
	s := w.P
	for w.X < nf && w.P > 0 {
		r := w.RatioUp() // P(i+1)/P(i)
		if r < 1 && w.P*r/(1-r) < 1e-17*s {
			break
		}
		w.Up()
		s += w.P
	}
	w0.Down()
	return 1 - s, s, w0.P, binom.RelAfter(binom.Rel(float64(j+1), nf, p, 1-p), 1), 1
}
