// Package lattice holds joulelaw's kernels for laws on the integers: the
// one inversion of the transform of an integer-valued law on a window of
// consecutive integers by the discrete Fourier transform (Inverter), and
// the one direct convolution of mass arrays (Convolve, ConvolveAdd).
// Package dist (the k-fold sums of laws on a lattice, SumIID's lattice FFT
// and dense sums, SumDiscrete) and package orderstat (the law of the
// number of nodes, out of several groups, beyond a threshold: a
// Poisson-binomial count) use them; each chooses its window, its tilts and
// its transform, and this package does the inversion and states its
// rounding.
//
// For an integer law M with transform φ(ω) = E[exp(iωM)] and a window of
// N integers m0, m0+1, …, m0+N−1, the inverse discrete Fourier transform on
// the grid ω_l = 2πl/N,
//
//	q_r = (1/N)·Σ_{l=0}^{N−1} φ(ω_l)·exp(−iω_l·(m0 + r)),   r = 0 … N−1,
//
// is exactly Σ_j P(M = m0 + r + jN): the law folded modulo N (its mass
// outside the window wraps round; the caller sizes the window so that it is
// negligible). Applied to an exponentially tilted law P_θ(m) ∝ P(m)·e^{θm}
// (damping, as in Embrechts & Frei 2009, Math. Meth. Oper. Res. 69:497–508;
// Hong 2013, Comput. Statist. Data Anal. 59:41–51, for the Poisson-binomial
// law), the caller untilts each q_r by exp(K(θ) − θ·m) and so keeps the
// relative precision of masses far into a tail. The law being real,
// φ(−ω) = conj φ(ω): the transform is taken at l = 0 … N/2 only and
// inverted by one real FFT (gonum dsp/fourier; any size, fastest for
// 2^a·3^b·5^c).
//
// An Inverter holds the FFT of one size and its scratch space: it is not
// safe for concurrent use (one per goroutine); its results depend only on
// the arguments of each call.
package lattice

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/dsp/fourier"
)

// MaxN caps the window of an Inverter (2^26 points, 1.5 GB of scratch at
// the most).
const MaxN = 1 << 26

// eps is the float64 machine epsilon, 2^-52 (twice the unit roundoff: the
// bound's units carry a factor 2 of margin).
const eps = 0x1p-52

// Inverter inverts transforms on windows of N integers.
type Inverter struct {
	n     int
	fft   *fourier.FFT
	coeff []complex128
	seq   []float64
	used  bool // coeff has been written (a new Inverter's is zero)
}

// NewInverter returns an Inverter for windows of n integers, n in
// [2, MaxN]; it panics outside (a programming error of the caller, which
// sizes its windows).
func NewInverter(n int) *Inverter {
	if n < 2 || n > MaxN {
		panic("lattice: window size outside [2, MaxN]") // panic-ok: the callers size their windows within MaxN
	}
	return &Inverter{n: n, fft: fourier.NewFFT(n), coeff: make([]complex128, n/2+1), seq: make([]float64, n)}
}

// N returns the window's size.
func (v *Inverter) N() int { return v.n }

// Spectrum says where Invert takes the transform.
type Spectrum struct {
	// At lists the l in [0, N/2] at which the transform is taken, in
	// increasing order; nil takes every l from 0 to N/2. The values at the
	// others count as 0 and add nothing to the error bound (the caller
	// leaves out only values it has bounded itself).
	At []int
	// Cut is the log-magnitude below which a value is left out (set to 0):
	// each one left out adds exp(Cut)·2/N to the bound. Use −Inf to keep
	// every value.
	Cut float64
	// Decreasing says that |φ(ω_l)| does not increase with l on [0, N/2]
	// (a sum of Bernoulli terms: each |q + p·e^{iω}| decreases on
	// [0, π]): the first value below Cut then ends the spectrum, and the
	// values beyond it, each below exp(Cut) too, are counted in the bound
	// without being computed.
	Decreasing bool
}

