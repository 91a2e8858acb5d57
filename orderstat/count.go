package orderstat

import (
	"math"
	"slices"

	"github.com/joulelaw/joulelaw/internal/lattice"
)

// binom is Bin(n, p) with q = 1 - p given exactly as well.
type binom struct{ n, p, q float64 }

// countModel is the law of C = Σ Bin(n_i, p_i) over independent terms: the
// number of nodes, out of several groups, that lie beyond (or below) a
// threshold — a Poisson-binomial law with multiplicities.
type countModel struct {
	terms          []binom // the terms with 0 < p < 1
	shift          float64 // nodes counted for certain (p = 1)
	size           float64 // Σ n over terms
	mean, variance float64 // of the whole count
}

// tinyProb is the probability below which a node counts as never (or, for
// its complement, always) hit: 1e-290. The tilted transforms need the
// probabilities as normal (not subnormal) float64 numbers; the change to
// the law is below n·1e-290.
const tinyProb = 1e-290

// newCountModel returns the count over the terms ts (left as they are):
// those with 0 < p < 1 kept, in memory of their own, the others in shift
// or left out.
func newCountModel(ts []binom) countModel { return takeCountModel(slices.Clone(ts)) }

// takeCountModel is newCountModel taking ts over: the terms kept are
// filtered into its memory, which the count then holds (nil where none).
func takeCountModel(ts []binom) countModel {
	cm := countModel{}
	kept := ts[:0]
	for _, t := range ts {
		switch {
		case t.n == 0 || t.p <= tinyProb:
		case t.q <= tinyProb:
			cm.shift += t.n
			cm.mean += t.n
		default:
			kept = append(kept, t)
			cm.size += t.n
			cm.mean += t.n * t.p
			cm.variance += t.n * t.p * t.q
		}
	}
	if len(kept) > 0 {
		cm.terms = kept
	}
	return cm
}

// split returns P(C <= m) and P(C > m) for an integer m, each accurate
// relative to its value (splitErr gives the bounds).
func (cm countModel) split(m float64) (le, gt float64) {
	le, gt, _, _ = cm.splitErr(m, false)
	return le, gt
}

// betaSplitRel bounds the relative error of each tail of the one-term
// count, P(Bin(n, p) >= m+1) = P(U <= p) with U ~ Beta(m+1, n−m), by the
// Beta law's quadrature: what Kth states for the k-th of n of one law
// (Accuracy: 1e-12 + 40·cond, cond = 1e-15·√n, for the survival; the CDF
// is the survival of Beta(n−m, m+1) at 1 − p, so the same holds for it).
func betaSplitRel(n float64) float64 { return 1e-12 + 40e-15*math.Sqrt(n) }

// splitErr returns P(C <= m) and P(C > m) for an integer m and, where
// withErr is set (the convolution's are always given), bounds on their
// relative errors, each relative to its own value, from what the path
// taken computes: 0 outside the count's range; betaSplitRel for one term;
// the convolution's stated bound (splitConv: the binomial runs' Walk
// bounds plus one rounding per product and addition); for the transform,
// splitTransformErr.
func (cm countModel) splitErr(m float64, withErr bool) (le, gt, relLE, relGT float64) {
	m -= cm.shift
	switch {
	case m < 0:
		return 0, 1, 0, 0
	case m >= cm.size:
		return 1, 0, 0, 0
	case len(cm.terms) == 1:
		// P(Bin(n, p) >= m+1) = P(U <= p), U ~ Beta(m+1, n-m).
		t := cm.terms[0]
		lower, upper := newBeta(m+1, t.n-m).split(t.p, t.q)
		r := betaSplitRel(t.n)
		return upper, lower, r, r
	}
	if le, gt, rel, ok := cm.splitConv(m); ok {
		return le, gt, rel, rel
	}
	if !withErr {
		le, gt = cm.splitTransform(m)
		return le, gt, 0, 0
	}
	return cm.splitTransformErr(m)
}

