package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/floats"
)

// The lattice fallback of Sum (and of SumIID for small k) for terms without
// a known transform (a dist.FromDistuv law, say).
//
// Atoms stay exact. Every term is split into its atoms and a continuous
// part (a mixture by its components, any other law by subtracting its
// atoms); the sum is then the exact mixture, over which terms contribute
// their atoms and which their continuous part, of
//
//	Σ_v p_v·F_L(x - v),
//
// the atoms v of the discrete terms and of the chosen atomic parts
// convolved exactly (masses p_v), L the sum of the remaining continuous
// parts: L is the one continuous law itself when there is one, and a lattice
// law when there are several (at most maxLatticeCombos such combinations
// and maxLatticeShifts atoms over all of them, else an error).
//
// The lattice law. Every continuous term X_i is rounded to a lattice of
// step δ over its range [Q_i(ε), Q_i(1-ε)] (ε = latticeCut/n; the end cells
// take the mass beyond): a term whose support has a finite lower end a where
// its mass starts ("aligned") gets the cells [a + jδ, a + (j+1)δ] with
// points at their centres, so that a density that starts or jumps at a is
// cut at a cell edge at every step; any other term gets points lo + jδ with
// cells centred on them. Cell masses come from CDF differences below the
// term's median and Survival differences above it. The lattice laws are
// convolved by FFT (gonum dsp/fourier, a size 2^a·3^b·5^c beyond the length
// of the sum's lattice, so nothing wraps round; a k-fold term is raised to
// the power k as exp(k·log z)), and the upper tail is computed again from
// exponentially tilted lattices (Embrechts & Frei 2009; see latticeLevel),
// at the steps δ, 2δ and 4δ. With A = Σ lo_i and n_a aligned terms, the
// sum's points at step s are A + (n_a/2 + m)·s, so the points x = A + P·δ
// (P even) are lattice points at every step when n_a is even and cell
// edges when it is odd; there the lattice CDF (half-way up its jump at a
// point) has an error c(x)·δ² + O(δ³) with the same c(x) at every step
// (Euler–Maclaurin: each term's rounding is symmetric about its point), and
// Richardson extrapolation, (4·F_δ - F_2δ)/3, removes it. CDF and Survival
// are extrapolated alike on the points of step 2δ and interpolated between
// them by centred quintic Lagrange polynomials (one-sided at finite ends of
// the support).
//
// Error: the extrapolation error is estimated by the same extrapolation one
// step coarser, (4·F_2δ - F_4δ)/3, whose largest difference from the fine one
// is (for an O(δ⁴) remainder) fifteen times the fine error, and (for an O(δ)
// or O(δ^1.5) remainder, a misplaced jump or a singular density) about once
// or twice it; the interpolation error by the largest difference, at the
// midpoints, between the centred quintic and the septic and the quintics
// shifted one point either way (one of which stays on one side of a kink).
// The stated CDF bound is twice the first estimate and four times the
// second (a kink between grid points is caught only roughly) plus twice the
// mass the end cells took and the rounding (the FFT's residue on its zero
// padding per cell, summed as a random walk, times ten, and 1e-16 per unit
// per √cells of the running sums). Survival keeps relative precision down to the tail
// floor, below which its rounding or the cut mass would exceed 1e-7 of it
// (about 1e-17 for light tails) or, where a bounded support ends, either
// relative estimate would exceed 1e-4: its stated relative error is twice
// the largest relative difference of the first estimate and four times that
// of the second above the floor, plus 1e-7. Measured: CDF error about 1e-13
// for sums of exponential and gamma laws with or without atoms (stated 6e-12
// to 4e-11), 1.5e-10 at the kink of two uniforms (stated 3e-10), 8e-5 for
// densities singular like x^(-1/2) (stated 2e-4). Mean and Variance are
// the terms' (exact); Rand draws each term from its own sampler.

const (
	latticeCells     = 1 << 16 // cells of the sum's lattice at the fine step
	latticeCut       = 1e-24   // mass cut from the ends, over all terms
	maxLatticeCombos = 64      // atomic/continuous combinations of the mixed terms
	maxLatticeShifts = 4096    // atoms over all combinations
	latInterp        = 6       // points of the interpolant between grid points
)

// latTerm is one continuous law to be rounded to the lattice, count times.
type latTerm struct {
	law     Law
	count   int
	lo, hi  float64 // the range rounded, [Q(ε), Q(1-ε)] (lo the support's end when aligned)
	aligned bool    // lo is the finite lower end of the support, a cell edge at every step
}

// newLatTerms sizes the lattice terms; span is the range of their sum.
func newLatTerms(fn string, laws []Law, counts []int, cut float64) ([]latTerm, float64, error) {
	n := 0
	for _, c := range counts {
		n += c
	}
	eps := cut / float64(n)
	out := make([]latTerm, len(laws))
	var span float64
	for i, l := range laws {
		lo, hi := l.Quantile(eps), l.UpperQuantile(eps)
		if !finite(lo) || !finite(hi) || !(hi > lo) {
			return nil, 0, fmt.Errorf("dist.%s: lattice fallback: term %v has range [%v, %v] at the %v quantiles: %w", fn, l, lo, hi, eps, ErrParam)
		}
		t := latTerm{law: l, count: counts[i], lo: lo, hi: hi}
		// a density that starts (or jumps) at a finite lower end starts at a
		// cell edge at every step; a law whose mass starts far above its
		// support's end (a gamma of large shape) is smooth where it is cut
		if a, _ := l.Support(); finite(a) && lo-a <= 1e-6*(hi-a) {
			t.lo, t.aligned = a, true
		}
		out[i] = t
		span += float64(counts[i]) * (hi - t.lo)
	}
	return out, span, nil
}