// Invert returns the window's values q_r (r = 0 … N−1) of the integer law
// whose log-transform about an integer centre c0 is
//
//	logPhi(l, ω_l) = log E[exp(iω_l·(M − c0))],   ω_l = 2πl/N,
//
// given d = c0 − m0, the centre's offset from the window's first integer
// m0 (the phase ω_l·d is reduced modulo 2π in integers, exactly). logPhi
// also returns a bound, in units of the float64 machine epsilon 2^-52, on the
// absolute error of its value (the relative error of exp of it). The
// result is Inverter's own buffer, valid until its next call; the values
// are those of the (folded) law, not clamped: rounding can leave tiny
// negative values.
//
// absErr bounds the rounding error of every q_r: that of the transform's
// values (each value's magnitude times its stated ulps) and of the FFT
// (3·log₂N ulps of the sum of the magnitudes, the usual bound for a
// radix-2/3/5 transform), times 4 for safety,
//
//	absErr = 4·Σ_l (|φ(ω_l)|/N)·(ulps_l + 3·log₂N)·2^-52  +  (left out)·exp(Cut)·2/N
//
// (the sum counting l and N−l). The error of the window itself (mass that
// wraps round) is the caller's to bound.
func (v *Inverter) Invert(d int64, sp Spectrum, logPhi func(l int, omega float64) (lg complex128, ulps float64)) (q []float64, absErr float64) {
	n := v.n
	half := n / 2
	if v.used {
		clear(v.coeff)
	}
	v.used = true
	dm := d % int64(n)
	if dm < 0 {
		dm += int64(n)
	}
	step := 2 * math.Pi / float64(n)
	invN := 1 / float64(n)
	var absSum, ulpSum float64 // Σ |c_l|, Σ |c_l|·ulps_l
	dropped := 0
	// visit takes the value at l, whose phase index l·d mod N is ld
	visit := func(l int, ld int64) bool {
		lg, ulps := logPhi(l, step*float64(l))
		w := 2.0 // l and N − l
		if l == 0 || 2*l == n {
			w = 1
		}
		if real(lg) < sp.Cut || math.IsNaN(real(lg)) {
			dropped += int(w)
			return false
		}
		// c_l = exp(lg + i·ω_l·d)/N, with l·d reduced modulo N in
		// integers; q_r = Σ_l c_l·e^{−2πi·lr/N} = Σ_l conj(c_l)·e^{+2πi·lr/N}:
		// the real inverse transform of the conjugates (q is real)
		mag := math.Exp(real(lg)) * invN
		sin, cos := math.Sincos(imag(lg) + float64(ld)*step)
		v.coeff[l] = complex(mag*cos, -mag*sin)
		absSum += w * mag
		ulpSum += w * mag * ulps
		return true
	}
	if sp.At == nil {
		ld := int64(0) // l·d mod N, stepped by additions
		for l := 0; l <= half; l++ {
			if !visit(l, ld) && sp.Decreasing {
				dropped += n - 1 - 2*l // the values beyond, counted as left out
				if 2*l == n {
					dropped++
				}
				break
			}
			if ld += dm; ld >= int64(n) {
				ld -= int64(n)
			}
		}
	} else {
		for i, l := range sp.At {
			if !visit(l, (int64(l)*dm)%int64(n)) && sp.Decreasing {
				for _, m := range sp.At[i+1:] {
					if m == 0 || 2*m == n {
						dropped++
					} else {
						dropped += 2
					}
				}
				break
			}
		}
	}
	q = v.fft.Sequence(v.seq, v.coeff)
	absErr = 4 * (ulpSum + absSum*3*math.Log2(float64(n))) * eps
	if dropped > 0 {
		absErr += float64(dropped) * math.Exp(sp.Cut) * invN
	}
	return q, absErr
}

// Moduli returns |φ(ω_l)| for l = 0 … N/2 of the law with masses p[i] at
// the integers at[i] >= 0, folded modulo N (one real FFT), into dst (reused
// when it has the capacity): the cheap first look at where a transform
// matters, before it is taken accurately.
func (v *Inverter) Moduli(dst []float64, at []int64, p []float64) []float64 {
	clear(v.seq)
	v.used = true
	for i, x := range p {
		v.seq[at[i]%int64(v.n)] += x
	}
	c := v.fft.Coefficients(v.coeff, v.seq)
	dst = dst[:0]
	for _, z := range c {
		dst = append(dst, cmplx.Abs(z))
	}
	return dst
}
