package dist

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/joulelaw/joulelaw/internal/lattice"
)

// The lattice path of SumIID for a finite discrete law whose atoms lie on a
// common lattice v_i = v_0 + n_i·δ (integers n_i with greatest common divisor
// 1; LoRa airtimes at one spreading factor are such a law). The k-fold sum is
// k·v_0 + δ·M with M = Σ n-values, an integer law. Its masses on a window
// [m_0, m_0 + N) holding all but 2·latticeWindowTail of the mass (Chernoff bounds from
// the exact transform, so the window is set by the standard deviation √k·σ
// and not by k) are the inverse discrete Fourier transform of the
// characteristic function on the grid θ_j = 2πj/N:
//
//	P(M = m_0 + r) = (1/N)·Σ_j φ(θ_j)^k·exp(-iθ_j·(m_0 + r))
//
// (mass outside the window wraps round, at most 2e-60 in all). The far
// masses, which this computes only to about 1e-16 of the largest, are
// computed again from tilted laws P_α(m) ∝ P(m)·exp(α·m) (exponential
// damping, as in Embrechts & Frei 2009), the transform taken at θ - iα, with
// α at the saddlepoints where the Chernoff bound is 1e-8 and 1e-15 on
// each side; each mass comes from the estimate with the smallest
// error bound (rounding of its transform values and FFT, and the tilted
// law's wrapped mass by Chernoff bounds), so survival values keep relative
// precision far into the tail. |φ(θ_j)| is first taken for every j <= N/2
// from one FFT of the masses folded modulo N; where |φ|^k could exceed
// exp(-45) it is recomputed directly as exp(k·log φ_c(θ_j)) of the law
// centred on its mean, with φ_c - 1 evaluated directly (never a complex
// power), and the phase of the centre taken modulo N in integers. The
// inversion, its rounding bound and the FFTs are the module's one lattice
// inversion (internal/lattice, which orderstat's counts use too: one real
// FFT, the values at j > N/2 being the conjugates). Sizes are
// 2^a·3^b·5^c (gonum dsp/fourier).

const (
	latticeMinAtoms = 1 << 16 // below this many lattice points the exact convolution is used
	latticeMaxN     = 1 << 22 // largest FFT
	latticeTol      = 1e-9    // relative tolerance of lattice membership
	// mass left outside the window at each end: the window reaches some 9
	// standard deviations of the tilted laws beyond the farthest tilt
	latticeWindowTail = 1e-60
)

// latticeOf returns v0, δ and the integer offsets of the atoms' values when
// they lie on a common lattice (latticeOfValues).
func latticeOf(d Discrete) (v0, delta float64, ns []int64, ok bool) {
	return latticeOfValues(d.values())
}

