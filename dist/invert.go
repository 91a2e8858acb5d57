package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sync"
)

// The inversion engine. A numerically computed law is held as
//
//   - an exact atomic part (a sub-probability list of atoms), and
//   - the log-transform log E[exp(s·(X-c))] of the whole law, centred on its
//     mean c, from which the transform of the continuous part,
//     Mc(s) = M(s) - Σ m_j exp(s·(v_j - c)), is formed.
//
// The bulk of the continuous part is recovered by the trapezoidal rule on
// the Gil-Pelaez integral with step h = 2π/L (the Fourier-series method of
// Abate & Whitt, Queueing Systems 10, 1992):
//
//	F_h(y) = w/2 + (w·y - m_c)/L - (1/π)·Σ_{k>=1} Im(Mc(i·k·h)·exp(-i·k·h·y))/k
//
// whose error is exactly Σ_{j>=1} F(y - jL) - Σ_{j>=1} S(y + jL) (aliasing)
// plus the truncated terms. L is the width of a window [a, b] that holds all
// but bulkTail of the mass at each end (Chernoff bounds from the transform
// where it exists, union bounds from the terms' quantiles otherwise), so the
// window is set by the spread of the law, not by the number of terms. The
// values Mc(i·k·h) are computed once, when the law is built; each CDF is then
// one short trigonometric sum.
//
// Where the bulk value falls below tiltSwitch, the tail is computed
// directly by the same trapezoidal rule on the Bromwich integral shifted to
// Re s = θ (exponential tilting):
//
//	S(y) = (1/2π)·∫ Mc(θ+it)·exp(-(θ+it)·y)/(θ+it) dt,  θ > 0,
//
// with θ the saddlepoint K'(θ) = y, so the integrand is scaled to the answer
// and the survival keeps its relative accuracy far into the tail. Its
// aliasing error is Σ_j exp(θjL)·S(y+jL) + Σ_j exp(-θjL)·S(y-jL); the
// second sum is removed analytically (S(y-jL) = w below the window) and L is
// chosen by Chernoff bounds on the tilted law so that both are below 1e-17
// of the answer. The lower tail is the same computation on the reflected law.

const (
	bulkTail   = 1e-14 // mass left outside the bulk window at each end (2·bulkTail is in the bound, far below the 1e-12 aimed at)
	tiltSwitch = 1e-5  // below this bulk value a tail is computed by tilting
	maxTerms   = 1 << 16
	maxTilted  = 1 << 12 // terms of one tilted tail evaluation
	tiltTol    = 1e-9    // stated relative error of a tilted tail
	quietShare = 0.1     // share of the carried error the series truncation may add
	dropTol    = 3e-14   // sum of the magnitudes of the trailing series terms left out
	envRatio   = 4       // a Sum with discrete terms stops where |C| <= envRatio·quietTol
)

// numLaw is a numerically inverted law (a sum, k-fold sum or random sum).
type numLaw struct {
	kind           string
	c              float64   // centre (the mean when it is finite)
	tr             transform // of X - c, atoms included
	atoms          Discrete  // the atomic part, normalised; valid when atomMass > 0
	atomMass       float64
	atomC          []Atom // the atomic part with absolute masses, values centred
	w              float64
	mc             float64 // E[(X - c); continuous part]
	mean, variance float64
	supLo, supHi   float64
	a, b           float64 // centred bulk window
	L, h           float64
	pr, pi         []float64 // Mc(i·k·h)/k, k = 1..N
	accBase        float64   // CDF error of the bulk series
	extraErr       float64
	accOnce        *sync.Once
	acc            Accuracy // set by accOnce
	gridOnce       *sync.Once
	grid           *cdfGrid // set by gridOnce (nil: no grid)
	// upperClosed is set (by withExpTail, before the law is returned) when
	// the upper tail from the centred point closedAbove on is answered by a
	// closed form, so this law's tilted upper tail is not asked for there
	upperClosed bool
	closedAbove float64
	sample      func(r *rand.Rand) float64
	parts       []Law // the terms of a Sum, for flattening nested sums
	// expRound, when set, bounds the relative error that the rounding of
	// a k-fold sum's exponent k·log M adds to a tilted tail at the real
	// tilt θ of the centred law (iidExpRound); tiltedCap adds it
	expRound func(theta float64) float64
}

// numSpec is what a builder hands to newNumLaw.
type numSpec struct {
	kind           string
	tr             transform // of X - c, atoms included
	c              float64
	mean, variance float64
	atoms          []Atom // absolute values and masses (sub-probability); may be nil
	supLo, supHi   float64
	fallback       func(eps float64) (a, b float64) // centred union bounds, for sides without tilting
	sample         func(r *rand.Rand) float64
	parts          []Law
	extraErr       float64 // CDF error already incurred (truncated count, lattice, …)
	// axis, when set, sets out[j] to log M(i·k·h) of X - c (atoms
	// included), k = k0 + j, for axisBlock points at once, and errOut[j]
	// to a bound on the absolute error of M there: the series values are
	// then computed block by block (faster than tr.logm per point), and
	// (1/π)·Σ errOut/k is added to the CDF bound.
	axis func(h float64, k0 int, out []complex128, errOut []float64)
	// expRound: see numLaw.expRound
	expRound func(theta float64) float64
}

