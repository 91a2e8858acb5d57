package dist

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/dsp/fourier"
)

// The lattice fallback of Sum for terms without a known transform (a
// dist.FromDistuv law, say). Every term X_i is rounded to the lattice δ·Z:
// the mass of the cell ((k-½)δ, (k+½)δ] is put at kδ, computed from CDF
// differences below the term's median and Survival differences above it,
// over the term's range [Q_i(ε), Q_i(1-ε)] with ε = latticeCut/n (the end
// cells take the mass beyond). The lattice laws are convolved by FFT (gonum
// dsp/fourier, a size 2^a·3^b·5^c at least the length of the sum's lattice,
// so nothing wraps round: the supports are finite once the ends are cut,
// which replaces the exponential damping of Embrechts & Frei 2009). The CDF
// is the lattice sum's cumulative mass at the cell edges, interpolated
// linearly between them (a histogram of the sum).
//
// Error: the rounding error of the CDF is O(δ²) for smooth densities (the
// rounding of each term is symmetric about its lattice point) and O(δ)
// where a density jumps. It is estimated by repeating the computation with
// step 2δ and taking the largest difference of the two CDFs at the coarse
// cell edges, which is (for a δ² error) three times the error of the fine
// result and (for a δ error) equal to it; to this are added the cut mass,
// 2·latticeCut, and the FFT's rounding, 1e-15·log2 N per unit of mass;
// the stated bound is twice that estimate. Survival is summed from the top,
// and the rounding error of a light tail is local, so it keeps relative
// precision: its stated relative error is twice the largest relative
// difference of the two survivals where the fine one is at least the tail
// floor 1e6·(FFT rounding + cut mass), plus 1e-6 for that absolute error.
// Mean and Variance are the terms' (exact); Rand draws each term from its
// own sampler.

const (
	latticeCells = 1 << 15 // cells of the sum's lattice (the fine step)
	latticeCut   = 1e-15   // mass cut from the ends, over all terms
)

// latticeSum is the fallback for terms without a known transform.
func latticeSum(terms []Law) (Law, error) {
	for _, t := range terms {
		if hasAtoms(t) {
			return nil, fmt.Errorf("dist.Sum: a term has no known characteristic function and %v has atoms (the lattice fallback takes laws without atoms only): %w", t, ErrParam)
		}
	}
	n := len(terms)
	eps := latticeCut / float64(n)
	los, his := make([]float64, n), make([]float64, n)
	var span float64
	for i, t := range terms {
		los[i], his[i] = t.Quantile(eps), t.UpperQuantile(eps)
		if !finite(los[i]) || !finite(his[i]) || !(his[i] > los[i]) {
			return nil, fmt.Errorf("dist.Sum: lattice fallback: term %v has range [%v, %v] at the %v quantiles: %w", t, los[i], his[i], eps, ErrParam)
		}
		span += his[i] - los[i]
	}
	delta := span / latticeCells
	fine, err := latticeConvolve(terms, los, his, delta)
	if err != nil {
		return nil, err
	}
	coarse, err := latticeConvolve(terms, los, his, 2*delta)
	if err != nil {
		return nil, err
	}
	rnd := 1e-15 * math.Log2(float64(fine.n))
	floor := 1e6 * (rnd + 2*latticeCut)
	var diff, relDiff float64
	for m := range coarse.q {
		for _, o := range []float64{0, 0.25, 0.5, 0.75} {
			x := coarse.delta * (float64(coarse.k0+m) + o)
			diff = math.Max(diff, math.Abs(fine.cdfLattice(x)-coarse.cdfLattice(x)))
			if sf := fine.survLattice(x); sf >= floor {
				relDiff = math.Max(relDiff, math.Abs(coarse.survLattice(x)/sf-1))
			}
		}
	}
	var mean, variance, supLo, supHi float64
	for _, t := range terms {
		mean += t.Mean()
		variance += t.Variance()
		a, b := t.Support()
		supLo += a
		supHi += b
	}
	fine.mean, fine.variance, fine.supLo, fine.supHi = mean, variance, supLo, supHi
	fine.terms = append([]Law(nil), terms...)
	cdfAbs := 2*diff + 2*latticeCut + rnd
	fine.acc = Accuracy{CDFAbs: cdfAbs, SurvivalRel: 2*relDiff + (rnd+2*latticeCut)/floor, TailFloor: floor,
		Method: fmt.Sprintf("lattice FFT of %d terms, step %.3g, %d-point FFT, error from a step-2δ repeat", n, delta, fine.n)}
	return fine, nil
}

// latticeLaw is a sum computed on a lattice by latticeSum.
type latticeLaw struct {
	delta          float64
	k0             int       // lattice index of q[0]
	q              []float64 // masses at (k0 + m)·δ
	fc, sc         []float64 // cumulative masses up to and beyond cell m
	n              int       // FFT size
	mean, variance float64
	supLo, supHi   float64
	terms          []Law
	acc            Accuracy
}