// latLevel is the lattice law of a sum at one step: masses q[m] at the
// points org + m·step.
type latLevel struct {
	step   float64
	org    float64
	q      []float64
	fc, sc []float64 // mass up to and including m, mass above m
	fErr   float64   // rounding bound of fc (largest)
	sErr   []float64 // rounding bound of sc[m]
	cut    float64   // mass the end cells took from beyond the ranges
	n      int       // FFT size
}

// at returns the lattice CDF and survival at org + (w/2)·step, half-way up
// the jump at a lattice point (w even) or at a cell edge (w odd), and the
// rounding bound of the survival.
func (l *latLevel) at(w int) (f, s, se float64) {
	if w%2 == 0 {
		K := w / 2
		switch {
		case K < 0:
			return 0, 1, 0
		case K >= len(l.q):
			return 1, 0, 0
		case K == 0:
			return l.q[0] / 2, l.sc[0] + l.q[0]/2, l.sErr[0]
		}
		return l.fc[K-1] + l.q[K]/2, l.sc[K] + l.q[K]/2, l.sErr[K-1]
	}
	K := (w - 1) / 2
	switch {
	case K < 0:
		return 0, 1, 0
	case K >= len(l.q):
		return 1, 0, 0
	}
	return l.fc[K], l.sc[K], l.sErr[K]
}

// latticeLevel rounds each term to the lattice of the given step and
// convolves: an aligned term has cells [lo + j·step, lo + (j+1)·step] with
// points at their centres, any other term points lo + j·step with cells
// centred on them. The sum's points are org + m·step, org = Σ count·lo +
// (aligned count)·step/2.
//
// The FFT computes each mass to about 1e-16 of the largest, which would
// cap the survival's relative precision near 1e-8; the upper tail is
// therefore computed again from tilted lattice laws q_m·exp(θ·m·step)
// (exponential damping, Embrechts & Frei 2009; the tilt of a convolution is
// the convolution of the tilts), θ the decay rate of the survival between
// 1e-5 and 1e-9 and then, from the tilted result, between 1e-9 and 1e-13.
// The rounding of each pass is measured on the FFT's zero padding (its
// largest residue), scaled back by exp(-θ·m·step); each mass comes from
// the pass with the smallest bound. A term whose CDF or Survival answers
// outside [0, 1] (NaN or ±Inf from a FromDistuv law, say) is an error
// wrapping ErrParam, not a silent NaN law (issue 13).
//
// sc holds the transform and its two buffers, reused from level to level
// (finest, and largest, first) so that the coarser levels allocate nothing
// for them.
func latticeLevel(fn string, terms []latTerm, step float64, sc *latScratch) (*latLevel, error) {
	lens := make([]int, len(terms))
	total := 1
	out := &latLevel{step: step}
	for i, t := range terms {
		c := (t.hi - t.lo) / step
		if !(c < 1e7) {
			return nil, fmt.Errorf("dist.%s: lattice fallback: %v cells for one term: %w", fn, c, ErrParam)
		}
		if t.aligned {
			lens[i] = max(1, int(math.Ceil(c)))
			out.org += float64(t.count) * (t.lo + step/2)
		} else {
			lens[i] = int(math.Floor(c+0.5)) + 1
			out.org += float64(t.count) * t.lo
		}
		total += t.count * (lens[i] - 1)
	}
	N := fftSize(total + 64) // the padding measures the rounding
	if N > latticeMaxN {
		return nil, fmt.Errorf("dist.%s: lattice fallback: %d lattice points: %w", fn, total, ErrParam)
	}
	masses := make([][]float64, len(terms))
	for i, t := range terms {
		med := t.law.Quantile(0.5)
		edge := t.lo + step/2 // upper edge of cell 0
		if t.aligned {
			edge = t.lo + step
		} else {
			out.cut += float64(t.count) * t.law.CDF(t.lo-step/2)
		}
		// mass of each cell from F below the median and S above it
		ms := make([]float64, lens[i])
		var pf, ps float64 = 0, 1
		for j := range ms {
			if j == len(ms)-1 {
				ms[j] = ps
				out.cut += float64(t.count) * t.law.Survival(edge+float64(j)*step)
				continue
			}
			x := edge + float64(j)*step
			if x <= med {
				f := t.law.CDF(x)
				if !isProb(f) {
					return nil, outsideAnswer(fn, t.law, "CDF", x, f)
				}
				ms[j] = f - pf
				pf, ps = f, 1-f
			} else {
				s := t.law.Survival(x)
				if !isProb(s) {
					return nil, outsideAnswer(fn, t.law, "Survival", x, s)
				}
				ms[j] = ps - s
				pf, ps = 1-s, s
			}
		}
		masses[i] = ms
	}
	fft, prod, buf := sc.get(N)
	// pass writes into r the masses of the sum tilted by exp(θ·m·step) and
	// returns the largest residue in the padding
	pass := func(th float64, r []float64) float64 {
		for i, t := range terms {
			for j := range buf {
				buf[j] = 0
			}
			for j, m := range masses[i] {
				buf[j] = complex(m*math.Exp(th*float64(j)*step), 0)
			}
			fft.Coefficients(buf, buf)
			if t.count > 1 {
				ck := complex(float64(t.count), 0)
				for j, z := range buf {
					buf[j] = cmplx.Exp(ck * cmplx.Log(z))
				}
			}
			if i == 0 {
				copy(prod, buf)
			} else {
				for j := range prod {
					prod[j] *= buf[j]
				}
			}
		}
		fft.Sequence(prod, prod)
		for m := range r {
			r[m] = real(prod[m]) / float64(N)
		}
		var noise float64
		for m := total; m < N; m++ {
			noise = max(noise, cmplx.Abs(prod[m])/float64(N))
		}
		return noise
	}
	q := make([]float64, total)
	noise := pass(0, q)
	// Each mass's error bound lives in out.sErr until the survival's
	// errors replace it (from the top down, each read before it is
	// overwritten).
	out.sErr = make([]float64, total)
	errs := out.sErr
	var tilted []float64 // the tilted passes' masses, one buffer for both
	for m := range errs {
		errs[m] = 10*noise + 1e-300
	}
	span := float64(total) * step
	// decay rate of the survival between levels a > b of the current masses
	rate := func(a, b float64) float64 {
		var acc float64
		ma, mb := -1, -1
		for m := total - 1; m >= 0; m-- {
			acc += q[m]
			if mb < 0 && acc >= b && acc >= 1e6*errs[m] {
				mb = m
			}
			if acc >= a {
				ma = m
				break
			}
		}
		if ma < 0 || mb <= ma {
			return 0
		}
		var sa, sb float64
		for m := ma; m < total; m++ {
			sa += q[m]
			if m >= mb {
				sb += q[m]
			}
		}
		return math.Log(sa/sb) / (float64(mb-ma) * step)
	}
	prev := 0.0
	for _, lv := range [][2]float64{{1e-5, 1e-9}, {1e-9, 1e-13}} {
		th := min(rate(lv[0], lv[1]), 650/span)
		if !(th > 1.2*prev) {
			continue
		}
		prev = th
		if tilted == nil {
			tilted = make([]float64, total)
		}
		r := tilted
		nz := pass(th, r)
		for m := range q {
			back := math.Exp(-th * float64(m) * step)
			if e := 10 * nz * back; e < errs[m] {
				q[m], errs[m] = r[m]*back, e
			}
		}
	}
	out.n = N
	// The passes' scratch becomes the CDF's table.
	fc := tilted
	if fc == nil {
		fc = make([]float64, total)
	}
	out.q, out.fc, out.sc = q, fc, make([]float64, total)
	var acc, e2 float64
	for m := range q {
		acc += q[m]
		e2 += errs[m] * errs[m]
		out.fc[m] = max(0, acc)
	}
	// the sums' rounding: a random walk of the masses' bounds (times ten)
	// and 1e-16 per unit per √(cells) of the running sum
	out.fErr = 10*math.Sqrt(e2) + 1e-16*math.Sqrt(float64(total))
	acc, e2 = 0, 0
	for m := total - 1; m >= 0; m-- {
		em := errs[m] // errs is out.sErr: read before it is overwritten
		out.sc[m] = max(0, acc)
		out.sErr[m] = 10*math.Sqrt(e2) + 1e-16*acc*math.Sqrt(float64(total-m))
		acc += q[m]
		e2 += em * em
	}
	return out, nil
}