func newNumLaw(sp numSpec) (*numLaw, error) {
	if !finite(sp.variance) || sp.variance < 0 {
		return nil, fmt.Errorf("dist.%s: variance %v: %w (the inversion window is sized by the standard deviation)", sp.kind, sp.variance, ErrMoment)
	}
	if !finite(sp.mean) {
		return nil, fmt.Errorf("dist.%s: mean %v: %w", sp.kind, sp.mean, ErrMoment)
	}
	l := &numLaw{kind: sp.kind, c: sp.c, tr: sp.tr, mean: sp.mean, variance: sp.variance,
		supLo: sp.supLo, supHi: sp.supHi, sample: sp.sample, parts: sp.parts, expRound: sp.expRound}
	if len(sp.atoms) > 0 {
		l.atoms = discreteFromAtoms(append([]Atom(nil), sp.atoms...))
		for _, a := range l.atoms.Atoms() {
			l.atomMass += a.Mass
		}
		var total float64
		for _, a := range sp.atoms {
			total += a.Mass
		}
		l.atomMass = total
		for _, a := range l.atoms.Atoms() {
			l.atomC = append(l.atomC, Atom{Value: a.Value - l.c, Mass: a.Mass * total})
			l.mc -= a.Mass * total * (a.Value - l.c)
		}
	}
	l.w = 1 - l.atomMass
	l.mc += (l.mean - l.c)
	sd := math.Sqrt(l.variance)
	if sd == 0 {
		sd = max(1e-300, math.Abs(l.c)*1e-16)
	}
	// bulk window
	var fa, fb float64
	if sp.fallback != nil && (!(l.tr.lo < 0) || !(l.tr.hi > 0)) {
		fa, fb = sp.fallback(bulkTail)
	}
	if l.tr.hi > 0 {
		l.b = chernoffEnd(l.tr.logm, l.tr.hi, sd, bulkTail)
	} else {
		l.b = fb
	}
	if l.tr.lo < 0 {
		l.a = -chernoffEnd(func(s complex128) complex128 { return l.tr.logm(-s) }, -l.tr.lo, sd, bulkTail)
	} else {
		l.a = fa
	}
	l.a = max(l.a, l.supLo-l.c)
	l.b = min(l.b, l.supHi-l.c)
	if !(l.b > l.a) || !finite(l.b-l.a) {
		return nil, fmt.Errorf("dist.%s: window [%v, %v] around the mean %v: %w (cannot size the inversion window)", sp.kind, l.a+l.c, l.b+l.c, l.c, ErrMoment)
	}
	l.L = (l.b - l.a) * 1.01
	l.h = 2 * math.Pi / l.L
	// The series stops where |Mc| has stayed below quietTol over a stretch
	// of 8 + k/16 terms: 1e-13, or up to quietShare of the error the law
	// carries anyway (the transform's stated error over the series,
	// rounding of the phase, error already incurred), at most 1e-12. The
	// terms cut then sum to at most quietTol/π·Σ_{k>n} (n/k)^p/k <=
	// quietTol/π for a transform decaying at least as 1/t from there (a
	// density of bounded variation); that is added to the bound. For a Sum
	// with finite discrete terms, |Mc| <= |C| with C the product of the
	// transforms of its atom-free terms, and a discrete factor can keep |Mc|
	// small over a long stretch and then return to 1 (a lattice law at
	// t = 2π/span): there the series stops only where |C| (its largest
	// modulus at four points across the stretch) is below envRatio·quietTol
	// too, and the cut terms are bounded by max(|C|, quietTol)/π instead
	// (|Mc| <= |C|, and C decays at least as 1/t from there).
	carried := l.tr.err*(math.Log(1000)+1) + 1e-14*(1+math.Abs(l.c)/sd) + sp.extraErr
	quietTol := min(1e-12, max(1e-13, quietShare*math.Pi*carried))
	env := envelopeOf(sp.parts)
	var trunc, absSum float64
	quiet, stopped := 0, false
	l.pr, l.pi = make([]float64, 0, 1024), make([]float64, 0, 1024)
	var blk [axisBlock]complex128
	var blkErr [axisBlock]float64
	var axisSum float64
	for k := 1; k <= maxTerms; k++ {
		s := complex(0, float64(k)*l.h)
		var mc complex128
		ik := 1 / float64(k)
		if sp.axis != nil {
			j := (k - 1) % axisBlock
			if j == 0 {
				sp.axis(l.h, k, blk[:], blkErr[:])
			}
			mc = l.contMLog(blk[j], s, 0, 0)
			axisSum += blkErr[j] * ik
		} else {
			mc = l.contM(s, 0, 0)
		}
		l.pr = append(l.pr, real(mc)*ik)
		l.pi = append(l.pi, imag(mc)*ik)
		// |Mc| <= 1 plus rounding, so the square neither overflows nor
		// (above 1e-150, far below the 1e-13 that matters) underflows
		m := math.Sqrt(real(mc)*real(mc) + imag(mc)*imag(mc))
		absSum += m * ik
		if m <= quietTol {
			quiet++
		} else {
			quiet = 0
			trunc = m
		}
		if math.IsNaN(m) {
			return nil, fmt.Errorf("dist.%s: transform is NaN at t = %v: %w", sp.kind, imag(s), ErrParam)
		}
		if quiet >= 8+k/16 {
			trunc = quietTol
			if env != nil {
				c := env.largest(l.h, k, quiet)
				if c > envRatio*quietTol {
					quiet = 0 // small only through a discrete factor
					continue
				}
				trunc = max(trunc, c)
			}
			stopped = true
			break
		}
	}
	if !stopped {
		// cut at maxTerms: the last term's |Mc| may sit near a zero of an
		// oscillating factor, so the envelope bounds the terms cut
		trunc = max(trunc, capEnvelope(l.pr, l.pi))
	}
	// trailing terms whose magnitudes sum below dropTol are left out of
	// the values (the stopping rule needed them, the sums do not); their
	// sum over π is added to the bound
	n := len(l.pr)
	var drop float64
	for n > 1 {
		d := math.Hypot(l.pr[n-1], l.pi[n-1])
		if drop+d > dropTol {
			break
		}
		drop += d
		n--
	}
	l.pr, l.pi = l.pr[:n:n], l.pi[:n:n]
	// rounding: 1e-14, the terms' magnitude, and the phase s·c of a window
	// centred far from 0 (SumIID with large k: c/sd grows as √k)
	cdfAbs := 2*bulkTail + (trunc+drop)/math.Pi + 1e-14*(1+math.Abs(l.c)/sd) + 4e-16*absSum + l.tr.err*(math.Log(float64(n))+1) + axisSum/math.Pi + sp.extraErr
	l.accBase, l.extraErr = cdfAbs, sp.extraErr
	l.accOnce = new(sync.Once)
	l.gridOnce = new(sync.Once)
	return l, nil
}

