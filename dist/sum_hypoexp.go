package dist

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
)

// maxHypoCond is the largest condition number Σ|C_i| of the hypoexponential
// closed form that Sum accepts; beyond it (rates too close together) the sum
// is inverted numerically instead.
const maxHypoCond = 1e3

// hypoExp is the law of E_1 + … + E_n for independent exponentials with
// distinct rates λ_i (the hypoexponential law):
//
//	S(x) = Σ_i C_i·exp(-λ_i·x),  C_i = Π_{j≠i} λ_j/(λ_j - λ_i),  x >= 0
//
// (a standard result, e.g. Ross, Introduction to Probability Models, §5.2.4;
// the coefficients sum to 1, and the one of the smallest rate is positive).
// The CDF is -Σ C_i·expm1(-λ_i·x), and near 0, where that cancels, the
// entire series F(x) = Πλ_i·Σ_k (-1)^k·h_k(λ)·x^(n+k)/(n+k)! (h_k the
// complete homogeneous symmetric polynomials). Rounding error at most
// 8ε·Σ|C_i| absolute in the CDF and relative in the survival (each
// exp(-λ_i x)/S(x) <= 1 since S(x) >= exp(-λ_min·x)).
type hypoExp struct {
	rates, coef []float64
	cond        float64
}

// newHypoExp returns the hypoexponential law of the rates, or false when
// its closed form is too ill-conditioned (condition number above 1e3).
func newHypoExp(rates []float64) (hypoExp, bool) {
	h := hypoExp{rates: append([]float64(nil), rates...), coef: make([]float64, len(rates))}
	for i, li := range rates {
		c := 1.0
		for j, lj := range rates {
			if j != i {
				c *= lj / (lj - li)
			}
		}
		h.coef[i] = c
		h.cond += math.Abs(c)
	}
	return h, finite(h.cond) && h.cond <= maxHypoCond
}

// lowerSeries returns F(x) by the entire series (used for λ_max·x <= 1).
func (h hypoExp) lowerSeries(x float64) float64 {
	n := len(h.rates)
	// hk[k] = h_k(λ_1..λ_n), built one rate at a time
	const kmax = 60
	var hk [kmax + 1]float64
	hk[0] = 1
	for _, l := range h.rates {
		for k := 1; k <= kmax; k++ {
			hk[k] += l * hk[k-1]
		}
	}
	prod := 1.0
	for _, l := range h.rates {
		prod *= l * x
	}
	lg, _ := math.Lgamma(float64(n + 1))
	term := prod * math.Exp(-lg) // x^n·Πλ/n!
	sum := 0.0
	for k := 0; k <= kmax; k++ {
		t := term * hk[k]
		if k%2 == 1 {
			t = -t
		}
		sum += t
		if math.Abs(t) <= 1e-17*math.Abs(sum) {
			break
		}
		term *= x / float64(n+k+1)
	}
	return sum
}

func (h hypoExp) maxRate() float64 {
	m := 0.0
	for _, l := range h.rates {
		m = max(m, l)
	}
	return m
}

// CDF returns P(X <= x); NaN for NaN.
func (h hypoExp) CDF(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x <= 0:
		return 0
	case math.IsInf(x, 1):
		return 1
	}
	if h.maxRate()*x <= 1 {
		return max(0, h.lowerSeries(x))
	}
	s := 0.0
	for i, l := range h.rates {
		s -= h.coef[i] * math.Expm1(-l*x)
	}
	if s > 0.5 {
		// 1 - S, S summed directly: the coefficients' rounding left
		// Σ C_i short of 1 (CDF(1e300) = 1 - 4 ulp; issue 13)
		return 1 - h.Survival(x)
	}
	return min(1, max(0, s))
}

// Survival returns P(X > x), summed directly (accurate in the upper tail).
func (h hypoExp) Survival(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x <= 0:
		return 1
	}
	if h.maxRate()*x <= 1 {
		return min(1, 1-h.lowerSeries(x))
	}
	s := 0.0
	for i, l := range h.rates {
		s += h.coef[i] * math.Exp(-l*x)
	}
	return min(1, max(0, s))
}

// Density returns Σ C_i·λ_i·exp(-λ_i·x) for x >= 0 (0 below).
func (h hypoExp) Density(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x < 0 || math.IsInf(x, 1):
		return 0
	}
	s := 0.0
	for i, l := range h.rates {
		s += h.coef[i] * l * math.Exp(-l*x)
	}
	return max(0, s)
}

func (h hypoExp) Quantile(p float64) float64      { return quantileByInversion(h, p) }
func (h hypoExp) UpperQuantile(q float64) float64 { return upperQuantileByInversion(h, q) }

// Mean returns Σ 1/λ_i.
func (h hypoExp) Mean() float64 {
	m := 0.0
	for _, l := range h.rates {
		m += 1 / l
	}
	return m
}

// Variance returns Σ 1/λ_i².
func (h hypoExp) Variance() float64 {
	v := 0.0
	for _, l := range h.rates {
		v += 1 / (l * l)
	}
	return v
}

func (h hypoExp) Support() (lo, hi float64) { return 0, math.Inf(1) }

// Rand adds one exponential draw per rate.
func (h hypoExp) Rand(r *rand.Rand) float64 {
	x := 0.0
	for _, l := range h.rates {
		x += r.ExpFloat64() / l
	}
	return x
}

// CF returns Π λ_i/(λ_i - i·t).
func (h hypoExp) CF(t float64) complex128 {
	if math.IsNaN(t) {
		return complex(math.NaN(), math.NaN())
	}
	return cmplx.Exp(h.transform().logm(complex(0, t)))
}

func (h hypoExp) transform() transform {
	rates := h.rates
	hi := math.Inf(1)
	for _, l := range rates {
		hi = min(hi, l)
	}
	return transform{
		logm: func(s complex128) complex128 {
			var v complex128
			for _, l := range rates {
				v -= clog1p(-s / complex(l, 0))
			}
			return v
		},
		lo: math.Inf(-1), hi: hi,
	}
}

// Accuracy reports the rounding bound of the closed form.
func (h hypoExp) Accuracy() Accuracy {
	e := 8 * 0x1p-52 * h.cond
	return Accuracy{CDFAbs: e, SurvivalRel: e, TailFloor: 0, Method: "hypoexponential closed form"}
}

func (h hypoExp) String() string {
	return fmt.Sprintf("Hypoexponential(rates %v: %s)", h.rates, summary(h))
}
