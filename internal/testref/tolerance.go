package testref

import "math"

// Named tolerances used across the module's tests. Each says what it bounds;
// a test that needs a looser one derives it (from a stated error bound or a
// sampling error) and says why.
const (
	// TolExact bounds the relative error of closed forms evaluated in
	// float64: a few units in the last place, 1e-14 relative.
	TolExact = 1e-14

	// TolCDF bounds the absolute error of a numerically computed CDF
	// (inversion, quadrature): 1e-10.
	TolCDF = 1e-10

	// TolTailRel bounds the relative error of a numerically computed
	// survival function in the upper tail: 1e-6.
	TolTailRel = 1e-6

	// KSLevel is the level at which Kolmogorov–Smirnov checks of samples
	// against a law are made (see KSCritical): 1e-6, so that a correct law
	// fails with probability at most one in a million per check.
	KSLevel = 1e-6

	// BinLevel is the family-wise level of binned sample-count checks
	// (binomial bounds, Bonferroni over the bins): 1e-6.
	BinLevel = 1e-6
)

// NormalTailTol returns the relative tolerance for the standard normal
// upper tail Q(z) computed in float64: 4·ε·(1 + z²), with ε the float64
// machine epsilon. The factor 1 + z² bounds the condition number
// z·φ(z)/Q(z) of Q at z > 0, from the Mills-ratio inequality
// Q(z) > φ(z)·z/(1+z²) (Gordon 1941, Ann. Math. Statist. 12:364–366 — from
// memory), so rounding the argument z/√2 by one unit already costs that
// much. At z = 37.5 it is about 1.25e-12.
func NormalTailTol(z float64) float64 {
	const eps = 0x1p-52
	return 4 * eps * (1 + z*z)
}

// RelErr returns |got - want| / |want|, or |got| when want is 0. It is NaN
// if either is NaN.
func RelErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}
