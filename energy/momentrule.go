package energy

import "math"

// momentRule is a Gaussian quadrature rule for the expectation of a smooth
// function of a sum of k cycle energies, built from that sum's exact
// cumulants (k times the cycle's): with n nodes it integrates every
// polynomial of degree 2n−1 exactly, so its error is of the order of the
// function's 2n-th derivative times the sum's 2n-th central moment
// (Gautschi, "Orthogonal Polynomials: Computation and Approximation",
// Oxford 2004, §1.4). The per-cycle noise of a life is small beside what
// varies between nodes, so three nodes reach rounding; the difference from
// the two-node rule is reported as its error.
type momentRule struct {
	n    int
	x, w [3]float64
}

// newMomentRule returns the n-node rule (n = 1, 2 or 3) for the law with
// mean mu, variance k2 and standardized cumulants l3 = κ3/κ2^{3/2},
// l4 = κ4/κ2², l5 = κ5/κ2^{5/2}. A rule the moments do not support (a
// Hankel matrix that is not positive definite, as for a law of fewer atoms
// than nodes) falls back to fewer nodes.
func newMomentRule(n int, mu, k2, l3, l4, l5 float64) momentRule {
	if !(k2 > 0) || n <= 1 {
		return momentRule{n: 1, x: [3]float64{mu}, w: [3]float64{1}}
	}
	s := math.Sqrt(k2)
	// Raw moments of the standardized law.
	m := [6]float64{1, 0, 1, l3, l4 + 3, l5 + 10*l3}
	if n == 3 {
		// Monic p3(x) = x³ + c2 x² + c1 x + c0 orthogonal to 1, x, x²:
		// Σ_j c_j m[i+j] = −m[i+3], i = 0, 1, 2.
		a := [3][4]float64{
			{m[0], m[1], m[2], -m[3]},
			{m[1], m[2], m[3], -m[4]},
			{m[2], m[3], m[4], -m[5]},
		}
		if c, ok := solve3(a); ok {
			if r, ok := cubicRoots(c[2], c[1], c[0]); ok {
				if w, ok := vandermonde3(r, m); ok {
					var rule momentRule
					rule.n = 3
					for i := range 3 {
						rule.x[i] = mu + s*r[i]
						rule.w[i] = w[i]
					}
					return rule
				}
			}
		}
	}
	// Two nodes: x² − l3·x − 1 = 0 (mean 0, variance 1, skewness l3).
	d := math.Sqrt(l3*l3 + 4)
	x1, x2 := (l3-d)/2, (l3+d)/2
	w1 := x2 / (x2 - x1)
	return momentRule{n: 2, x: [3]float64{mu + s*x1, mu + s*x2}, w: [3]float64{w1, 1 - w1}}
}

// momentShiftBound returns an upper bound on the largest distance
// |x_i − mu| of newMomentRule(3, mu, k2, l3, l4, l5)'s nodes from the mean,
// without building the rule (no linear solve, no trigonometric roots); ok
// is false where it gives none (the rule must then be built).
//
// The standardized nodes of the n-node Gaussian rule are the eigenvalues
// of the n×n Jacobi matrix of the recurrence p_{i+1} = (x − α_i)·p_i −
// β_i·p_{i−1} of the law's monic orthogonal polynomials (Golub and Welsch,
// Math. Comp. 23:221–230, 1969). For mean 0 and variance 1: p1 = x, α0 =
// 0, β1 = 1; p2 = x² − m3·x − 1, α1 = m3; β2 = E[p2²] = m4 − m3² − 1 and
// α2 = E[x·p2²]/β2 = (m5 + m3³ − 2·m3·m4)/β2, m_r the raw moments. By
// Gershgorin's theorem every eigenvalue lies within a row's diagonal
// entry plus its off-diagonal sum: |x| <= max(1, |α1| + 1 + √β2,
// |α2| + √β2). The two-node rule (the fallback) has the eigenvalues of
// the leading 2×2 block, within max(1, |α1| + 1), so the bound covers it
// too; without variance the rule is the one node at mu.
//
// The rule's nodes are computed (solve3, cubicRoots' Newton polish, mu +
// s·r): the bound takes 1e-6 of itself and 1e-12 of |mu| more, far above
// their rounding, and is given only where β2 > 1/2 (a normal law's β2 is
// 2), so that the moments' Hankel matrix is well conditioned.
func momentShiftBound(mu, k2, l3, l4, l5 float64) (bound float64, ok bool) {
	if !(k2 > 0) {
		return 0, true
	}
	m3, m4, m5 := l3, l4+3, l5+10*l3
	b2 := m4 - m3*m3 - 1
	if !(b2 > 0.5) {
		return 0, false
	}
	sb := math.Sqrt(b2)
	a2 := (m5 + m3*m3*m3 - 2*m3*m4) / b2
	r := max(math.Abs(m3)+1+sb, math.Abs(a2)+sb)
	bound = math.Sqrt(k2)*r*(1+1e-6) + 1e-12*math.Abs(mu)
	if math.IsInf(bound, 0) || math.IsNaN(bound) {
		return 0, false
	}
	return bound, true
}

