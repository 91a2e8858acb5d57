package dist

import (
	"fmt"
	"math"
)

// maxMixtureExpansion is the largest number of component combinations Sum
// expands exactly when some terms are mixtures.
const maxMixtureExpansion = 256

// maxNumericCombos is the largest number of component combinations without
// a closed form that the expansion inverts one by one (each is its own
// Fourier-series inversion); beyond it the whole sum is inverted at once.
const maxNumericCombos = 8

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
// at most maxNumericCombos of them need a numerical inversion (the others
// have closed forms). A mixture of a point mass and an exponential, say, has
// a density that jumps at the atom; inverting the whole sum would meet a
// transform that decays only like 1/t and a CDF error near 1e-5, while each
// combination is exact (a shifted hypoexponential, gamma or discrete law) or
// is inverted on its own, where the jump of one combination no longer spoils
// the others (point mass or uniform + exponential: the exponential alone is
// exact, the uniform + exponential has a continuous density). The result
// reports Accuracy: the components' rounding (1e-14 absolute in the CDF,
// 1e-12 relative in the survival) and the weighted errors of the components
// that report their own. ok is false when the expansion does not apply.
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
	numeric := 0
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
			if noTransform(s) {
				// a lattice sum: the mixture could not offer a transform;
				// latticeSum takes the whole sum, atoms exact
				return nil, false, nil
			}
			if isNumeric(s) {
				if numeric++; numeric > maxNumericCombos {
					return nil, false, nil
				}
			}
			if e, est := s.(Estimated); est {
				a := e.Accuracy()
				cdfAbs += w * a.CDFAbs
				rel, floor = max(rel, a.SurvivalRel), max(floor, a.TailFloor)
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
	method := fmt.Sprintf("exact mixture of the sums of %d component combinations", len(laws))
	if numeric > 0 {
		method = fmt.Sprintf("mixture of the sums of %d component combinations, %d of them inverted numerically", len(laws), numeric)
	}
	acc := Accuracy{CDFAbs: cdfAbs, SurvivalRel: rel, TailFloor: floor, Method: method}
	var mean, variance float64
	for _, t := range terms {
		mean += t.Mean()
		variance += t.Variance()
	}
	switch b := m.(type) {
	case mixture:
		return statedMixture{mixture: b, acc: acc, mean: mean, variance: variance, kind: "Sum", numeric: numeric > 0}, true, nil
	case mixtureDensity:
		return statedMixtureDensity{statedMixture{mixture: b.mixture, acc: acc, mean: mean, variance: variance, kind: "Sum", numeric: numeric > 0}}, true, nil
	}
	return m, true, nil
}

// maxIIDExpansion is the largest number of component counts SumIID expands
// exactly for a mixture term.
const maxIIDExpansion = 512

// expandMixtureIID writes the k-fold sum of a mixture Σ w_i·C_i as the
// exact multinomial mixture
//
//	Σ_{j_1+…+j_c = k} k!/(j_1!…j_c!)·Π w_i^{j_i} · law(Σ_i S_{i,j_i}),
//
// S_{i,j} the j-fold sum of C_i, when there are at most maxIIDExpansion
// count vectors and each combination has a closed form (a point mass and an
// exponential give shifted gammas, say). The multinomial weights come from
// log-gamma functions with relative error about 4ε·(log k! + k·max|log w|),
// which is added to the stated bound. ok is false when it does not apply.
func expandMixtureIID(l Law, k int) (Law, bool, error) {
	ws, cs, isMix := mixtureParts(l)
	if !isMix || multichoose(len(cs), k) > maxIIDExpansion {
		return nil, false, nil
	}
	c := len(cs)
	lgk, _ := math.Lgamma(float64(k + 1))
	maxLog := 0.0
	for _, w := range ws {
		maxLog = max(maxLog, math.Abs(math.Log(w)))
	}
	wErr := 4 * 0x1p-52 * (lgk + float64(k)*maxLog + 1)
	cdfAbs, rel, floor := 1e-14+wErr, 1e-12+wErr, 0.0
	var weights []float64
	var laws []Law
	js := make([]int, c)
	var rec func(i, left int) error
	bail := false
	rec = func(i, left int) error {
		if bail {
			return nil
		}
		if i == c-1 {
			js[i] = left
			lw := lgk
			var terms []Law
			for q, j := range js {
				lj, _ := math.Lgamma(float64(j + 1))
				lw += float64(j)*math.Log(ws[q]) - lj
				if j > 0 {
					s, err := SumIID(cs[q], j)
					if err != nil {
						return err
					}
					terms = appendFlat(terms, s)
				}
			}
			w := math.Exp(lw)
			if w == 0 {
				return nil
			}
			s, err := sumTerms(terms)
			if err != nil {
				return err
			}
			if isNumeric(s) {
				bail = true
				return nil
			}
			if e, est := s.(Estimated); est {
				a := e.Accuracy()
				cdfAbs += w * a.CDFAbs
				rel, floor = max(rel, a.SurvivalRel), max(floor, a.TailFloor)
			}
			weights, laws = append(weights, w), append(laws, s)
			return nil
		}
		for j := 0; j <= left; j++ {
			js[i] = j
			if err := rec(i+1, left-j); err != nil {
				return err
			}
		}
		return nil
	}
	if err := rec(0, k); err != nil || bail {
		return nil, false, err
	}
	total := 0.0
	for _, w := range weights {
		total += w
	}
	for i := range weights {
		weights[i] /= total
	}
	m, err := Mixture(weights, laws)
	if err != nil {
		return nil, false, fmt.Errorf("dist.SumIID: expanding a mixture: %w", err)
	}
	acc := Accuracy{CDFAbs: cdfAbs, SurvivalRel: rel, TailFloor: floor,
		Method: fmt.Sprintf("exact multinomial mixture of %d closed forms", len(laws))}
	fk := float64(k)
	mean, variance := fk*l.Mean(), fk*l.Variance()
	switch b := m.(type) {
	case mixture:
		return statedMixture{mixture: b, acc: acc, mean: mean, variance: variance, kind: "SumIID"}, true, nil
	case mixtureDensity:
		return statedMixtureDensity{statedMixture{mixture: b.mixture, acc: acc, mean: mean, variance: variance, kind: "SumIID"}}, true, nil
	}
	return m, true, nil
}

// isNumeric reports whether l is computed by a numerical inversion (a
// Fourier-series or lattice law, or a mixture holding one).
func isNumeric(l Law) bool {
	switch b := l.(type) {
	case *numLaw, *latticeLaw, *expTailLaw:
		return true
	case statedMixture:
		return b.numeric
	case statedMixtureDensity:
		return b.numeric
	}
	return false
}
