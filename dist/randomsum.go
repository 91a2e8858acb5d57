package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"sort"
)

// countTail is the count mass RandomSum may leave out when the count law has
// infinite support: it stops at the first n with P(N > n) <= countTail.
const countTail = 1e-24

// maxCount is the largest count value RandomSum will expand.
const maxCount = 1 << 20

// RandomSum returns the law of X_1 + … + X_N, where N has the law count on
// {0, 1, 2, …} and the X_i are independent copies of term, independent of
// N (the energy of a frame sent until acknowledged, say). N = 0 gives the
// empty sum 0.
//
// When the term is a normal, an exponential or a gamma and the count takes
// at most 4096 values (or the term is a mixture whose n-fold sums SumIID
// expands exactly, an atom mixed with an exponential say, and the count
// takes at most 64 values), the result is exact: the mixture Σ_n P(N = n)·law(S_n)
// of the closed-form n-fold sums (P(N = 0) a point mass at 0), reporting
// Accuracy (rounding, 1e-14 in the CDF, 1e-9 relative in the survival down to
// 1e9 times the count mass cut off; a density that jumps at 0, as for a
// geometric count of exponentials, costs nothing here).
//
// An exact Discrete results when term is a finite discrete law and count is
// finite. Otherwise the counts 0 to 6 are laws of their own (the point mass
// at 0, the term, its n-fold SumIID) and only the rest, N >= 7, is inverted
// from the count's generating function composed with the term's,
// Σ_{n>=7} P(N = n)·exp(n·log M_X(s)), as in Sum; the result is their
// mixture and reports the weighted bounds. A term whose density jumps (a
// uniform, a truncation) has a transform decaying only like 1/t, and its
// n-fold sum like 1/t^n: inverted at once, the P(N = 1) part met the series
// cap (CDF error 1e-6 to 2e-5, worse with the wide window of an unbounded
// count); written this way the CDF error stays near 1e-11 (1e-15 measured
// for uniform terms and a count on {0, …, 5}, 7e-12 stated for a geometric
// count of uniforms).
//
// A count with infinite support is expanded up to the first n with
// P(N > n) <= 1e-24 (that mass is the stated extra error). Atoms: P(N = 0)
// at 0, plus the exact atoms of the term's powers when the term has atoms.
// Mean = E[N]·E[X], Variance = E[N]·Var X + Var N·(E X)². Rand draws N and
// then N terms.
//
// A term without a known transform (a FromDistuv law, say) is taken when
// the count has at most 16 values and finite support: the mixture of the
// counts' SumIIDs (lattice or quadrature fallbacks, their bounds weighted).
//
// count may be a Discrete, any law listing its atoms (Atomic), or any law
// whose CDF steps only at the non-negative integers (probed at n - 1/2 and
// just below n). Errors wrap ErrParam: nil laws, a count with mass off the
// non-negative integers, a count needing more than 2^20 terms, a term
// without a known transform with a count beyond those limits; ErrMoment for
// a term or count without finite mean and variance.
func RandomSum(count, term Law) (Law, error) {
	const fn = "RandomSum"
	if count == nil {
		return nil, paramErr(fn, "count", nil, "must not be nil")
	}
	if term == nil {
		return nil, paramErr(fn, "term", nil, "must not be nil")
	}
	ns, ps, tail, err := countMasses(count)
	if err != nil {
		return nil, err
	}
	if len(ns) == 1 {
		if ns[0] == 0 {
			return NewPointMass(0)
		}
		return SumIID(term, ns[0])
	}
	en, vn := count.Mean(), count.Variance()
	mx, vx := term.Mean(), term.Variance()
	if !finite(en) || !finite(vn) || !finite(mx) || !finite(vx) {
		return nil, fmt.Errorf("dist.RandomSum: count mean %v and variance %v, term mean %v and variance %v: %w", en, vn, mx, vx, ErrMoment)
	}
	nmax := ns[len(ns)-1]
	if d, ok := term.(Discrete); ok && tail == 0 {
		var atoms []Atom
		pow := []Atom{{Value: 0, Mass: 1}}
		j := 0
		for n := 0; n <= nmax; n++ {
			if n > 0 {
				if pow, err = convolveAtoms(fn, pow, d.Atoms()); err != nil {
					return nil, err
				}
			}
			if ns[j] == n {
				for _, a := range pow {
					atoms = append(atoms, Atom{Value: a.Value, Mass: a.Mass * ps[j]})
				}
				j++
			}
		}
		atoms = mergeAtoms(atoms)
		if len(atoms) > MaxSumAtoms {
			return nil, paramErr(fn, "term", fmt.Sprintf("%d atoms", len(atoms)), fmt.Sprintf("an exact discrete random sum may have at most %d atoms", MaxSumAtoms))
		}
		return discreteFromAtoms(atoms), nil
	}
	if l, ok, err := closedRandomSum(ns, ps, tail, en*mx, en*vx+vn*mx*mx, term); err != nil || ok {
		return l, err
	}
	t, ok := transformOf(term)
	if !ok {
		if tail == 0 && len(ns) <= maxTransformlessCounts {
			// every count's k-fold sum by SumIID's own fallbacks
			return peelRandomSum(ns, ps, 0, en*mx, en*vx+vn*mx*mx, term, transform{})
		}
		return nil, fmt.Errorf("dist.RandomSum: term %v has no known characteristic function and the count has %d values (at most %d, and finitely many, for such a term): %w", term, len(ns), maxTransformlessCounts, ErrParam)
	}
	if ns[0] <= maxPeel && ns[len(ns)-1] > 0 {
		return peelRandomSum(ns, ps, tail, en*mx, en*vx+vn*mx*mx, term, t)
	}
	return randomSumNumeric(ns, ps, tail, en*mx, en*vx+vn*mx*mx, term, t, count.Rand)
}

