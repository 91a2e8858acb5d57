package testref

import "math"

// TwoBinomialCDF returns P(k·base + da·A + db·B <= x) for independent
// A ~ Binomial(k, pa) and B ~ Binomial(k, pb): the k-fold sum of a
// four-valued law made of two independent two-way choices (an uplink
// repeated or not, a downlink in one window or the other, say), whose value
// is base, base + da, base + db or base + da + db (da, db > 0). The masses
// of A are taken over 12 standard deviations of A (the rest below 1e-30),
// each from BinomialTails, and each conditional tail of B from
// BinomialTails; the error is about 1e-12 relative to the answer.
func TwoBinomialCDF(k int, base, da, pa, db, pb, x float64) float64 {
	m, sd := float64(k)*pa, math.Sqrt(float64(k)*pa*(1-pa))
	lo, hi := max(0, int(m-12*sd)), min(k, int(m+12*sd)+1)
	sum := 0.0
	for j := lo; j <= hi; j++ {
		_, ge := BinomialTails(k, j, pa)
		_, gt := BinomialTails(k, j+1, pa)
		y := (x - float64(k)*base - float64(j)*da) / db
		if y < 0 {
			continue
		}
		b, _ := BinomialTails(k, int(math.Floor(y)), pb)
		sum += (ge - gt) * b
	}
	return sum
}
