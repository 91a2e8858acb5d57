package dist

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"github.com/joulelaw/joulelaw/internal/quad"
)

// The characteristic function of a law without a known transform, by
// quadrature of its distribution function, for SumIID of large k (see
// quadIID). Integrating by parts, for Y = X - c (c the median),
//
//	M_Y(s) - 1 = s·[∫_0^∞ e^{sy}·S_Y(y) dy - ∫_{-∞}^0 e^{sy}·F_Y(y) dy],
//
// which needs only CDF and Survival (no density: a law whose density is
// singular at an end, or that has atoms, still has a bounded, piecewise
// smooth integrand), and gives M - 1 directly, without the cancellation
// of 1 - M near s = 0 that exp(k·log M) would multiply by k. The integral
// is taken over [Q(quadCut), Q(1 - quadCut)] by the library's adaptive
// Gauss–Kronrod quadrature (internal/quad.Partition) on panels split at 0,
// at the atoms and at the window ends, and cut so that the phase t·y moves
// by at most three radians on each (kept up to the largest t that a
// k-fold sum needs, computed afresh beyond), bisected until the summed
// error is below quadPanelTol times the range plus 8ε·sd, or each panel is
// at its rounding, or 64 panels per starting panel are used. Error of M(it), stated: |t|·(the quadrature's stated error,
// rounding included, + the cut tails).
// transformOf does not use it: an ordinary Sum may need 65536 values of a
// slowly decaying transform, each costing O(t) here.

const (
	quadCut      = 1e-30 // mass left out at each end of the quadrature
	quadPanelTol = 1e-17 // error target per unit length of the range
)

// quadPanel is one panel of the by-parts integral: its Kronrod nodes y and
// weights times S_Y (y > 0) or -F_Y (y < 0).
type quadPanel struct {
	a, b float64
	y, g [15]float64
}

// quadTransform is the by-parts quadrature of one law's transform.
type quadTransform struct {
	l      Law
	c      float64 // centre (the median)
	panels []quadPanel
	tMax   float64 // panels hold three radians of phase up to |t| = tMax
	errQ   float64 // bound on |(M(s) - 1)/s - Σ| on the axis, per unit |t|
	lo, hi float64 // the range, in y
	absSum float64
}

// integrand returns S_Y(y) for y > 0 and -F_Y(y) for y < 0.
func (q *quadTransform) integrand(y float64) float64 {
	if y > 0 {
		return q.l.Survival(q.c + y)
	}
	return -q.l.CDF(q.c + y)
}

