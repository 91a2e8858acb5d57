package disttest_test

import (
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
)

// Two correct laws written here from their closed forms (common practice),
// to show that Check raises no false alarm on a heavy tail without moments
// or on an atom at the end of a density's support.

// cauchy is the standard Cauchy law: F(x) = 1/2 + atan(x)/π, with both
// tails computed through atan2 so that they keep their relative precision.
type cauchy struct{}

func (cauchy) CDF(x float64) float64      { return math.Atan2(1, -x) / math.Pi }
func (cauchy) Survival(x float64) float64 { return math.Atan2(1, x) / math.Pi }
func (cauchy) Density(x float64) float64  { return 1 / (math.Pi * (1 + x*x)) }
func (c cauchy) Quantile(p float64) float64 {
	switch {
	case !(p >= 0 && p <= 1):
		return math.NaN()
	case p == 0:
		return math.Inf(-1)
	case p == 1:
		return math.Inf(1)
	case p <= 0.5:
		return -1 / math.Tan(math.Pi*p)
	}
	return 1 / math.Tan(math.Pi*(1-p))
}
func (c cauchy) UpperQuantile(q float64) float64 {
	if !(q >= 0 && q <= 1) {
		return math.NaN()
	}
	if q == 0 || q == 1 {
		return c.Quantile(1 - q)
	}
	if q <= 0.5 {
		return 1 / math.Tan(math.Pi*q)
	}
	return -1 / math.Tan(math.Pi*(1-q))
}
func (cauchy) Mean() float64               { return math.NaN() }
func (cauchy) Variance() float64           { return math.NaN() }
func (cauchy) Support() (lo, hi float64)   { return math.Inf(-1), math.Inf(1) }
func (c cauchy) Rand(r *rand.Rand) float64 { return c.Quantile(r.Float64()) }
func (cauchy) CF(t float64) complex128     { return complex(math.Exp(-math.Abs(t)), 0) }

// zeroInflated is 0 with probability 0.3 and Exponential(1) otherwise.
type zeroInflated struct{}

const zeroMass = 0.3

func (zeroInflated) CDF(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x < 0:
		return 0
	}
	return zeroMass + (1-zeroMass)*-math.Expm1(-x)
}
func (zeroInflated) Survival(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case x < 0:
		return 1
	}
	return (1 - zeroMass) * math.Exp(-x)
}
func (zeroInflated) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if x < 0 {
		return 0
	}
	return (1 - zeroMass) * math.Exp(-x)
}
func (zeroInflated) Quantile(p float64) float64 {
	switch {
	case !(p >= 0 && p <= 1):
		return math.NaN()
	case p <= zeroMass:
		return 0
	case p > 0.5: // 1-p is exact: keep the upper tail's precision
		return -math.Log((1 - p) / (1 - zeroMass))
	}
	return -math.Log1p(-(p - zeroMass) / (1 - zeroMass))
}
func (zeroInflated) UpperQuantile(q float64) float64 {
	switch {
	case !(q >= 0 && q <= 1):
		return math.NaN()
	case q >= 1-zeroMass:
		return 0
	}
	return -math.Log(q / (1 - zeroMass))
}
func (zeroInflated) Mean() float64             { return 1 - zeroMass }
func (zeroInflated) Variance() float64         { return 2*(1-zeroMass) - (1-zeroMass)*(1-zeroMass) }
func (zeroInflated) Support() (lo, hi float64) { return 0, math.Inf(1) }
func (zeroInflated) Atoms() []dist.Atom        { return []dist.Atom{{Value: 0, Mass: zeroMass}} }
func (zeroInflated) Rand(r *rand.Rand) float64 {
	if r.Float64() < zeroMass {
		return 0
	}
	return r.ExpFloat64()
}
func (zeroInflated) CF(t float64) complex128 {
	return complex(zeroMass, 0) + complex(1-zeroMass, 0)/complex(1, -t)
}
