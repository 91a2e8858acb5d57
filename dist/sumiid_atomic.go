package dist

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/internal/binom"
)

// exactListAtoms is the most atoms C(k+d−1, d−1) a k-fold sum of a d-atom
// law may have for SumIID and IIDSums to list them exactly (repeated
// squaring) instead of taking the paths below.
const exactListAtoms = 1024

// atomicSums evaluates P(S_k <= x) and P(S_k > x) for the k-fold sums of a
// finite discrete law of d >= 2 atoms (the energy of a cycle whose states
// are all constant or finite discrete, say): exact while the k-fold law has
// at most exactListAtoms atoms (listed by repeated squaring), exact for
// d = 2 (a binomial count, summed term by term), exact for d = 3 (binomial
// tails summed over the count of the least likely value,
// sumiid_atomic_three.go) and otherwise the second-order saddlepoint
// approximation of Lugannani & Rice (1980) with the correction terms of
// Daniels (1987, Int. Statist. Rev. 55:37–48, eq. 4.6; Butler, Saddlepoint
// Approximations with Applications, 2007, §2.3.2; equation and section
// numbers from memory; the formula is checked numerically in the tests):
//
//	P(S_k >= x) ≈ 1 − Φ(w) + φ(w)·{1/u − 1/w + (1/u)(λ4/8 − 5λ3²/24) − λ3/(2u²) − 1/u³ + 1/w³}
//
// with the saddlepoint K'(ŝ) = x/k, w = sgn(ŝ)·√(2k(ŝx/k − K(ŝ))),
// u = ŝ·√(k·K”(ŝ)), λ3 = K”'/(K”^{3/2}√k), λ4 = K””/(K”²·k). Its
// relative error is O(k⁻²) for a smooth law; a discrete law adds the fine
// structure of S_k's atoms around x, which is negligible when the values
// are not commensurate and up to about one atom of S_k otherwise: the
// bound reported for it (sumiid_atomic_esseen.go) is proven by Esseen's
// smoothing inequality and holds either way.
type atomicSums struct {
	d      Discrete
	v, p   []float64
	mu, sd float64
}

func newAtomicSums(d Discrete) atomicSums {
	a := atomicSums{d: d, v: d.values(), p: d.probs(), mu: d.Mean(), sd: math.Sqrt(d.Variance())}
	return a
}

// exactFits reports whether the k-fold law surely has at most
// exactListAtoms atoms: C(k+d−1, d−1) for d atoms.
func (a atomicSums) exactFits(k int64) bool {
	return multichoose(len(a.v), int(min(k, exactListAtoms))) <= exactListAtoms
}

// atomValue2 returns the atom k·v0 + j·(v1 − v0) of a two-energy k-fold
// sum, each product rounded on its own: the float eval compares and Rand
// returns.
func (a atomicSums) atomValue2(k, j int64) float64 {
	return float64(float64(k)*a.v[0]) + float64(float64(j)*(a.v[1]-a.v[0]))
}

// randSum draws S_k from the structure: for k <= maxStructuralDraws, k
// values drawn from their probabilities; beyond, the counts of the values
// drawn as binomial counts one after the other (N_1 ~ Binomial(k, p_1),
// N_2 ~ Binomial(k − N_1, p_2/(1 − p_1)), …; gonum distuv.Binomial on the
// caller's source). For two or three values it returns the atom of the
// counts as atomValue2 and atomValue3 round it, the same float the CDF
// counts.
func (a atomicSums) randSum(k int64, r *rand.Rand) float64 {
	counts := make([]int64, len(a.v))
	if k <= maxStructuralDraws {
		for range k {
			u := r.Float64()
			i := 0
			for i < len(a.p)-1 && u >= a.p[i] {
				u -= a.p[i]
				i++
			}
			counts[i]++
		}
	} else {
		left, rest := k, 1.0
		for i := range a.p[:len(a.p)-1] {
			if left == 0 {
				break
			}
			q := min(1, a.p[i]/rest)
			n := int64(distuv.Binomial{N: float64(left), P: q, Src: r}.Rand())
			counts[i] = n
			left -= n
			rest -= a.p[i]
		}
		counts[len(counts)-1] += left
	}
	switch len(a.v) {
	case 2:
		return a.atomValue2(k, counts[1])
	case 3:
		c, ia, ib := a.threeRoles()
		return a.atomValue3(k, counts[c], counts[ib], c, ia, ib)
	}
	s := 0.0
	for i, n := range counts {
		s += float64(n) * a.v[i]
	}
	return s
}