// latticeOfValues returns v0, δ and the integer offsets of the sorted,
// distinct values vs when they lie on a common lattice (within latticeTol
// of the span), with gcd(n_i) = 1.
func latticeOfValues(vs []float64) (v0, delta float64, ns []int64, ok bool) {
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
	if fk*float64(top)+1 <= minPoints || multichoose(len(ns), k) <= minPoints {
		return nil, false, nil // the exact convolution has few atoms
	}
	// integer law: atoms at n_i - μ (centred), masses p_i
	ps := d.probs()
	var mu float64
	for i, n := range ns {
		mu += ps[i] * float64(n)
	}
	var v float64
	cat := make([]Atom, len(ns))
	for i, n := range ns {
		c := float64(n) - mu
		v += ps[i] * c * c
		cat[i] = Atom{Value: c, Mass: ps[i]}
	}
	tr := atomsTransform(cat)
	vmax := max(mu, float64(top)-mu)
	ck := complex(fk, 0)
	logm := func(s complex128) complex128 { return ck * tr.logm(s) }
	sd := math.Sqrt(fk * v)
	hiEnd := chernoffEnd(logm, math.Inf(1), sd, latticeWindowTail)
	loEnd := loEndAt(logm, sd, latticeWindowTail)
	mean := fk * mu
	mlo := max(0, math.Floor(mean-loEnd))
	mhi := min(fk*float64(top), math.Ceil(mean+hiEnd))
	width := int(mhi-mlo) + 1
	n := fftSize(width)
	if n > latticeMaxN {
		return nil, false, nil // a sparse lattice: left to the exact convolution
	}
	m0 := int64(mlo)
	mc := int64(math.Round(mean))
	frac := mean - float64(mc) // the centre's offset from the integer mc
	inv := lattice.NewInverter(n)
	K := func(al float64) float64 { return real(logm(complex(al, 0))) }
	// the grid indices l <= n/2 where |φ(θ_l)|^k >= exp(-60), from one FFT
	// of the masses folded modulo n; the tilted transform is taken there
	// only: for the small tilts used here |φ_α(θ)|^k differs from |φ(θ)|^k
	// by a factor near 1, and the threshold is 1e-7 of the one below which
	// a value is left out (exp(-45))
	var sig []int
	for l, a := range inv.Moduli(nil, ns, ps) {
		if a > 0 && fk*math.Log(a) >= -60 {
			sig = append(sig, l)
		}
	}
	direct := 0
	// tilted computes q_r = P_α(M = m0 + r), the law tilted by exp(α·(m - kμ)),
	// and returns the bound on each q_r's error and K(α).
	tilted := func(al float64) (q []float64, qErr, kAl float64) {
		kAl = K(al)
		direct += len(sig)
		// k·log φ_c(θ - iα) - K(α) about the integer centre mc, plus the
		// centre's fraction: rounding 50 ulps, and k ulps more where the
		// log is of the sum itself (|α + iθ|·vmax >= 1/2)
		q, qErr = inv.Invert(mc-m0, lattice.Spectrum{At: sig, Cut: -45}, func(_ int, th float64) (complex128, float64) {
			lg := logm(complex(al, th)) - complex(kAl, 0)
			e := 50.0
			if cmplx.Abs(complex(al, th))*vmax >= 0.5 {
				e += fk
			}
			return lg + complex(0, th*frac), e
		})
		// wrapped mass of the tilted law (Chernoff bounds with a further
		// tilt α, and back to 0)
		alias := 0.0
		for _, side := range []float64{1, -1} {
			end := mhi
			if side < 0 {
				end = mlo
			}
			if (side > 0 && end >= fk*float64(top)) || (side < 0 && end <= 0) {
				continue // the window reaches the support's end: nothing beyond
			}
			// P_α(side·(M - end) > 0) <= exp(K(α + side·u) - K(α) - side·u·(end - kμ))
			best := math.Inf(1)
			for _, u := range []float64{math.Abs(al) / 4, math.Abs(al) / 2, math.Abs(al), 2 * math.Abs(al), 1 / sd, 2 / sd, 4 / sd, 8 / sd, 16 / sd} {
				if u > 0 {
					best = min(best, K(al+side*u)-kAl-side*u*(end-mean))
				}
			}
			alias += math.Exp(best)
		}
		// the transform values' and the FFT's rounding (lattice.Inverter's
		// bound) plus the wrapped mass
		return q, qErr + alias, kAl
	}
	pm := make([]float64, width)
	pe := make([]float64, width)
	q, qErr, _ := tilted(0)
	for r := range pm {
		pm[r], pe[r] = q[r], qErr
	}
	// tails: tilts whose saddlepoints sit where the Chernoff bound is 1e-8
	// and 1e-15; each mass is taken from the estimate with the
	// smallest error bound, so the far masses keep relative precision
	dK := func(al float64) float64 {
		const eta = 1e-20
		h := eta * max(1, math.Abs(al))
		return imag(logm(complex(al, h))) / h
	}
	for _, side := range []float64{1, -1} {
		for _, e := range []float64{1e-8, 1e-15} {
			var al float64
			if side > 0 {
				al = saddle(dK, chernoffEnd(logm, math.Inf(1), sd, e), math.Inf(1), sd)
			} else {
				neg := func(a float64) float64 { return -dK(-a) }
				al = -saddle(neg, loEndAt(logm, sd, e), math.Inf(1), sd)
			}
			if !(al != 0) || !finite(al) {
				continue
			}
			q, qe, kAl := tilted(al)
			for r := range pm {
				f := kAl - al*(float64(m0+int64(r))-mean)
				if f > 700 {
					continue
				}
				if er := qe * math.Exp(f); er < pe[r] {
					pm[r], pe[r] = q[r]*math.Exp(f), er
				}
			}
		}
	}
	atoms := make([]Atom, 0, width)
	var cdfAbs float64
	for r, p := range pm {
		cdfAbs += pe[r]
		if p > 0 {
			atoms = append(atoms, Atom{Value: fk*v0 + delta*float64(m0+int64(r)), Mass: p})
		}
	}
	if len(atoms) == 0 {
		return nil, true, fmt.Errorf("dist.SumIID: lattice sum of %v with k = %d has no mass: %w", d, k, ErrParam)
	}
	// plus the wrapped mass and the rounding of the running sums of up to
	// width masses that the discrete law's CDF and survival are
	cdfAbs += 2*latticeWindowTail + float64(width)*0x1p-52
	// survival relative error: the errors of the masses above each point
	// against the survival there; the floor is the largest survival at which
	// they exceed 1e-6 of it (the window's end, beyond which S <= latticeWindowTail)
	floor := 0.0
	var sAbove, eAbove float64
	for r := width - 1; r >= 0; r-- {
		if sAbove > 0 && eAbove > 1e-6*sAbove {
			floor = max(floor, sAbove)
		}
		sAbove += max(pm[r], 0)
		eAbove += pe[r]
	}
	dd := discreteFromAtoms(atoms)
	acc := Accuracy{
		CDFAbs: cdfAbs, SurvivalRel: 1e-6, TailFloor: floor,
		Method: fmt.Sprintf("lattice FFT of %d points, 4 tilts (%d transform values), step %g", n, direct, delta),
	}
	return latticeDiscrete{Discrete: dd, acc: acc, mean: fk * d.Mean(), variance: fk * d.Variance()}, true, nil
}

// loEndAt is the Chernoff bound on the eps lower quantile of the centred
// law with log-transform logm (a positive distance below the mean).
func loEndAt(logm func(complex128) complex128, sd, eps float64) float64 {
	return chernoffEnd(func(s complex128) complex128 { return logm(-s) }, math.Inf(1), sd, eps)
}

// multichoose returns C(a+k-1, k), the number of multisets of size k from
// a values (a bound on the atoms of a k-fold sum of an a-atom law), capped
// at 1e18.
func multichoose(a, k int) float64 {
	c := 1.0
	for i := 1; i <= min(k, a-1); i++ {
		c *= float64(k+i) / float64(i)
		if c > 1e18 {
			return 1e18
		}
	}
	return c
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
