package dist

import (
	"math"
	"math/cmplx"
)

// A proven bound on the error of the smooth approximations of a k-fold
// discrete sum (four or more cycle energies, too many k-fold atoms to list).
//
// With Z = (S_k − kμ)/(σ√k), ψ its characteristic function and G the
// second-order Edgeworth law
//
//	G(z) = Φ(z) − ϕ(z)·[λ3/6·He2(z) + λ4/24·He3(z) + λ3²/72·He5(z)],
//	γ(τ) = e^{−τ²/2}·[1 + λ3(iτ)³/6 + λ4(iτ)⁴/24 + λ3²(iτ)⁶/72]
//
// (γ the Fourier–Stieltjes transform of G, λ3 = κ3/(σ³√k), λ4 = κ4/(σ⁴k)),
// Esseen's smoothing inequality (Feller, Vol. II, 2nd ed., §XVI.3, Lemma 2,
// from memory) holds for every T > 0:
//
//	sup_z |P(Z <= z) − G(z)| <= (1/π)·∫_{−T}^{T} |ψ(τ) − γ(τ)|/|τ| dτ + 24·m/(π·T),
//	m = sup |G'|.
//
// It holds whatever the atoms: a lattice or nearly commensurate energies
// show up as the peaks of |ψ| away from 0 (where the phases of the likely
// energies line up again), which the integral picks up. The integral is
// taken in two parts. For |τ| <= 12, where ψ and γ are both of size
// e^{−τ²/2}, by Simpson's rule on 6000 and 12 000 panels (their
// difference added). Beyond, where |γ| < 1e-30, the integral of |ψ|/τ is
// bounded from above by branch and bound: on a cell [a, b] of t = τ/(σ√k)
// a bound U on |φ_c| follows from φ_c and φ_c' at the midpoint and
// |φ_c”| <= σ² (cfBound), so the cell contributes at most
// min(1, U)^k·log(b/a); cells are halved until that is within 25 % of
// the midpoint value or below 1e-13·log(b/a). T is doubled from 12 while
// the work allows (2·10⁵ transform values) and 24m/(πT) is above a tenth of
// the rest; the smallest bound over the T tried is kept (each is a bound).
//
// The estimate the code returns is the saddlepoint value (saddle), not G, so
// the bound reported is the one above plus sup |G − saddle| (taken on a grid
// of z in [−12, 12] every 0.01 inside the support, times 1.1 for the grid's
// step; outside the support eval is exact). Beyond |z| = 12 F and the
// saddlepoint both lie between 0 and their tails at ±12 (F's within the
// bound of G's), so the larger of G's and the saddlepoint's tails there is
// added too (about 1e-33 for long lifetimes; more for a few skewed cycles).

// esseenMaxWork caps the transform values spent on the far integral.
const esseenMaxWork = 200_000

// logCF returns log φ_c(t), φ_c the characteristic function of X − μ, with
// φ_c − 1 summed directly (no cancellation near t = 0).
func (a atomicSums) logCF(t float64) complex128 {
	var re, im float64
	for i, v := range a.v {
		d := v - a.mu
		s, c := math.Sincos(t * d / 2)
		re += a.p[i] * (-2 * s * s) // cos(td) − 1
		im += a.p[i] * 2 * s * c    // sin(td)
	}
	// log(1 + w) for w = re + i·im
	return complex(0.5*math.Log1p(2*re+re*re+im*im), math.Atan2(im, 1+re))
}

// cfBound returns |φ_c(t)| and a bound on |φ_c| over [t − h, t + h]: with
// φ_c(t + x) = φ_c(t) + x·φ_c'(t) + R, |R| <= x²·σ²/2 (Taylor with
// |φ_c”| <= E(X − μ)² = σ²),
//
//	|φ_c(t + x)|² <= |φ_c|² + 2h·|Re(conj(φ_c)·φ_c')| + h²·|φ_c'|²  (before R).
func (a atomicSums) cfBound(t, h float64) (abs, bound float64) {
	var re, im, dre, dim float64
	for i, v := range a.v {
		d := v - a.mu
		s, c := math.Sincos(t * d)
		re += a.p[i] * c
		im += a.p[i] * s
		dre -= a.p[i] * d * s // φ_c' = Σ p·i·d·e^{itd}
		dim += a.p[i] * d * c
	}
	a2 := re*re + im*im
	lin := math.Abs(re*dre + im*dim)
	q := dre*dre + dim*dim
	return math.Sqrt(a2), math.Sqrt(a2+2*h*lin+h*h*q) + h*h*a.sd*a.sd/2
}

// edgeworthLambdas returns λ3 and λ4 of the k-fold sum.
func (a atomicSums) edgeworthLambdas(k float64) (l3, l4 float64) {
	var k3, k4 float64
	for i, v := range a.v {
		d := v - a.mu
		k3 += a.p[i] * d * d * d
		k4 += a.p[i] * d * d * d * d
	}
	v2 := a.sd * a.sd
	k4 -= 3 * v2 * v2
	return k3 / (v2 * a.sd * math.Sqrt(k)), k4 / (v2 * v2 * k)
}

