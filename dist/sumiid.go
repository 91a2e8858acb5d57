package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
)

// maxStructuralDraws is the number of term draws above which Rand of a
// k-fold sum draws by inverting its own CDF instead of adding k draws (a
// finite discrete term's k-fold sum draws binomial counts instead).
const maxStructuralDraws = 4096

// MaxSumIIDTerms is the largest k that SumIID and IIDSums accept: 2^40
// (about 1.1·10^12 terms, a one-second cycle for 35 000 years). Beyond it
// the centre k·μ of the inversion window is so far from 0, against the
// standard deviation √k·σ, that its rounding alone costs more than 1e-9 of
// the CDF (the stated bound grows as 1e-14·√k·μ/σ), and some paths' work
// grows with √k.
const MaxSumIIDTerms = 1 << 40

// SumIID returns the law of the sum of k independent copies of l (the
// energy of k reporting cycles, say), for k from 1 to MaxSumIIDTerms (2^40).
//
// Closed forms first: a normal gives a normal, an exponential or gamma a
// gamma, and an affine map a·X + b of one of those a·(X_1 + … + X_k) + k·b
// (a shifted gamma for a cycle with a fixed floor and a gamma burst). A finite discrete law of d atoms (the energy of a cycle whose
// states are constant or discrete, say) goes, in this order, to
//   - the exact Discrete of its k-fold masses, by repeated squaring of
//     dense arrays on the lattice (sumiid_dense.go), when its atoms lie on
//     a common lattice v0 + m·δ and the k-fold sum spans at most 65536
//     lattice points;
//   - the exact Discrete of its k-fold atoms (repeated squaring) when there
//     are at most 1024 of them (C(k+d−1, d−1) <= 1024);
//   - for d = 2, the exact binomial law of the count of the larger value
//     (stated 1e-13 absolute, 1e-12 relative in both tails down to 1e-300),
//     and for d = 3 the exact sum of binomial tails over the count of the
//     least likely value (sumiid_atomic_three.go; stated 1e-12 absolute,
//     1e-10 relative in both tails down to 1e-290; tested against
//     multinomial enumeration in 256-bit floats), whether or not the values
//     are commensurate;
//   - for four or more atoms on a common lattice (energies of commensurate
//     airtimes, say) whose k-fold sum spans more lattice points, a lattice
//     FFT (see lattice.go): a finite discrete law of the window holding all
//     but 2e-60 of the mass, with exact Mean and Variance, reporting
//     Accuracy (CDF absolute error a few 1e-12 for k up to 10^6, survival
//     relative error about 1e-10 down to 1e-40 by tilted transforms;
//     tested against the binomial law);
//   - the exact Discrete of its k-fold atoms while C(k+d−1, d−1) <=
//     MaxSumAtoms;
//   - otherwise the second-order saddlepoint law (Lugannani & Rice 1980;
//     Daniels 1987) with a bound proven by Esseen's smoothing inequality
//     (sumiid_atomic_esseen.go), reported by Accuracy.
//
// The binomial, three-value and saddlepoint laws are Estimated, not Atomic
// (their atoms are too many to list), and draw their samples as binomial
// counts; their Quantile bisects CDF values that cost up to about a
// millisecond each at k = 10^6.
// IIDSums evaluates the same paths at (k, x) without building a law.
//
// For other laws the transform is raised as exp(k·(log M(s) - s·μ)) — log M from log1p of M - 1 evaluated
// directly, never by repeated multiplication or a complex power — and
// inverted on a window centred on k·μ whose width is set by the standard
// deviation √k·σ, so the work does not grow with k (see Sum for the method
// and its accuracy). Atoms of l survive only while their total mass a keeps
// a^k above 1e-30.
//
// A mixture whose k-fold sum has at most 512 count vectors (k <= 511 for
// two components) and whose combinations have closed forms is expanded
// exactly into the multinomial mixture of those closed forms (an atom mixed
// with an exponential gives shifted gammas), reporting Accuracy.
//
// A law without a known transform (a FromDistuv law, say) is summed
// numerically too. For k >= 8, when its k-fold transform decays fast enough
// and its atoms are negligible (k·a^(k-1) < 1e-14 for atom mass a), its
// transform is integrated from its CDF and Survival by the library's
// adaptive Gauss–Kronrod quadrature (internal/quad, see cf_quad.go) and
// raised to the power k as above, the window sized by Chernoff bounds of
// the term cut at its
// bulkTail/(2k) quantiles: measured CDF error about 1e-14 for k up to 10^4,
// 4e-13 at 10^6 and 2e-12 at 10^7 (stated bounds up to 1.2e-10; no tilted
// tails, so the survival is relative only down to about 10^6 times the CDF
// bound). Otherwise (small k) it is the lattice power of invert_lattice.go
// (Richardson-extrapolated; CDF error 1e-13 at k = 2 to 7e-11 at k = 7 for
// an exponential term, stated up to 2e-9), a law with atoms and a
// continuous part expanded binomially over
// the atoms for k <= 32; a law whose atoms keep too much mass for either is
// an error (ErrParam).
//
// Rand adds k draws of l when k <= 4096 and inverts the computed CDF beyond.
// Errors: nil l, k < 1 or k > MaxSumIIDTerms (wrap ErrParam), a term
// without finite mean and variance (wraps ErrMoment).
func SumIID(l Law, k int) (Law, error) {
	if l == nil {
		return nil, paramErr("SumIID", "l", nil, "must not be nil")
	}
	if k < 1 || k > MaxSumIIDTerms {
		return nil, paramErr("SumIID", "k", k, fmt.Sprintf("must be in [1, %d] (MaxSumIIDTerms)", MaxSumIIDTerms))
	}
	if k == 1 {
		return l, nil
	}
	fk := float64(k)
	switch b := l.(type) {
	case Normal:
		return NewNormal(fk*b.mu, math.Sqrt(fk)*b.sigma)
	case Exponential:
		return NewGamma(fk, b.rate)
	case Gamma:
		return NewGamma(fk*b.shape, b.rate)
	case Uniform:
		if k == 2 {
			return newUniformPair(b, b), nil
		}
	case Discrete:
		return discreteSumIID(b, k)
	case affine:
		if s, ok, err := affineSumIID(b, k); ok {
			return s, err
		}
	case affineDensity:
		if s, ok, err := affineSumIID(b.affine, k); ok {
			return s, err
		}
	}
	if m, ok, err := expandMixtureIID(l, k); err != nil || ok {
		return m, err
	}
	if sm, ok := shiftMixtureOf(l); ok {
		if s, ok, err := shiftMixtureIID(sm, k); err != nil || ok {
			return s, err
		}
	}
	return iidNumeric(l, k)
}

