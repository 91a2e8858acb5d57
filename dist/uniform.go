package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
)

// Uniform is the continuous uniform law on [Lo, Hi]:
//
//	f(x) = 1/(b-a) for a <= x <= b
type Uniform struct {
	lo, hi float64
}

// NewUniform returns the uniform law on [lo, hi], in the unit of the
// variable. Both ends must be finite and lo < hi.
func NewUniform(lo, hi float64) (Uniform, error) {
	if !finite(lo) {
		return Uniform{}, paramErr("NewUniform", "lo", lo, "must be finite")
	}
	if !finite(hi) {
		return Uniform{}, paramErr("NewUniform", "hi", hi, "must be finite")
	}
	if !(lo < hi) || !finite(hi-lo) {
		return Uniform{}, paramErr("NewUniform", "hi", hi, fmt.Sprintf("must exceed lo = %v by a finite amount", lo))
	}
	return Uniform{lo: lo, hi: hi}, nil
}

// MustUniform is NewUniform that panics on bad input; for examples and tests.
func MustUniform(lo, hi float64) Uniform {
	u, err := NewUniform(lo, hi)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return u
}

// CDF returns (x-a)/(b-a) clamped to [0, 1].
func (u Uniform) CDF(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x <= u.lo:
		return 0
	case x >= u.hi:
		return 1
	}
	return (x - u.lo) / (u.hi - u.lo)
}

// Survival returns (b-x)/(b-a) clamped to [0, 1].
func (u Uniform) Survival(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x <= u.lo:
		return 1
	case x >= u.hi:
		return 0
	}
	return (u.hi - x) / (u.hi - u.lo)
}

// Density returns 1/(b-a) on [a, b] and 0 elsewhere.
func (u Uniform) Density(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x < u.lo || x > u.hi:
		return 0
	}
	return 1 / (u.hi - u.lo)
}

// Quantile returns a + p(b-a).
func (u Uniform) Quantile(p float64) float64 {
	if !isProb(p) {
		return math.NaN()
	}
	if p == 1 {
		return u.hi
	}
	return u.lo + p*(u.hi-u.lo)
}

// UpperQuantile returns b - q(b-a).
func (u Uniform) UpperQuantile(q float64) float64 {
	if !isProb(q) {
		return math.NaN()
	}
	if q == 1 {
		return u.lo
	}
	return u.hi - q*(u.hi-u.lo)
}

// Mean returns (a+b)/2.
func (u Uniform) Mean() float64 { return u.lo/2 + u.hi/2 }

// Variance returns (b-a)²/12.
func (u Uniform) Variance() float64 { d := u.hi - u.lo; return d * d / 12 }

// Support returns [a, b].
func (u Uniform) Support() (lo, hi float64) { return u.lo, u.hi }

// Rand draws a uniform value using r.
func (u Uniform) Rand(r *rand.Rand) float64 { return u.lo + r.Float64()*(u.hi-u.lo) }

// CF returns exp(itm)·sin(th)/(th), with m the midpoint and h the half width.
func (u Uniform) CF(t float64) complex128 {
	h := (u.hi - u.lo) / 2
	m := u.lo + h
	th := t * h
	s := 1.0
	if math.Abs(th) > 1e-8 {
		s = math.Sin(th) / th
	} else {
		s = 1 - th*th/6
	}
	return complex(s, 0) * cmplx.Exp(complex(0, t*m))
}

// CGF returns log E[exp(sX)] = s·m + log(sinh(sh)/(sh)).
func (u Uniform) CGF(s float64) float64 {
	h := (u.hi - u.lo) / 2
	m := u.lo + h
	sh := math.Abs(s * h)
	if sh < 1e-6 {
		return s*m + sh*sh/6
	}
	// log(sinh(y)/y) = y + log1p(-exp(-2y)) - log(2y)
	return s*m + sh + math.Log1p(-math.Exp(-2*sh)) - math.Log(2*sh)
}

// String prints the law compactly, e.g. "Uniform[0, 1]".
func (u Uniform) String() string { return fmt.Sprintf("Uniform[%.6g, %.6g]", u.lo, u.hi) }