// capEnvelope bounds the sum over k > n of |Mc(i·k·h)|/k for a series
// cut at n terms (pr, pi hold Mc/k): with E(m) the largest |Mc| over the
// last n/64 terms up to m, the decay rate p = log2(E(n/2)/E(n)) is taken
// to hold beyond n, so |Mc| <= E(n)·(n/k)^p there and the sum is at most
// E(n)/p; p is taken as at most 1 (the 1/t decay of a density of bounded
// variation; faster decay only makes the sum smaller) and at least 1/4.
func capEnvelope(pr, pi []float64) float64 {
	n := len(pr)
	w := max(1, n/64)
	top := func(m int) float64 {
		var e float64
		for k := max(1, m-w+1); k <= m; k++ {
			e = max(e, float64(k)*math.Hypot(pr[k-1], pi[k-1]))
		}
		return e
	}
	end, half := top(n), top(n/2)
	if !(end > 0) {
		return 0
	}
	p := 1.0
	if half > 0 {
		p = min(1, max(0.25, math.Log2(half/end)))
	}
	return end / p
}

// sumEnvelope is the atom-free terms of a Sum that also has terms with
// atoms: the product C of their transforms bounds |Mc| on the axis.
type sumEnvelope []transform

// envelopeOf returns the envelope of a Sum's terms, or nil when it does not
// apply (no terms with atoms, none without, or a term without a transform).
func envelopeOf(parts []Law) sumEnvelope {
	var env sumEnvelope
	disc := false
	for _, p := range parts {
		if hasAtoms(p) {
			disc = true
			continue
		}
		tr, ok := transformOf(p)
		if !ok {
			return nil
		}
		env = append(env, tr)
	}
	if !disc || len(env) == 0 {
		return nil
	}
	return env
}

// largest returns the largest |C(i·t)| at four points spread over the
// stretch of the last `quiet` terms up to term k (step h).
func (e sumEnvelope) largest(h float64, k, quiet int) float64 {
	var top float64
	for j := 0; j < 4; j++ {
		t := h * float64(k-j*quiet/4)
		var lg float64
		for _, tr := range e {
			lg += real(tr.logm(complex(0, t)))
		}
		top = max(top, math.Exp(lg))
	}
	return top
}