// splitTransform is split's exact path for m in [0, size) after the shift
// and at least two terms: the tilted transform of the window around m.
// Tilted (m + ½ more than untiltedSD standard deviations from the mean),
// the tail on the far side of the mean from m, the larger, is 1 − the
// other; untilted, both are summed directly, so that the smaller tail is
// never 1 − the larger.
func (cm countModel) splitTransform(m float64) (le, gt float64) {
	w := cm.window(m+0.5, nil)
	top := w.lo + float64(len(w.pmf)) - 1
	switch {
	case w.theta > 0:
		gt = clamp01(w.sum(m+1, top))
		return 1 - gt, gt
	case w.theta < 0:
		le = clamp01(w.sum(w.lo, m))
		return le, 1 - le
	}
	return clamp01(w.sum(w.lo, m)), clamp01(w.sum(m+1, top))
}

// chernoff bounds the mass of the law tilted by theta (log normaliser k =
// K(θ)) at or above a (above) or at or below a: with K_θ(s) = K(θ+s) −
// K(θ) its cumulant generating function, P_θ(C >= a) <= exp(K_θ(s) − s·a)
// for every s > 0 and P_θ(C <= a) <= exp(K_θ(s) − s·a) for every s < 0
// (Chernoff's bound, common practice), at the s whose tilted mean is near
// a (tiltFor; the optimum makes it a), rounded up by 1e-3 relative; 1 where
// no s of the right sign is found.
func (cm countModel) chernoff(theta, k, a float64, above bool) float64 {
	t := cm.tiltFor(a)
	s := t - theta
	if (above && !(s > 0)) || (!above && !(s < 0)) {
		return 1
	}
	_, kt := cm.tilted(t)
	return min(1, 1.001*math.Exp(kt-k-s*a))
}

// splitTransformErr is splitTransform with bounds on the relative errors
// of both tails. A tail summed over the window (the upper one for θ > 0,
// the lower one for θ < 0, each for θ = 0), S = Σ_j P_θ(j)·E_j with
// E_j = exp(K(θ) − θj), has its absolute error bounded by
//
//	Σ_j 1.01·(a·E_j + P(j)·(kErr + u·(|θj| + |K − θj| + 1)))  +  1.01·A·max_j E_j  +  u·n·S
//
// over its n terms: countWindow.rel written absolutely (so that values
// whose tilted probability rounded to zero or below count too), with a
// the inversion's absolute bound (internal/lattice); A bounds the tilted
// mass beyond the window's edges by Chernoff's bound with the count's own
// cumulant generating function (chernoff) at each edge the count reaches
// past. That mass errs in S once: beyond the edge on the side S runs to, S
// leaves it out; beyond the other edge, the transform folds it onto the
// end of the window where S runs (where it folds onto values S holds
// anyway, the two weigh at most max E_j together). The last term is one
// rounding per addition. Tilted, the other tail is 1 − S: that absolute
// error and one rounding, over its value.
func (cm countModel) splitTransformErr(m float64) (le, gt, relLE, relGT float64) {
	w := cm.window(m+0.5, nil)
	top := min(w.lo+float64(len(w.pmf))-1, cm.size)
	outside := 0.0 // the tilted mass beyond the edges; nothing below 0 or above size
	if w.lo > 0 {
		outside += cm.chernoff(w.theta, w.k, w.lo-1, false)
	}
	if end := w.lo + float64(len(w.pmf)); end <= cm.size {
		outside += cm.chernoff(w.theta, w.k, end, true)
	}
	if w.theta == 0 {
		le, eLE := w.sumErr(w.lo, m, outside)
		gt, eGT := w.sumErr(m+1, top, outside)
		return le, gt, relOf(eLE, le), relOf(eGT, gt)
	}
	a, b := m+1, top // the tail summed
	if w.theta < 0 {
		a, b = w.lo, m
	}
	s, e := w.sumErr(a, b, outside)
	c := 1 - s
	relS, relC := relOf(e, s), relOf(e, c)+0x1p-53
	if w.theta > 0 {
		return c, s, relC, relS
	}
	return s, c, relS, relC
}

