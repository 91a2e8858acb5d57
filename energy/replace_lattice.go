package energy

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// Sizes of the lattice path of renewal counts.
const (
	// DefaultRenewalPoints is the lattice points over [0, horizon] that
	// NewLatticeRenewals uses when asked for 0.
	DefaultRenewalPoints = 4096
	// MinRenewalPoints and MaxRenewalPoints bound the points asked for.
	MinRenewalPoints = 64
	MaxRenewalPoints = 1 << 20
	// MaxLatticeRenewals caps the renewals counted on the lattice (each
	// costs two FFTs of about twice the points).
	MaxLatticeRenewals = 1024
)

// renewalLattice holds the m-fold sums (m >= 2) of the continuous part of
// a lifetime law on a lattice over [0, horizon], as smoothed distribution
// functions at the lattice points, and the law's atom within the horizon.
type renewalLattice struct {
	cdf      func(float64) float64 // the lifetime law's CDF
	h        float64               // s, the step
	g        [][]float64           // g[m−2][i]: P(C_m <= i·h) of the defective m-fold sum, m >= 2
	atom, at float64               // the atom's mass and place (s); mass 0 for none
}

// NewLatticeRenewals is NewRenewals computed on a lattice: for a lifetime
// law known by its CDF (a tabulated node law, say), whose exact k-fold
// sums cost a transform quadrature each. The law's continuous part, its
// atom (at most one within the horizon, the calendar limit's) set apart,
// is put on the lattice i·h, h = horizon/points, each point taking the
// mass of [(i − ½)h, (i + ½)h); its m-fold sums, cut at the horizon (a sum
// of non-negative lives never comes back below it), are repeated FFT
// convolutions (dist.TruncatedPowers, the one engine for k-fold sums on a
// lattice), read as
// P(C_m <= i·h) ≈ Σ_{j<i} q_j + ½·q_i and linearly between the points. The
// atom a at c enters exactly:
//
//	P(S_n <= t) = Σ_j C(n, j)·a^j·P(C_{n−j} <= t − j·c),
//
// C_0 = 0 and C_1 the law's own continuous part (its CDF, exact). The
// rounding to the nearest point moves each life by at most h/2 with a
// mean near 0, so the error falls as h²: the stated error (Accuracy) is
// the largest difference, over every n and every point of the coarser
// lattice, between this lattice and one of twice the step (about three
// times the error of the finer one where the error goes as h²), plus
// RenewalCut. The error of the law itself adds at most n times its CDF
// error to P(S_n <= t) (the Kolmogorov distance of a convolution is at
// most the sum of the terms'). points is the lattice points (0 for
// DefaultRenewalPoints; MinRenewalPoints to MaxRenewalPoints); at most
// MaxLatticeRenewals renewals are counted. Errors as NewRenewals's, and
// for more than one atom within the horizon (wrapping ErrParam).
func NewLatticeRenewals(life dist.Law, horizon float64, points int) (Renewals, error) {
	const fn = "NewLatticeRenewals"
	if err := checkRenewalLife(fn, life, horizon); err != nil {
		return Renewals{}, err
	}
	var atom, at float64
	if al, ok := life.(dist.Atomic); ok {
		n := 0
		for _, a := range al.Atoms() {
			if a.Value <= horizon && a.Mass > 0 {
				atom, at = a.Mass, a.Value
				n++
			}
		}
		if n > 1 {
			return Renewals{}, paramErr(fn, "life", fmt.Sprint(life), fmt.Sprintf("has %d atoms within the horizon; the lattice path takes at most one (use NewRenewals)", n))
		}
	}
	return latticeRenewals(fn, life.CDF, fmt.Sprint(life), atom, at, horizon, points)
}

