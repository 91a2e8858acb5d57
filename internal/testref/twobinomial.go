package testref

import "math"

// TwoBinomialCDF returns P(k·base + da·A + db·B <= x) for independent
// A ~ Binomial(k, pa) and B ~ Binomial(k, pb): the k-fold sum of a
// four-valued law made of two independent two-way choices (an uplink
// repeated or not, a downlink in one window or the other, say), whose value
// is base, base + da, base + db or base + da + db (da, db > 0).
//
// The masses of A are taken over 12 standard deviations of A (the rest
// below 1e-30), each in Loader's form (binomialMass). The conditional
// tails P(B <= m) are read from a table over B's middle (40 standard
// deviations each side of its mode): the lower tail below the mode summed
// upward from one BinomialTails value, the upper tail P(B > m) above it
// summed downward from another, so each entry is a sum of positive terms
// like BinomialTails's own; beyond the table BinomialTails is called
// directly. The error is about 1e-12 relative to the answer.
func TwoBinomialCDF(k int, base, da, pa, db, pb, x float64) float64 {
	m, sd := float64(k)*pa, math.Sqrt(float64(k)*pa*(1-pa))
	lo, hi := max(0, int(m-12*sd)), min(k, int(m+12*sd)+1)
	if !(pa > 0 && pa < 1 && pb > 0 && pb < 1) || k < 1 {
		return twoBinomialDirect(k, base, da, pa, db, pb, x, lo, hi)
	}
	bt := newBinomialCDFTable(k, pb)
	sum := 0.0
	for j := lo; j <= hi; j++ {
		y := (x - float64(k)*base - float64(j)*da) / db
		if y < 0 {
			continue
		}
		sum += binomialMass(k, j, pa) * bt.atMost(int(min(math.Floor(y), float64(k))))
	}
	return sum
}

// twoBinomialDirect is TwoBinomialCDF with every tail of B from
// BinomialTails (for degenerate probabilities, and as the table's check).
// A's masses are in Loader's form when 0 < pa < 1 (a difference of two
// tails near 1 would lose their relative precision below A's mode).
func twoBinomialDirect(k int, base, da, pa, db, pb, x float64, lo, hi int) float64 {
	sum := 0.0
	for j := lo; j <= hi; j++ {
		var mass float64
		if pa > 0 && pa < 1 {
			mass = binomialMass(k, j, pa)
		} else {
			_, ge := BinomialTails(k, j, pa)
			_, gt := BinomialTails(k, j+1, pa)
			mass = ge - gt
		}
		y := (x - float64(k)*base - float64(j)*da) / db
		if y < 0 {
			continue
		}
		b, _ := BinomialTails(k, int(math.Floor(y)), pb)
		sum += mass * b
	}
	return sum
}

// binomialCDFTable holds P(B <= m) for B ~ Binomial(n, p), 0 < p < 1, for
// m in [lo, hi]: below the mode as the lower tail, from the mode on as
// one minus the upper tail P(B > m) (kept in up).
type binomialCDFTable struct {
	n, lo, hi, mode int
	p               float64
	low, up         []float64 // low[m−lo] for m < mode; up[m−mode] = P(B > m) for m >= mode
}

func newBinomialCDFTable(n int, p float64) binomialCDFTable {
	sd := math.Sqrt(float64(n) * p * (1 - p))
	mode := binomialMode(n, p)
	t := binomialCDFTable{n: n, p: p, mode: mode,
		lo: max(0, mode-int(40*sd)-1), hi: min(n, mode+int(40*sd)+1)}
	if t.lo < mode {
		t.low = make([]float64, mode-t.lo)
		t.low[0], _ = BinomialTails(n, t.lo, p)
		for m := t.lo + 1; m < mode; m++ {
			t.low[m-t.lo] = t.low[m-1-t.lo] + binomialMass(n, m, p)
		}
	}
	t.up = make([]float64, t.hi-mode+1)
	_, t.up[t.hi-mode] = BinomialTails(n, t.hi+1, p)
	for m := t.hi - 1; m >= mode; m-- {
		t.up[m-mode] = t.up[m+1-mode] + binomialMass(n, m+1, p)
	}
	return t
}

// atMost returns P(B <= m).
func (t binomialCDFTable) atMost(m int) float64 {
	switch {
	case m < t.lo || m > t.hi:
		b, _ := BinomialTails(t.n, m, t.p)
		return b
	case m < t.mode:
		return t.low[m-t.lo]
	default:
		return 1 - t.up[m-t.mode]
	}
}