// eval returns P(S_k <= x), P(S_k > x) and whether the values are exact.
func (a atomicSums) eval(k int64, x float64) (below, above float64, exact bool) {
	n := float64(k)
	lo, hi := a.v[0]*n, a.v[len(a.v)-1]*n
	switch {
	case x < lo:
		return 0, 1, true
	case x >= hi:
		return 1, 0, true
	case len(a.v) == 1:
		return 1, 0, true
	case x < float64(n-1)*a.v[0]+a.v[1]:
		// only the lowest atom, all k at v_0: p_0^k exactly
		lp := n * math.Log(a.p[0])
		return math.Exp(lp), -math.Expm1(lp), true
	case x >= float64(n-1)*a.v[len(a.v)-1]+a.v[len(a.v)-2]:
		// all but the highest atom, all k at v_top
		lp := n * math.Log(a.p[len(a.p)-1])
		return -math.Expm1(lp), math.Exp(lp), true
	case len(a.v) == 2:
		// S_k = k·v0 + N·(v1 − v0), N ~ Binomial(k, p1); j the largest count
		// whose atom (atomValue2) is <= x.
		j := int64(max(-1, min(n, math.Floor((x-n*a.v[0])/(a.v[1]-a.v[0])))))
		for j < k && a.atomValue2(k, j+1) <= x {
			j++
		}
		for j >= 0 && a.atomValue2(k, j) > x {
			j--
		}
		b, c := binomialTails(k, j, a.p[1])
		return b, c, true
	case len(a.v) == 3:
		below, above = a.three(k, x)
		return below, above, true
	case a.exactFits(k):
		atoms, err := atomPower("SumIID", a.d.Atoms(), int(k))
		if err == nil {
			l := discreteFromAtoms(atoms)
			return l.CDF(x), l.Survival(x), true
		}
	}
	below, above = a.saddle(n, x)
	return below, above, false
}

// saddle returns the second-order saddlepoint P(S <= x) and P(S > x), each
// tail from its own side. Within 1 sd of the mean, where w and u vanish
// and the formula's terms (1/u³ − 1/w³ among them) cancel (at 0.1 sd they
// lost 5e-6 to rounding), it uses the Edgeworth expansion to second order
// instead (error O(k^{-3/2}), Feller Vol. II §XVI.4, section from memory):
//
//	F ≈ Φ(z) − φ(z)·[λ3/6·He2(z) + λ4/24·He3(z) + λ3²/72·He5(z)]
func (a atomicSums) saddle(n, x float64) (below, above float64) {
	s := a.sd * math.Sqrt(n)
	z := (x - a.mu*n) / s
	if math.Abs(z) >= 1 {
		return a.saddleOff(n, x)
	}
	below, above = a.edgeworth(n, z)
	// a few very skewed cycles can put the expansion outside [0, 1]
	return min(1, max(0, below)), min(1, max(0, above))
}

// edgeworth returns the second-order Edgeworth P(Z <= z) and P(Z > z) of
// the standardised n-fold sum.
func (a atomicSums) edgeworth(n, z float64) (below, above float64) {
	l3, l4 := a.edgeworthLambdas(n)
	z2 := z * z
	phi := math.Exp(-z2/2) / math.Sqrt(2*math.Pi)
	c := phi * (l3/6*(z2-1) + l4/24*(z2-3)*z + l3*l3/72*((z2-10)*z2+15)*z)
	below = 0.5*math.Erfc(-z/math.Sqrt2) - c
	above = 0.5*math.Erfc(z/math.Sqrt2) + c
	return below, above
}

