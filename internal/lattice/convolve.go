package lattice

// ConvolveAdd adds into dst the convolution of a with b placed from index
// off (b[j] at off + j), cut at len(dst):
//
//	dst[m] += Σ_i a[i]·b[m − off − i],   0 <= m < len(dst),
//
// by direct multiply-adds (about len(a)·len(b) of them; zero entries of a
// skipped), row by row in i so that every dst[m] adds its products in the
// order of i. This is the module's one direct convolution of mass arrays:
// package dist's dense lattice sums (SumDiscrete, SumIID's dense path) and
// package orderstat's counts (the terms' binomial probabilities) use it.
// For non-negative inputs each result has a relative rounding error of at
// most (number of products added + 1)·2^-53 (products and sums of positive
// numbers). off must be >= 0.
func ConvolveAdd(dst, a, b []float64, off int) {
	n := len(dst)
	for i, x := range a {
		if x == 0 {
			continue
		}
		s := i + off
		if s >= n {
			break
		}
		bb := b[:min(n-s, len(b))]
		row := dst[s : s+len(bb)]
		row = row[:len(bb)] // (lets the compiler drop the bounds checks)
		for j, y := range bb {
			row[j] += x * y
		}
	}
}

// Convolve returns the full convolution of a and b (both non-empty), of
// length len(a) + len(b) − 1 (ConvolveAdd into a new array).
func Convolve(a, b []float64) []float64 {
	out := make([]float64, len(a)+len(b)-1)
	ConvolveAdd(out, a, b, 0)
	return out
}