// accuracy computes the error estimate (once, on the first call of
// Accuracy: the tail probes cost several tilted inversions, which a law used
// only for its values need not pay).
func (l *numLaw) accuracy() Accuracy {
	cdfAbs := l.accBase
	// the tilted tails: the CDF error they add, and the upper one's
	// relative error (where the lower tail is tilted the survival is near
	// 1 and its error is the CDF's)
	var probe, tiltAbs float64
	if l.tr.hi > 0 {
		tiltAbs, probe = l.tailProbe(false)
	}
	if l.tr.lo < 0 {
		a, _ := l.tailProbe(true)
		tiltAbs = max(tiltAbs, a)
	}
	cdfAbs += tiltAbs
	if l.gridOnce != nil {
		l.gridOnce.Do(func() { l.grid = l.buildGrid() })
		if l.grid != nil {
			cdfAbs += 2*l.grid.err + l.grid.round + 1e-15
		}
	}
	method := fmt.Sprintf("Fourier-series inversion, %d terms", len(l.pr))
	if l.grid != nil {
		method += fmt.Sprintf(" (bulk interpolated on a %d-point grid)", l.grid.size())
	}
	floor := cdfAbs / 1e-6
	rel := max(1e-6, cdfAbs/tiltSwitch)
	if l.tr.hi > 0 {
		method += ", tilted upper tail"
		floor = 1e-30
		rel = max(max(tiltTol, 10*probe), cdfAbs/tiltSwitch)
	}
	if l.tr.lo < 0 {
		method += ", tilted lower tail"
	}
	if l.extraErr > 0 && floor < l.extraErr*1e6 {
		floor = l.extraErr * 1e6
	}
	return Accuracy{CDFAbs: cdfAbs, SurvivalRel: rel, TailFloor: floor, Method: method}
}

// tailProbes is the number of probes of a tilted tail between the window's
// end and the centre, tailSplits the most probes added where the bound is
// largest.
const (
	tailProbes = 8
	tailSplits = 6
)

// tailProbe bounds the CDF error a tilted tail adds (the upper tail, or the
// lower one when refl) and returns its largest relative error over the
// probes. A tilted value is used where the bulk value is below tiltSwitch
// and beyond the window's end e, and its error there is rel(y)·S(y). The
// tail is probed at e + (b - a), at e, and at tailProbes equal steps from e
// towards the centre, downwards until S >= tiltSwitch (where the bulk takes
// over). Between neighbouring probes y1 < y2 the error is bounded by
// max(rel(y1), rel(y2))·min(tiltSwitch, 2·S(y1)) (S decreases outwards,
// the factor 2 covers the probe's own error while that is below 1, and the
// relative error is taken to vary monotonically between probes), by none
// where S(y2) >= 1.01·tiltSwitch (the bulk is used there; bulk and tilted
// values agree far better than 1 %), and beyond the farthest probe by
// min(1, 10·rel)·2·S there. The interval with the largest bound is then
// halved, up to tailSplits times (the relative error peaks near a point
// where a component of the law starts, a bound kinked density, and a
// coarse interval would charge that peak to the whole switch value). The
// upper tail is left out from closedAbove on where a closed form replaces
// it (upperClosed).
func (l *numLaw) tailProbe(refl bool) (abs, rel float64) {
	end, sg := l.b, 1.0
	if refl {
		end, sg = -l.a, -1
	}
	top := math.Inf(1) // the tilted values are asked for below top only
	if !refl && l.upperClosed {
		top = l.closedAbove
	}
	width := l.b - l.a
	type pt struct{ y, s, rel float64 }
	// sBound bounds S at a probe by the switch value and, where the
	// probe's relative error is below 1, twice its value
	sBound := func(p pt) float64 {
		if p.rel < 1 {
			return min(tiltSwitch, 2*p.s)
		}
		return tiltSwitch
	}
	probe := func(y float64) pt {
		v, e := l.tiltedErr(sg*y, refl)
		rel = max(rel, e)
		return pt{y, v, e}
	}
	pts := []pt{probe(end + width), probe(end)} // descending in y until reversed
	step := end / tailProbes
	for i := 1; i < tailProbes && step > 0; i++ {
		p := probe(end - float64(i)*step)
		pts = append(pts, p)
		if p.s >= tiltSwitch {
			break
		}
	}
	for i, j := 0, len(pts)-1; i < j; i, j = i+1, j-1 {
		pts[i], pts[j] = pts[j], pts[i]
	}
	// bounds of the intervals [pts[j-1], pts[j]] and beyond the last
	bound := func(j int) float64 {
		lo, hi := pts[j-1], pts[j]
		if lo.y >= top || hi.s >= 1.01*tiltSwitch {
			return 0
		}
		return min(1, max(lo.rel, hi.rel)) * sBound(lo)
	}
	for n := 0; ; n++ {
		worst, jw := 0.0, 0
		for j := 1; j < len(pts); j++ {
			if b := bound(j); b > worst {
				worst, jw = b, j
			}
		}
		if n == tailSplits || worst <= 1e-15 {
			abs = worst
			break
		}
		mid := probe((pts[jw-1].y + pts[jw].y) / 2)
		pts = append(pts[:jw], append([]pt{mid}, pts[jw:]...)...)
	}
	if pts[0].s < tiltSwitch {
		// the switch lies below the lowest probe: the region below it is
		// covered by that probe's error at tiltSwitch
		abs = max(abs, min(1, pts[0].rel)*tiltSwitch)
	}
	if far := pts[len(pts)-1]; far.y < top {
		abs = max(abs, min(1, 10*far.rel)*sBound(far))
	}
	return abs, rel
}