// MustSumIID is SumIID that panics on error; for examples and tests.
func MustSumIID(l Law, k int) Law {
	s, err := SumIID(l, k)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return s
}

// closedIID reports whether SumIID has a closed form for l.
func closedIID(l Law) bool {
	switch l.(type) {
	case Normal, Exponential, Gamma:
		return true
	}
	return false
}

// affineSumIID returns the k-fold sum of a·X + b as a·(X_1 + … + X_k) + k·b
// when X's k-fold sum has a closed form (a shifted gamma, the energy of a
// cycle with a fixed floor and a gamma-distributed burst, say); ok is false
// otherwise.
func affineSumIID(a affine, k int) (Law, bool, error) {
	if !closedIID(a.base) {
		return nil, false, nil
	}
	s, err := SumIID(a.base, k)
	if err != nil {
		return nil, true, err
	}
	l, err := Affine(s, a.scale, float64(k)*a.shift)
	return l, true, err
}

// discreteSumIID is SumIID for a finite discrete law (see SumIID for the
// order of the paths).
func discreteSumIID(d Discrete, k int) (Law, error) {
	n := d.Len()
	list := func() (Law, error) {
		atoms, err := atomPower("SumIID", d.Atoms(), k)
		if err != nil {
			return nil, err
		}
		return discreteFromAtoms(atoms), nil
	}
	if n == 1 {
		return list()
	}
	v0, delta, ns, onLattice := latticeOf(d)
	if onLattice && float64(k)*float64(ns[len(ns)-1])+1 <= latticeMinAtoms {
		return latticeList(d, v0, delta, ns, k), nil // at most 65536 lattice points: the exact masses
	}
	if multichoose(n, k) <= exactListAtoms {
		return list()
	}
	if n <= 3 {
		return newAtomicSumLaw(d, int64(k)), nil
	}
	if lat, ok, err := latticeSumIID(d, k, latticeMinAtoms); err != nil || ok {
		return lat, err
	}
	if multichoose(n, k) <= MaxSumAtoms {
		if l, err := list(); err == nil {
			return l, nil
		}
	}
	return newAtomicSumLaw(d, int64(k)), nil
}

