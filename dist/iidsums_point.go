package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"sync"
)

// PointTails evaluates the k-fold sums of one law at one point x for many
// k: the lifetime question P(N >= k) = P(S_k <= x) asked over neighbouring
// numbers of cycles k. For a term that IIDSums inverts by a tilted Fourier
// series (a term with a transform, no atoms and no closed form) the values
// share their transform values: the k's are cut into blocks of B
// consecutive k (B the power of two above the renewal standard deviation
// sd = √(x·σ²/μ³) of the k where S_k crosses x, at most twice it; the
// blocks start at the first k with k·μ >= x, so each lies on one side of
// it), and one panel per block, on its side (the upper tail where x is
// above k·μ, the lower one below), holds
//
//	c_j = log E[exp(s_j·(X − μ))],   s_j = θ + i·j·h,   j = 0, 1, …, N−1
//
// (reflected, s → −s, on the lower side) at one tilt θ, the saddlepoint of
// the block's middle k (at least 2/σ_k, as the single inversion keeps it),
// and one step h = 2π/L. The smaller tail at each k of the block is then
// the single inversion's shifted Bromwich sum (see the comment at the top
// of invert.go)
//
//	T_k = exp(k0)/L·Σ_j' Re(exp(k·c_j − s_j·y − k0)/s_j) − e^{−θL}/(1 − e^{−θL}),
//	y = ±(x − k·μ),   k0 = k·c_0 − θ·y
//
// (the prime halves the j = 0 term): N complex exponentials a value
// instead of a saddlepoint search, a window and N transform values. The
// exponent k·c_j is k times the per-term value (Feller's
// exp(k·log φ), not a repeated product). L is the largest period any k of
// the block needs (the single inversion's rules: θL >= 40 − k0 for the
// lower alias, a Chernoff bound at four tilts above θ for the upper one,
// L >= 8 tilted standard deviations), and each k checks that its own rules
// hold for it, so its aliasing error is at most e^{−40} (4e-18) of its
// value, as for the single inversion.
//
// Each value's relative error is estimated as the single inversion
// estimates it, 1e-14 plus 4e-16 times the sum of the terms' magnitudes
// over the sum's magnitude (the rounding of the sum, which grows where the
// block's tilt is off the k's own saddlepoint: by about exp(½·(B/2)²/sd²)
// at most, e^{1/2} within the block), plus the
// rounding of the exponents: k times 2ε·(|log M(s_j)| +
// |s_j·μ|) for each term, weighted by the term's magnitude (about k·ε·θ·μ
// relative: 7e-13 at k = 1.5·10^5 four standard deviations out). The sum
// stops once four successive terms are below 1e-13 of it, as the single
// inversion's does. A value whose sum's rounding exceeds PointTailsRel
// (1e-14 + 4e-16·Σ|terms|/|sum|: the block's tilt is too far from the k's
// own; the rounding of the exponents is not counted there, since the
// single inversion's tilt carries it too), whose period rules fail, whose
// sum does not settle within the panel's nodes or whose scale underflows
// is computed by the single inversion instead
// (IIDSums.Evaluate). So each value depends on (law, x, k) only, whatever
// was asked before: the panels are a cache of values that are the same
// however they are reached (at most MaxPointPanels of them, then cleared).
//
// Other terms (closed forms, finite discrete laws, laws without a
// transform) are evaluated by IIDSums.Evaluate value by value.
//
// A PointTails is safe for concurrent use; copies share the panels. The
// zero PointTails is not valid (its methods return NaN or errors wrapping
// ErrParam); build one with IIDSums.AtPoint.
type PointTails struct {
	st *pointState
}

// PointTailsRel is the largest estimated rounding error of the sum
// (relative to the smaller tail) that a value from a shared panel may
// carry; values whose estimate exceeds it are computed by the single tilted
// inversion.
const PointTailsRel = 1e-12

// MaxPointPanels caps the panels a PointTails keeps (each some N ≤ 4096
// complex values; N is about 20–60 for sums of 10^3 terms and more); the
// cache is cleared when it is full, which changes no value.
const MaxPointPanels = 1 << 12

