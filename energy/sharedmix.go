package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
)

// sharedMixture is the mixture over the shared factors' quadrature nodes of
// laws of times (s): CDF and Survival are the weighted sums, computed
// directly; quantiles are found by bisection between the components'
// quantiles (the mixture's p-quantile lies between the smallest and the
// largest component p-quantile); the moments integrate the survival. It
// implements dist.Law and dist.Estimated.
type sharedMixture struct {
	w    []float64
	laws []dist.Law
	name string
	lz   *mixLazy
	// stated, when set, returns the mixture's stated CDF error (Site's
	// laws: the rule's and the conditional laws'), computed on first use.
	stated func() float64
	method string
}

type mixLazy struct {
	once       sync.Once
	mean, vari float64
	accOnce    sync.Once
	cdfAbs     float64
}

func newSharedMixture(name string, w []float64, laws []dist.Law) sharedMixture {
	return sharedMixture{w: w, laws: laws, name: name, lz: &mixLazy{}}
}

// newStatedMixture is newSharedMixture with the stated CDF error from
// stated (called once, on first use) and a method text.
func newStatedMixture(name string, w []float64, laws []dist.Law, method string, stated func() float64) sharedMixture {
	m := newSharedMixture(name, w, laws)
	m.stated, m.method = stated, method
	return m
}

func (m sharedMixture) CDF(t float64) float64 {
	if math.IsNaN(t) {
		return t
	}
	s := 0.0
	for i, l := range m.laws {
		s += m.w[i] * l.CDF(t)
	}
	return math.Min(1, s)
}

func (m sharedMixture) Survival(t float64) float64 {
	if math.IsNaN(t) {
		return t
	}
	s := 0.0
	for i, l := range m.laws {
		s += m.w[i] * l.Survival(t)
	}
	return math.Min(1, s)
}

// probit returns the probit of the mixture's CDF at t, from the smaller
// tail (each side summed directly).
func (m sharedMixture) probit(t float64) float64 {
	std := dist.MustNormal(0, 1)
	c := m.CDF(t)
	if c <= 0.5 {
		return std.Quantile(c)
	}
	return std.UpperQuantile(m.Survival(t))
}

// solve returns the smallest t (to 1e-12 relative) in [lo, hi] whose
// probit reaches target, the bracket being the components' answers: regula
// falsi with the Illinois modification (Dowell and Jarratt, BIT 11 (1971)
// 168–174) on the probit, which is nearly linear in t, falling back to
// bisection where the probit is infinite (at a calendar limit). About ten
// evaluations instead of the forty of a bisection.
func (m sharedMixture) solve(lo, hi, target float64) float64 {
	zlo := m.probit(lo)
	if zlo >= target {
		return lo
	}
	zhi := m.probit(hi)
	side := 0
	for range 200 {
		if hi-lo <= 1e-12*math.Abs(hi) {
			break
		}
		x := lo + (hi-lo)/2
		if !math.IsInf(zlo, 0) && !math.IsInf(zhi, 0) && zhi > zlo {
			fl, fh := zlo-target, zhi-target
			switch side {
			case -1:
				fh /= 2
			case 1:
				fl /= 2
			}
			if s := lo - fl*(hi-lo)/(fh-fl); s > lo && s < hi {
				x = s
			}
		}
		zx := m.probit(x)
		if zx >= target {
			hi, zhi = x, zx
			side = 1
		} else {
			lo, zlo = x, zx
			side = -1
		}
	}
	return hi
}

// span returns the smallest and largest of the components' answers q(l).
func (m sharedMixture) span(q func(dist.Law) float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, l := range m.laws {
		x := q(l)
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return lo, hi
}

func (m sharedMixture) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	lo, hi := m.span(func(l dist.Law) float64 { return l.Quantile(p) })
	switch {
	case p == 1:
		return hi
	case p == 0 || lo == hi || math.IsInf(hi, 0):
		return lo
	}
	return m.solve(lo, hi, dist.MustNormal(0, 1).Quantile(p))
}

func (m sharedMixture) UpperQuantile(q float64) float64 {
	if !(q >= 0 && q <= 1) {
		return math.NaN()
	}
	lo, hi := m.span(func(l dist.Law) float64 { return l.UpperQuantile(q) })
	switch {
	case q == 0:
		return hi
	case q == 1 || lo == hi || math.IsInf(hi, 0):
		return lo
	}
	return m.solve(lo, hi, dist.MustNormal(0, 1).UpperQuantile(q))
}

func (m sharedMixture) moments() {
	m.lz.once.Do(func() {
		lo := m.Quantile(1e-15)
		hi := m.UpperQuantile(1e-15)
		if !(hi > lo) {
			m.lz.mean, m.lz.vari = lo, 0
			return
		}
		var brk []float64
		for _, p := range []float64{0.01, 0.5, 0.99} {
			brk = append(brk, m.Quantile(p))
		}
		brk = sortedUnique(brk)
		a, _ := integratePiecesTol(m.Survival, lo, hi, brk, 1e-8)
		b, _ := integratePiecesTol(func(t float64) float64 { return 2 * t * m.Survival(t) }, lo, hi, brk, 1e-8)
		mean := lo + a
		m.lz.mean = mean
		m.lz.vari = math.Max(0, lo*lo+b-mean*mean)
	})
}

// Mean returns ∫ Survival (s), computed on first use.
func (m sharedMixture) Mean() float64 { m.moments(); return m.lz.mean }

// Variance returns 2∫ t·Survival − Mean² (s²), computed on first use.
func (m sharedMixture) Variance() float64 { m.moments(); return m.lz.vari }

func (m sharedMixture) Support() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, l := range m.laws {
		a, b := l.Support()
		lo, hi = math.Min(lo, a), math.Max(hi, b)
	}
	return lo, hi
}

func (m sharedMixture) Rand(r *rand.Rand) float64 {
	u := r.Float64()
	acc := 0.0
	for i, w := range m.w {
		acc += w
		if u < acc || i == len(m.w)-1 {
			return m.laws[i].Rand(r)
		}
	}
	return math.NaN()
}

// Accuracy returns the largest of the components' stated errors, or for a
// Site's law, the stated CDF error of the mixture (see Site).
func (m sharedMixture) Accuracy() dist.Accuracy {
	acc := dist.Accuracy{Method: "mixture over the shared factors (Gauss–Hermite nodes)"}

	for _, l := range m.laws {
		if e, ok := l.(dist.Estimated); ok {
			a := e.Accuracy()
			acc.CDFAbs = math.Max(acc.CDFAbs, a.CDFAbs)
			acc.SurvivalRel = math.Max(acc.SurvivalRel, a.SurvivalRel)
			acc.TailFloor = math.Max(acc.TailFloor, a.TailFloor)
		}
	}
	if m.stated != nil {
		m.lz.accOnce.Do(func() { m.lz.cdfAbs = m.stated() })
		acc.Method, acc.CDFAbs = m.method, m.lz.cdfAbs
	}
	return acc
}

func (m sharedMixture) String() string {
	return fmt.Sprintf("%s(mixture of %d over the shared factors)", m.name, len(m.laws))
}
