package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// MaxSumAtoms is the largest number of atoms an exact discrete sum may
// have (after merging within AtomMergeTolerance); beyond it Sum, SumIID and
// RandomSum return an error wrapping ErrParam.
const MaxSumAtoms = 1 << 20

// Sum returns the law of X_1 + … + X_n for independent X_i with the given
// laws (in one unit). The result is exact where it can be and numerical,
// with a stated error, where it cannot:
//
//   - finite discrete laws add exactly: the result is a Discrete, by
//     SumDiscrete's dense lattice convolution where the atoms share a
//     lattice and fill enough of it to cost no more than atom pairs, else
//     atom pairs merged within AtomMergeTolerance (at most MaxSumAtoms
//     atoms);
//   - normals add to a normal, gammas (and exponentials) with one rate to a
//     gamma, two uniforms to their trapezoid; one or more exponentials
//     (distinct rates) plus one uniform, normal, truncated normal or gamma,
//     with or without finite discrete terms, have a closed form by
//     conditioning on everything but the exponentials (both tails to
//     rounding, relative down to the smallest float);
//   - a finite discrete law plus one continuous law is the exact mixture of
//     shifted copies, Σ p_i·P(C <= x - v_i) (a point mass gives a shift);
//   - terms that are mixtures (a point mass mixed with an exponential, say)
//     are expanded over their components when there are at most 256
//     combinations and at most 8 of them lack one of the closed forms
//     above: the result is the mixture of those sums, each closed form
//     exact and each other combination inverted on its own (so the jump
//     that one combination's density has, an exponential's at 0, no longer
//     costs the others their accuracy). It reports Accuracy: rounding, about
//     1e-14 in the CDF and 1e-12 relative in the survival, plus the
//     components' own bounds, weighted;
//   - anything else is inverted from the product of the characteristic
//     functions (Fourier-series method of Abate & Whitt 1992, tails by
//     exponential tilting; see invert.go). Such a law implements Estimated,
//     CharFunc and Atomic (its atoms are the exact convolution of the terms'
//     atoms when every term has atoms), and its error estimate is tested to
//     bound the true error: CDF absolute error about 1e-12 and survival
//     relative error about 1e-9 down to 1e-30 for light-tailed terms whose
//     sum has a smooth density. Where the continuous part's density jumps
//     (a mixture term the expansion above does not cover: more than 256
//     combinations of components, or more than 8 without a closed form) its
//     transform decays like 1/t, the
//     series is cut at 65536 terms and the CDF error grows to about 1e-5;
//     where it only has kinks (a gamma or exponentials with two uniforms,
//     say) the CDF error is 1e-15 to 2e-13 and the stated bound 1e-13 to
//     4e-12, the survival's relative error about 1e-9 with a stated bound
//     below 1e-6. Accuracy reports it. When some terms are exponentials
//     and all the others are bounded above, the upper tail beyond the
//     others' top is in closed form, Σ_j c_j·exp(-λ_j·x)·M_rest(λ_j)
//     (relative error about 1e-14, tested down to 1e-283).
//     Terms without a known transform (a FromDistuv law, say) are summed
//     on a lattice instead (see invert_lattice.go). Atoms stay exact: the
//     atoms of the discrete terms, and those of terms that mix atoms with a
//     continuous part, shift the lattice sum of the remaining continuous
//     parts (at most 64 such combinations and 4096 atoms over all of them,
//     else ErrParam). The continuous parts are rounded to a common lattice,
//     convolved by FFT at steps δ, 2δ and 4δ and Richardson-extrapolated,
//     the upper tail again from exponentially tilted lattices: CDF error
//     about 1e-13 for smooth densities, with or without atoms (stated bound
//     about 1e-11, from the extrapolation one step coarser and a check of
//     the interpolation), 1e-10 at a kink, survival relative error bound
//     2e-7 down to about 1e-17; larger where a density is singular (8e-5
//     for x^(-1/2) at 0, stated 2e-4).
//     A law evaluated more than 32 times answers from a grid of the
//     series (see invert_grid.go), its measured interpolation error added
//     to Accuracy.
//
// Mean and Variance of the result are the sums of the terms' means and
// variances. Rand draws each term from its own sampler and adds, so Monte
// Carlo over the result is an independent check of the inversion. A sum that
// contains a sum is flattened. Errors: no laws, a nil law, a term without
// finite variance when the sum must be inverted (wraps ErrMoment), or an
// exact discrete sum with more than MaxSumAtoms atoms.
func Sum(laws ...Law) (Law, error) {
	if len(laws) == 0 {
		return nil, paramErr("Sum", "laws", "[]", "must not be empty")
	}
	for i, l := range laws {
		if l == nil {
			return nil, paramErr("Sum", fmt.Sprintf("laws[%d]", i), nil, "must not be nil")
		}
	}
	terms := make([]Law, 0, len(laws)) // more when a term is itself a sum
	for _, l := range laws {
		terms = appendFlat(terms, l)
	}
	return sumTerms(terms)
}