// solve3 solves the 3×3 system a[:, :3]·c = a[:, 3] by Gaussian elimination
// with partial pivoting; ok is false for a singular or ill-posed matrix.
func solve3(a [3][4]float64) (c [3]float64, ok bool) {
	for col := range 3 {
		p := col
		for r := col + 1; r < 3; r++ {
			if math.Abs(a[r][col]) > math.Abs(a[p][col]) {
				p = r
			}
		}
		if !(math.Abs(a[p][col]) > 1e-12) {
			return c, false
		}
		a[col], a[p] = a[p], a[col]
		for r := col + 1; r < 3; r++ {
			f := a[r][col] / a[col][col]
			for j := col; j < 4; j++ {
				a[r][j] -= f * a[col][j]
			}
		}
	}
	for i := 2; i >= 0; i-- {
		v := a[i][3]
		for j := i + 1; j < 3; j++ {
			v -= a[i][j] * c[j]
		}
		c[i] = v / a[i][i]
	}
	return c, true
}

// cubicRoots returns the three real roots, ascending, of x³ + b x² + c x + d
// (trigonometric form; ok false unless all three are real and distinct).
func cubicRoots(b, c, d float64) (r [3]float64, ok bool) {
	p := c - b*b/3
	q := 2*b*b*b/27 - b*c/3 + d
	if !(p < 0) {
		return r, false
	}
	m := 2 * math.Sqrt(-p/3)
	arg := 3 * q / (p * m)
	if !(arg > -1 && arg < 1) {
		return r, false
	}
	th := math.Acos(arg) / 3
	for i := range 3 {
		r[i] = m*math.Cos(th-2*math.Pi*float64(i)/3) - b/3
	}
	// Ascending: cos(th), cos(th − 2π/3), cos(th − 4π/3) with th in [0, π/3].
	r[0], r[2] = r[2], r[0]
	if r[0] > r[1] {
		r[0], r[1] = r[1], r[0]
	}
	if r[1] > r[2] {
		r[1], r[2] = r[2], r[1]
	}
	if r[0] > r[1] {
		r[0], r[1] = r[1], r[0]
	}
	// Newton polish on the cubic.
	for i := range 3 {
		x := r[i]
		for range 2 {
			f := ((x+b)*x+c)*x + d
			fp := (3*x+2*b)*x + c
			if fp == 0 {
				break
			}
			x -= f / fp
		}
		r[i] = x
	}
	return r, r[0] < r[1] && r[1] < r[2]
}

// vandermonde3 returns the weights w with Σ w_i r_i^j = m[j], j = 0, 1, 2
// (Lagrange form); ok false unless all are positive.
func vandermonde3(r [3]float64, m [6]float64) (w [3]float64, ok bool) {
	for i := range 3 {
		a, b := r[(i+1)%3], r[(i+2)%3]
		// ∫ (x − a)(x − b) dμ / ((r_i − a)(r_i − b))
		num := m[2] - (a+b)*m[1] + a*b*m[0]
		w[i] = num / ((r[i] - a) * (r[i] - b))
		if !(w[i] > 0) {
			return w, false
		}
	}
	return w, true
}