// contM returns Mc(s)·exp(-s·y - k0), the continuous part's transform at the
// centred point y, scaled by exp(-k0); refl reflects the law (s -> -s).
func (l *numLaw) contM(s complex128, y, k0 float64) complex128 {
	return l.contMLog(l.tr.logm(s), s, y, k0)
}

// contMLog is contM with the log-transform lm = log M(s) given.
func (l *numLaw) contMLog(lm, s complex128, y, k0 float64) complex128 {
	v := cmplx.Exp(lm - s*complex(y, 0) - complex(k0, 0))
	for _, a := range l.atomC {
		v -= complex(a.Mass, 0) * cmplx.Exp(s*complex(a.Value-y, 0)-complex(k0, 0))
	}
	return v
}

// chernoffEnd returns min over 0 < θ < hi of (K(θ) + log(1/eps))/θ, the
// Chernoff bound on the eps upper quantile of a centred law with
// log-transform logm and standard deviation sd, by Brent's minimisation
// (golden sections with parabolic steps, R. P. Brent, Algorithms for
// Minimization without Derivatives, 1973; as in Numerical Recipes — from
// memory) on log θ; the function is unimodal because K is convex. Any θ
// gives a bound, so the search stops when log θ is known to 1e-3, which
// leaves the bound within about 1e-6 of its minimum (relative; for a normal
// law g(u* + δ) = g*·cosh δ).
func chernoffEnd(logm func(complex128) complex128, hi, sd, eps float64) float64 {
	c := -math.Log(eps)
	g := func(u float64) float64 {
		th := math.Exp(u)
		k := real(logm(complex(th, 0)))
		if math.IsNaN(k) {
			k = math.Inf(1)
		}
		return (k + c) / th
	}
	top := 1e4 / sd
	if finite(hi) {
		top = min(top, hi*(1-1e-9))
	}
	x0, x1 := math.Log(1e-6/sd), math.Log(top)
	if x0 >= x1 {
		x0 = x1 - 20
	}
	_, f := brentMin(g, x0, x1, 1e-3/2)
	return f
}

// brentMin returns the minimiser of a unimodal f on [a, b] and its value,
// to within ±2·tol in x (at most 100 evaluations). Parabolic steps are
// taken only through finite values, golden sections otherwise.
func brentMin(f func(float64) float64, a, b, tol float64) (x, fx float64) {
	const cg = 0.3819660112501051 // (3 - √5)/2
	x = a + cg*(b-a)
	w, v := x, x
	fx = f(x)
	fw, fv := fx, fx
	var d, e float64
	for i := 0; i < 100; i++ {
		xm := (a + b) / 2
		if math.Abs(x-xm) <= 2*tol-(b-a)/2 {
			break
		}
		golden := true
		if math.Abs(e) > tol && finite(fx) && finite(fw) && finite(fv) {
			r := (x - w) * (fx - fv)
			q := (x - v) * (fx - fw)
			p := (x-v)*q - (x-w)*r
			q = 2 * (q - r)
			if q > 0 {
				p = -p
			} else {
				q = -q
			}
			if q != 0 && math.Abs(p) < math.Abs(q*e/2) && p > q*(a-x) && p < q*(b-x) {
				e, d = d, p/q
				if u := x + d; u-a < 2*tol || b-u < 2*tol {
					d = math.Copysign(tol, xm-x)
				}
				golden = false
			}
		}
		if golden {
			if x >= xm {
				e = a - x
			} else {
				e = b - x
			}
			d = cg * e
		}
		u := x + d
		if math.Abs(d) < tol {
			u = x + math.Copysign(tol, d)
		}
		fu := f(u)
		if fu <= fx {
			if u >= x {
				a = x
			} else {
				b = x
			}
			v, w, x = w, x, u
			fv, fw, fx = fw, fx, fu
		} else {
			if u < x {
				a = u
			} else {
				b = u
			}
			if fu <= fw || w == x {
				v, w, fv, fw = w, u, fw, fu
			} else if fu <= fv || v == x || v == w {
				v, fv = u, fu
			}
		}
	}
	return x, fx
}