type pointState struct {
	p      IIDSums
	x      float64
	lmOnce sync.Once
	lm0    float64 // log M(0): the term's mass defect (rounding of its masses), removed; set by massDefectOnce
	shared bool    // the panel path applies
	block  int64   // k's per panel, a power of two
	cross  int64   // the first k with x <= k·μ: blocks start here, every B

	mu     sync.Mutex
	panels map[int64]*tiltPanel
}

// tiltPanel is one block's shared nodes on one side.
type tiltPanel struct {
	sg       float64 // +1 upper tail, −1 lower tail (reflected)
	theta    float64
	k1       float64 // the per-term centred (reflected) K(θ) = c_0
	L, h     float64
	du       [4]float64 // per-term K(θ+u) − K(θ) at the Chernoff tilts u (NaN where outside the strip)
	us       [4]float64
	kpp      float64 // per-term K''(θ)
	c        []complex128
	ce       []float64 // rounding of c_j: 2ε·(|log E[exp(s_j·X)]| + |s_j·μ|)
	ir, ii   []float64 // real and imaginary parts of 1/s_j
	nodesEnd bool      // the nodes' magnitudes fell below 1e-17 for the block's smallest k
}

// AtPoint returns the evaluator of P(S_k <= x) and P(S_k > x) for many k
// at the point x. x must be finite (else the error wraps ErrParam), and
// the IIDSums must be built by NewIIDSums.
func (p IIDSums) AtPoint(x float64) (PointTails, error) {
	if p.l == nil {
		return PointTails{}, paramErr("IIDSums.AtPoint", "p", "zero IIDSums", "must be built by NewIIDSums")
	}
	if !finite(x) {
		return PointTails{}, paramErr("IIDSums.AtPoint", "x", x, "must be finite")
	}
	st := &pointState{p: p, x: x}
	if p.ok && p.tr.err == 0 && p.mu > 0 && x > 0 && x/p.mu < 2*MaxSumIIDTerms {
		sdM := math.Sqrt(x * p.v / (p.mu * p.mu * p.mu))
		b := int64(1)
		for b < 1<<20 && float64(b) <= sdM {
			b *= 2
		}
		st.shared, st.block = true, b
		c := int64(math.Ceil(x / p.mu))
		for c > 1 && x-float64(c-1)*p.mu <= 0 {
			c--
		}
		for x-float64(c)*p.mu > 0 {
			c++
		}
		st.cross = c
	}
	return PointTails{st: st}, nil
}

// X returns the point x.
func (q PointTails) X() float64 {
	if q.st == nil {
		return math.NaN()
	}
	return q.st.x
}

// Shared reports whether the values come from shared panels of the tilted
// inversion (with the single inversion where a panel's value does not meet
// PointTailsRel), rather than from IIDSums.Evaluate value by value: for a
// term inverted by a tilted series with a positive mean μ, at x in
// (0, 2·MaxSumIIDTerms·μ).
func (q PointTails) Shared() bool { return q.st != nil && q.st.shared }

// Tails returns P(S_k <= x) and P(S_k > x), each tail as IIDSums.Tails
// returns it; NaN, NaN where Evaluate returns an error.
func (q PointTails) Tails(k int) (below, above float64) {
	b, a, _, _ := q.eval(k)
	return b, a
}

// Evaluate is Tails with an estimate of the relative error of the smaller
// tail (for values of the tilted inversion, shared or single: the rounding
// of the sum and of its exponent k·log M, and the truncation of the sum;
// zero for the other paths, whose accuracy
// IIDSums.Accuracy states) and the reason for a NaN (as
// IIDSums.Evaluate).
func (q PointTails) Evaluate(k int) (below, above, relErr float64, err error) {
	return q.eval(k)
}

func (q PointTails) eval(k int) (f, s, rel float64, err error) {
	nan := math.NaN()
	st := q.st
	switch {
	case st == nil:
		return nan, nan, nan, paramErr("PointTails.Evaluate", "q", "zero PointTails", "must be built by IIDSums.AtPoint")
	case k < 1 || k > MaxSumIIDTerms:
		return nan, nan, nan, paramErr("PointTails.Evaluate", "k", k, fmt.Sprintf("must be in [1, %d] (MaxSumIIDTerms)", MaxSumIIDTerms))
	}
	p, x, fk := st.p, st.x, float64(k)
	if x < fk*p.lo {
		return 0, 1, 0, nil
	}
	if x >= fk*p.hi {
		return 1, 0, 0, nil
	}
	if !p.ok {
		f, s, err = p.eval(k, x)
		return f, s, 0, err
	}
	if st.shared {
		if f, s, rel, ok := st.shared1(k); ok {
			return f, s, rel, nil
		}
	}
	f, s, rel = p.tiltedOne(k, x)
	f, s, err = checkTails("PointTails.Evaluate", k, x, f, s)
	return f, s, rel, err
}

