package dist

import (
	"fmt"
	"math"
)

// maxExactCount is the largest number of count values for which RandomSum
// writes the random sum of a closed-form term as an exact mixture.
const maxExactCount = 4096

// statedMixture is a mixture whose weights were cut (a count law with
// infinite support expanded to a tail mass) and which reports the error
// that cut makes, with the components' rounding.
type statedMixture struct {
	mixture
	acc            Accuracy
	mean, variance float64
	kind           string // "Sum" or "RandomSum"
	numeric        bool   // some component is a numerical inversion
}

// Mean returns the exact mean E[N]·E[X] (not that of the cut count).
func (m statedMixture) Mean() float64 { return m.mean }

// Variance returns the exact variance E[N]·Var X + Var N·(E X)².
func (m statedMixture) Variance() float64 { return m.variance }

// CDF returns Σ w_i·F_i(x); exactly 0 below the support and 1 at its top.
func (m statedMixture) CDF(x float64) float64 {
	if v, ok := edgeCDF(x, m.lo, m.hi); ok {
		return v
	}
	return m.mixture.CDF(x)
}

// Survival returns Σ w_i·S_i(x); exactly 1 below the support, 0 at its top.
func (m statedMixture) Survival(x float64) float64 {
	if v, ok := edgeSurvival(x, m.lo, m.hi); ok {
		return v
	}
	return m.mixture.Survival(x)
}

// Quantile inverts CDF.
func (m statedMixture) Quantile(p float64) float64 { return quantileByInversion(m, p) }

// UpperQuantile inverts Survival; accurate for tiny q.
func (m statedMixture) UpperQuantile(q float64) float64 { return upperQuantileByInversion(m, q) }

// CF returns the characteristic function Σ w_i·φ_i(t) (NaN when a
// component's transform is unknown, or for NaN t).
func (m statedMixture) CF(t float64) complex128 {
	tr, ok := mixtureTransform(m.mixture)
	if !ok || math.IsNaN(t) {
		return complex(math.NaN(), math.NaN())
	}
	return cexpm1(tr.logm(complex(0, t))) + 1
}

// Accuracy reports the error bound of the mixture.
func (m statedMixture) Accuracy() Accuracy { return m.acc }

func (m statedMixture) String() string {
	what := "closed forms"
	if m.numeric {
		what = "laws"
	}
	return fmt.Sprintf("%s(mixture of %d %s, %s)", m.kind, len(m.laws), what, summary(m))
}

// statedMixtureDensity is a statedMixture with a density.
type statedMixtureDensity struct{ statedMixture }

func (m statedMixtureDensity) Density(x float64) float64 {
	return mixtureDensity{m.mixture}.Density(x)
}

// closedRandomSum returns Σ_n P(N = n)·law(X_1 + … + X_n) when the term's
// k-fold sums have closed forms (normal, exponential, gamma; or a mixture
// whose k-fold sums SumIID expands exactly, for at most 64 count values):
// P(N = 0) is a point mass at 0 and each k-fold sum is exact (a normal or a
// gamma). The count mass beyond the last n (tail) is left out; it is at most
// tail in the CDF, and at most tail in the survival, so the survival is
// accurate to 1e-9 relative wherever it is at least tail·1e9. ok is false
// when the term has no such closed form or the count has too many values.
func closedRandomSum(ns []int, ps []float64, tail, mean, variance float64, term Law) (Law, bool, error) {
	switch term.(type) {
	case Normal, Exponential, Gamma:
		if len(ns) > maxExactCount {
			return nil, false, nil
		}
	default:
		// a mixture whose n-fold sums expand exactly: bounded total size
		_, cs, isMix := mixtureParts(term)
		if !isMix || len(ns) > 64 {
			return nil, false, nil
		}
		size := 0.0
		for _, n := range ns {
			size += multichoose(len(cs), n)
		}
		if size > 4*maxIIDExpansion {
			return nil, false, nil
		}
	}
	cdfAbs, rel, floor := tail+1e-14, 1e-9, max(tail*1e9, 1e-300)
	laws := make([]Law, len(ns))
	for i, n := range ns {
		var err error
		if n == 0 {
			laws[i], err = NewPointMass(0)
		} else {
			laws[i], err = SumIID(term, n)
		}
		if err != nil {
			return nil, false, err
		}
		if isNumeric(laws[i]) {
			return nil, false, nil
		}
		if e, ok := laws[i].(Estimated); ok {
			a := e.Accuracy()
			cdfAbs += ps[i] * a.CDFAbs
			rel, floor = max(rel, a.SurvivalRel), max(floor, a.TailFloor)
		}
	}
	m, err := Mixture(ps, laws)
	if err != nil {
		return nil, false, fmt.Errorf("dist.RandomSum: %w", err)
	}
	var base mixture
	dens := false
	switch b := m.(type) {
	case mixture:
		base = b
	case mixtureDensity:
		base, dens = b.mixture, true
	default:
		return m, true, nil // one component
	}
	// components: normal and gamma laws, CDF to a few ulps, survival to about
	// 1e-13 relative (their own tests); the cut count mass adds tail
	acc := Accuracy{
		CDFAbs:      cdfAbs,
		SurvivalRel: rel,
		TailFloor:   floor,
		Method:      fmt.Sprintf("exact mixture of %d k-fold sums (count mass %.1e cut)", len(ns), tail),
	}
	sm := statedMixture{mixture: base, acc: acc, mean: mean, variance: variance, kind: "RandomSum"}
	if dens {
		return statedMixtureDensity{sm}, true, nil
	}
	return sm, true, nil
}
