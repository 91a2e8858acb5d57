package dist

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"
)

// The lattice path of SumIID for a finite discrete law whose atoms lie on a
// common lattice v_i = v_0 + n_i·δ (integers n_i with greatest common divisor
// 1; LoRa airtimes at one spreading factor are such a law). The k-fold sum is
// k·v_0 + δ·M with M = Σ n-values, an integer law. Its masses on a window
// [m_0, m_0 + N) holding all but 2·bulkTail of the mass (Chernoff bounds from
// the exact transform, so the window is set by the standard deviation √k·σ
// and not by k) are the inverse discrete Fourier transform of the
// characteristic function on the grid θ_j = 2πj/N:
//
//	P(M = m_0 + r) = (1/N)·Σ_j φ(θ_j)^k·exp(-iθ_j·(m_0 + r))
//
// (mass outside the window wraps round, at most 2·bulkTail in all: the
// damping against wrap-around of Embrechts & Frei 2009 reduces to choosing
// the window this wide). φ(θ_j) is first taken for every j from one FFT of
// the masses folded modulo N; where |φ|^k could exceed exp(-45) it is
// recomputed directly as exp(k·log φ_c(θ_j)) of the law centred on its
// mean, with φ_c - 1 evaluated directly (never a complex power), and the
// phase of the centre taken modulo N in integers. Sizes are 2^a·3^b·5^c
// (gonum dsp/fourier).

const (
	latticeMinAtoms = 1 << 16 // below this many lattice points the exact convolution is used
	latticeMaxN     = 1 << 22 // largest FFT
	latticeTol      = 1e-9    // relative tolerance of lattice membership
)

// latticeOf returns v0, δ and the integer offsets of the atoms' values when
// they lie on a common lattice (within latticeTol of the span), with
// gcd(n_i) = 1.
func latticeOf(d Discrete) (v0, delta float64, ns []int64, ok bool) {
	vs := d.values
	if len(vs) < 2 {
		return 0, 0, nil, false
	}
	v0 = vs[0]
	span := vs[len(vs)-1] - v0
	if !(span > 0) || !finite(span) {
		return 0, 0, nil, false
	}
	tol := latticeTol * span
	// approximate gcd of the differences by Euclid's algorithm with a tolerance
	g := vs[1] - v0
	for _, v := range vs[2:] {
		a, b := v-v0, g
		for b > tol {
			a, b = b, math.Mod(a, b)
			if a-b < tol && b > tol { // remainder within tol of a: a divides
				b = 0
			}
		}
		g = a
		if g <= tol {
			return 0, 0, nil, false
		}
	}
	if span/g > 1e7 {
		return 0, 0, nil, false
	}
	ns = make([]int64, len(vs))
	var top int64
	for i, v := range vs {
		q := (v - v0) / g
		r := math.Round(q)
		if math.Abs(q-r)*g > tol {
			return 0, 0, nil, false
		}
		ns[i] = int64(r)
		top = ns[i]
	}
	// refine δ from the top offset so k·δ carries no accumulated error
	return v0, span / float64(top), ns, true
}