// latScratch is the complex transform of latticeLevel and its buffers,
// kept for the next (smaller) level of one lattice sum; never shared
// between goroutines.
type latScratch struct {
	fft       *fourier.CmplxFFT
	prod, buf []complex128
}

// get returns the transform of size n and two buffers of length n (their
// contents left over from the last use), allocating only what has not the
// capacity.
func (sc *latScratch) get(n int) (*fourier.CmplxFFT, []complex128, []complex128) {
	if sc.fft == nil {
		sc.fft = fourier.NewCmplxFFT(n)
	} else if sc.fft.Len() != n {
		sc.fft.Reset(n)
	}
	if cap(sc.prod) < n {
		sc.prod, sc.buf = make([]complex128, n), make([]complex128, n)
	}
	return sc.fft, sc.prod[:n], sc.buf[:n]
}

// latGrid is the extrapolated CDF and survival of a lattice sum on the
// points x0 + j·h (h = 2δ), with their error estimates.
type latGrid struct {
	x0, h      float64
	f, s       []float64
	jmin, jmax int // stencils stay in [jmin, jmax] (the support)
	cdfErr     float64
	survRel    float64
	floor      float64
	n          int // fine FFT size
	delta      float64
}

// newLatGrid computes the lattice sum of terms at steps δ, 2δ, 4δ and
// extrapolates; supLo, supHi is the support of the sum. With A = Σ count·lo
// and n_a the aligned count, level ℓ has its points at A + (n_a/2 + m)·2^ℓ·δ;
// the grid is x = A + P·δ for even P, where every level has a lattice point
// (n_a even) or a cell edge (n_a odd): the same kind of value at every step.
func newLatGrid(fn string, terms []latTerm, delta, supLo, supHi float64) (*latGrid, error) {
	var lv [3]*latLevel
	var A float64
	na := 0
	for _, t := range terms {
		A += float64(t.count) * t.lo
		if t.aligned {
			na += t.count
		}
	}
	var sc latScratch
	for i := range lv {
		var err error
		if lv[i], err = latticeLevel(fn, terms, delta*float64(int(1)<<i), &sc); err != nil {
			return nil, err
		}
	}
	fine, coarse, quad := lv[0], lv[1], lv[2]
	// level ℓ at x = A + P·δ: w = P·2^(1-ℓ) - n_a (twice the lattice position)
	p0 := (na - 16) / 2
	p0 -= ((p0 % 4) + 4) % 4
	p1 := (2*len(fine.q) + na + 16) / 2
	n := (p1-p0)/2 + 1
	g := &latGrid{x0: A + float64(p0)*delta, h: 2 * delta, f: make([]float64, n), s: make([]float64, n),
		n: fine.n, delta: delta}
	var rnd, cut float64
	for _, l := range lv {
		rnd = max(rnd, l.fErr)
		cut = max(cut, l.cut)
	}
	rnd *= 2 // the extrapolation's weights, 4/3 + 1/3
	srnd := make([]float64, n)
	var rich float64
	// relative estimates of the survival, with the values they belong to
	type relPt struct{ s, e float64 }
	rel := make([]relPt, 0, n/4+1+3*n) // at most one a fourth point, three a midpoint
	for j := range g.f {
		P := p0 + 2*j
		ff, fs, fe := fine.at(2*P - na)
		cf, cs, ce := coarse.at(P - na)
		g.f[j] = (4*ff - cf) / 3
		g.s[j] = (4*fs - cs) / 3
		srnd[j] = (4*fe + ce) / 3
	}
	// the tail floor: below it the survival's rounding or the cut mass
	// would exceed 1e-7 of its value
	g.floor = 1e7 * 2 * cut
	for j := n - 1; j >= 0; j-- {
		if 1e7*srnd[j] > g.s[j] {
			g.floor = max(g.floor, g.s[j])
		}
	}
	g.floor = max(g.floor, 1e-300)
	for j := range g.f {
		P := p0 + 2*j
		if P%4 == 0 {
			cf, cs, _ := coarse.at(P - na)
			qf, qs, _ := quad.at(P/2 - na)
			f2, s2 := (4*cf-qf)/3, (4*cs-qs)/3
			rich = max(rich, math.Abs(g.f[j]-f2))
			rich = max(rich, math.Abs(g.s[j]-s2))
			if g.s[j] > g.floor {
				rel = append(rel, relPt{g.s[j], 2 * math.Abs(s2/g.s[j]-1)})
			}
		}
	}
	g.jmin, g.jmax = 0, n-1
	for g.jmin < n-1 && g.x0+float64(g.jmin)*g.h < supLo-1e-9*g.h {
		g.jmin++
	}
	for g.jmax > 0 && g.x0+float64(g.jmax)*g.h > supHi+1e-9*g.h {
		g.jmax--
	}
	if g.jmax-g.jmin < latInterp+2 {
		return nil, fmt.Errorf("dist.%s: lattice fallback: %d grid points inside the support: %w", fn, g.jmax-g.jmin+1, ErrParam)
	}
	// interpolation: at each midpoint the centred quintic against the
	// septic and against the quintics shifted one point either way (one of
	// which stays on one side of a kink at a grid point)
	var ip float64
	for j := g.jmin; j < g.jmax; j++ {
		p := float64(j) + 0.5
		for _, v := range [][]float64{g.f, g.s} {
			c := g.interp(v, p, latInterp)
			for _, o := range []float64{g.interp(v, p, latInterp+2), g.interpAt(v, p, j-latInterp/2), g.interpAt(v, p, j-latInterp/2+2)} {
				ip = max(ip, math.Abs(c-o))
				if &v[0] == &g.s[0] && o > g.floor {
					rel = append(rel, relPt{o, 4 * math.Abs(c/o-1)})
				}
			}
		}
	}
	g.cdfErr = 2*rich + 4*ip + 2*cut + rnd
	// where a bounded support ends, the survival falls to 0 and its
	// relative error grows: the floor rises above the tail values (below
	// 1e-3) whose estimate exceeds 1e-4
	for _, r := range rel {
		if r.e > 1e-4 && r.s < 1e-3 {
			g.floor = max(g.floor, r.s)
		}
	}
	var worst float64
	for _, r := range rel {
		if r.s > g.floor {
			worst = max(worst, r.e)
		}
	}
	g.survRel = worst + 1e-7
	return g, nil
}