// Check reports whether the values at k can start, at the cost of three
// values of the term's transform where a value at k would cost a panel of
// some 20–60 (or an inversion): for values from shared panels (Shared),
// the term's centred log-transform K(θ) = log M(θ) − θ·μ − log M(0) at
// the tilt θ that the panels near k start from (the single inversion's
// floor min(2/σ_k, half the strip), σ_k = √(k·σ²)), on both sides (±θ),
// must be finite and a log-transform: K(θ) >= 0 (Jensen's inequality, as
// K'(0) = 0) and, for a term with bounded support [a, b], K(θ) <=
// θ²·(b − a)²/8 (Hoeffding's lemma), each within the rounding of the
// exponent and of the mean, with room (64ε·(|log M(θ)| + |θ·μ|) + 4ε). A
// transform that fails there would fail at every panel; one that fails
// only at a panel's complex nodes still shows as NaN where a value needs
// it (Tails), as for any k.
// Elsewhere (not Shared) Check evaluates k, as Evaluate does. Errors wrap
// ErrParam: a zero PointTails, k outside [1, MaxSumIIDTerms], the
// transform's failure (naming θ and K(θ)), or Evaluate's error.
func (q PointTails) Check(k int) error {
	st := q.st
	switch {
	case st == nil:
		return paramErr("PointTails.Check", "q", "zero PointTails", "must be built by IIDSums.AtPoint")
	case k < 1 || k > MaxSumIIDTerms:
		return paramErr("PointTails.Check", "k", k, fmt.Sprintf("must be in [1, %d] (MaxSumIIDTerms)", MaxSumIIDTerms))
	case !st.shared:
		_, _, _, err := q.eval(k)
		return err
	}
	st.massDefectOnce() // one value, which every panel needs
	p := st.p
	const u = 0x1p-53
	for _, sg := range []float64{1, -1} {
		hiDom := p.tr.hi
		if sg < 0 {
			hiDom = -p.tr.lo
		}
		th := 2 / math.Sqrt(float64(k)*p.v)
		if finite(hiDom) {
			th = min(th, hiDom/2)
		}
		lm := p.tr.logm(complex(sg*th, 0))
		kv := real(lm) - sg*th*p.mu - st.lm0
		tol := 64*u*(cmplx.Abs(lm)+math.Abs(th*p.mu)) + 4*u
		ok := finite(kv) && kv >= -tol
		if w := p.hi - p.lo; ok && finite(w) {
			ok = kv <= th*th*w*w/8+tol
		}
		if !ok {
			return paramErr("PointTails.Check", "the term's transform", fmt.Sprintf("K(%g) = %g", sg*th, kv), "must be finite, >= 0 and at most θ²·(b − a)²/8 on a support [a, b] (a centred log-transform)")
		}
	}
	return nil
}

// tiltedOne is the single tilted inversion of IIDSums.Evaluate for a term
// with a transform and no atoms: P(S_k <= x), P(S_k > x) and the smaller
// tail's estimated relative error, the rounding of the exponent k·log M
// included (iidExpRound), as every tilted value of a k-fold sum states it.
// The transform is normalised (see massDefect).
func (p IIDSums) tiltedOne(k int, x float64) (f, s, rel float64) {
	fk := float64(k)
	cmu, ck, c0 := complex(p.mu, 0), complex(fk, 0), complex(p.massDefect(), 0)
	t := p.tr
	n := &numLaw{
		tr: transform{logm: func(s complex128) complex128 { return ck * (t.logm(s) - s*cmu - c0) }, lo: t.lo, hi: t.hi},
		c:  fk * p.mu, variance: fk * p.v, w: 1, supLo: fk * p.lo, supHi: fk * p.hi,
		expRound: iidExpRound(t, p.mu, fk),
	}
	sd := math.Sqrt(n.variance)
	n.b = chernoffEnd(n.tr.logm, n.tr.hi, sd, bulkTail)
	n.a = -chernoffEnd(func(s complex128) complex128 { return n.tr.logm(-s) }, -n.tr.lo, sd, bulkTail)
	n.a, n.b = max(n.a, n.supLo-n.c), min(n.b, n.supHi-n.c)
	y := x - n.c
	if y <= 0 {
		f, rel = n.tiltedErr(y, true)
		return f, max(0, 1-f), rel
	}
	s, rel = n.tiltedErr(y, false)
	return max(0, 1-s), s, rel
}

