package orderstat

import (
	"math"

	loader "github.com/joulelaw/joulelaw/internal/binom"
	"github.com/joulelaw/joulelaw/internal/lattice"
)

// This file holds the fast path of the Poisson-binomial count C = Σ
// Bin(n_i, p_i): each term's binomial probabilities by the ratio recurrence
// (internal/binom's Walk: Loader's form as the anchor, then the ratios), and the
// count's probabilities by direct convolution of those positive values, so
// that every probability, and every tail summed from its own end, keeps its
// relative precision. The tilted transform of count.go stays the exact path
// for counts too wide for a convolution.

// runCut is the smallest probability binomRun keeps: normal float64
// numbers only, so that every kept value has full relative precision.
const runCut = 1e-305

// binomRun returns P(Bin(t.n, t.p) = j) for j = lo, lo+1, … over [a, b]
// (integers, 0 <= a <= b <= t.n; values below cut, at least runCut, left
// out at the ends), and a bound rel on each value's relative error. The
// largest probability on [a, b] (at the mode, clamped into [a, b]) comes
// from Loader's saddle-point form, the others by the ratio recurrence
// outward from there, both by internal/binom's Walk (never taken afresh),
// whose bounds (binom.Rel at the anchor, binom.RelAfter for the steps)
// give rel. The result is empty (lo = a) where even the largest is below
// cut. dst is reused when it has the capacity.
func binomRun(t binom, a, b, cut float64, dst []float64) (lo float64, pmf []float64, rel float64) {
	cut = max(cut, runCut)
	mode := math.Floor((t.n + 1) * t.p)
	mode = max(a, min(mode, min(b, t.n)))
	w := loader.NewWalk(mode, t.n, t.p, t.q, 0)
	if !(w.P >= cut) {
		return a, dst[:0], 0
	}
	// Walk down first into dst, reverse, then walk up.
	pmf = append(dst[:0], w.P)
	down := w
	for down.X > a {
		down.Down()
		if down.P < cut {
			break
		}
		pmf = append(pmf, down.P)
	}
	steps := len(pmf) - 1
	for i, k := 0, len(pmf)-1; i < k; i, k = i+1, k-1 {
		pmf[i], pmf[k] = pmf[k], pmf[i]
	}
	lo = mode - float64(steps)
	top := min(b, t.n)
	for w.X < top {
		w.Up()
		if w.P < cut {
			break
		}
		pmf = append(pmf, w.P)
	}
	steps = max(steps, len(pmf)-1-steps)
	return lo, pmf, loader.RelAfter(loader.Rel(mode, t.n, t.p, t.q), steps)
}

// convRel bounds the relative error of the probabilities of a convolution
// of g binomial terms whose own values have relative errors summing to
// terms, and whose windows hold w values in all: one rounding per product
// and per addition on top (sums of positive values).
func convRel(g int, terms, w float64) float64 {
	return terms + (float64(g)+w+2)*0x1p-53
}

// lowCount returns P(C = j) for j = 0, …, top, C = Σ Bin(n_i, p_i) over the
// terms ts, by direct convolution of the terms' probabilities on [0, top]
// (binomRun with cut runCut), and the sum of the terms' stated relative
// errors: a probability P(C = j) with j <= top depends
// only on the terms' probabilities at counts up to j, so nothing is lost by
// cutting the terms at top. Products that underflow are dropped, an
// absolute error below (top+1)·len(ts)·runCut in each value. It returns
// nil where a term has no probability above runCut on [0, top]. dst is
// its working memory where it has the room (the result is then in it),
// else one allocation.
func lowCount(ts []binom, top float64, dst []float64) (pmf []float64, rel float64) {
	size := int(top) + 1
	// one buffer: the running sum, the next one, and the terms' runs (at
	// most size values each)
	buf := dst[:cap(dst)]
	if len(buf) < 3*size {
		buf = make([]float64, 3*size)
	}
	acc, next := buf[:size:size], buf[size:2*size:2*size]
	acc[0] = 1
	accTop := 0 // last index of acc that may be non-zero
	scratch := buf[2*size : 2*size : 3*size]
	for _, t := range ts {
		b := min(top, t.n)
		lo, pmf, r := binomRun(t, 0, b, runCut, scratch)
		scratch = pmf
		if len(pmf) == 0 {
			return nil, 0
		}
		rel += r
		l := int(lo)
		newTop := min(accTop+l+len(pmf)-1, size-1)
		clear(next[:newTop+1])
		// P(C = i + l + j) gets acc[i]·pmf[j] (products that underflow are
		// dropped, as the doc says)
		lattice.ConvolveAdd(next[:newTop+1], acc[:accTop+1], pmf, l)
		acc, next = next, acc
		accTop = newTop
	}
	return acc[:accTop+1], rel
}