// interp evaluates the m-point Lagrange interpolant of v (equispaced, unit
// spacing) at the grid position p, its stencil centred and kept inside
// [jmin, jmax].
func (g *latGrid) interp(v []float64, p float64, m int) float64 {
	st := int(math.Floor(p)) - (m/2 - 1)
	return g.lagrange(v, p, max(g.jmin, min(st, g.jmax-(m-1))), m)
}

// interpAt is the latInterp-point interpolant on the points from st on
// (kept inside [jmin, jmax]).
func (g *latGrid) interpAt(v []float64, p float64, st int) float64 {
	return g.lagrange(v, p, max(g.jmin, min(st, g.jmax-(latInterp-1))), latInterp)
}

// lagrange evaluates the m-point Lagrange interpolant through v[st..st+m-1]
// at the grid position p.
func (g *latGrid) lagrange(v []float64, p float64, st, m int) float64 {
	u := p - float64(st)
	var sum float64
	for i := 0; i < m; i++ {
		w := 1.0
		for k := 0; k < m; k++ {
			if k != i {
				w *= (u - float64(k)) / float64(i-k)
			}
		}
		sum += w * v[st+i]
	}
	return sum
}

// value returns the interpolated CDF of the lattice sum at x, or its
// survival when upper.
func (g *latGrid) value(x float64, upper bool) float64 {
	p := (x - g.x0) / g.h
	v := g.f
	if upper {
		v = g.s
	}
	switch {
	case p < float64(g.jmin):
		return b2f(upper)
	case p > float64(g.jmax):
		return b2f(!upper)
	}
	return min(1, max(0, g.interp(v, p, latInterp)))
}