// MustSum is Sum that panics on error; for examples and tests.
func MustSum(laws ...Law) Law {
	s, err := Sum(laws...)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return s
}

// appendFlat appends l, or the terms of l when it is itself a sum.
func appendFlat(terms []Law, l Law) []Law {
	switch b := l.(type) {
	case *numLaw:
		if b.kind == "Sum" && len(b.parts) > 0 {
			return append(terms, b.parts...)
		}
	case shiftMixture:
		return append(terms, b.d, b.c)
	case shiftMixtureDensity:
		return append(terms, b.d, b.c)
	case shiftMixtureEst:
		return append(terms, b.d, b.c)
	case shiftMixtureEstDensity:
		return append(terms, b.d, b.c)
	case hypoExp:
		for _, r := range b.rates {
			terms = append(terms, Exponential{rate: r})
		}
		return terms
	case uniformPair:
		return append(terms, b.u, b.v)
	case *expTailLaw:
		return appendFlat(terms, b.numLaw)
	case expSmoothedDensity:
		return append(terms, b.terms...)
	}
	return append(terms, l)
}

func sumTerms(terms []Law) (Law, error) {
	if len(terms) == 1 {
		return terms[0], nil
	}
	if m, ok, err := expandMixtures(terms); err != nil || ok {
		return m, err
	}
	var (
		disc      []Discrete
		normMu    float64
		normVar   float64
		nNormal   int
		gammaRate []float64
		gammaK    []float64
		gammaN    []int
		rest      []Law
	)
	addGamma := func(k, rate float64) {
		for i, r := range gammaRate {
			if r == rate {
				gammaK[i] += k
				gammaN[i]++
				return
			}
		}
		gammaRate, gammaK, gammaN = append(gammaRate, rate), append(gammaK, k), append(gammaN, 1)
	}
	nDisc := 0
	for _, t := range terms {
		if _, ok := t.(Discrete); ok {
			nDisc++
		}
	}
	// A few discrete terms (the usual case) fit in a buffer on the stack.
	var discBuf [4]Discrete
	if nDisc > len(discBuf) {
		disc = make([]Discrete, 0, nDisc)
	} else if nDisc > 0 {
		disc = discBuf[:0]
	}
	for _, t := range terms {
		switch b := t.(type) {
		case Discrete:
			disc = append(disc, b)
		case Normal:
			normMu += b.mu
			normVar += b.sigma * b.sigma
			nNormal++
		case Exponential:
			addGamma(1, b.rate)
		case Gamma:
			addGamma(b.shape, b.rate)
		default:
			rest = append(rest, t)
		}
	}
	var cont []Law
	if nNormal > 0 {
		n, err := NewNormal(normMu, math.Sqrt(normVar))
		if err != nil {
			return nil, err
		}
		cont = append(cont, n)
	}
	for i, r := range gammaRate {
		if gammaN[i] == 1 && gammaK[i] == 1 {
			cont = append(cont, Exponential{rate: r})
			continue
		}
		g, err := NewGamma(gammaK[i], r)
		if err != nil {
			return nil, err
		}
		cont = append(cont, g)
	}
	cont = append(cont, rest...)
	if len(cont) >= 2 && len(cont) == len(gammaRate) {
		// only exponentials with distinct rates: the hypoexponential closed form
		rates := make([]float64, 0, len(cont))
		for _, c := range cont {
			if e, ok := c.(Exponential); ok {
				rates = append(rates, e.rate)
			}
		}
		if len(rates) == len(cont) {
			if h, ok := newHypoExp(rates); ok {
				cont = []Law{h}
			}
		}
	}
	if len(cont) == 2 {
		// two uniforms: the trapezoid in closed form
		if a, ok := cont[0].(Uniform); ok {
			if b, ok := cont[1].(Uniform); ok {
				cont = []Law{newUniformPair(a, b)}
			}
		}
	}
	var d Discrete
	if len(disc) > 0 {
		var err error
		if d, err = sumDiscrete("Sum", disc); err != nil {
			return nil, err
		}
	}
	if len(cont) == 0 {
		return d, nil
	}
	if len(cont) >= 2 {
		// exponentials over one uniform, normal, truncated normal or gamma
		var dp *Discrete
		if len(disc) > 0 {
			dp = &d
		}
		if l, ok := newExpSmoothed(dp, cont, terms); ok {
			return l, nil
		}
	}
	if len(cont) == 1 && !hasAtoms(cont[0]) {
		switch {
		case len(disc) == 0:
			return cont[0], nil
		case d.Len() == 1:
			return Affine(cont[0], 1, d.values()[0])
		}
		return newShiftMixture(d, cont[0]), nil
	}
	parts := cont
	if len(disc) > 0 {
		parts = append([]Law{d}, cont...)
	}
	l, err := numericSum(terms, parts)
	if err != nil {
		return nil, err
	}
	return withExpTail(l, terms), nil
}