// maxPeel is the largest count RandomSum writes as a law of its own before
// inverting the rest.
const maxPeel = 6

// maxTransformlessCounts is the most count values RandomSum takes for a
// term without a known transform (each count's sum is its own SumIID).
const maxTransformlessCounts = 16

// peelRandomSum writes the random sum as the mixture
//
//	Σ_{n<=maxPeel} P(N = n)·law(S_n) + P(N > maxPeel)·law(S_N | N > maxPeel)
//
// with S_0 = 0, S_1 the term itself and S_n its SumIID. Only the rest is
// inverted from G(M_X) restricted to n > maxPeel. A term whose density
// jumps (a uniform or a truncated law) has a transform decaying like 1/t,
// and the series for the whole random sum would meet that decay through the
// P(N = 1) part; the n-fold sums with n > maxPeel decay like 1/t^7 and
// converge at the usual accuracy even in the wide window of an unbounded
// count.
func peelRandomSum(ns []int, ps []float64, tail, mean, variance float64, term Law, t transform) (Law, error) {
	k := 0
	for k < len(ns) && (ns[k] <= maxPeel || t.logm == nil) {
		k++
	}
	var weights []float64
	var laws []Law
	for i := 0; i < k; i++ {
		var l Law
		var err error
		switch ns[i] {
		case 0:
			l, err = NewPointMass(0)
		case 1:
			l = term
		default:
			l, err = SumIID(term, ns[i])
		}
		if err != nil {
			return nil, err
		}
		weights, laws = append(weights, ps[i]), append(laws, l)
	}
	if k < len(ns) {
		restMass := 0.0
		for _, p := range ps[k:] {
			restMass += p
		}
		rns := ns[k:]
		rps := make([]float64, len(rns))
		cum := make([]float64, len(rns))
		var en, en2 float64
		for i, p := range ps[k:] {
			rps[i] = p / restMass
			n := float64(rns[i])
			en += rps[i] * n
			en2 += rps[i] * n * n
		}
		c := 0.0
		for i, p := range rps {
			c += p
			cum[i] = c
		}
		mx, vx := term.Mean(), term.Variance()
		draw := func(r *rand.Rand) float64 {
			u := r.Float64() * c
			return float64(rns[sort.SearchFloat64s(cum, u)%len(rns)])
		}
		// the count mass cut off (tail) is stated below, not passed on: with
		// it the rest's window would reach to infinity and its tilted tails
		// need series far longer than the law is worth
		rest, err := randomSumNumeric(rns, rps, 0, en*mx, en*vx+(en2-en*en)*mx*mx, term, t, draw)
		if err != nil {
			return nil, err
		}
		weights, laws = append(weights, restMass), append(laws, rest)
	}
	m, err := Mixture(weights, laws)
	if err != nil {
		return nil, fmt.Errorf("dist.RandomSum: %w", err)
	}
	cdfAbs, rel, floor := 1e-14+tail, 1e-12, tail*1e6
	for i, l := range laws {
		if e, ok := l.(Estimated); ok {
			a := e.Accuracy()
			cdfAbs += weights[i] * a.CDFAbs
			rel, floor = max(rel, a.SurvivalRel), max(floor, a.TailFloor)
		}
	}
	method := fmt.Sprintf("mixture of the n-fold sums for n = 0…%d", ns[k-1])
	if k < len(ns) {
		method += fmt.Sprintf(", the rest (mass %.3g) inverted numerically", weights[len(weights)-1])
	}
	if tail > 0 {
		method += fmt.Sprintf(" (count mass %.1e cut)", tail)
	}
	acc := Accuracy{CDFAbs: cdfAbs, SurvivalRel: rel, TailFloor: floor, Method: method}
	sm := statedMixture{acc: acc, mean: mean, variance: variance, kind: "RandomSum", numeric: true}
	switch b := m.(type) {
	case mixture:
		sm.mixture = b
	case mixtureDensity:
		sm.mixture = b.mixture
	default:
		return m, nil
	}
	if tail > 0 {
		// the support of the uncut count
		tlo, thi := term.Support()
		sm.mixture.lo = min(sm.mixture.lo, prodInf(math.Inf(1), tlo))
		sm.mixture.hi = max(sm.mixture.hi, prodInf(math.Inf(1), thi))
	}
	if _, ok := m.(mixtureDensity); ok {
		return statedMixtureDensity{sm}, nil
	}
	return sm, nil
}

