package energy

import "math"

// The interpolation bounds computed pass by pass, as the site rule's probes
// did before they walked the fine grid once (fineBounds): the reference
// against which that walk is checked bit for bit (TestSiteFineBoundsSameBits
// and the interpolation-bound tests).

// interpBound bounds the interpolation term of factor d for kind (node,
// first failure or fleet's first failure) from the node probits Z: the
// mixtures with and without one node a piece differ by at most
// Σ w·Σ_h L_h·|Δz_h| over the fine grid, Δz_h the two interpolants'
// difference in group h's probit and L_h the largest slope of the
// conditional CDF against it between the two (slopeBound's cells there:
// the mean value theorem; the fleet's first failure moves by at most a
// group's first failure's slope in that group's probit), plus the
// rounding of the two sums (2·eps a point). Only interpolations and
// table look-ups, no special functions.
func (s *Site) interpBound(Z []float64, kind lawKind, g int, d int) float64 {
	return s.interpBoundWith(new(ruleScratch), Z, kind, g, d)
}

// interpBoundWith is interpBound with the working arrays of sc.
func (s *Site) interpBoundWith(sc *ruleScratch, Z []float64, kind lawKind, g int, d int) float64 {
	var ds [2]bool
	ds[d] = true
	return s.interpBoundsWith(sc, Z, kind, g, ds)[d]
}

// interpBoundsWith returns interpBound for each factor d with ds[d] (0
// for the others) in one pass over the groups: the reference's
// interpolants, the same for both factors, are computed once, and the
// interpolant without one node a piece in v starts from the reference's
// along u (the same rows); where a factor's two rows agree (same) the
// interpolants do too and add nothing, and are not computed. Each bound
// is the same bits as alone.
func (s *Site) interpBoundsWith(sc *ruleScratch, Z []float64, kind lawKind, g int, ds [2]bool) [2]float64 {
	fu, fv := &s.fac[0], &s.fac[1]
	nv := len(fv.z)
	E := len(s.envs)
	wu, wv := fu.fw, fv.fw
	g0, g1 := g, g+1
	if kind == kindFleet {
		g0, g1 = 0, len(s.names)
	}
	pu, pv := len(fu.fz), len(fv.fz)
	// Y0 along u with the reference's rows (lag), Y1 without one node a
	// piece in u (lagr; factor 0 only). Factor 0's second interpolant is
	// Y1 along v by lag, factor 1's Y0 along v by lagr.
	sc.y0 = grown(sc.y0, pu*nv)
	if ds[0] {
		sc.y1 = grown(sc.y1, pu*nv)
	}
	Y0, Y1 := sc.y0, sc.y1
	sc.bnd = grown(sc.bnd, 2*pu*pv)
	// Σ_h L_h·|Δz_h| at each point, for each factor.
	bound := [2][]float64{sc.bnd[:pu*pv], sc.bnd[pu*pv:]}
	// Groups whose probits repeat an earlier group's have its Δz: one
	// interpolation for all of them, their slopes' bounds summed.
	var rep []int
	if kind == kindFleet {
		rep = s.rowReps(sc, Z, g0, g1)
	}
	for h := g0; h < g1; h++ {
		if rep != nil && rep[h] != h {
			continue
		}
		L := &s.slope[h]
		if kind == kindNode {
			L = &s.slope1
		}
		over := func(z0, z1 float64) float64 {
			l := L.over(z0, z1)
			for m := h + 1; rep != nil && m < g1; m++ {
				if rep[m] == h {
					l += s.slope[m].over(z0, z1)
				}
			}
			return l
		}
		zh := Z[h*E : (h+1)*E]
		for a := range pu {
			for j := range nv {
				Y0[a*nv+j] = interp(&fu.lag, a, zh[j:], nv)
			}
		}
		if ds[0] {
			for a := range pu {
				if fu.same[a] {
					continue // Y1's row is Y0's: no difference in u there
				}
				for j := range nv {
					Y1[a*nv+j] = interp(&fu.lagr, a, zh[j:], nv)
				}
			}
		}
		for a := range pu {
			y0 := Y0[a*nv : (a+1)*nv]
			for b := range pv {
				z0 := interp1(&fv.lag, b, y0)
				if ds[0] && !fu.same[a] {
					z1 := interp1(&fv.lag, b, Y1[a*nv:(a+1)*nv])
					if z0 != z1 {
						bound[0][a*pv+b] += over(z0, z1) * math.Abs(z1-z0)
					}
				}
				if ds[1] && !fv.same[b] {
					z1 := interp1(&fv.lagr, b, y0)
					if z0 != z1 {
						bound[1][a*pv+b] += over(z0, z1) * math.Abs(z1-z0)
					}
				}
			}
		}
	}
	var res [2]float64
	for d := range 2 {
		if !ds[d] {
			continue
		}
		sum, pts := 0.0, 0
		for a := range pu {
			for b := range pv {
				if w := wu[a] * wv[b]; w >= 1e-14 {
					sum += w * bound[d][a*pv+b]
					pts++
				}
			}
		}
		res[d] = sum*(1+1e-12) + 2*float64(pts)*0x1p-52
	}
	return res
}