// hasAtoms reports whether l lists at least one atom.
func hasAtoms(l Law) bool {
	al, ok := l.(Atomic)
	return ok && len(al.Atoms()) > 0
}

// convolveAtoms returns the atoms of the sum of two independent atomic
// parts (masses multiply), merged.
func convolveAtoms(fn string, a, b []Atom) ([]Atom, error) {
	if len(a)*len(b) > 16*MaxSumAtoms {
		return nil, paramErr(fn, "laws", fmt.Sprintf("%d×%d atoms", len(a), len(b)), fmt.Sprintf("an exact discrete sum may have at most %d atoms", MaxSumAtoms))
	}
	out := make([]Atom, 0, len(a)*len(b))
	for _, x := range a {
		for _, y := range b {
			out = append(out, Atom{Value: x.Value + y.Value, Mass: x.Mass * y.Mass})
		}
	}
	out = mergeAtoms(out)
	if len(out) > MaxSumAtoms {
		return nil, paramErr(fn, "laws", fmt.Sprintf("%d atoms", len(out)), fmt.Sprintf("an exact discrete sum may have at most %d atoms", MaxSumAtoms))
	}
	return out, nil
}

// numericSum builds the inverted law of the sum of parts (grouped terms);
// terms are the original, flattened terms (for moments and sampling).
func numericSum(terms, parts []Law) (Law, error) {
	trs := make([]transform, len(parts))
	lo, hi := math.Inf(-1), math.Inf(1)
	var errSum float64
	for i, p := range parts {
		t, ok := transformOf(p)
		if !ok {
			return latticeSum(terms)
		}
		trs[i] = t
		lo, hi = max(lo, t.lo), min(hi, t.hi)
		errSum += t.err
	}
	var mean, variance, supLo, supHi float64
	for _, t := range terms {
		mean += t.Mean()
		variance += t.Variance()
		a, b := t.Support()
		supLo += a
		supHi += b
	}
	if math.IsNaN(supLo) {
		supLo = math.Inf(-1)
	}
	if math.IsNaN(supHi) {
		supHi = math.Inf(1)
	}
	// exact atomic part: present only when every part has atoms
	var atoms []Atom
	all := true
	for _, p := range parts {
		if !hasAtoms(p) {
			all = false
			break
		}
	}
	if all {
		atoms = []Atom{{Value: 0, Mass: 1}}
		for _, p := range parts {
			var err error
			if atoms, err = convolveAtoms("Sum", atoms, p.(Atomic).Atoms()); err != nil {
				return nil, err
			}
		}
	}
	c := mean
	cc := complex(c, 0)
	tr := transform{
		logm: func(s complex128) complex128 {
			v := -s * cc
			for _, t := range trs {
				v += t.logm(s)
			}
			return v
		},
		lo: lo, hi: hi, err: errSum,
	}
	// the series values block by block: discrete parts by rotation, with
	// their error bound (axis.go) times the modulus of the other factors
	var disc, other []axisAdder
	var vsum float64
	for i, p := range parts {
		if d, ok := p.(Discrete); ok {
			a, vmax := discreteAxis(d)
			disc = append(disc, a)
			vsum += vmax
		} else {
			other = append(other, axisAdderOf(p, trs[i]))
		}
	}
	ts := append([]Law(nil), terms...)
	sp := numSpec{
		axis: func(h float64, k0 int, out []complex128, errOut []float64) {
			for j := range out {
				out[j] = -complex(0, float64(k0+j)*h) * cc
			}
			for _, a := range other {
				a(h, k0, out)
			}
			for j := range out {
				t := float64(k0+j) * h
				// |M| of the non-discrete factors (|M| <= 1 for the discrete ones)
				errOut[j] = math.Exp(real(out[j])) * (float64(len(disc))*axisErr + axisPhase*t*vsum)
			}
			for _, a := range disc {
				a(h, k0, out)
			}
		},
		kind: "Sum", tr: tr, c: c, mean: mean, variance: variance, atoms: atoms,
		supLo: supLo, supHi: supHi, parts: ts,
		fallback: func(eps float64) (a, b float64) {
			e := eps / float64(len(ts))
			for _, t := range ts {
				a += t.Quantile(e)
				b += t.UpperQuantile(e)
			}
			return a - c, b - c
		},
		sample: func(r *rand.Rand) float64 {
			x := 0.0
			for _, t := range ts {
				x += t.Rand(r)
			}
			return x
		},
	}
	return newNumLaw(sp)
}