// sumErr returns Σ_{j=a}^{b} P(C = j) over the window (clamped to [0, 1];
// the same additions, in the same order, as sum) and the bound on its
// absolute error that splitTransformErr states, with outside the tilted
// mass beyond the window's edges.
func (w countWindow) sumErr(a, b, outside float64) (s, e float64) {
	const u = 0x1p-53
	var eMax float64
	n := 0
	for r := range w.pmf {
		j := w.lo + float64(r)
		if j < a || j > b {
			continue
		}
		ej := math.Exp(w.k - w.theta*j)
		eMax = max(eMax, ej)
		tj := w.theta * j
		e += 1.01 * (w.absErr*ej + w.pmf[r]*(w.kErr+u*(math.Abs(tj)+math.Abs(w.k-tj)+1)))
		s += w.pmf[r]
		n++
	}
	e += 1.01*outside*eMax + float64(n)*u*s
	return clamp01(s), e
}

// relOf is e/v, +Inf where v is not positive (no relative bound).
func relOf(e, v float64) float64 {
	if !(v > 0) {
		return math.Inf(1)
	}
	return e / v
}

// tilted returns the terms of the exponentially tilted law
// P_θ(C = j) ∝ P(C = j)·e^{θj}, itself a sum of binomials with
// p_θ = p·e^θ / (q + p·e^θ), and the log moment generating function
// K(θ) = Σ n·log(q + p·e^θ).
func (cm countModel) tilted(theta float64) ([]binom, float64) {
	return cm.tiltedInto(nil, theta)
}

// tiltedInto is tilted writing the terms into dst (reused when it has the
// capacity).
func (cm countModel) tiltedInto(dst []binom, theta float64) ([]binom, float64) {
	out := dst[:0]
	if cap(out) < len(cm.terms) {
		out = make([]binom, len(cm.terms))
	}
	out = out[:len(cm.terms)]
	k := 0.0
	for i, t := range cm.terms {
		if theta <= 0 {
			// q + p·e^θ, a sum of positive terms.
			e := math.Exp(theta)
			d := t.q + t.p*e
			out[i] = binom{n: t.n, p: t.p * e / d, q: t.q / d}
			if x := t.p * math.Expm1(theta); x > -0.5 {
				k += t.n * math.Log1p(x)
			} else {
				k += t.n * math.Log(d)
			}
		} else {
			// e^θ·(p + q·e^{-θ}).
			e := math.Exp(-theta)
			d := t.p + t.q*e
			out[i] = binom{n: t.n, p: t.p / d, q: t.q * e / d}
			if x := t.q * math.Expm1(-theta); x > -0.5 {
				k += t.n * (theta + math.Log1p(x))
			} else {
				k += t.n * (theta + math.Log(d))
			}
		}
	}
	return out, k
}

func momentsOf(ts []binom) (mean, variance float64) {
	for _, t := range ts {
		mean += t.n * t.p
		variance += t.n * t.p * t.q
	}
	return mean, variance
}

// untiltedSD is the distance from the count's mean, in standard
// deviations, within which tiltFor leaves the law untilted. Untilted, a
// tail summed over the window carries the inversion's absolute bound once
// for every window value it covers (about half the window, mass or none);
// tilted towards m, the factors exp(K − θj) shrink the values beyond m
// geometrically. So the stretch is kept short, where both tails hold
// about 0.4 of the mass or more: for the k = 1000 of energy's 60-group
// fleet the bound at its ends is 2.5e-11 relative, where at the ends of
// the former ±2 standard deviations (tails of 2 %) it was 4.2e-10.
const untiltedSD = 0.25

// tiltFor returns θ with tilted mean near target (within a fraction of a
// standard deviation), 0 when target is within untiltedSD standard
// deviations of the mean, by safeguarded Newton steps on the (increasing)
// tilted mean.
func (cm countModel) tiltFor(target float64) float64 {
	sd := math.Sqrt(cm.variance)
	mean := cm.mean - cm.shift
	if math.Abs(target-mean) <= untiltedSD*sd {
		return 0
	}
	logit := func(x float64) float64 { return math.Log(x) - math.Log1p(-x) }
	theta := logit(target/cm.size) - logit(mean/cm.size)
	if !finite(theta) {
		theta = 0
	}
	lo, hi := math.Inf(-1), math.Inf(1)
	var ts []binom // the tilted terms, reused
	for i := 0; i < 200; i++ {
		ts, _ = cm.tiltedInto(ts, theta)
		m, v := momentsOf(ts)
		f := m - target
		if math.Abs(f) <= 0.25*max(1, math.Sqrt(v)) {
			return theta
		}
		if f > 0 {
			hi = theta
		} else {
			lo = theta
		}
		next := theta - f/v
		if !(next > lo && next < hi) || !finite(next) {
			switch {
			case finite(lo) && finite(hi):
				next = lo + (hi-lo)/2
			case finite(lo):
				next = lo + 2
			default:
				next = hi - 2
			}
		}
		theta = max(-1400, min(1400, next))
	}
	return theta
}