// shared1 evaluates k from its block's panel; ok is false where the value
// must come from the single inversion.
func (st *pointState) shared1(k int) (f, s, rel float64, ok bool) {
	p, fk := st.p, float64(k)
	y := st.x - fk*p.mu
	// the blocks start at the mean crossing, so that each lies on one
	// side of it: the lower tail from the crossing on, the upper below
	d := int64(k) - st.cross
	b := d / st.block
	if d < 0 && d%st.block != 0 {
		b--
	}
	sg := 1.0
	if b >= 0 {
		sg = -1
	}
	key := 2 * b
	if sg < 0 {
		key++
	}
	st.mu.Lock()
	pn := st.panels[key]
	st.mu.Unlock()
	if pn == nil {
		pn = st.newPanel(b, sg)
		st.mu.Lock()
		if st.panels == nil {
			st.panels = map[int64]*tiltPanel{}
		}
		if len(st.panels) >= MaxPointPanels {
			clear(st.panels)
		}
		st.panels[key] = pn
		st.mu.Unlock()
	}
	if len(pn.c) == 0 {
		return 0, 0, 0, false
	}
	v, rel, ok := pn.value(fk, sg*y, st.supTop(fk, sg))
	if !ok {
		return 0, 0, 0, false
	}
	if v > 0.5 {
		// the larger tail (at k where rounding put x − k·μ on the other
		// side of 0 than the block): its absolute error is the smaller one's
		rel *= v / (1 - v)
	}
	if sg > 0 {
		return max(0, 1-v), v, rel, true
	}
	return v, max(0, 1-v), rel, true
}

// mid returns the middle k of block b.
func (st *pointState) mid(b int64) float64 {
	lo, hi := st.blockRange(b)
	return (lo + hi) / 2
}

// blockRange returns the first and last k of block b.
func (st *pointState) blockRange(b int64) (lo, hi float64) {
	first := st.cross + b*st.block
	return float64(max(1, first)), float64(first + st.block - 1)
}

// supTop is the upper end of the centred (reflected) support of S_k.
func (st *pointState) supTop(fk, sg float64) float64 {
	if sg > 0 {
		return fk * (st.p.hi - st.p.mu)
	}
	return fk * (st.p.mu - st.p.lo)
}

// cent returns the per-term centred, normalised log-transform on side sg
// at s.
func (st *pointState) cent(s complex128, sg float64) complex128 {
	return st.p.tr.logm(complex(sg, 0)*s) - complex(sg*st.p.mu, 0)*s - complex(st.lm0, 0)
}

// massDefect returns log M(0) of the term (transform.massDefect).
func (p IIDSums) massDefect() float64 { return p.tr.massDefect() }

// massDefectOnce sets lm0, the term's massDefect, on the first panel (a
// transform value the law's building need not pay for).
func (st *pointState) massDefectOnce() {
	st.lmOnce.Do(func() { st.lm0 = st.p.massDefect() })
}