// splitConv returns P(C <= m) and P(C > m), m an integer in [0, size)
// (counted after the shift), each to relative error rel, by lowCount on the
// side of the count where m lies nearer its end (the count of the other
// outcome, size − C, where m is in the upper half). ok is false where the
// convolution would cost more than the tilted transform of window, or where
// its bound cannot be met (a tail below 1e-280, terms that underflow on the
// stretch needed): the caller then takes the exact path.
func (cm countModel) splitConv(m float64) (le, gt, rel float64, ok bool) {
	ts := cm.terms
	mm := m
	mean := cm.mean - cm.shift
	flip := m >= cm.size/2
	if flip {
		flipped := make([]binom, len(ts))
		for i, t := range ts {
			flipped[i] = binom{n: t.n, p: t.q, q: t.p}
		}
		ts, mm, mean = flipped, cm.size-m-1, cm.size-mean
	}
	sd := math.Sqrt(cm.variance)
	fft := 64.0
	for fft < 2*(9*sd+12) {
		fft *= 2
	}
	// The counts up to mm first: enough where P(C' <= mm) <= 1/2 (the
	// other side is then 1 minus it, without loss). Otherwise the upper
	// side from its own terms, up to where the log-concave tail beyond is
	// below 1e-16 of the sum (about 10 standard deviations past the mean).
	top := mm
	if mean < mm {
		// P(C' <= mm) about 1/2 or more: the second pass at once.
		top = min(math.Ceil(max(mm, mean)+10*sd+20), cm.size)
	}
	var pmf []float64
	var termRel, below, above float64
	// lowCount's working memory for counts up to 255 on the stack: pmf is
	// read here only, before the next pass writes it again.
	var room [3 * 256]float64
	for pass := 0; pass < 2; pass++ {
		// Cost in multiply-adds against the transform's (see pmfAll).
		convCost := 0.0
		for _, t := range ts {
			convCost += (top + 1) * min(top+1, termWidth(t))
		}
		if convCost > 150*float64(len(ts))*(fft/2+1) {
			return 0, 0, 0, false
		}
		pmf, termRel = lowCount(ts, top, room[:])
		if pmf == nil {
			return 0, 0, 0, false
		}
		below, above = 0, 0
		for j, v := range pmf {
			if float64(j) <= mm {
				below += v
			} else {
				above += v
			}
		}
		if below <= 0.5 || top > mm {
			break
		}
		top = min(math.Ceil(max(mm, mean)+10*sd+20), cm.size)
	}
	rel = convRel(len(ts), termRel, float64(len(ts))*(top+1)) + 2*0x1p-53
	if rel > 1e-11 {
		// Not within what the transform's path states.
		return 0, 0, 0, false
	}
	var lower, upper float64 // P(C' <= mm), P(C' > mm)
	switch {
	case below < 1e-280:
		return 0, 0, 0, false
	case below <= 0.5:
		lower, upper = below, 1-below
	default:
		// The upper side from its own terms: the sum up to top and a
		// bound on the rest, by log-concavity of the Poisson-binomial
		// probabilities (each Bernoulli's are, and convolution keeps it:
		// Hoggar 1974, J. Combin. Theory B 16:248–254), so that beyond top
		// the ratio P(j+1)/P(j) stays at most r = P(top)/P(top−1).
		rest := 0.0
		if n := len(pmf); float64(n-1) < cm.size {
			if n < 2 || pmf[n-2] == 0 {
				return 0, 0, 0, false
			}
			r := pmf[n-1] / pmf[n-2]
			if !(r < 1) {
				return 0, 0, 0, false
			}
			rest = pmf[n-1] * r / (1 - r)
		}
		if above < 1e-280 || rest > 1e-16*above {
			return 0, 0, 0, false
		}
		lower, upper = 1-above-rest/2, above+rest/2
		rel += 1e-16
	}
	if flip {
		return upper, lower, rel, true
	}
	return lower, upper, rel, true
}