// maxWindow bounds the transform size of one window (2^26 points,
// lattice.MaxN).
const maxWindow = lattice.MaxN

// windowCut is the log-magnitude below which a window's transform values
// are left out: |φ_θ(ω)| decreases on [0, π] (each binomial factor's
// |q + p·e^{iω}| does), so the spectrum ends at the first value below it,
// and the values left out add at most e^-50 (2e-22) to each tilted
// probability, below 1e-12 of the smallest one accepted (1e-2 of the
// largest, itself at least 1/N of the window's mass) up to maxWindow.
const windowCut = -50

// countWindow holds P(C = j) for j in [lo, lo+len(pmf)), computed under the
// tilt theta and untilted.
type countWindow struct {
	theta  float64
	lo     float64
	sd     float64   // standard deviation of the tilted law
	pmf    []float64 // P(C = lo + r), relative to the (untilted) law
	tpmf   []float64 // the tilted probabilities, for judging accuracy (inv's buffer: valid until its next window)
	absErr float64   // bound on the rounding of each tilted probability (lattice.Inverter)
	k      float64   // K(θ), the tilted law's log normaliser
	kErr   float64   // bound on the rounding of k (tiltRound)
	inv    *lattice.Inverter
}

// rel bounds the relative error of the window's probability at lo + r, to
// first order in u = 2^-53 (times 1.01 for the second): the inversion's
// absolute bound over the tilted probability (the transform's and the
// FFT's rounding, internal/lattice), the rounding of K(θ) (kErr), and that
// of the exponent K(θ) − θ·j which untilts it (u·|θj| for the product,
// u·|K − θj| for the difference, u for exp). +Inf where the tilted value
// is not positive (its relative error is not bounded).
func (w countWindow) rel(r int) float64 {
	const u = 0x1p-53
	v := w.tpmf[r]
	if !(v > 0) {
		return math.Inf(1)
	}
	tj := w.theta * (w.lo + float64(r))
	return 1.01 * (w.absErr/v + w.kErr + u*(math.Abs(tj)+math.Abs(w.k-tj)+1))
}

// tiltRound bounds, to first order in u = 2^-53, the rounding of
// K(θ) = Σ n·log(q + p·e^θ) as tiltedInto computes it. A term n·log1p(x),
// x = p·expm1(θ) (θ <= 0) or n·(θ + log1p(x)), x = q·expm1(−θ) (θ > 0):
// x carries 2u of itself (expm1, the product), which log1p turns into
// 2u·|x|/(1 + x), log1p rounds by u·|log1p(x)|, the sum with θ by u of
// itself and the product with n by u of itself; a term by log(q + p·e^θ)
// (where x <= −0.5) carries 3u from its argument and u of itself, times n.
// The running sum rounds by u of itself a term, at most u·|K| (the terms
// have one sign: K's).
func (cm countModel) tiltRound(theta, k float64) float64 {
	const u = 0x1p-53
	e := 0.0
	for _, t := range cm.terms {
		if theta <= 0 {
			if x := t.p * math.Expm1(theta); x > -0.5 {
				l := math.Abs(math.Log1p(x))
				e += t.n * u * (2*math.Abs(x)/(1+x) + 2*l)
			} else {
				l := math.Abs(math.Log(t.q + t.p*math.Exp(theta)))
				e += t.n * u * (3 + 2*l)
			}
			continue
		}
		if x := t.q * math.Expm1(-theta); x > -0.5 {
			l := math.Log1p(x)
			e += t.n * u * (2*math.Abs(x)/(1+x) + math.Abs(l) + 2*math.Abs(theta+l))
		} else {
			l := math.Log(t.p + t.q*math.Exp(-theta))
			e += t.n * u * (3 + math.Abs(l) + 2*math.Abs(theta+l))
		}
	}
	return e + float64(len(cm.terms))*u*math.Abs(k)
}