// b2f returns 1 for true, 0 for false.
func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// latComp is one combination of a lattice sum: the atoms vals (with
// probabilities probs summing to one) shifting either the lattice law grid,
// the one continuous law cont, or nothing (a purely atomic combination).
type latComp struct {
	w           float64
	vals, probs []float64
	grid        *latGrid
	cont        Law
}

// value returns the combination's CDF at x, or its survival when upper.
func (c latComp) value(x float64, upper bool) float64 {
	var s float64
	for i, v := range c.vals {
		switch {
		case c.grid != nil:
			s += c.probs[i] * c.grid.value(x-v, upper)
		case c.cont != nil && upper:
			s += c.probs[i] * c.cont.Survival(x-v)
		case c.cont != nil:
			s += c.probs[i] * c.cont.CDF(x-v)
		case (x < v) == upper:
			s += c.probs[i]
		}
	}
	return s
}

// latticeLaw is a sum computed by latticeSum (or a k-fold sum by
// latticePower).
type latticeLaw struct {
	comps          []latComp
	atoms          []Atom // of the purely atomic combinations, absolute masses
	mean, variance float64
	supLo, supHi   float64
	terms          []Law
	k              int // SumIID: terms[0] k times
	self           *latticeLaw
	acc            Accuracy
}

// splitAtoms writes l as its atoms (absolute masses) and a continuous part
// (nil when l is purely atomic): a mixture by its components, another law
// with atoms by subtracting them (atomFree).
func splitAtoms(l Law) ([]Atom, Law, error) {
	switch b := l.(type) {
	case Discrete:
		return b.Atoms(), nil, nil
	case latticeDiscrete:
		return b.Atoms(), nil, nil
	}
	if !hasAtoms(l) {
		return nil, l, nil
	}
	if ws, cs, ok := mixtureParts(l); ok {
		var atoms []Atom
		var cw []float64
		var cl []Law
		for i, c := range cs {
			a, cc, err := splitAtoms(c)
			if err != nil {
				return nil, nil, err
			}
			am := 0.0
			for _, x := range a {
				atoms = append(atoms, Atom{Value: x.Value, Mass: x.Mass * ws[i]})
				am += x.Mass
			}
			if cc != nil && 1-am > 0 {
				cw, cl = append(cw, ws[i]*(1-am)), append(cl, cc)
			}
		}
		if len(cl) == 0 {
			return mergeAtoms(atoms), nil, nil
		}
		floats.Scale(1/floats.Sum(cw), cw)
		c, err := Mixture(cw, cl)
		if err != nil {
			return nil, nil, err
		}
		return mergeAtoms(atoms), c, nil
	}
	atoms := l.(Atomic).Atoms()
	am := 0.0
	for _, a := range atoms {
		am += a.Mass
	}
	if am >= 1-1e-15 {
		return atoms, nil, nil
	}
	return atoms, newAtomFree(l, atoms, 1-am), nil
}