// bulkCDF returns the Fourier-series value of F_c at centred y.
func (l *numLaw) bulkCDF(y float64) float64 {
	// two interleaved rotations (odd and even k, each by 2θ) halve the
	// chain of dependent products; both restart from Sincos every 64 terms
	th := l.h * y
	s1, c1 := math.Sincos(-th)
	s2, c2 := math.Sincos(-2 * th)
	var acc0, acc1 float64
	n := len(l.pr)
	for k0 := 0; k0 < n; k0 += 64 {
		ai, ar := math.Sincos(-float64(k0+1) * th)
		br, bi := ar*c1-ai*s1, ar*s1+ai*c1
		end := min(k0+64, n)
		pr, pi := l.pr[k0:end], l.pi[k0:end]
		j := 0
		for ; j+1 < len(pr); j += 2 {
			acc0 += pr[j]*ai + pi[j]*ar
			acc1 += pr[j+1]*bi + pi[j+1]*br
			ar, ai = ar*c2-ai*s2, ar*s2+ai*c2
			br, bi = br*c2-bi*s2, br*s2+bi*c2
		}
		if j < len(pr) {
			acc0 += pr[j]*ai + pi[j]*ar
		}
	}
	return l.w/2 + (l.w*y-l.mc)/l.L - (acc0+acc1)/math.Pi
}

// cont returns F_c(y) and S_c(y) of the continuous part at centred y.
func (l *numLaw) cont(y float64) (f, s float64) {
	if l.w <= 0 {
		return 0, 0
	}
	up, down := l.tr.hi > 0, l.tr.lo < 0
	switch {
	case y >= l.b:
		if up {
			s = l.tilted(y, false)
		}
		return max(0, l.w-s), s
	case y <= l.a:
		if down {
			f = l.tilted(y, true)
		}
		return f, max(0, l.w-f)
	}
	f = min(l.w, max(0, l.bulk(y)))
	s = l.w - f
	if f < tiltSwitch && down {
		f = l.tilted(y, true)
		s = max(0, l.w-f)
	} else if s < tiltSwitch && up {
		s = l.tilted(y, false)
		f = max(0, l.w-s)
	}
	return f, s
}

// tilted returns S_c(y) (or F_c(y) when refl) by the shifted Bromwich
// integral described at the top of this file.
func (l *numLaw) tilted(y float64, refl bool) float64 {
	v, _ := l.tiltedErr(y, refl)
	return v
}

// tiltedErr is tilted with an estimate of its relative error: rounding
// (of the sum, and for a k-fold sum of its exponent k·log M: expRound),
// and, when the sum had to be cut at maxTilted terms, the remainder bound
// of tailBound from the ranges of the partial sums over the last octaves.
func (l *numLaw) tiltedErr(y float64, refl bool) (float64, float64) {
	return l.tiltedCap(y, refl, maxTilted)
}