// esseenParts are the terms of edgeworthBound.
type esseenParts struct {
	central, far, smooth float64 // the integral to 12, beyond, and 24m/(πT) at the best T
	T                    float64 // the best T
	gs                   float64 // sup |G − saddle| on the grid
	tails                float64 // the larger of G's and the saddlepoint's tails at z = ±12
	work                 int     // transform values spent on the far part
}

// edgeworthBound returns the bound described above on sup |F − saddle| for
// the k-fold sum.
func (a atomicSums) edgeworthBound(k int64) float64 {
	p := a.esseen(k)
	// 1.1·gs for the grid's step; 1e-30 for |γ| beyond τ = 12
	return min(1, p.central+p.far+p.smooth+1.1*p.gs+p.tails+1e-30)
}

// esseen returns the terms of edgeworthBound.
func (a atomicSums) esseen(k int64) (p esseenParts) {
	n := float64(k)
	s := a.sd * math.Sqrt(n)
	l3, l4 := a.edgeworthLambdas(n)
	gamma := func(tau float64) complex128 {
		t2 := tau * tau
		return complex(math.Exp(-t2/2), 0) * complex(1+l4*t2*t2/24-l3*l3*t2*t2*t2/72, -l3*t2*tau/6)
	}
	diff := func(tau float64) float64 {
		if tau == 0 {
			return 0
		}
		psi := cmplx.Exp(complex(n, 0) * a.logCF(tau/s))
		return cmplx.Abs(psi-gamma(tau)) / tau
	}
	const tau1 = 12.0
	simpson := func(panels int) float64 {
		h := tau1 / float64(panels)
		sum := diff(0) + diff(tau1)
		for i := 1; i < panels; i++ {
			w := 2.0
			if i%2 == 1 {
				w = 4
			}
			sum += w * diff(float64(i)*h)
		}
		return sum * h / 3
	}
	i1, i2 := simpson(6000), simpson(12000)
	central := (2 / math.Pi) * (i2 + math.Abs(i2-i1))

	// m = sup |G'|, G' = ϕ(z)·[1 + λ3/6·He3 + λ4/24·He4 + λ3²/72·He6]
	m := 0.0
	for z := -12.0; z <= 12; z += 1e-3 {
		z2 := z * z
		he3 := z * (z2 - 3)
		he4 := z2*z2 - 6*z2 + 3
		he6 := ((z2-15)*z2+45)*z2 - 15
		g := math.Exp(-z2/2) / math.Sqrt(2*math.Pi) * (1 + l3/6*he3 + l4/24*he4 + l3*l3/72*he6)
		m = max(m, math.Abs(g))
	}
	m = m*1.001 + 1e-9 // the grid's step against G's slope

	// far part: (2/π)·∫_{tau1}^{T} |ψ|/τ dτ = (2/π)·∫ |φ_c(t)|^k/t dt
	work := 0
	farCell := func(lo, hi float64) (ub float64, ok bool) {
		type cell struct{ a, b float64 }
		stack := []cell{{lo, hi}}
		for len(stack) > 0 {
			c := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			mid := c.a/2 + c.b/2
			work++
			if work > esseenMaxWork {
				return 0, false
			}
			f, u := a.cfBound(mid, (c.b-c.a)/2)
			u = min(1, u)
			lg := math.Log(c.b / c.a)
			up := math.Exp(n*math.Log(u)) * lg
			est := math.Exp(n*math.Log(f)) * lg
			if up <= 1e-13*lg || up <= 1.25*est || c.b-c.a <= 1e-12*c.b {
				ub += up
				continue
			}
			stack = append(stack, cell{c.a, mid}, cell{mid, c.b})
		}
		return ub, true
	}
	best := math.Inf(1)
	far := 0.0
	for T := tau1; T < 1e15; T *= 2 {
		if T > tau1 {
			ub, ok := farCell(T/2/s, T/s)
			if !ok {
				break
			}
			far += (2 / math.Pi) * ub
		}
		smooth := 24 * m / (math.Pi * T)
		if central+far+smooth < best {
			best = central + far + smooth
			p.central, p.far, p.smooth, p.T = central, far, smooth, T
		}
		if smooth < 0.1*(central+far) {
			break
		}
	}
	p.work = work

	// sup |G − saddle| on the z grid
	gs := 0.0
	mu := a.mu * n
	for z := -12.0; z <= 12; z += 0.01 {
		g, _ := a.edgeworth(n, z)
		x := mu + z*s
		if x <= n*a.v[0] || x >= n*a.v[len(a.v)-1] {
			continue // eval is exact outside the support
		}
		b, _ := a.saddle(n, x)
		gs = max(gs, math.Abs(g-b))
	}
	p.gs = gs
	// beyond |z| = 12 both F and the saddlepoint lie in [0, their value at
	// ±12] on the tail's side, and F's is within the bound of G's there
	for _, z := range []float64{-12, 12} {
		x := mu + z*s
		if x <= n*a.v[0] || x >= n*a.v[len(a.v)-1] {
			continue
		}
		gb, ga := a.edgeworth(n, z)
		sb, sa := a.saddle(n, x)
		if z < 0 {
			p.tails = max(p.tails, max(math.Abs(gb), sb))
		} else {
			p.tails = max(p.tails, max(math.Abs(ga), sa))
		}
	}
	return p
}