// latticeSum is the fallback of Sum for terms without a known transform.
func latticeSum(laws []Law) (Law, error) {
	if err := termMoments("Sum", laws); err != nil {
		return nil, err
	}
	var terms []Law
	for _, t := range laws {
		if b, ok := t.(*latticeLaw); ok && b.k == 0 {
			terms = append(terms, b.terms...)
			continue
		}
		terms = append(terms, t)
	}
	disc := []Atom{{Value: 0, Mass: 1}}
	var cont []Law
	type mixed struct {
		atoms []Atom // normalised
		a     float64
		c     Law
	}
	var mix []mixed
	for _, t := range terms {
		atoms, c, err := splitAtoms(t)
		if err != nil {
			return nil, err
		}
		am := 0.0
		for _, a := range atoms {
			am += a.Mass
		}
		switch {
		case c == nil:
			if disc, err = convolveAtoms("Sum", disc, atoms); err != nil {
				return nil, err
			}
		case len(atoms) == 0:
			cont = append(cont, c)
		default:
			norm := make([]Atom, len(atoms))
			for i, a := range atoms {
				norm[i] = Atom{Value: a.Value, Mass: a.Mass / am}
			}
			mix = append(mix, mixed{atoms: norm, a: am, c: c})
		}
	}
	if len(mix) > 0 && 1<<len(mix) > maxLatticeCombos {
		return nil, fmt.Errorf("dist.Sum: lattice fallback: %d terms with atoms and a continuous part (%d combinations, at most %d): %w", len(mix), 1<<len(mix), maxLatticeCombos, ErrParam)
	}
	// the lattice step, from the sum of every continuous part
	all := append([]Law(nil), cont...)
	for _, m := range mix {
		all = append(all, m.c)
	}
	var delta float64
	if len(all) >= 2 {
		ones := make([]int, len(all))
		for i := range ones {
			ones[i] = 1
		}
		_, span, err := newLatTerms("Sum", all, ones, latticeCut)
		if err != nil {
			return nil, err
		}
		delta = span / latticeCells
	}
	var comps []latComp
	shifts := 0
	var grids int
	for sub := 0; sub < 1<<len(mix); sub++ {
		w := 1.0
		atoms := disc
		cs := append([]Law(nil), cont...)
		for i, m := range mix {
			if sub&(1<<i) != 0 {
				w *= m.a
				var err error
				if atoms, err = convolveAtoms("Sum", atoms, m.atoms); err != nil {
					return nil, err
				}
			} else {
				w *= 1 - m.a
				cs = append(cs, m.c)
			}
		}
		if !(w > 0) {
			continue
		}
		if shifts += len(atoms); shifts > maxLatticeShifts {
			return nil, fmt.Errorf("dist.Sum: lattice fallback: more than %d atoms shift the lattice sums: %w", maxLatticeShifts, ErrParam)
		}
		c := latComp{w: w, vals: make([]float64, len(atoms)), probs: make([]float64, len(atoms))}
		tot := 0.0
		for _, a := range atoms {
			tot += a.Mass
		}
		for i, a := range atoms {
			c.vals[i], c.probs[i] = a.Value, a.Mass/tot
		}
		switch len(cs) {
		case 0:
		case 1:
			c.cont = cs[0]
		default:
			ones := make([]int, len(cs))
			lo, hi := 0.0, 0.0
			for i, l := range cs {
				ones[i] = 1
				a, b := l.Support()
				lo, hi = lo+a, hi+b
			}
			lts, _, err := newLatTerms("Sum", cs, ones, latticeCut)
			if err != nil {
				return nil, err
			}
			if c.grid, err = newLatGrid("Sum", lts, delta, nanTo(lo, math.Inf(-1)), nanTo(hi, math.Inf(1))); err != nil {
				return nil, err
			}
			grids++
		}
		comps = append(comps, c)
	}
	out := newLatticeLaw(comps, terms, 0)
	out.acc.Method = fmt.Sprintf("exact atoms shifting %d lattice sums (Richardson-extrapolated lattice FFT, step %.3g, error from a step-2δ repeat) over %d combinations", grids, delta, len(comps))
	return out, nil
}

// termMoments returns an error wrapping ErrMoment when a term lacks a
// finite mean or variance (a Cauchy or Pareto(1.5) law through FromDistuv):
// the lattice of a sum is sized from the terms' far quantiles, which such a
// term puts so far out that no lattice of latticeCells cells resolves the
// sum, and the result's Mean and Variance would be NaN or infinite.
func termMoments(fn string, terms []Law) error {
	for i, t := range terms {
		m, v := t.Mean(), t.Variance()
		if !finite(m) || !finite(v) || v < 0 {
			return fmt.Errorf("dist.%s: term %d (%v) has mean %v and variance %v, a sum inverted numerically needs both finite: %w", fn, i, t, m, v, ErrMoment)
		}
	}
	return nil
}

// noTransform reports whether l has no known transform (a lattice sum, say):
// a mixture holding it could not offer a characteristic function, so the
// mixture expansion of Sum leaves such sums to latticeSum, which keeps the
// atoms of mixed terms exact itself.
func noTransform(l Law) bool {
	_, ok := transformOf(l)
	return !ok
}

// nanTo returns x, or d when x is NaN.
func nanTo(x, d float64) float64 {
	if math.IsNaN(x) {
		return d
	}
	return x
}

// newLatticeLaw assembles the law and its accuracy from its combinations;
// k > 0 marks the k-fold sum of terms[0].
func newLatticeLaw(comps []latComp, terms []Law, k int) *latticeLaw {
	l := &latticeLaw{comps: comps, terms: terms, k: k}
	l.self = l
	for _, t := range terms {
		l.mean += t.Mean()
		l.variance += t.Variance()
		a, b := t.Support()
		l.supLo += a
		l.supHi += b
	}
	if k > 0 {
		fk := float64(k)
		l.mean, l.variance, l.supLo, l.supHi = fk*l.mean, fk*l.variance, fk*l.supLo, fk*l.supHi
	}
	l.supLo, l.supHi = nanTo(l.supLo, math.Inf(-1)), nanTo(l.supHi, math.Inf(1))
	cdfAbs, rel, floor := 1e-15, 1e-15, 0.0
	for _, c := range comps {
		switch {
		case c.grid != nil:
			cdfAbs += c.w * c.grid.cdfErr
			rel = max(rel, c.grid.survRel)
			floor = max(floor, c.grid.floor)
		case c.cont == nil:
			for i, v := range c.vals {
				l.atoms = append(l.atoms, Atom{Value: v, Mass: c.w * c.probs[i]})
			}
		}
	}
	// below its floor a combination's survival has absolute error at
	// most rel·floor (its errors shrink into the tail)
	var tailAbs float64
	for _, c := range comps {
		if c.grid != nil {
			tailAbs += c.w * c.grid.survRel * c.grid.floor
		}
	}
	if floor > 0 {
		rel += tailAbs / floor
	}
	l.atoms = mergeAtoms(l.atoms)
	l.acc = Accuracy{CDFAbs: cdfAbs, SurvivalRel: rel, TailFloor: floor}
	return l
}