// shiftMixture is D + C for a finite discrete D and a law C without atoms:
//
//	F(x) = Σ p_i·F_C(x - v_i),  S(x) = Σ p_i·S_C(x - v_i)
//
// exact to rounding, each tail summed from its own terms (compensated and
// divided by the probabilities' own sum, so F(+Inf) = S(-Inf) = 1 exactly).
type shiftMixture struct {
	d Discrete
	c Law
}

func newShiftMixture(d Discrete, c Law) Law {
	m := shiftMixture{d: d, c: c}
	_, est := c.(Estimated)
	if _, ok := c.(Densitied); ok {
		if est {
			return shiftMixtureEstDensity{shiftMixtureDensity{m}}
		}
		return shiftMixtureDensity{m}
	}
	if est {
		return shiftMixtureEst{m}
	}
	return m
}

// shiftMixtureEst is a shiftMixture whose continuous term is computed
// numerically: it reports that term's error (a mixture of shifted copies
// keeps the CDF bound and the relative survival bound of its component).
type shiftMixtureEst struct{ shiftMixture }

// Accuracy returns the continuous term's bounds.
func (m shiftMixtureEst) Accuracy() Accuracy { return shiftAccuracy(m.shiftMixture) }

// shiftMixtureEstDensity is a shiftMixtureEst with a density.
type shiftMixtureEstDensity struct{ shiftMixtureDensity }

// Accuracy returns the continuous term's bounds.
func (m shiftMixtureEstDensity) Accuracy() Accuracy { return shiftAccuracy(m.shiftMixture) }

func shiftAccuracy(m shiftMixture) Accuracy {
	a := m.c.(Estimated).Accuracy()
	a.Method = fmt.Sprintf("%d discrete shifts of: %s", m.d.Len(), a.Method)
	return a
}

func (m shiftMixture) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	return m.d.weighted(func(v float64) float64 { return m.c.CDF(x - v) })
}

func (m shiftMixture) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	return m.d.weighted(func(v float64) float64 { return m.c.Survival(x - v) })
}

func (m shiftMixture) Quantile(p float64) float64      { return quantileByInversion(m, p) }
func (m shiftMixture) UpperQuantile(q float64) float64 { return upperQuantileByInversion(m, q) }
func (m shiftMixture) Mean() float64                   { return m.d.Mean() + m.c.Mean() }
func (m shiftMixture) Variance() float64               { return m.d.Variance() + m.c.Variance() }

func (m shiftMixture) Support() (lo, hi float64) {
	a, b := m.c.Support()
	dl, dh := m.d.Support()
	return a + dl, b + dh
}

func (m shiftMixture) Rand(r *rand.Rand) float64 { return m.d.Rand(r) + m.c.Rand(r) }

// CF returns φ_D(t)·φ_C(t) when C's transform is known, else NaN.
func (m shiftMixture) CF(t float64) complex128 {
	tr, ok := m.transform()
	if !ok || math.IsNaN(t) {
		return complex(math.NaN(), math.NaN())
	}
	return cexpm1(tr.logm(complex(0, t))) + 1
}

func (m shiftMixture) transform() (transform, bool) {
	tc, ok := transformOf(m.c)
	if !ok {
		return transform{}, false
	}
	td := valuesTransform(m.d.values(), m.d.probs())
	return transform{
		logm: func(s complex128) complex128 { return td.logm(s) + tc.logm(s) },
		lo:   tc.lo, hi: tc.hi, err: tc.err,
	}, true
}

func (m shiftMixture) String() string {
	return fmt.Sprintf("Sum(%d-atom discrete + %v: %s)", m.d.Len(), m.c, summary(m))
}

// shiftMixtureDensity is a shiftMixture whose continuous term has a density.
type shiftMixtureDensity struct{ shiftMixture }

// Density returns Σ p_i·f_C(x - v_i).
func (m shiftMixtureDensity) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	f := m.c.(Densitied)
	s := 0.0
	ps := m.d.probs()
	for i, v := range m.d.values() {
		s += ps[i] * f.Density(x-v)
	}
	return s
}