// latticeConvolve rounds each term to the lattice δ·Z and convolves.
func latticeConvolve(terms []Law, los, his []float64, delta float64) (*latticeLaw, error) {
	k0s, lens := make([]int, len(terms)), make([]int, len(terms))
	k0, total := 0, 1
	for i := range terms {
		a, b := math.Floor(los[i]/delta+0.5), math.Floor(his[i]/delta+0.5)
		if !(b-a < 1e7) {
			return nil, fmt.Errorf("dist.Sum: lattice fallback: %v cells for one term: %w", b-a+1, ErrParam)
		}
		k0s[i], lens[i] = int(a), int(b-a)+1
		k0 += k0s[i]
		total += lens[i] - 1
	}
	N := fftSize(total)
	if N > latticeMaxN {
		return nil, fmt.Errorf("dist.Sum: lattice fallback: %d lattice points: %w", total, ErrParam)
	}
	fft := fourier.NewCmplxFFT(N)
	prod := make([]complex128, N)
	buf := make([]complex128, N)
	for i, t := range terms {
		med := t.Quantile(0.5)
		edge := func(k int) (f, s float64) { // F and S at the upper edge of cell k
			x := (float64(k) + 0.5) * delta
			if x <= med {
				f = t.CDF(x)
				return f, 1 - f
			}
			s = t.Survival(x)
			return 1 - s, s
		}
		for j := range buf {
			buf[j] = 0
		}
		var pf, ps float64 = 0, 1
		for j := 0; j < lens[i]; j++ {
			var m float64
			if j == lens[i]-1 {
				m = ps
			} else {
				f, s := edge(k0s[i] + j)
				if (float64(k0s[i]+j)+0.5)*delta <= med {
					m = f - pf
				} else {
					m = ps - s
				}
				pf, ps = f, s
			}
			buf[j] = complex(m, 0)
		}
		fft.Coefficients(buf, buf)
		if i == 0 {
			copy(prod, buf)
		} else {
			for j := range prod {
				prod[j] *= buf[j]
			}
		}
	}
	fft.Sequence(prod, prod)
	l := &latticeLaw{delta: delta, k0: k0, n: N, q: make([]float64, total), fc: make([]float64, total), sc: make([]float64, total)}
	for m := range l.q {
		l.q[m] = real(prod[m]) / float64(N)
	}
	var acc float64
	for m := range l.q {
		acc += l.q[m]
		l.fc[m] = math.Max(0, acc)
	}
	acc = 0
	for m := total - 1; m >= 0; m-- {
		l.sc[m] = math.Max(0, acc)
		acc += l.q[m]
	}
	return l, nil
}

// pos returns the cell m holding x and the fraction of it below x.
func (l *latticeLaw) pos(x float64) (int, float64) {
	u := x/l.delta - float64(l.k0) + 0.5 // cell m spans [m, m+1) in u
	if u < 0 {
		return -1, 0
	}
	if u >= float64(len(l.q)) {
		return len(l.q), 0
	}
	m := int(u)
	return m, u - float64(m)
}

// CDF returns P(X <= x) from the lattice histogram. NaN for NaN.
func (l *latticeLaw) CDF(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x < l.supLo:
		return 0
	case x >= l.supHi:
		return 1
	}
	return l.cdfLattice(x)
}

// cdfLattice is CDF without the support checks (mean and support are set
// after the error estimate).
func (l *latticeLaw) cdfLattice(x float64) float64 {
	m, fr := l.pos(x)
	switch {
	case m < 0:
		return 0
	case m >= len(l.q):
		return 1
	}
	below := 0.0
	if m > 0 {
		below = l.fc[m-1]
	}
	return math.Min(1, math.Max(0, below+fr*l.q[m]))
}

// Survival returns P(X > x) from the lattice histogram, summed from the
// top. NaN for NaN.
func (l *latticeLaw) Survival(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x < l.supLo:
		return 1
	case x >= l.supHi:
		return 0
	}
	return l.survLattice(x)
}

// survLattice is Survival without the support checks.
func (l *latticeLaw) survLattice(x float64) float64 {
	m, fr := l.pos(x)
	switch {
	case m < 0:
		return 1
	case m >= len(l.q):
		return 0
	}
	return math.Min(1, math.Max(0, l.sc[m]+(1-fr)*l.q[m]))
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

// Rand draws each term from its own sampler and adds.
func (l *latticeLaw) Rand(r *rand.Rand) float64 {
	x := 0.0
	for _, t := range l.terms {
		x += t.Rand(r)
	}
	return x
}

// Accuracy reports the error estimate of CDF and Survival.
func (l *latticeLaw) Accuracy() Accuracy { return l.acc }

// String prints the law compactly.
func (l *latticeLaw) String() string { return fmt.Sprintf("Sum(lattice: %s)", summary(l)) }

// latticeIID is the fallback of SumIID for a law without a known transform.
func latticeIID(l Law, k int) (Law, error) {
	return nil, fmt.Errorf("dist.SumIID: %v has no known characteristic function: %w", l, ErrParam)
}