// saddleOff is saddle for x off the mean.
func (a atomicSums) saddleOff(n, x float64) (below, above float64) {
	xb := x / n
	if xb > a.mu {
		q := a.upper(n, xb, 1)
		return 1 - q, q
	}
	q := a.upper(n, xb, -1)
	return q, 1 - q
}

// upper returns the second-order saddlepoint P(σ·S >= σ·x) for the law of
// σ·X (σ = ±1), xb = x/n on the σ side of the mean.
func (a atomicSums) upper(n, xb float64, sign float64) float64 {
	q, _ := a.upperTerms(n, xb, sign)
	return q
}

// upperTerms returns upper's value and its second-order terms.
func (a atomicSums) upperTerms(n, xb float64, sign float64) (q, corr float64) {
	xb *= sign
	// Cumulants of σ·X tilted by s.
	cum := func(s float64) (k0, k1, k2, k3, k4 float64) {
		m := math.Inf(-1)
		for _, v := range a.v {
			m = max(m, s*sign*v)
		}
		var w0, w1 float64
		for i, v := range a.v {
			w := a.p[i] * math.Exp(s*sign*v-m)
			w0 += w
			w1 += w * sign * v
		}
		k1 = w1 / w0
		var c2, c3, c4 float64
		for i, v := range a.v {
			w := a.p[i] * math.Exp(s*sign*v-m) / w0
			d := sign*v - k1
			c2 += w * d * d
			c3 += w * d * d * d
			c4 += w * d * d * d * d
		}
		return m + math.Log(w0), k1, c2, c3, c4 - 3*c2*c2
	}
	// Solve K'(s) = xb for s > 0 by safeguarded Newton.
	sLo, sHi := 0.0, math.Inf(1)
	s := (xb - sign*a.mu) / (a.sd * a.sd)
	for range 200 {
		_, k1, k2, _, _ := cum(s)
		if k1 > xb {
			sHi = s
		} else {
			sLo = s
		}
		next := s - (k1-xb)/k2
		if !(next > sLo && next < sHi) || k2 == 0 {
			if math.IsInf(sHi, 1) {
				next = 2*s + 1/(a.sd)
			} else {
				next = sLo/2 + sHi/2
			}
		}
		if math.Abs(next-s) <= 1e-15*math.Abs(s) {
			s = next
			break
		}
		s = next
	}
	k0, _, k2, k3, k4 := cum(s)
	w := math.Sqrt(max(0, 2*n*(s*xb-k0)))
	u := s * math.Sqrt(n*k2)
	l3 := k3 / (math.Pow(k2, 1.5) * math.Sqrt(n))
	l4 := k4 / (k2 * k2 * n)
	phi := math.Exp(-w*w/2) / math.Sqrt(2*math.Pi)
	corr = phi * ((1/u)*(l4/8-5*l3*l3/24) - l3/(2*u*u) - 1/(u*u*u) + 1/(w*w*w))
	first := phi * (1/u - 1/w)
	if !(math.Abs(corr) <= 0.5*math.Abs(first)) {
		// the tilted law is too discrete (a few cycles, near the support's
		// end) for the expansion: its second-order terms are no longer
		// small, and only the first-order formula is kept
		corr = 0
	}
	q = 0.5*math.Erfc(w/math.Sqrt2) + first + corr
	return min(1, max(0, q)), corr
}