// atomPower returns the atoms of the k-fold convolution of atoms (masses
// may sum to less than one), by repeated squaring with merging.
func atomPower(fn string, atoms []Atom, k int) ([]Atom, error) {
	result := []Atom{{Value: 0, Mass: 1}}
	base := append([]Atom(nil), atoms...)
	var err error
	for k > 0 {
		if k&1 == 1 {
			if result, err = convolveAtoms(fn, result, base); err != nil {
				return nil, err
			}
		}
		k >>= 1
		if k > 0 {
			if base, err = convolveAtoms(fn, base, base); err != nil {
				return nil, err
			}
		}
	}
	return result, nil
}

func iidNumeric(l Law, k int) (Law, error) {
	fk := float64(k)
	mu, v := l.Mean(), l.Variance()
	if !finite(mu) || !finite(v) {
		return nil, fmt.Errorf("dist.SumIID: mean %v, variance %v of the term: %w (the window is sized by the standard deviation)", mu, v, ErrMoment)
	}
	t, ok := transformOf(l)
	if !ok {
		return latticeIID(l, k)
	}
	var atoms []Atom
	if al, ok := l.(Atomic); ok {
		if at := al.Atoms(); len(at) > 0 {
			a := 0.0
			for _, x := range at {
				a += x.Mass
			}
			if fk*math.Log(a) > math.Log(1e-30) {
				var err error
				if atoms, err = atomPower("SumIID", at, k); err != nil {
					return nil, err
				}
			}
		}
	}
	// the transform normalised by its mass defect, as IIDSums normalises it
	cmu, ck, cc0 := complex(mu, 0), complex(fk, 0), complex(t.massDefect(), 0)
	tr := transform{
		logm: func(s complex128) complex128 { return ck * (t.logm(s) - s*cmu - cc0) },
		lo:   t.lo, hi: t.hi, err: fk * t.err,
	}
	lo, hi := l.Support()
	var self *numLaw
	sp := numSpec{
		kind: "SumIID", tr: tr, c: fk * mu, mean: fk * mu, variance: fk * v, atoms: atoms,
		supLo: fk * lo, supHi: fk * hi,
		fallback: func(eps float64) (a, b float64) {
			e := eps / fk
			return fk * (l.Quantile(e) - mu), fk * (l.UpperQuantile(e) - mu)
		},
		sample:   iidSample(l, k, &self),
		expRound: iidExpRound(t, mu, fk),
	}
	if math.IsNaN(sp.supLo) {
		sp.supLo = math.Inf(-1)
	}
	if math.IsNaN(sp.supHi) {
		sp.supHi = math.Inf(1)
	}
	n, err := newNumLaw(sp)
	if err != nil {
		return nil, err
	}
	self = n
	return n, nil
}

// iidExpRound returns the bound on the relative error that the rounding
// of the exponent adds to a tilted value of the k-fold sum of a term with
// transform t and mean μ, at the real tilt θ of the centred sum: the
// exponent k·(log M(θ) − θ·μ − log M(0)) rounds each per-term value to a
// few ulps of |log M(θ)| + |θ·μ|, and k multiplies that (the centre k·μ
// and the point's distance from it round likewise, an absolute error of
// ε·k·|μ| times θ), so 4ε·k·(|log M(θ)| + |θ·μ|) (ε = 2^-53); 0 where the
// transform is not finite at θ (the value's own rules fail there first).
func iidExpRound(t transform, mu, fk float64) func(theta float64) float64 {
	return func(theta float64) float64 {
		lm := cmplx.Abs(t.logm(complex(theta, 0)))
		if !finite(lm) {
			return 0
		}
		return 4 * 0x1p-53 * fk * (lm + math.Abs(theta*mu))
	}
}

// iidSample draws the k-fold sum of l: k draws of l added when k <=
// maxStructuralDraws, else by inverting the CDF of *self (set once the law
// is built).
func iidSample(l Law, k int, self **numLaw) func(r *rand.Rand) float64 {
	return func(r *rand.Rand) float64 {
		if k <= maxStructuralDraws {
			x := 0.0
			for i := 0; i < k; i++ {
				x += l.Rand(r)
			}
			return x
		}
		return (*self).Quantile(r.Float64())
	}
}