// latticeSumIID returns the k-fold sum of a discrete lattice law by the FFT
// described above, with its error; ok is false when d is not on a lattice
// small enough for the exact path to be worse.
func latticeSumIID(d Discrete, k int, minPoints float64) (Law, bool, error) {
	v0, delta, ns, ok := latticeOf(d)
	if !ok {
		return nil, false, nil
	}
	fk := float64(k)
	top := ns[len(ns)-1]
	if fk*float64(top)+1 <= minPoints {
		return nil, false, nil
	}
	// integer law: atoms at n_i - μ (centred), masses p_i
	var mu float64
	for i, n := range ns {
		mu += d.probs[i] * float64(n)
	}
	var v float64
	cat := make([]Atom, len(ns))
	for i, n := range ns {
		c := float64(n) - mu
		v += d.probs[i] * c * c
		cat[i] = Atom{Value: c, Mass: d.probs[i]}
	}
	tr := atomsTransform(cat)
	vmax := math.Max(mu, float64(top)-mu)
	ck := complex(fk, 0)
	logm := func(s complex128) complex128 { return ck * tr.logm(s) }
	sd := math.Sqrt(fk * v)
	hiEnd := chernoffEnd(logm, math.Inf(1), sd, bulkTail)
	loEnd := chernoffEnd(func(s complex128) complex128 { return logm(-s) }, math.Inf(1), sd, bulkTail)
	mean := fk * mu
	mlo := math.Max(0, math.Floor(mean-loEnd))
	mhi := math.Min(fk*float64(top), math.Ceil(mean+hiEnd))
	width := int(mhi-mlo) + 1
	n := fftSize(width)
	if n > latticeMaxN {
		return nil, true, paramErr("SumIID", "k", k, fmt.Sprintf("the lattice sum needs %d points (at most %d)", n, latticeMaxN))
	}
	m0 := int64(mlo)
	mc := int64(math.Round(mean))
	frac := mean - float64(mc) // the centre's offset from the integer mc
	// φ on the grid from one FFT of the masses folded modulo n
	buf := make([]complex128, n)
	for i, nn := range ns {
		buf[nn%int64(n)] += complex(d.probs[i], 0)
	}
	fft := fourier.NewCmplxFFT(n)
	fft.Sequence(buf, buf) // buf[j] = Σ p·exp(+2πi·j·n/N) = φ(θ_j)
	var absSum, relErr float64
	direct := 0
	for j := 0; j < n; j++ {
		a := cmplx.Abs(buf[j])
		if a == 0 || fk*math.Log(a) < -45 {
			buf[j] = 0
			continue
		}
		direct++
		jj := j
		if j > n/2 {
			jj = j - n
		}
		th := 2 * math.Pi * float64(jj) / float64(n)
		lg := logm(complex(0, th)) // k·log φ_c(θ)
		// exp(iθ·(mc - m0)) with the integer phase reduced modulo n
		ph := ((int64(jj)*(mc-m0))%int64(n) + int64(n)) % int64(n)
		phase := 2*math.Pi*float64(ph)/float64(n) + th*frac
		c := cmplx.Exp(lg + complex(0, phase))
		buf[j] = c
		absSum += cmplx.Abs(c)
		e := 50.0
		if math.Abs(th)*vmax >= 0.5 { // log of the sum itself: k·ε absolute
			e += fk
		}
		relErr = math.Max(relErr, e)
	}
	fft.Coefficients(buf, buf) // Σ_j c_j·exp(-2πi·j·r/N)
	atoms := make([]Atom, 0, width)
	for r := 0; r < width; r++ {
		p := real(buf[r]) / float64(n)
		if p > 0 {
			atoms = append(atoms, Atom{Value: fk*v0 + delta*float64(m0+int64(r)), Mass: p})
		}
	}
	if len(atoms) == 0 {
		return nil, true, fmt.Errorf("dist.SumIID: lattice sum of %v with k = %d has no mass: %w", d, k, ErrParam)
	}
	eps := 0x1p-52
	// per atom: the transform values' rounding (relErr ulps each) and the
	// FFT's (3·log2 N ulps), times 4 for safety, plus the wrapped mass
	atomErr := 4*absSum/float64(n)*(relErr+3*math.Log2(float64(n)))*eps + 2*bulkTail
	cdfAbs := float64(width)*atomErr + 2*bulkTail
	dd := discreteFromAtoms(atoms)
	acc := Accuracy{
		CDFAbs: cdfAbs, SurvivalRel: 1e-6, TailFloor: cdfAbs * 1e6,
		Method: fmt.Sprintf("lattice FFT of %d points (%d transform values), step %g", n, direct, delta),
	}
	return latticeDiscrete{Discrete: dd, acc: acc, mean: fk * d.Mean(), variance: fk * d.Variance()}, true, nil
}

// fftSize returns the smallest 2^a, 3·2^a or 5·2^a that is at least n.
func fftSize(n int) int {
	best := math.MaxInt
	for _, m := range []int{1, 3, 5} {
		s := m
		for s < n {
			s *= 2
		}
		best = min(best, s)
	}
	return best
}

// latticeDiscrete is the k-fold sum of a lattice law computed by FFT: a
// finite discrete law (its atoms the computed masses, negative rounding
// residue dropped) that reports its error. Mean and Variance are exact
// (k times the term's).
type latticeDiscrete struct {
	Discrete
	acc            Accuracy
	mean, variance float64
}

// Accuracy reports the error bound of the FFT (see lattice.go).
func (l latticeDiscrete) Accuracy() Accuracy { return l.acc }

// Mean returns k times the term's mean.
func (l latticeDiscrete) Mean() float64 { return l.mean }

// Variance returns k times the term's variance.
func (l latticeDiscrete) Variance() float64 { return l.variance }

func (l latticeDiscrete) String() string {
	return fmt.Sprintf("SumIID(lattice, %d atoms: %s)", l.Len(), summary(l))
}