// sum returns Σ_{j=a}^{b} P(C = j) over the window.
func (w countWindow) sum(a, b float64) float64 {
	s := 0.0
	for r := range w.pmf {
		j := w.lo + float64(r)
		if j >= a && j <= b {
			s += w.pmf[r]
		}
	}
	return s
}

// window computes the law of C - shift near target by the discrete Fourier
// transform of the tilted characteristic function (Hong 2013, Computational
// Statistics & Data Analysis 59:41–51), on a window of M points (a power of
// two) placed around target and reaching past h = 9σ + 12 from the tilted
// law's mean μ_θ on both sides (σ its standard deviation): half a width of
// at least h + |target − μ_θ| + 1 (|target − μ_θ| is at most untiltedSD·σ
// untilted, and max(σ, 1)/4 tilted once tiltFor's Newton steps settle).
// The tilted mass beyond each edge (which the transform folds back into
// the window) is then at most
// Bernstein's exp(−h²/(2(σ² + h/3))) (each term moves by at most 1 from
// its mean; common practice): below e^-18 (1.5e-8) for any count, falling
// towards e^-40.5 (2.6e-18) as σ grows; splitTransformErr bounds it by
// Chernoff's bound with the count's own cumulant generating function,
// usually far smaller:
//
//	P_θ(C = L + r) = (1/M) Σ_l φ_θ(ω_l)·e^{-iω_l(L+r)},  ω_l = 2πl/M
//	P(C = j)       = P_θ(C = j)·exp(K(θ) − θj)
//
// inverted by the module's one lattice inversion (internal/lattice), the
// transform's values where they exceed e^windowCut only. The transform's
// absolute error (about 1e-16 of the largest tilted value; absErr bounds
// it) becomes a relative error near target, where the tilted law has its
// mass. inv is reused when it has the window's size (nil: a new one).
func (cm countModel) window(target float64, inv *lattice.Inverter) countWindow {
	theta := cm.tiltFor(target)
	ts, k := cm.tilted(theta)
	mu, v := momentsOf(ts)
	half := math.Ceil(9*math.Sqrt(v)+12+math.Abs(target-mu)) + 1
	if !(half < maxWindow/2) {
		half = maxWindow / 2
	}
	m := 64
	for float64(m) < 2*half {
		m *= 2
	}
	lo := math.Round(target) - float64(m/2)
	if top := cm.size - float64(m) + 1; lo > top {
		lo = top
	}
	if lo < 0 {
		lo = 0
	}
	if inv == nil || inv.N() != m {
		inv = lattice.NewInverter(m)
	}
	// log φ_θ(ω) = Σ n·log(q + p·e^{iω}): its modulus by log1p of
	// −4pq·sin²(ω/2), its argument by atan2; each rounds to a few ulps of
	// its own size, times n (the ulps returned)
	seq, absErr := inv.Invert(-int64(lo), lattice.Spectrum{Cut: windowCut, Decreasing: true}, func(_ int, omega float64) (complex128, float64) {
		// sin ω and cos ω from sin(ω/2) and cos(ω/2) (one Sincos; cos ω =
		// 1 − 2·sin²(ω/2) to an absolute 2ε)
		sh, ch := math.Sincos(omega / 2)
		s2 := sh * sh
		sin, cos := 2*sh*ch, 1-2*s2
		var re, ph, mag float64
		for _, t := range ts {
			r := t.n * 0.5 * math.Log1p(-4*t.p*t.q*s2)
			a := t.n * math.Atan2(t.p*sin, t.q+t.p*cos)
			re, ph = re+r, ph+a
			mag += math.Abs(r) + math.Abs(a)
		}
		return complex(re, ph), 4*mag + 8*float64(len(ts))
	})
	w := countWindow{theta: theta, lo: lo, sd: math.Sqrt(v), pmf: make([]float64, m), tpmf: seq, absErr: absErr, k: k, kErr: cm.tiltRound(theta, k), inv: inv}
	for r, p := range seq {
		if p <= 0 {
			continue
		}
		j := lo + float64(r)
		if j > cm.size {
			continue
		}
		w.pmf[r] = p * math.Exp(k-theta*j)
	}
	return w
}
