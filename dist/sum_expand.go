package dist

import (
	"fmt"
	"math"
)

// maxMixtureExpansion is the largest number of component combinations Sum
// expands exactly when some terms are mixtures.
const maxMixtureExpansion = 256

// mixtureParts returns the weights and components of a mixture term.
func mixtureParts(l Law) ([]float64, []Law, bool) {
	switch b := l.(type) {
	case mixture:
		return b.weights, b.laws, true
	case mixtureDensity:
		return b.weights, b.laws, true
	case statedMixture:
		return b.weights, b.laws, true
	case statedMixtureDensity:
		return b.weights, b.laws, true
	}
	return nil, nil, false
}

// expandMixtures writes a sum with mixture terms as the exact mixture over
// the combinations of components,
//
//	Σ_i X_i = Σ_{j_1…j_n} (Π w_{i,j_i})·law(Σ_i C_{i,j_i}),
//
// and returns it when there are at most maxMixtureExpansion combinations and
// every combination's sum has a closed form (no numerical inversion). A
// mixture of a point mass and an exponential, say, has a density that jumps
// at the atom; inverting the whole sum would meet a transform that decays
// only like 1/t, while each combination is exact (a shifted hypoexponential,
// gamma or discrete law). The result reports Accuracy: the components'
// rounding (1e-14 absolute in the CDF, 1e-12 relative in the survival) and
// the weighted errors of the components that report their own. ok is false
// when the expansion does not apply.
func expandMixtures(terms []Law) (l Law, ok bool, err error) {
	combos := 1
	any := false
	for _, t := range terms {
		if _, c, isMix := mixtureParts(t); isMix {
			any = true
			combos *= len(c)
			if combos > maxMixtureExpansion {
				return nil, false, nil
			}
		}
	}
	if !any {
		return nil, false, nil
	}
	idx := make([]int, len(terms))
	var weights []float64
	var laws []Law
	// error of the components that report one (a hypoexponential, say);
	// the others are exact to rounding
	cdfAbs, rel, floor := 1e-14, 1e-12, 0.0
	for {
		w := 1.0
		combo := make([]Law, 0, len(terms))
		for i, t := range terms {
			if ws, cs, isMix := mixtureParts(t); isMix {
				w *= ws[idx[i]]
				combo = appendFlat(combo, cs[idx[i]])
			} else {
				combo = append(combo, t)
			}
		}
		if w > 0 {
			s, err := sumTerms(combo)
			if err != nil {
				return nil, false, err
			}
			if _, numeric := s.(*numLaw); numeric {
				return nil, false, nil
			}
			if e, est := s.(Estimated); est {
				a := e.Accuracy()
				cdfAbs += w * a.CDFAbs
				rel, floor = math.Max(rel, a.SurvivalRel), math.Max(floor, a.TailFloor)
			}
			weights, laws = append(weights, w), append(laws, s)
		}
		// next combination
		i := 0
		for ; i < len(terms); i++ {
			_, cs, isMix := mixtureParts(terms[i])
			if !isMix {
				continue
			}
			idx[i]++
			if idx[i] < len(cs) {
				break
			}
			idx[i] = 0
		}
		if i == len(terms) {
			break
		}
	}
	m, err := Mixture(weights, laws)
	if err != nil {
		return nil, false, fmt.Errorf("dist.Sum: expanding mixtures: %w", err)
	}
	acc := Accuracy{CDFAbs: cdfAbs, SurvivalRel: rel, TailFloor: floor,
		Method: fmt.Sprintf("exact mixture of the sums of %d component combinations", len(laws))}
	var mean, variance float64
	for _, t := range terms {
		mean += t.Mean()
		variance += t.Variance()
	}
	switch b := m.(type) {
	case mixture:
		return statedMixture{mixture: b, acc: acc, mean: mean, variance: variance, kind: "Sum"}, true, nil
	case mixtureDensity:
		return statedMixtureDensity{statedMixture{mixture: b.mixture, acc: acc, mean: mean, variance: variance, kind: "Sum"}}, true, nil
	}
	return m, true, nil
}