// newQuadTransform builds the panels of l's transform for |t| up to tMax;
// breaks are extra panel ends (in x).
func newQuadTransform(l Law, tMax float64, breaks []float64) (*quadTransform, error) {
	sd := math.Sqrt(l.Variance())
	if !finite(sd) || sd <= 0 {
		return nil, fmt.Errorf("dist.SumIID: quadrature transform: standard deviation %v: %w", sd, ErrMoment)
	}
	q := &quadTransform{l: l, c: l.Quantile(0.5), tMax: tMax}
	slo, shi := l.Support()
	lo, hi := max(slo, l.Quantile(quadCut)), min(shi, l.UpperQuantile(quadCut))
	if !finite(lo) || !finite(hi) || !(hi > lo) || !finite(q.c) {
		return nil, fmt.Errorf("dist.SumIID: quadrature transform: range [%v, %v] at the %v quantiles: %w", lo, hi, quadCut, ErrParam)
	}
	q.lo, q.hi = lo-q.c, hi-q.c
	// panel ends: the range, the centre, atoms and breaks, then at most
	// sd/2 and three radians at tMax apart
	ends := []float64{q.lo, 0, q.hi}
	if al, ok := l.(Atomic); ok {
		for _, a := range al.Atoms() {
			ends = append(ends, a.Value-q.c)
		}
	}
	for _, b := range breaks {
		ends = append(ends, b-q.c)
	}
	sort.Float64s(ends)
	maxW := sd / 2
	if tMax > 0 {
		maxW = min(maxW, 3/tMax)
	}
	var pts []float64
	for i := 0; i+1 < len(ends); i++ {
		a, b := ends[i], ends[i+1]
		if !(b > a) || a < q.lo || b > q.hi {
			continue
		}
		n := math.Ceil((b - a) / maxW)
		if n+float64(len(pts)) > quad.MaxBreaks {
			return nil, fmt.Errorf("dist.SumIID: quadrature transform: more than %d panels: %w", quad.MaxBreaks, ErrParam)
		}
		w := (b - a) / n
		for j := 0; j < int(n); j++ {
			pts = append(pts, a+float64(j)*w)
		}
		pts = append(pts, b)
	}
	// the panels adapt to the integrand (the phase of e^{ity} being held
	// to three radians by the ends) until the summed error is below
	// quadPanelTol per unit length plus the rounding of sums of magnitude
	// ∫|S_Y| + ∫|F_Y| = E|X - c| <= sd; a law whose CDF is noisier than
	// that stops at the budget (64 panels per starting panel), and either
	// way the stated error, rounding included, enters errQ
	opt := quad.Options{
		AbsTol:   quadPanelTol*(q.hi-q.lo) + 8*0x1p-52*sd,
		MaxEvals: min(quad.MaxEvalsCap, 15*64*len(pts)),
	}
	pans, r, err := quad.Partition(nil, q.integrand, pts, opt)
	if err != nil && !errors.Is(err, quad.ErrResolution) && !errors.Is(err, quad.ErrBudget) {
		return nil, fmt.Errorf("dist.SumIID: quadrature transform: %w", err)
	}
	q.panels = make([]quadPanel, len(pans))
	for i, p := range pans {
		y, w := p.Nodes()
		qp := &q.panels[i]
		qp.a, qp.b, qp.y = p.A, p.B, y
		for k := range w {
			qp.g[k] = w[k] * p.F[k]
			q.absSum += math.Abs(qp.g[k])
		}
	}
	// the tails beyond the range: ∫ S over (hi, ∞) is at most
	// E[(X - hi)+] <= sd·√S(hi) (Cauchy–Schwarz), which for the 1e-30 cut
	// is below 1e-15·sd; likewise below lo
	tails := sd * (math.Sqrt(l.Survival(hi)) + math.Sqrt(l.CDF(lo)))
	q.errQ = r.Error + tails
	return q, nil
}

// sum returns Σ g·exp(s·y) over the panels (≈ (M_Y(s) - 1)/s), keeping to
// the nodes in [from, to]; panels too long for the phase |Im s|·(b - a)
// are integrated afresh on shorter pieces by the same 15-point rule.
func (q *quadTransform) sum(s complex128, from, to float64) complex128 {
	var acc complex128
	t := math.Abs(imag(s))
	for i := range q.panels {
		p := &q.panels[i]
		if p.b <= from || p.a >= to {
			continue
		}
		if t*(p.b-p.a) <= 3.0001 {
			for i, y := range p.y {
				acc += complex(p.g[i], 0) * cmplx.Exp(s*complex(y, 0))
			}
			continue
		}
		n := math.Ceil(t * (p.b - p.a) / 3)
		w := (p.b - p.a) / n
		for j := 0; j < int(n); j++ {
			ys, ws := quad.Panel{A: p.a + float64(j)*w, B: p.a + float64(j+1)*w}.Nodes()
			for i, y := range ys {
				acc += complex(ws[i]*q.integrand(y), 0) * cmplx.Exp(s*complex(y, 0))
			}
		}
	}
	return acc
}

// logM returns log E[exp(s·X)] on the axis (s = i·t).
func (q *quadTransform) logM(s complex128) complex128 {
	return s*complex(q.c, 0) + clog1p(s*q.sum(s, math.Inf(-1), math.Inf(1)))
}

// truncLogM returns log E[exp(θ·Y')] for real θ, Y' = min(Y, to) (θ > 0)
// or max(Y, from) (θ < 0): the nodes beyond the cut left out (to and from
// are panel ends). The parts of the integral beyond the range are left out
// too, which makes the value larger (a valid Chernoff bound).
func (q *quadTransform) truncLogM(th, from, to float64) float64 {
	v := real(clog1p(complex(th, 0) * q.sum(complex(th, 0), from, to)))
	if math.IsNaN(v) {
		return math.Inf(1)
	}
	return v
}

