// Package binom is joulelaw's one kernel for binomial probabilities in
// Loader's saddle-point form (C. Loader, "Fast and accurate computation of
// binomial probabilities", 2000): the Stirling-series error, the deviance
// term and log P(Bin(n, p) = x), which keep their relative precision for n
// up to 2^53 where lgamma-based formulas lose every digit. Package dist
// (k-fold sums of two and three values) and package orderstat (the
// Beta(k, n−k+1) law of the k-th of n uniforms, exceedance counts) use it.
// Pure functions of their arguments: safe for concurrent use.
package binom

import "math"

const (
	ln2Pi     = 1.8378770664093454835606594728112352797227949472755668  // log(2π)
	lnSqrt2Pi = 0.91893853320467274178032973640561763986139747363778341 // log(√(2π))
)

// StirlingError returns log(n!) - log(√(2πn)·(n/e)^n) for n >= 1, the error of
// Stirling's formula, by its asymptotic series for n > 15 and directly
// (absolute error below 1e-14) otherwise. Loader (2000), "Fast and accurate
// computation of binomial probabilities" (the series coefficients 1/12,
// 1/360, 1/1260, 1/1680, 1/1188 are the Stirling series, from memory; the
// tests check the result against math.Lgamma).
func StirlingError(n float64) float64 {
	if n <= 15 {
		lg, _ := math.Lgamma(n + 1)
		return lg - (n+0.5)*math.Log(n) + n - lnSqrt2Pi
	}
	const s0, s1, s2, s3, s4 = 1.0 / 12, 1.0 / 360, 1.0 / 1260, 1.0 / 1680, 1.0 / 1188
	nn := n * n
	switch {
	case n > 500:
		return (s0 - s1/nn) / n
	case n > 80:
		return (s0 - (s1-s2/nn)/nn) / n
	case n > 35:
		return (s0 - (s1-(s2-s3/nn)/nn)/nn) / n
	}
	return (s0 - (s1-(s2-(s3-s4/nn)/nn)/nn)/nn) / n
}

// Deviance returns the deviance term x·log(x/m) + m - x, by a series when x is
// near m so that it keeps its relative precision (Loader 2000).
func Deviance(x, m float64) float64 {
	if math.Abs(x-m) < 0.1*(x+m) {
		v := (x - m) / (x + m)
		s := (x - m) * v
		if math.Abs(s) < math.SmallestNonzeroFloat64 {
			return s
		}
		ej := 2 * x * v
		v2 := v * v
		for j := 1; j < 1000; j++ {
			ej *= v2
			s1 := s + ej/float64(2*j+1)
			if s1 == s {
				return s1
			}
			s = s1
		}
		return s
	}
	return x*math.Log(x/m) + m - x
}

// LogPMF returns log P(Bin(n, p) = x) for integers 0 <= x <= n held in
// float64, with p + q = 1 (both given so that the smaller is exact), by
// Loader's (2000) saddle-point expansion, accurate to about 1e-14 relative
// in the probability for any n up to 2^53.
func LogPMF(x, n, p, q float64) float64 {
	switch {
	case x < 0 || x > n:
		return math.Inf(-1)
	case p == 0:
		if x == 0 {
			return 0
		}
		return math.Inf(-1)
	case q == 0:
		if x == n {
			return 0
		}
		return math.Inf(-1)
	case x == 0:
		return n * Log1mp(p, q)
	case x == n:
		return n * Log1mp(q, p)
	}
	lc := StirlingError(n) - StirlingError(x) - StirlingError(n-x) - Deviance(x, n*p) - Deviance(n-x, n*q)
	lf := ln2Pi + math.Log(x) + math.Log1p(-x/n)
	return lc - 0.5*lf
}

// Log1mp returns log(1-p) = log(q) for p + q = 1, from whichever is exact.
func Log1mp(p, q float64) float64 {
	if p < 0.5 {
		return math.Log1p(-p)
	}
	return math.Log(q)
}