// accuracy returns the error bounds of eval's values for the k-fold sums.
func (a atomicSums) accuracy(k int64) Accuracy {
	switch {
	case len(a.v) == 2:
		return Accuracy{CDFAbs: 1e-13, SurvivalRel: 1e-12, TailFloor: 1e-300,
			Method: "exact binomial count of the two values (Loader 2000 terms)"}
	case len(a.v) == 3:
		return Accuracy{CDFAbs: threeCDFAbs, SurvivalRel: threeSurvivalRel, TailFloor: threeTailFloor,
			Method: "exact: binomial tails of two values summed over the count of the third (Loader 2000 terms)"}
	case a.exactFits(k):
		return Accuracy{CDFAbs: 1e-13, SurvivalRel: 1e-12, TailFloor: 1e-300,
			Method: "exact k-fold atoms (repeated squaring)"}
	}
	return Accuracy{CDFAbs: a.edgeworthBound(k),
		Method: "second-order saddlepoint (Lugannani & Rice 1980; Daniels 1987) of a k-fold discrete sum, bounded by Esseen's smoothing inequality against the Edgeworth law (the characteristic function's peaks bounded by branch and bound)"}
}

// binomialTails returns P(N <= j) and P(N > j) for N ~ Binomial(n, p), the
// tail on j's side of the mode summed outward (binomialSideTails).
func binomialTails(n, j int64, p float64) (atMost, above float64) {
	if j < 0 {
		return 0, 1
	}
	if j >= n {
		return 1, 0
	}
	return binomialSideTails(n, j, p)
}

// logBinom returns log P(N = i), N ~ Binomial(n, p), in Loader's (2000)
// saddle-point form (internal/binom, the library's one binomial kernel).
func logBinom(n, i, p float64) float64 { return binom.LogPMF(i, n, p, 1-p) }

// atomicSumLaw is the law of S_k for a finite discrete term whose k-fold
// atoms are too many to list: CDF and Survival come from atomicSums (exact
// for two or three values, the second-order saddlepoint otherwise, with the
// error bound Accuracy reports), Mean and Variance are exact, Quantile and
// UpperQuantile invert CDF and Survival by bisection, and Rand draws the
// values' counts from the structure (randSum). It does not list its atoms
// (there are too many): it is not Atomic.
type atomicSumLaw struct {
	a   atomicSums
	k   int64
	acc Accuracy
}

func newAtomicSumLaw(d Discrete, k int64) atomicSumLaw {
	a := newAtomicSums(d)
	return atomicSumLaw{a: a, k: k, acc: a.accuracy(k)}
}

// CDF returns P(S_k <= x); NaN for NaN x.
func (l atomicSumLaw) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	b, _, _ := l.a.eval(l.k, x)
	return b
}

// Survival returns P(S_k > x), computed directly; NaN for NaN x.
func (l atomicSumLaw) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	_, s, _ := l.a.eval(l.k, x)
	return s
}

// Quantile returns inf{x : CDF(x) >= p} by bisection; NaN for p outside [0, 1].
func (l atomicSumLaw) Quantile(p float64) float64 { return quantileByInversion(l, p) }

// UpperQuantile returns inf{x : Survival(x) <= q} by bisection; accurate for tiny q.
func (l atomicSumLaw) UpperQuantile(q float64) float64 { return upperQuantileByInversion(l, q) }

// Mean returns k times the term's mean.
func (l atomicSumLaw) Mean() float64 { return float64(l.k) * l.a.mu }

// Variance returns k times the term's variance.
func (l atomicSumLaw) Variance() float64 { return float64(l.k) * l.a.sd * l.a.sd }

// Accuracy reports the error bound of CDF and Survival (see atomicSums).
func (l atomicSumLaw) Accuracy() Accuracy { return l.acc }

// Support returns [k·v_min, k·v_max].
func (l atomicSumLaw) Support() (lo, hi float64) {
	n := float64(l.k)
	return n * l.a.v[0], n * l.a.v[len(l.a.v)-1]
}

// Rand draws S_k from the structure (randSum).
func (l atomicSumLaw) Rand(r *rand.Rand) float64 { return l.a.randSum(l.k, r) }

func (l atomicSumLaw) String() string {
	return fmt.Sprintf("SumIID(discrete, k=%d: %s)", l.k, summary(l))
}