// quadIIDMinK is the smallest k whose k-fold sum SumIID computes from the
// quadrature transform (below it the lattice power).
const quadIIDMinK = 8

// quadIID returns the k-fold sum of l from its quadrature transform
// (exp(k·log M), inverted by the Fourier-series engine on a window sized
// by Chernoff bounds of the term cut at its bulkTail/(2k) quantiles), or ok =
// false when the k-fold transform does not decay fast enough (a density
// jump and small k) or the atoms are not negligible (k·a^(k-1) >= 1e-14
// for atom mass a).
func quadIID(l Law, k int) (Law, bool, error) {
	fk := float64(k)
	mu, v := l.Mean(), l.Variance()
	sd := math.Sqrt(v)
	if al, ok := l.(Atomic); ok {
		a := 0.0
		for _, x := range al.Atoms() {
			a += x.Mass
		}
		if a > 0 && math.Log(fk)+(fk-1)*math.Log(a) >= math.Log(1e-14) {
			return nil, false, nil
		}
	}
	// the normal approximation reaches 1e-15 at tn; the k-fold transform
	// must be below 1e-15 at some m·tn (m <= 16) and 1.5·m·tn
	tn := math.Sqrt(2*math.Log(1e15)) / (sd * math.Sqrt(fk))
	eps := bulkTail / (2 * fk)
	tauHi, tauLo := l.UpperQuantile(eps), l.Quantile(eps)
	var breaks []float64
	for _, b := range []float64{tauHi, tauLo} {
		if finite(b) {
			breaks = append(breaks, b)
		}
	}
	q, err := newQuadTransform(l, 24*tn, breaks)
	if err != nil {
		return nil, false, nil
	}
	cmu, ck := complex(mu, 0), complex(fk, 0)
	kLog := func(s complex128) complex128 { return ck * (q.logM(s) - s*cmu) }
	tStop := 0.0
	for m := 1.0; m <= 16; m *= 2 {
		if real(kLog(complex(0, m*tn))) < math.Log(1e-15) && real(kLog(complex(0, 1.5*m*tn))) < math.Log(1e-15) {
			tStop = 1.5 * m * tn
			break
		}
	}
	if tStop == 0 {
		return nil, false, nil
	}
	lo, hi := l.Support()
	sdk := sd * math.Sqrt(fk)
	// the window: Chernoff bounds of the sums of the terms cut at their
	// eps quantiles, plus the union bound k·P(X > τ) = eps/2 for the cut
	ty, ly := tauHi-q.c, tauLo-q.c
	muY := mu - q.c
	fallback := func(e float64) (a, b float64) {
		up := func(s complex128) complex128 {
			th := real(s)
			return complex(fk*(q.truncLogM(th, math.Inf(-1), ty)-th*muY), 0)
		}
		down := func(s complex128) complex128 { // the reflected law
			th := -real(s)
			return complex(fk*(q.truncLogM(th, ly, math.Inf(1))-th*muY), 0)
		}
		return -chernoffEnd(down, math.Inf(1), sdk, e/2), chernoffEnd(up, math.Inf(1), sdk, e/2)
	}
	var self *numLaw
	sp := numSpec{
		kind: "SumIID",
		// on the axis only: no tilted tails (each tilted value would cost a
		// quadrature at a large |t|)
		tr:       transform{logm: kLog},
		fallback: fallback,
		c:        fk * mu, mean: fk * mu, variance: fk * v,
		supLo: nanTo(fk*lo, math.Inf(-1)), supHi: nanTo(fk*hi, math.Inf(1)),
		// the transform's error |ΔM(it)| <= |t|·errQ, multiplied by k in
		// M^k, summed by the series up to where it stops: (k·errQ/π)·tStop
		// (and the mean's shift, k·errQ, over the density's height)
		extraErr: fk*q.errQ*2*tStop/math.Pi + fk*q.errQ/sdk,
		sample:   iidSample(l, k, &self),
	}
	n, err := newNumLaw(sp)
	if err != nil {
		return nil, false, err
	}
	self = n
	return n, true, nil
}