// CDF returns P(X <= x). NaN for NaN.
func (l *latticeLaw) CDF(x float64) float64 {
	if v, ok := edgeCDF(x, l.supLo, l.supHi); ok {
		return v
	}
	return l.value(x, false)
}

// Survival returns P(X > x), each combination's from its own upper tail.
// NaN for NaN.
func (l *latticeLaw) Survival(x float64) float64 {
	if v, ok := edgeSurvival(x, l.supLo, l.supHi); ok {
		return v
	}
	return l.value(x, true)
}

// value sums the combinations' CDFs (or survivals when upper).
func (l *latticeLaw) value(x float64, upper bool) float64 {
	var s float64
	for _, c := range l.comps {
		s += c.w * c.value(x, upper)
	}
	return min(1, max(0, s))
}

// Quantile inverts CDF (or Survival above the median) by bisection.
func (l *latticeLaw) Quantile(p float64) float64 { return quantileByInversion(l, p) }

// UpperQuantile inverts Survival by bisection.
func (l *latticeLaw) UpperQuantile(q float64) float64 { return upperQuantileByInversion(l, q) }

// Mean returns the exact mean (the sum of the terms' means).
func (l *latticeLaw) Mean() float64 { return l.mean }

// Variance returns the exact variance (the sum of the terms' variances).
func (l *latticeLaw) Variance() float64 { return l.variance }

// Support returns the support implied by the terms' supports.
func (l *latticeLaw) Support() (lo, hi float64) { return l.supLo, l.supHi }

// Atoms lists the exact atoms (those of the combinations in which every
// term contributes an atom); none when a continuous term is present.
func (l *latticeLaw) Atoms() []Atom { return append([]Atom(nil), l.atoms...) }

// Rand draws each term from its own sampler and adds (a k-fold sum with
// k > maxStructuralDraws inverts its own CDF instead).
func (l *latticeLaw) Rand(r *rand.Rand) float64 {
	if l.k > maxStructuralDraws {
		return l.self.Quantile(r.Float64())
	}
	x := 0.0
	n := max(l.k, 1)
	for i := 0; i < n; i++ {
		for _, t := range l.terms {
			x += t.Rand(r)
		}
	}
	return x
}

// Accuracy reports the error estimate of CDF and Survival.
func (l *latticeLaw) Accuracy() Accuracy { return l.acc }

// String prints the law compactly.
func (l *latticeLaw) String() string {
	if l.k > 0 {
		return fmt.Sprintf("SumIID(lattice, k=%d: %s)", l.k, summary(l))
	}
	return fmt.Sprintf("Sum(lattice: %s)", summary(l))
}

// atomFree is the continuous part of a law with atoms, F_c = (F - A)/w and
// S_c = (S - Σ_{v > x} m_v)/w, w the continuous mass.
type atomFree struct {
	l      Law
	vals   []float64
	below  []float64 // atom mass at or below vals[i]
	above  []float64 // atom mass above vals[i]
	total  float64
	w      float64
	mu, v2 float64
}

func newAtomFree(l Law, atoms []Atom, w float64) atomFree {
	a := atomFree{l: l, w: w}
	var s, m1, m2 float64
	for _, x := range atoms {
		s += x.Mass
		a.vals = append(a.vals, x.Value)
		a.below = append(a.below, s)
		m1 += x.Mass * x.Value
		m2 += x.Mass * x.Value * x.Value
	}
	a.total = s
	for i := range a.vals {
		a.above = append(a.above, s-a.below[i])
	}
	mu := l.Mean()
	a.mu = (mu - m1) / w
	a.v2 = (l.Variance()+mu*mu-m2)/w - a.mu*a.mu
	return a
}

// atomsAt returns the atom mass at or below x and above x.
func (a atomFree) atomsAt(x float64) (below, above float64) {
	i := sort.SearchFloat64s(a.vals, x) // first value >= x
	if i < len(a.vals) && a.vals[i] == x {
		i++
	}
	if i == 0 {
		return 0, a.total
	}
	return a.below[i-1], a.above[i-1]
}

func (a atomFree) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	b, _ := a.atomsAt(x)
	return min(1, max(0, (a.l.CDF(x)-b)/a.w))
}

func (a atomFree) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	_, up := a.atomsAt(x)
	return min(1, max(0, (a.l.Survival(x)-up)/a.w))
}

func (a atomFree) Quantile(p float64) float64      { return quantileByInversion(a, p) }
func (a atomFree) UpperQuantile(q float64) float64 { return upperQuantileByInversion(a, q) }
func (a atomFree) Mean() float64                   { return a.mu }
func (a atomFree) Variance() float64               { return max(0, a.v2) }
func (a atomFree) Support() (lo, hi float64)       { return a.l.Support() }

// Rand draws from l until the draw is not one of its atoms (1/w draws on
// average; after 10^4 atoms in a row it inverts its own CDF).
func (a atomFree) Rand(r *rand.Rand) float64 {
	for i := 0; i < 10000; i++ {
		x := a.l.Rand(r)
		j := sort.SearchFloat64s(a.vals, x)
		if j == len(a.vals) || a.vals[j] != x {
			return x
		}
	}
	return a.Quantile(r.Float64())
}

func (a atomFree) String() string { return fmt.Sprintf("continuous part of %v", a.l) }

// maxLatticePowerMixed is the largest k for which latticePower expands a
// law with atoms and a continuous part binomially.
const maxLatticePowerMixed = 32

