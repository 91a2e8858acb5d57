package dist

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// Sizes of TruncatedPowers.
const (
	// MaxTruncatedPowerPoints caps the lattice points of TruncatedPowers
	// (each power costs two real FFTs of about twice the points).
	MaxTruncatedPowerPoints = 1 << 21
	// MaxTruncatedPowers caps the powers TruncatedPowers forms.
	MaxTruncatedPowers = 1 << 12
)

// TruncatedPowers forms the convolution powers of a non-negative sequence
// cut at its own length: for masses p_i at the lattice points i = 0 … M−1
// (M = len(p)) of a law of non-negative values (possibly defective, its
// mass beyond the lattice left out), the masses q^(m)_i of its m-fold sum
// at the same points, for m = 2, 3, …. Cutting loses nothing below the
// lattice's end: a sum of non-negative terms never comes back below it, so
// q^(m) is exactly the m-fold sum's mass at 0 … M−1. This is the k-fold
// sum engine for laws known only by their values on a lattice (renewal
// counts, say); the k-fold sums of laws with a transform are SumIID's.
//
// Each power is one convolution by FFT (gonum dsp/fourier, zero-padded to
// at least 2M − 1: no wrap-round): q^(m) = q^(m−1) ∗ p, the transform of p
// taken once. An FFT convolution's rounding is of order ε·log₂N times the
// product of the two sequences' sums, absolute, for each entry (N the FFT
// size); negative residues are set to 0. TestTruncatedPowersAgainstDirect
// measures it against the direct sum.
//
// After each power it calls more(m, q) with q = q^(m) (m = 2, 3, …; q is
// TruncatedPowers' own buffer, valid during the call only: copy what is
// kept) and stops when more returns false or after maxPowers powers
// (m = maxPowers + 1). It returns the last m formed. Errors (wrapping
// ErrParam): p empty or longer than MaxTruncatedPowerPoints, an entry
// negative or not finite; maxPowers outside 1 … MaxTruncatedPowers.
func TruncatedPowers(p []float64, maxPowers int, more func(m int, q []float64) bool) (int, error) {
	const fn = "TruncatedPowers"
	if len(p) == 0 || len(p) > MaxTruncatedPowerPoints {
		return 0, paramErr(fn, "p", fmt.Sprintf("len %d", len(p)), fmt.Sprintf("must hold 1 to MaxTruncatedPowerPoints = %d masses", MaxTruncatedPowerPoints))
	}
	for i, v := range p {
		if !(v >= 0) || math.IsInf(v, 1) {
			return 0, paramErr(fn, fmt.Sprintf("p[%d]", i), v, "must be finite and >= 0")
		}
	}
	if maxPowers < 1 || maxPowers > MaxTruncatedPowers {
		return 0, paramErr(fn, "maxPowers", maxPowers, fmt.Sprintf("must be in 1 … MaxTruncatedPowers = %d", MaxTruncatedPowers))
	}
	M := len(p)
	n := fftSize(2*M - 1)
	fft := fourier.NewFFT(n)
	pad := make([]float64, n)
	copy(pad, p)
	pHat := fft.Coefficients(nil, pad)
	qHat := make([]complex128, len(pHat))
	q := append([]float64(nil), p...)
	m := 1
	for m <= maxPowers {
		clear(pad)
		copy(pad, q)
		fft.Coefficients(qHat, pad)
		for i := range qHat {
			qHat[i] *= pHat[i]
		}
		fft.Sequence(pad, qHat)
		for i := range q {
			q[i] = max(0, pad[i]/float64(n))
		}
		m++
		if !more(m, q) {
			break
		}
	}
	return m, nil
}