// tiltedCap is tiltedErr with at most kMax terms.
func (l *numLaw) tiltedCap(y float64, refl bool, kMax int) (float64, float64) {
	sg := 1.0
	hiDom, lowEnd, supTop := l.tr.hi, l.a, l.supHi-l.c
	if refl {
		sg = -1
		hiDom, lowEnd, supTop = -l.tr.lo, -l.b, -(l.supLo - l.c)
	}
	yy := sg * y
	if yy >= supTop {
		return 0, 0
	}
	lm := func(s complex128) complex128 { return l.tr.logm(complex(sg, 0) * s) }
	K := func(th float64) float64 { return real(lm(complex(th, 0))) }
	dK := func(th float64) float64 {
		const eta = 1e-20
		d := imag(lm(complex(th, eta*max(1, th)))) / (eta * max(1, th))
		if math.IsNaN(d) || math.IsInf(d, 0) {
			e := 1e-6 * max(th, 1e-3/math.Sqrt(l.variance))
			d = (K(th+e) - K(th-e)) / (2 * e)
		}
		return d
	}
	sd := math.Sqrt(l.variance)
	// Far out, a Chernoff bound S_c(y) <= exp(K(θ) - θ·y) at a moderate θ
	// below the smallest float gives 0 at once, before the saddle point's
	// K(θ) overflows (a normal term at y = 1e300 gave Inf - Inf = NaN, a
	// lognormal's transform at θ = 1e10 NaN; issue 13).
	for _, th := range []float64{1 / sd, 16 / sd, hiDom / 2} {
		if th > 0 && th < hiDom && K(th)-th*yy < -800 {
			return 0, 0
		}
	}
	theta := saddle(dK, yy, hiDom, sd)
	floor := 30 / (l.b - l.a)
	if finite(hiDom) {
		floor = min(floor, hiDom/2)
	}
	theta = max(theta, floor)
	k0 := K(theta) - theta*yy
	e := 1e-4 * theta
	var sdT float64
	if theta+e < hiDom {
		sdT = math.Sqrt(max(0, (dK(theta+e)-dK(theta-e))/(2*e)))
	}
	if !(sdT > 0) || !finite(sdT) {
		sdT = sd
	}
	// period L: lower alias (below the window and exp(-θL) small), upper
	// alias (Chernoff bound on the tilted law beyond y + L)
	// lower alias: exp(-θjL)·S(y-jL) is removed as w·exp(-θjL) in closed form;
	// what is left is at most exp(-θL), so θL >= 40 - k0 suffices
	_ = lowEnd
	L := max((40-k0)/theta, 8*sdT)
	L2 := math.Inf(1)
	for _, u := range []float64{theta, 1 / sdT, 4 / sdT, 16 / sdT} {
		if theta+u < hiDom {
			if lu := (K(theta+u) - K(theta) - u*yy + 40) / u; lu > 0 {
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
	L = max(L, L2)
	h := 2 * math.Pi / L
	var sum, absSum, t0, last float64
	var z, u complex128            // Σ_{k>=1} v_k/s_k, and with weights (k/kMax)²
	var early, late, trend psumBox // ranges of z over [kMax/4, kMax/2] and [kMax/2, kMax], of u over the latter
	quiet, kEnd := 0, 0
	for k := 0; k <= kMax; k++ {
		kEnd = k
		s := complex(theta, float64(k)*h)
		v := cmplx.Exp(lm(s) - s*complex(yy, 0) - complex(k0, 0))
		for _, a := range l.atomC {
			v -= complex(a.Mass, 0) * cmplx.Exp(s*complex(sg*a.Value-yy, 0)-complex(k0, 0))
		}
		vs := v / s
		term := real(vs)
		last = max(math.Abs(term), last*0.5)
		if k == 0 {
			t0 = math.Abs(term)
			sum += term
		} else {
			sum += 2 * term
			z += vs
			if 4*k >= kMax && 2*k <= kMax {
				early.add(z)
			}
			if 2*k >= kMax {
				w := float64(k) / float64(kMax)
				u += vs * complex(w*w, 0)
				late.add(z)
				trend.add(u)
			}
		}
		absSum += math.Abs(term)
		if math.Abs(term)*float64(k) <= 1e-13*max(t0, math.Abs(sum)) {
			quiet++
			if quiet >= 4 {
				break
			}
		} else {
			quiet = 0
		}
	}
	res := math.Exp(k0)*sum/L - l.w*math.Exp(-theta*L)/(-math.Expm1(-theta*L))
	den := max(math.Abs(sum), 1e-300)
	rel := 1e-14 + 4e-16*absSum/den
	if kEnd >= kMax {
		rel += 2 * tailBound(early.diam(), late.diam(), trend.diam(), last*float64(kEnd)) / den
	}
	if l.expRound != nil {
		rel += l.expRound(sg * theta)
	}
	return max(0, res), rel
}

// psumBox is the bounding box of a run of complex partial sums.
type psumBox struct {
	reLo, reHi, imLo, imHi float64
	n                      int
}

func (b *psumBox) add(z complex128) {
	if b.n == 0 {
		b.reLo, b.reHi, b.imLo, b.imHi = real(z), real(z), imag(z), imag(z)
	} else {
		b.reLo, b.reHi = min(b.reLo, real(z)), max(b.reHi, real(z))
		b.imLo, b.imHi = min(b.imLo, imag(z)), max(b.imHi, imag(z))
	}
	b.n++
}

// diam is the diagonal of the box: at least the largest distance between
// two of its partial sums.
func (b *psumBox) diam() float64 { return math.Hypot(b.reHi-b.reLo, b.imHi-b.imLo) }

// tailBound bounds |Σ_{k>K} z_k|, the remainder of a series of complex
// terms z_k cut at K, from three ranges of its partial sums: dEarly and
// dLate of Z_n = Σ_{k<=n} z_k over [K/4, K/2] and [K/2, K], and dTrend of
// U_n = Σ_{k<=n} z_k·(k/K)² over [K/2, K]. A kink or jump of the tilted
// density at distance d from y gives terms A·k^-p·exp(i·k·φ), φ = h·d,
// with p = 3 for a kink and p = 2 for a jump (so p >= 2 for a density of
// bounded variation). By summation by parts with the decreasing weights
// (K/k)², |Σ_{k>K} z_k| <= sup_n |U_n - U_K| over n > K, and the range of U
// over the last octave stands in for that supremum: the worst ratio of the
// remainder to dTrend, computed over φ in [0, π] for one such term, is
// 2.00, 0.72 and 0.33 for p = 2, 3 and 4 (at φ = 0, the terms not
// oscillating), and 2.3 over 300 random mixtures of two to five terms with
// p in {2, 3, 4} whose partial sums settle as fast as p = 2 allows. That
// rate is checked by q = dLate/dEarly (2^(1-p) at φ = 0, 2^-p when the
// terms oscillate): for q <= 0.6 the remainder is taken as 4·dTrend. Where
// the partial sums settle more slowly (a singular density, p < 2, or two
// kinks closer than about L/K that nearly cancel over the last octaves)
// crude, the last terms' size times their count, is kept, scaled by
// q/(1-q) (the octaves' geometric series) once that exceeds 1.
func tailBound(dEarly, dLate, dTrend, crude float64) float64 {
	q := dLate / dEarly
	if !(dEarly > 0) || !(q <= 0.6) {
		q = min(q, 0.9)
		if !(q > 0) {
			q = 0.9
		}
		return max(crude*max(1, q/(1-q)), 4*dTrend)
	}
	return 4 * dTrend
}

// saddle solves K'(θ) = y for θ > 0 below hi by doubling and bisection.
func saddle(dK func(float64) float64, y, hi, sd float64) float64 {
	if y <= 0 {
		return 0
	}
	lo, th := 0.0, 1/sd
	if finite(hi) && th >= hi {
		th = hi / 2
	}
	for i := 0; i < 200 && dK(th) < y; i++ {
		lo = th
		if finite(hi) {
			th = th + (hi-th)/2
			if hi-th < 1e-12*hi {
				return th
			}
		} else {
			th *= 2
			if th > 1e300 {
				return th
			}
		}
	}
	hiB := th
	for i := 0; i < 80 && hiB-lo > 1e-12*hiB; i++ {
		m := lo/2 + hiB/2
		if dK(m) < y {
			lo = m
		} else {
			hiB = m
		}
	}
	return hiB
}

// CDF returns P(X <= x): exact atoms plus the inverted continuous part.
// NaN for NaN.
func (l *numLaw) CDF(x float64) float64 {
	if v, ok := edgeCDF(x, l.supLo, l.supHi); ok {
		return v
	}
	f, _ := l.cont(x - l.c)
	if l.atomMass > 0 {
		f += l.atomMass * l.atoms.CDF(x)
	}
	return min(1, f)
}

// Survival returns P(X > x), computed directly (tilted in the upper tail).
func (l *numLaw) Survival(x float64) float64 {
	if v, ok := edgeSurvival(x, l.supLo, l.supHi); ok {
		return v
	}
	_, s := l.cont(x - l.c)
	if l.atomMass > 0 {
		s += l.atomMass * l.atoms.Survival(x)
	}
	return min(1, s)
}

// Quantile inverts CDF (or Survival above the median) by bisection.
func (l *numLaw) Quantile(p float64) float64 { return quantileByInversion(l, p) }

// UpperQuantile inverts Survival by bisection; accurate for tiny q.
func (l *numLaw) UpperQuantile(q float64) float64 { return upperQuantileByInversion(l, q) }

// Mean returns the exact mean (the sum of the terms' means).
func (l *numLaw) Mean() float64 { return l.mean }

// Variance returns the exact variance (from the terms' variances).
func (l *numLaw) Variance() float64 { return l.variance }

// Support returns the support implied by the terms' supports.
func (l *numLaw) Support() (lo, hi float64) { return l.supLo, l.supHi }

// Rand draws from the structure of the law (the terms' own samplers).
func (l *numLaw) Rand(r *rand.Rand) float64 { return l.sample(r) }

// Accuracy reports the error estimate of CDF and Survival.
func (l *numLaw) Accuracy() Accuracy {
	l.accOnce.Do(func() { l.acc = l.accuracy() })
	return l.acc
}

// Atoms lists the exact atoms of the law (none when a term is continuous).
func (l *numLaw) Atoms() []Atom {
	if l.atomMass <= 0 {
		return nil
	}
	out := l.atoms.Atoms()
	for i := range out {
		out[i].Mass *= l.atomMass
	}
	return out
}

// CF returns the characteristic function E[exp(i·t·X)].
func (l *numLaw) CF(t float64) complex128 {
	if math.IsNaN(t) {
		return complex(math.NaN(), math.NaN())
	}
	s := complex(0, t)
	return cmplx.Exp(l.tr.logm(s) + s*complex(l.c, 0))
}

// transform returns the uncentred log-transform, for nesting.
func (l *numLaw) transform() transform {
	tr := l.tr
	c := complex(l.c, 0)
	return transform{logm: func(s complex128) complex128 { return tr.logm(s) + s*c }, lo: tr.lo, hi: tr.hi, err: tr.err}
}

// String prints the law compactly: its kind, mean, standard deviation and
// 5–95 % range.
func (l *numLaw) String() string { return fmt.Sprintf("%s(%s)", l.kind, summary(l)) }
