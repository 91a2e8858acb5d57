package testref

// NormalTailPoint is one value of the standard normal upper tail
// Q(z) = P(Z > z) = erfc(z/√2)/2.
type NormalTailPoint struct {
	Z float64 // the point, in standard deviations
	Q float64 // P(Z > z)
}

// NormalUpperTail lists Q(z) from the centre to the edge of the float64
// normal range (Q(37.5) ≈ 4.6e-308; Q(38) would be subnormal).
//
// Source: computed in this package at 1600-bit precision with math/big, by
// the series erf x = (2/√π)·exp(-x²)·Σ 2ⁿx^(2n+1)/(1·3·…·(2n+1))
// (Abramowitz & Stegun 1964, eq. 7.1.6), π by Machin's formula; each value
// is the float64 nearest the exact one. normal_big_test.go recomputes every
// entry from scratch and checks it. The values agree with Abramowitz &
// Stegun Table 26.1 where it reaches (see NormalUpperTailAS), and with
// erfc(z/√2)/2 from math.Erfc to within NormalTailTol(z).
var NormalUpperTail = []NormalTailPoint{
	{Z: 0, Q: 0.5},
	{Z: 1, Q: 0.15865525393145705},
	{Z: 2, Q: 0.022750131948179209},
	{Z: 3, Q: 0.0013498980316300946},
	{Z: 4, Q: 3.1671241833119924e-05},
	{Z: 5, Q: 2.8665157187919391e-07},
	{Z: 6, Q: 9.8658764503769809e-10},
	{Z: 8, Q: 6.2209605742717839e-16},
	{Z: 10, Q: 7.6198530241605255e-24},
	{Z: 20, Q: 2.7536241186062337e-89},
	{Z: 30, Q: 4.9067139271481872e-198},
	{Z: 37.5, Q: 4.6053530095819552e-308},
}

// NormalUpperTailAS lists a few printed values of Q(z) to 15 significant
// digits, as printed in Abramowitz & Stegun 1964, Table 26.1 — from memory. They are a
// second, printed source for NormalUpperTail, not its origin; agreement is
// to 1e-14 relative (the printed precision).
var NormalUpperTailAS = []NormalTailPoint{
	{Z: 1, Q: 0.158655253931457},   // A&S Table 26.1, from memory
	{Z: 2, Q: 0.0227501319481792},  // A&S Table 26.1, from memory
	{Z: 3, Q: 0.00134989803163009}, // A&S Table 26.1, from memory
	{Z: 5, Q: 2.86651571879194e-7}, // A&S Table 26.1, from memory
}

// ExpectedMaxNormal is E[max of N independent standard normals].
type ExpectedMaxNormal struct {
	N    int     // sample size
	Mean float64 // E[max], to the five decimals printed
}

// HarterExpectedMax lists the expected largest of n standard normal values.
//
// Source: Harter, H. L. (1961), "Expected values of normal order
// statistics", Biometrika 48:151–165, table of E[X(n:n)] (five decimals).
// n = 2 and n = 3 also have closed forms, 1/√π and 3/(2√π). The tests of
// this package recompute every entry by quadrature of
// ∫ x·n·φ(x)·Φ(x)^(n-1) dx and require agreement to 5e-6.
var HarterExpectedMax = []ExpectedMaxNormal{
	{N: 2, Mean: 0.56419},
	{N: 3, Mean: 0.84628},
	{N: 5, Mean: 1.16296},
	{N: 10, Mean: 1.53875},
	{N: 100, Mean: 2.50759},
}

// HarterTolerance is the absolute agreement expected with
// HarterExpectedMax: half a unit in the fifth decimal plus rounding.
const HarterTolerance = 5e-6