// randomSumNumeric inverts G(M_X(s)) = Σ_n P(N = n)·exp(n·log M_X(s)) for
// the count masses ps at the values ns (tail: count mass left out, an extra
// stated error); draw samples the count.
func randomSumNumeric(ns []int, ps []float64, tail, mean, variance float64, term Law, t transform, draw func(*rand.Rand) float64) (Law, error) {
	const fn = "RandomSum"
	nmax := ns[len(ns)-1]
	var err error
	// exact atomic part: Σ_n p_n·(atoms of the term)^{*n}
	var atoms []Atom
	termAtoms := []Atom(nil)
	aMass := 0.0
	if al, ok := term.(Atomic); ok {
		termAtoms = al.Atoms()
		for _, a := range termAtoms {
			aMass += a.Mass
		}
	}
	pow := []Atom{{Value: 0, Mass: 1}}
	prev := 0
	for j, n := range ns {
		if n > 0 {
			if len(termAtoms) == 0 || float64(n)*math.Log(aMass) < math.Log(1e-30) {
				break
			}
			for m := prev; m < n; m++ {
				if pow, err = convolveAtoms(fn, pow, termAtoms); err != nil {
					return nil, err
				}
			}
			prev = n
		}
		for _, a := range pow {
			atoms = append(atoms, Atom{Value: a.Value, Mass: a.Mass * ps[j]})
		}
	}
	atoms = mergeAtoms(atoms)
	c := mean
	cc := complex(c, 0)
	fns := make([]float64, len(ns))
	for i, n := range ns {
		fns[i] = float64(n)
	}
	tr := transform{
		logm: func(s complex128) complex128 {
			u := t.logm(s)
			if cmplx.Abs(u)*float64(nmax) < 0.5 {
				var sum complex128
				for i, n := range fns {
					sum += complex(ps[i], 0) * cexpm1(complex(n, 0)*u)
				}
				return clog1p(sum) - s*cc
			}
			m := math.Inf(-1)
			for i, n := range fns {
				m = max(m, math.Log(ps[i])+n*real(u))
			}
			var sum complex128
			for i, n := range fns {
				sum += cmplx.Exp(complex(math.Log(ps[i])-m, 0) + complex(n, 0)*u)
			}
			return cmplx.Log(sum) + complex(m, 0) - s*cc
		},
		lo: t.lo, hi: t.hi, err: float64(nmax) * t.err,
	}
	tlo, thi := term.Support()
	nmin, nTop := float64(ns[0]), float64(nmax)
	if tail > 0 {
		nTop = math.Inf(1)
	}
	supLo := min(prodInf(nmin, tlo), prodInf(nTop, tlo))
	supHi := max(prodInf(nmin, thi), prodInf(nTop, thi))
	sp := numSpec{
		kind: "RandomSum", tr: tr, c: c, mean: c, variance: variance, atoms: atoms,
		supLo: supLo, supHi: supHi, extraErr: tail,
		fallback: func(eps float64) (a, b float64) {
			e := eps / float64(nmax)
			ql, qh := term.Quantile(e), term.UpperQuantile(e)
			a = min(0, float64(nmax)*ql) - c
			b = max(0, float64(nmax)*qh) - c
			return a, b
		},
		sample: func(r *rand.Rand) float64 {
			n := int(math.Round(draw(r)))
			x := 0.0
			for i := 0; i < n; i++ {
				x += term.Rand(r)
			}
			return x
		},
	}
	return newNumLaw(sp)
}