// IIDSums evaluates the laws of the k-fold sums S_k = X_1 + … + X_k of one
// law for many k without building each law: the lifetime question
// P(N > k) = P(S_k <= C) asks for the CDF of S_k at one point C for k =
// 1, 2, …. The state it holds is built once by NewIIDSums, and each value
// costs:
//   - a normal, exponential or gamma term, or an affine map a·X + b of one
//     (a cycle with a fixed floor and a gamma burst): the closed form of
//     S_k = a·(X_1 + … + X_k) + k·b, a normal or a gamma (Temme's expansion
//     at shapes of 1000 and more: some 0.1 µs a value);
//   - a finite discrete term: the paths of SumIID's discrete law evaluated
//     at (k, x) directly (exact atoms while there are at most 1024, the
//     exact binomial and three-value sums, otherwise the bounded
//     saddlepoint; a commensurate law of four or more values takes the
//     saddlepoint too, not the lattice FFT, whose tables cost megabytes per
//     k): microseconds to about a millisecond;
//   - another term with a transform and no atoms: one tilted Fourier-series
//     inversion (about 20–60 transform values), accurate relative to its
//     value in both tails (see Sum);
//   - otherwise the law SumIID builds for that k.
//
// Accuracy(k) states the error of the values for k. Evaluate returns the
// values with an error where there is none to give (k outside [1,
// MaxSumIIDTerms], a k-fold law that cannot be built, a term whose own
// answers are NaN); CDF, Survival and Tails return NaN exactly there. The
// zero IIDSums is not valid (Evaluate and Accuracy return errors wrapping
// ErrParam, the others NaN); build it with NewIIDSums. It is immutable and
// safe for concurrent use, and its values do not depend on what was asked
// before.
type IIDSums struct {
	l      Law
	tr     transform
	mu, v  float64
	ok     bool        // tilted inversion per value
	closed bool        // S_k is cbase's k-fold sum mapped by cscale, cshift
	disc   *atomicSums // a finite discrete term of two or more atoms
	lo, hi float64

	cbase          Law // Normal, Exponential or Gamma
	cscale, cshift float64
}

// NewIIDSums prepares the k-fold sums of l. l must have a finite mean and
// variance (else the error wraps ErrMoment).
func NewIIDSums(l Law) (IIDSums, error) {
	if l == nil {
		return IIDSums{}, paramErr("NewIIDSums", "l", nil, "must not be nil")
	}
	mu, v := l.Mean(), l.Variance()
	if !finite(mu) || !finite(v) {
		return IIDSums{}, fmt.Errorf("dist.NewIIDSums: mean %v, variance %v: %w", mu, v, ErrMoment)
	}
	t, ok := transformOf(l)
	lo, hi := l.Support()
	p := IIDSums{l: l, tr: t, mu: mu, v: v, ok: ok && t.lo < 0 && t.hi > 0 && v > 0 && !hasAtoms(l), lo: lo, hi: hi}
	switch b := l.(type) {
	case Normal, Exponential, Gamma:
		p.closed, p.ok = true, false
		p.cbase, p.cscale = l, 1
	case affine:
		if closedIID(b.base) {
			p.closed, p.ok = true, false
			p.cbase, p.cscale, p.cshift = b.base, b.scale, b.shift
		}
	case affineDensity:
		if closedIID(b.base) {
			p.closed, p.ok = true, false
			p.cbase, p.cscale, p.cshift = b.base, b.scale, b.shift
		}
	case Discrete:
		p.ok = false
		if b.Len() > 1 {
			a := newAtomicSums(b)
			p.disc = &a
		}
	}
	return p, nil
}

// CDF returns P(S_k <= x). NaN where Evaluate returns an error (k outside
// [1, MaxSumIIDTerms], say) and for NaN x.
func (p IIDSums) CDF(k int, x float64) float64 {
	f, _, _ := p.eval(k, x)
	return f
}

// Survival returns P(S_k > x), computed directly. NaN where Evaluate
// returns an error and for NaN x.
func (p IIDSums) Survival(k int, x float64) float64 {
	_, s, _ := p.eval(k, x)
	return s
}