// newPanel builds the panel of block b on side sg; a panel without nodes
// (c empty) sends its k's to the single inversion.
func (st *pointState) newPanel(b int64, sg float64) *tiltPanel {
	st.massDefectOnce()
	p := st.p
	hiDom := p.tr.hi
	if sg < 0 {
		hiDom = -p.tr.lo
	}
	kLo, kHi := st.blockRange(b)
	kc := st.mid(b)
	pn := &tiltPanel{sg: sg}
	K := func(th float64) float64 { return real(st.cent(complex(th, 0), sg)) }
	dK := func(th float64) float64 {
		const eta = 1e-20
		e := eta * max(1, th)
		d := imag(st.cent(complex(th, e), sg)) / e
		if !finite(d) {
			h := 1e-6 * max(th, 1e-3/math.Sqrt(kc*p.v))
			d = (K(th+h) - K(th-h)) / (2 * h)
		}
		return d
	}
	sdc := math.Sqrt(kc * p.v)
	yc := sg * (st.x - kc*p.mu)
	// the tilt: the saddlepoint kc·K'(θ) = yc by secant steps from the
	// normal approximation (any θ > 0 gives correct values; the
	// saddlepoint keeps the terms scaled to the answer), at least the
	// single inversion's floor
	floor := 2 / sdc
	if finite(hiDom) {
		floor = min(floor, hiDom/2)
	}
	theta := floor
	if yc > 0 && yc/(kc*p.v) > floor/2 {
		// (nearer the crossing the saddlepoint is below the floor: about
		// yc/(kc·σ²) there)
		th := saddleSecant(func(t float64) float64 { return kc*dK(t) - yc }, yc/(kc*p.v), hiDom)
		if !(th > 0) {
			th = saddle(func(t float64) float64 { return kc * dK(t) }, yc, hiDom, sdc)
		}
		theta = max(th, floor)
	}
	if !(theta > 0 && theta < hiDom) {
		return pn
	}
	pn.theta = theta
	pn.k1 = K(theta)
	e := 1e-4 * theta
	if theta+e < hiDom {
		pn.kpp = (dK(theta+e) - dK(theta-e)) / (2 * e)
	}
	if !(pn.kpp > 0) || !finite(pn.kpp) {
		pn.kpp = p.v
	}
	sdT := math.Sqrt(kc * pn.kpp)
	pn.us = [4]float64{theta, 1 / sdT, 4 / sdT, 16 / sdT}
	for i, u := range pn.us {
		pn.du[i] = math.NaN()
		if theta+u < hiDom {
			pn.du[i] = K(theta+u) - pn.k1
		}
	}
	L := 0.0
	for _, fk := range []float64{kLo, kc, kHi} {
		L = max(L, pn.period(fk, sg*(st.x-fk*p.mu), st.supTop(fk, sg)))
	}
	if !finite(L) || !finite(pn.k1) {
		return pn
	}
	pn.L = 1.05 * L
	pn.h = 2 * math.Pi / pn.L
	// the nodes, until their magnitudes relative to the first, times j,
	// fall below 1e-13 for the block's smallest k (the slowest to decay)
	// four times running: where every k's sum stops (value)
	quiet := 0
	const nodeCap = 64 // most panels stop within it (about 20–60 nodes)
	pn.c, pn.ce = make([]complex128, 0, nodeCap), make([]float64, 0, nodeCap)
	pn.ir, pn.ii = make([]float64, 0, nodeCap), make([]float64, 0, nodeCap)
	for j := 0; j < maxTilted; j++ {
		s := complex(theta, float64(j)*pn.h)
		lm := p.tr.logm(complex(sg, 0) * s)
		c := lm - complex(sg*p.mu, 0)*s - complex(st.lm0, 0)
		if cmplx.IsNaN(c) || cmplx.IsInf(c) {
			return pn
		}
		inv := 1 / s
		pn.c = append(pn.c, c)
		pn.ce = append(pn.ce, 2*0x1p-53*(cmplx.Abs(lm)+cmplx.Abs(s)*math.Abs(p.mu)))
		pn.ir = append(pn.ir, real(inv))
		pn.ii = append(pn.ii, imag(inv))
		if j > 0 && math.Exp(kLo*(real(c)-pn.k1))*theta/cmplx.Abs(s)*float64(j) <= 1e-13 {
			quiet++
			if quiet >= 4 {
				pn.nodesEnd = true
				break
			}
		} else {
			quiet = 0
		}
	}
	return pn
}

