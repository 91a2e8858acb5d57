// Package testref holds the reference values and named tolerances that the
// tests of this module check against: typed tables of published or
// independently computed values, each with its source written beside it,
// closed forms from gonum's special functions, and the two sampling bounds
// (Kolmogorov–Smirnov through the Dvoretzky–Kiefer–Wolfowitz inequality, and
// exact binomial tails for binned counts) from which Monte Carlo tolerances
// are derived.
//
// Sources are marked in three ways: a citation (paper, table, page); "common
// practice" for a fact of the trade; "from memory" for a value recalled
// rather than read, which is then also checked by an independent computation
// in this package's tests.
//
// The package is for tests only; nothing outside tests should import it.
package testref