// prodInf returns n·x with 0·Inf = 0 (either way round).
func prodInf(n, x float64) float64 {
	if n == 0 || x == 0 {
		return 0
	}
	return n * x
}

// countMasses returns the values n (sorted, distinct) and masses of a count
// law on the non-negative integers, and the mass left out beyond the last.
func countMasses(count Law) (ns []int, ps []float64, tail float64, err error) {
	const fn = "RandomSum"
	isInt := func(v float64) (int, bool) {
		r := math.Round(v)
		return int(r), v >= -0.0 && math.Abs(v-r) <= 1e-9*max(1, math.Abs(v)) && r <= maxCount
	}
	if al, ok := count.(Atomic); ok {
		atoms := al.Atoms()
		total := 0.0
		for _, a := range atoms {
			total += a.Mass
		}
		if len(atoms) > 0 && math.Abs(total-1) <= 1e-9 {
			for _, a := range atoms {
				n, ok := isInt(a.Value)
				if !ok {
					return nil, nil, 0, paramErr(fn, "count", fmt.Sprintf("atom at %v", a.Value), "must have its mass on the non-negative integers")
				}
				if len(ns) > 0 && ns[len(ns)-1] == n {
					ps[len(ps)-1] += a.Mass
					continue
				}
				ns, ps = append(ns, n), append(ps, a.Mass)
			}
			return ns, ps, 0, nil
		}
	}
	lo, _ := count.Support()
	if !(lo >= 0) {
		return nil, nil, 0, paramErr(fn, "count", fmt.Sprintf("support from %v", lo), "must have its mass on the non-negative integers")
	}
	prevF := 0.0
	for n := 0; n <= maxCount; n++ {
		x := float64(n)
		fHalf := count.CDF(x - 0.5)
		fNear := count.CDF(x - 1e-6)
		if math.Abs(fHalf-prevF) > 1e-12 || math.Abs(fNear-prevF) > 1e-12 {
			return nil, nil, 0, paramErr(fn, "count", fmt.Sprintf("CDF(%v) - CDF(%v) = %v", x-1e-6, x-1, fNear-prevF), "must have its mass on the non-negative integers")
		}
		f, s := count.CDF(x), count.Survival(x)
		var p float64
		if f <= 0.5 {
			p = f - prevF
		} else {
			p = count.Survival(x-1) - s
			if n == 0 {
				p = 1 - s
			}
		}
		if p > 0 {
			ns, ps = append(ns, n), append(ps, p)
		}
		prevF = f
		if s <= countTail {
			return ns, ps, s, nil
		}
	}
	return nil, nil, 0, paramErr(fn, "count", count, fmt.Sprintf("needs more than %d terms to reach tail mass %g", maxCount, countTail))
}