// period is the period L that the single inversion's rules ask of k
// (fk) at the centred (reflected) point yy: θL >= 40 − k0 (lower alias),
// L >= 8 tilted standard deviations, and L at least the Chernoff bound's
// (K_k(θ+u) − K_k(θ) − u·yy + 40)/u at the panel's best tilt u (upper
// alias; the distance to the support's end where that is nearer).
func (pn *tiltPanel) period(fk, yy, supTop float64) float64 {
	k0 := fk*pn.k1 - pn.theta*yy
	sdT := math.Sqrt(fk * pn.kpp)
	L := max((40-k0)/pn.theta, 8*sdT)
	L2 := math.Inf(1)
	for i, u := range pn.us {
		if !math.IsNaN(pn.du[i]) {
			if lu := (fk*pn.du[i] - u*yy + 40) / u; lu > 0 {
				L2 = min(L2, lu)
			}
		}
	}
	if math.IsInf(L2, 1) {
		L2 = 40 * sdT
	}
	if supTop-yy < L2 {
		L2 = supTop - yy
	}
	return max(L, L2)
}

// value returns the smaller tail of S_k (k = fk) at the centred
// (reflected) point yy >= 0 from the panel's nodes, its estimated
// relative error, and whether it stands (else the single inversion).
func (pn *tiltPanel) value(fk, yy, supTop float64) (v, rel float64, ok bool) {
	if yy >= supTop {
		return 0, 0, true
	}
	if pn.period(fk, yy, supTop) > pn.L {
		return 0, 0, false
	}
	k0 := fk*pn.k1 - pn.theta*yy
	if k0 < -700 {
		return 0, 0, false // near underflow: the single inversion's Chernoff cut-off decides
	}
	var sum, absSum, expSum, t0 float64
	quiet := 0
	settled := false
	ty, h := pn.theta*yy, pn.h
	ir, ii, ce := pn.ir[:len(pn.c)], pn.ii[:len(pn.c)], pn.ce[:len(pn.c)]
	for j, c := range pn.c {
		er := fk*real(c) - ty - k0
		ei := fk*imag(c) - float64(j)*h*yy
		sn, cs := math.Sincos(ei)
		term := math.Exp(er) * (cs*ir[j] - sn*ii[j])
		at := math.Abs(term)
		if j == 0 {
			t0 = at
			sum += term
		} else {
			sum += 2 * term
		}
		absSum += at
		expSum += at * ce[j]
		// the larger of t0 and |sum| inline (math.Max is a call on
		// amd64; a NaN t0 is in sum too, so the test fails as with it)
		ref := math.Abs(sum)
		if t0 > ref {
			ref = t0
		}
		if at*float64(j) <= 1e-13*ref {
			quiet++
			if quiet >= 4 {
				settled = true
				break
			}
		} else {
			quiet = 0
		}
	}
	if !settled {
		return 0, 0, false
	}
	den := max(math.Abs(sum), 1e-300)
	// rounding: of the sum, and of the exponents k·c_j (k times the
	// rounding of each c_j, which exp turns into a relative error)
	rs := 1e-14 + 4e-16*absSum/den
	if rs > PointTailsRel {
		return 0, 0, false
	}
	rel = rs + 2*fk*expSum/den
	res := math.Exp(k0)*sum/pn.L - math.Exp(-pn.theta*pn.L)/(-math.Expm1(-pn.theta*pn.L))
	return max(0, res), rel, true
}

// saddleSecant solves g(θ) = 0 (g increasing) for θ in (0, hi) by secant
// steps from θ0 to a relative step of 1e-4 (a tilt need not be exact);
// NaN when the steps leave the strip or do not settle in 12.
func saddleSecant(g func(float64) float64, th0, hi float64) float64 {
	if !(th0 > 0) {
		return math.NaN()
	}
	if finite(hi) && th0 >= hi {
		th0 = hi / 2
	}
	a, b := th0, th0*1.01
	if finite(hi) && b >= hi {
		b = (a + hi) / 2
	}
	ga, gb := g(a), g(b)
	for range 12 {
		if !finite(ga) || !finite(gb) || gb == ga {
			return math.NaN()
		}
		c := b - gb*(b-a)/(gb-ga)
		if !(c > 0) || (finite(hi) && c >= hi) {
			return math.NaN()
		}
		if math.Abs(c-b) <= 1e-4*c {
			return c
		}
		a, ga = b, gb
		b, gb = c, g(c)
	}
	return math.NaN()
}