// Tails returns P(S_k <= x) and P(S_k > x) from one evaluation (CDF and
// Survival each make their own): each tail computed directly, as CDF and
// Survival return them. NaN, NaN where Evaluate returns an error and for
// NaN x.
func (p IIDSums) Tails(k int, x float64) (below, above float64) {
	b, a, _ := p.eval(k, x)
	return b, a
}

// Evaluate is Tails with the reason for a NaN: an error wrapping ErrParam
// for a zero IIDSums or k outside [1, MaxSumIIDTerms], the error of
// SumIID(l, k) where the values come from that law and it cannot be built
// (a gamma term whose k-fold shape exceeds MaxGammaShape, say), and an
// error wrapping ErrParam when the term's own answers are NaN or infinite
// (a FromDistuv law outside its range). NaN x gives NaN, NaN and no error.
func (p IIDSums) Evaluate(k int, x float64) (below, above float64, err error) {
	return p.eval(k, x)
}

// ClosedForm reports whether the values come from a closed form (a normal,
// exponential or gamma term, or an affine map of one): each costs about as
// much as one incomplete gamma function, so a caller's cache of values
// costs more than it saves.
func (p IIDSums) ClosedForm() bool { return p.closed }

// Law returns the law of S_k (as SumIID(l, k)).
func (p IIDSums) Law(k int) (Law, error) { return SumIID(p.l, k) }

// Accuracy returns the error bounds of CDF(k, ·) and Survival(k, ·): zero
// with Method "closed form" for a normal, exponential or gamma term and for
// a one-atom law, those of the discrete paths for a finite discrete term
// (the saddlepoint's bound, proven by Esseen's inequality, costs some
// milliseconds), and otherwise those that the law of S_k reports, built by
// the transform inversion the values take (or by SumIID for a term
// without a transform). Errors: k outside [1, MaxSumIIDTerms], a zero IIDSums.
func (p IIDSums) Accuracy(k int) (Accuracy, error) {
	switch {
	case p.l == nil:
		return Accuracy{}, paramErr("IIDSums.Accuracy", "p", "zero IIDSums", "must be built by NewIIDSums")
	case k < 1 || k > MaxSumIIDTerms:
		return Accuracy{}, paramErr("IIDSums.Accuracy", "k", k, fmt.Sprintf("must be in [1, %d] (MaxSumIIDTerms)", MaxSumIIDTerms))
	case p.disc != nil:
		return p.disc.accuracy(int64(k)), nil
	case p.closed:
		return p.closedAccuracy(k), nil
	case p.lo == p.hi:
		return Accuracy{Method: "closed form"}, nil
	}
	build := SumIID
	if p.ok {
		build = iidNumeric // the transform inversion that the values take
	}
	law, err := build(p.l, k)
	if err != nil {
		return Accuracy{}, err
	}
	if e, ok := law.(Estimated); ok {
		return e.Accuracy(), nil
	}
	return Accuracy{Method: "closed form"}, nil
}

func (p IIDSums) eval(k int, x float64) (f, s float64, err error) {
	nan := math.NaN()
	switch {
	case p.l == nil:
		return nan, nan, paramErr("IIDSums.Evaluate", "p", "zero IIDSums", "must be built by NewIIDSums")
	case k < 1 || k > MaxSumIIDTerms:
		return nan, nan, paramErr("IIDSums.Evaluate", "k", k, fmt.Sprintf("must be in [1, %d] (MaxSumIIDTerms)", MaxSumIIDTerms))
	case math.IsNaN(x):
		return nan, nan, nil
	}
	fk := float64(k)
	if x < fk*p.lo {
		return 0, 1, nil
	}
	if x >= fk*p.hi {
		return 1, 0, nil
	}
	if p.disc != nil {
		f, s, _ = p.disc.eval(int64(k), x)
		return checkTails("IIDSums.Evaluate", k, x, f, s)
	}
	if p.closed {
		return p.closedTails(k, x)
	}
	if !p.ok {
		law, err := SumIID(p.l, k)
		if err != nil {
			return nan, nan, err
		}
		return checkTails("IIDSums.Evaluate", k, x, law.CDF(x), law.Survival(x))
	}
	f, s, _ = p.tiltedOne(k, x)
	return checkTails("IIDSums.Evaluate", k, x, f, s)
}

