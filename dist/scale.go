package dist

// ScaleByDiscrete returns the law of F·X, where X has law l and the factor F
// is independent of X with the finite discrete law factor (a constant is a
// point mass). It is exact: a mixture over the atoms f_k of F, with weights
// P(F = f_k), of the affine maps f_k·X. This is the energy of a state whose
// power takes one of a few levels while its duration is random. When l is
// itself a Discrete the result is the Discrete of all products.
func ScaleByDiscrete(l Law, factor Discrete) (Law, error) {
	if l == nil {
		return nil, paramErr("ScaleByDiscrete", "l", nil, "must not be nil")
	}
	if factor.Len() == 0 {
		return nil, paramErr("ScaleByDiscrete", "factor", "empty", "must be built by NewDiscrete or NewPointMass")
	}
	atoms := factor.Atoms()
	weights := make([]float64, len(atoms))
	laws := make([]Law, len(atoms))
	for i, a := range atoms {
		s, err := Affine(l, a.Value, 0)
		if err != nil {
			return nil, err
		}
		weights[i], laws[i] = a.Mass, s
	}
	return Mixture(weights, laws)
}