// latticePower is the k-fold sum of a law without a known transform on the
// lattice (SumIID for small k). A law with atoms (mass a, normalised atomic
// part D) and a continuous part C is expanded binomially, for k up to
// maxLatticePowerMixed:
//
//	Σ_j C(k, j)·a^j·(1-a)^(k-j)·law(D^{*j} + C^{*(k-j)}),
//
// D^{*j} exact, C^{*m} a lattice power (C itself for m = 1).
func latticePower(l Law, k int) (Law, error) {
	atoms, c, err := splitAtoms(l)
	if err != nil {
		return nil, err
	}
	if c == nil {
		at, err := atomPower("SumIID", atoms, k)
		if err != nil {
			return nil, err
		}
		return discreteFromAtoms(at), nil
	}
	if len(atoms) == 0 {
		g, err := latticePowerGrid(c, k)
		if err != nil {
			return nil, err
		}
		out := newLatticeLaw([]latComp{{w: 1, vals: []float64{0}, probs: []float64{1}, grid: g}}, []Law{l}, k)
		out.acc.Method = fmt.Sprintf("%d-fold lattice FFT power (Richardson-extrapolated, step %.3g, %d-point FFT)", k, g.delta, g.n)
		return out, nil
	}
	if k > maxLatticePowerMixed {
		return nil, fmt.Errorf("dist.SumIID: %v has atoms and no known characteristic function; its %d-fold sum keeps too much mass near the atoms' sums for the quadrature transform and is expanded on the lattice only for k <= %d: %w", l, k, maxLatticePowerMixed, ErrParam)
	}
	a := 0.0
	for _, x := range atoms {
		a += x.Mass
	}
	d := make([]Atom, len(atoms))
	for i, x := range atoms {
		d[i] = Atom{Value: x.Value, Mass: x.Mass / a}
	}
	var comps []latComp
	shifts := 0
	lk, _ := math.Lgamma(float64(k + 1))
	for j := 0; j <= k; j++ {
		m := k - j
		lj, _ := math.Lgamma(float64(j + 1))
		lm, _ := math.Lgamma(float64(m + 1))
		w := math.Exp(lk - lj - lm + float64(j)*math.Log(a) + float64(m)*math.Log1p(-a))
		if !(w > 0) {
			continue
		}
		dj := []Atom{{Value: 0, Mass: 1}}
		if j > 0 {
			if dj, err = atomPower("SumIID", d, j); err != nil {
				return nil, err
			}
		}
		if shifts += len(dj); shifts > maxLatticeShifts {
			return nil, fmt.Errorf("dist.SumIID: lattice fallback: more than %d atoms shift the lattice sums: %w", maxLatticeShifts, ErrParam)
		}
		cp := latComp{w: w}
		tot := 0.0
		for _, x := range dj {
			tot += x.Mass
		}
		for _, x := range dj {
			cp.vals, cp.probs = append(cp.vals, x.Value), append(cp.probs, x.Mass/tot)
		}
		switch m {
		case 0:
		case 1:
			cp.cont = c
		default:
			if cp.grid, err = latticePowerGrid(c, m); err != nil {
				return nil, err
			}
		}
		comps = append(comps, cp)
	}
	out := newLatticeLaw(comps, []Law{l}, k)
	// the binomial weights' rounding (log-gamma), relative
	out.acc.CDFAbs += 4 * 0x1p-52 * (lk + float64(k)*math.Abs(math.Log(a*(1-a))) + 1)
	out.acc.Method = fmt.Sprintf("binomial mixture over the atoms of %d-fold lattice FFT powers of the continuous part (Richardson-extrapolated)", k)
	return out, nil
}

// latticePowerGrid is the extrapolated lattice grid of the k-fold sum of
// the continuous law c.
func latticePowerGrid(c Law, k int) (*latGrid, error) {
	lts, span, err := newLatTerms("SumIID", []Law{c}, []int{k}, latticeCut)
	if err != nil {
		return nil, err
	}
	delta := span / latticeCells
	if sd := math.Sqrt(c.Variance()); !(delta <= sd/8) {
		return nil, fmt.Errorf("dist.SumIID: lattice fallback: step %.3g of the %d-fold sum is coarser than 1/8 of the term's standard deviation %.3g (and its transform by quadrature decays too slowly): %w", delta, k, sd, ErrParam)
	}
	lo, hi := c.Support()
	fk := float64(k)
	return newLatGrid("SumIID", lts, delta, nanTo(fk*lo, math.Inf(-1)), nanTo(fk*hi, math.Inf(1)))
}

// latticeIID is the fallback of SumIID for a law without a known
// transform: the quadrature transform (cf_quad.go) for k >= quadIIDMinK when
// the k-fold transform decays fast enough, else the lattice power.
func latticeIID(l Law, k int) (Law, error) {
	if k >= quadIIDMinK {
		if q, ok, err := quadIID(l, k); err != nil || ok {
			return q, err
		}
	}
	return latticePower(l, k)
}

// outsideAnswer reports a term whose CDF or Survival answered v, not a
// probability, at x (a law taken from outside, say): the error wraps
// ErrParam and names the law, the method and x.
func outsideAnswer(fn string, l Law, method string, x, v float64) error {
	return paramErr(fn, "term", fmt.Sprintf("%v", l), fmt.Sprintf("its %s(%v) = %v is not a probability in [0, 1]", method, x, v))
}