// checkTails passes on two tail values that are probabilities and reports
// an error (wrapping ErrParam, naming k and x) otherwise.
func checkTails(fn string, k int, x, below, above float64) (float64, float64, error) {
	if isProb(below) && isProb(above) {
		return below, above, nil
	}
	return math.NaN(), math.NaN(), paramErr(fn, "x", x, fmt.Sprintf("gives tails %v and %v for k = %d: the term's law answers outside [0, 1] there", below, above, k))
}

// closedAccuracy is Accuracy for a closed-form k-fold sum: zero but for a
// gamma of shape temmeMinShape or more, whose Temme expansion states a
// relative error of 8e-16·(8 + ½aη²) in either tail (gamma_temme.go): at
// most 7e-15 absolute for the CDF (P·½aη² <= 1/e where P ≈ exp(−½aη²)) and
// 6e-13 relative for survivals down to 1e-300.
func (p IIDSums) closedAccuracy(k int) Accuracy {
	shape := 0.0
	switch b := p.cbase.(type) {
	case Exponential:
		shape = float64(k)
	case Gamma:
		shape = float64(k) * b.shape
	}
	if shape < temmeMinShape {
		return Accuracy{Method: "closed form"}
	}
	return Accuracy{CDFAbs: 7e-15, SurvivalRel: 6e-13, TailFloor: 1e-300,
		Method: "closed form: gamma law by Temme's uniform expansion"}
}

// closedTails returns the tails of S_k = cscale·B_k + k·cshift, B_k the
// closed-form k-fold sum of cbase (a normal or a gamma law), at x.
func (p IIDSums) closedTails(k int, x float64) (below, above float64, err error) {
	fk := float64(k)
	y := (x - fk*p.cshift) / p.cscale
	switch b := p.cbase.(type) {
	case Normal:
		n := Normal{mu: fk * b.mu, sigma: math.Sqrt(fk) * b.sigma}
		below, above = n.CDF(y), n.Survival(y)
	case Exponential:
		below, above = Gamma{shape: fk, rate: b.rate}.tails(y)
	case Gamma:
		if fk*b.shape > MaxGammaShape {
			_, err := NewGamma(fk*b.shape, b.rate)
			return math.NaN(), math.NaN(), err
		}
		below, above = Gamma{shape: fk * b.shape, rate: b.rate}.tails(y)
	}
	if p.cscale < 0 { // a continuous law: P(B_k >= y) = P(B_k > y)
		below, above = above, below
	}
	return below, above, nil
}

// maxShiftIIDAtoms is the most atoms the k-fold discrete part of a
// discrete-plus-continuous law may have for SumIID to split it.
const maxShiftIIDAtoms = 4096

// shiftMixtureOf returns l as a discrete law plus one continuous law, if it
// is one.
func shiftMixtureOf(l Law) (shiftMixture, bool) {
	switch b := l.(type) {
	case shiftMixture:
		return b, true
	case shiftMixtureDensity:
		return b.shiftMixture, true
	case shiftMixtureEst:
		return b.shiftMixture, true
	case shiftMixtureEstDensity:
		return b.shiftMixture, true
	}
	return shiftMixture{}, false
}

// shiftMixtureIID returns the k-fold sum of D + C as D^{*k} + C^{*k} (the
// k-fold sums of independent parts add), when D^{*k} has at most
// maxShiftIIDAtoms atoms: the jumps that D + C has at C's ends stay in the
// closed forms or in C's own k-fold sum, instead of slowing the series of
// the whole (SumIID(D + Uniform, 2) is then shifted trapezoids, exact).
func shiftMixtureIID(m shiftMixture, k int) (Law, bool, error) {
	if float64(k)*math.Log(float64(m.d.Len())) > math.Log(64*maxShiftIIDAtoms) {
		return nil, false, nil
	}
	dk, err := SumIID(m.d, k)
	if err != nil {
		return nil, false, nil
	}
	if al, ok := dk.(Atomic); !ok || len(al.Atoms()) > maxShiftIIDAtoms {
		return nil, false, nil
	}
	ck, err := SumIID(m.c, k)
	if err != nil {
		return nil, false, err
	}
	s, err := Sum(dk, ck)
	return s, err == nil, err
}