// latticeRenewals is NewLatticeRenewals for a lifetime law known by its
// CDF cdf (support in [0, ∞), no mass at 0) and its one atom within the
// horizon (mass atom at at; 0 for none); name names it in errors.
func latticeRenewals(fn string, cdf func(float64) float64, name string, atom, at, horizon float64, points int) (Renewals, error) {
	if points == 0 {
		points = DefaultRenewalPoints
	}
	if points < MinRenewalPoints || points > MaxRenewalPoints {
		return Renewals{}, paramErr(fn, "points", points, fmt.Sprintf("must be 0 (default %d) or in [%d, %d]", DefaultRenewalPoints, MinRenewalPoints, MaxRenewalPoints))
	}
	r := Renewals{horizon: horizon, acc: dist.Accuracy{TailFloor: RenewalCut,
		Method: fmt.Sprintf("renewal counts P(N(t) >= n) = P(S_n <= t), the continuous part's sums on a lattice of %d points (FFT convolution), the atom exact; error by a lattice of twice the step", points)}}
	if cdf(horizon) <= RenewalCut || horizon == 0 {
		r.acc.CDFAbs = RenewalCut
		r.lat = &renewalLattice{cdf: cdf, h: 1}
		return r, nil
	}
	k := (points - 1) / 2 // the coarse lattice's steps; the fine one has twice as many
	fine, m, err := newRenewalLattice(cdf, horizon, 2*k+1, 0, atom, at)
	if err != nil {
		return Renewals{}, paramErr(fn, "life", name, fmt.Sprintf("must have a finite CDF over [0, horizon]: %v", err))
	}
	if m > MaxLatticeRenewals {
		return Renewals{}, paramErr(fn, "horizon", horizon, fmt.Sprintf("would count more than %d renewals of %s (P(S_%d <= horizon) > %g)", MaxLatticeRenewals, name, m, RenewalCut))
	}
	coarse, _, err := newRenewalLattice(cdf, horizon, k+1, m, atom, at)
	if err != nil {
		return Renewals{}, paramErr(fn, "life", name, fmt.Sprintf("must have a finite CDF over [0, horizon]: %v", err))
	}
	// The stated error: fine against coarse at the coarse points and
	// halfway between them (where both interpolate). (P(S_1 <= t) is the
	// law's own CDF on both.)
	worst := 0.0
	for n := 2; n <= m; n++ {
		for i := 0; i <= 2*k; i++ {
			t := float64(i) * fine.h
			worst = max(worst, math.Abs(fine.atLeast(n, t)-coarse.atLeast(n, t)))
		}
	}
	r.lat = fine
	r.max = m
	r.acc.CDFAbs = worst + RenewalCut
	return r, nil
}

// newRenewalLattice puts life's continuous part on points lattice points
// over [0, horizon] and forms its m-fold sums for m = 2 … mMax, or, for
// mMax = 0, until P(S_m <= horizon) <= RenewalCut (at most
// MaxLatticeRenewals + 1); it returns the lattice and the last m counted
// (P(S_m <= horizon) > RenewalCut). It fails (dist.TruncatedPowers'
// error) where the CDF is NaN on the lattice.
func newRenewalLattice(cdf func(float64) float64, horizon float64, points, mMax int, atom, at float64) (*renewalLattice, int, error) {
	rl := &renewalLattice{cdf: cdf, h: horizon / float64(points-1), atom: atom, at: at}
	M := points
	cont := func(x float64) float64 { // the continuous part's CDF
		f := cdf(x)
		if atom > 0 && x >= at {
			f -= atom
		}
		return max(0, f)
	}
	p := make([]float64, M)
	prev := 0.0
	for i := range p {
		next := cont((float64(i) + 0.5) * rl.h)
		p[i] = max(0, next-prev)
		prev = next
	}
	if mMax == 1 {
		return rl, 1, nil
	}
	maxPowers := MaxLatticeRenewals // m up to MaxLatticeRenewals + 1
	if mMax > 0 {
		maxPowers = mMax - 1
	}
	last := 1
	// points <= MaxRenewalPoints < dist.MaxTruncatedPowerPoints and
	// maxPowers <= MaxLatticeRenewals < dist.MaxTruncatedPowers; a NaN
	// mass (a NaN CDF) is refused.
	_, err := dist.TruncatedPowers(p, maxPowers, func(m int, q []float64) bool {
		g := make([]float64, M)
		below := 0.0
		for i, qi := range q {
			g[i] = below + qi/2
			below += qi
		}
		rl.g = append(rl.g, g)
		if mMax == 0 && rl.atLeast(m, horizon) <= RenewalCut {
			return false
		}
		last = m
		return true
	})
	return rl, last, err
}

// cont returns P(C_m <= x) of the defective m-fold sum of the continuous
// part (C_0 = 0).
func (rl *renewalLattice) cont(m int, x float64) float64 {
	switch {
	case x < 0:
		return 0
	case m == 0:
		return 1
	case m == 1:
		f := rl.cdf(x)
		if rl.atom > 0 && x >= rl.at {
			f -= rl.atom
		}
		return max(0, f)
	}
	g := rl.g[m-2]
	u := x / rl.h
	i := int(u)
	if i >= len(g)-1 {
		return g[len(g)-1]
	}
	w := u - float64(i)
	return (1-w)*g[i] + w*g[i+1]
}

// atLeast returns P(S_n <= t), the atom expanded binomially.
func (rl *renewalLattice) atLeast(n int, t float64) float64 {
	if rl.atom == 0 {
		return min(1, rl.cont(n, t))
	}
	s, c := 0.0, 1.0 // c = C(n, j)·a^j
	for j := 0; j <= n; j++ {
		x := t - float64(j)*rl.at
		if x < 0 {
			break
		}
		s += c * rl.cont(n-j, x)
		c *= float64(n-j) / float64(j+1) * rl.atom
	}
	return min(1, s)
}
