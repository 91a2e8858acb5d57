package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// LogNormal is the law of exp(Y) with Y normal of mean Mu and standard
// deviation Sigma (the parameters of the logarithm):
//
//	f(x) = exp(-(ln x - μ)²/(2σ²)) / (xσ√(2π)),  x > 0
//
// Its survival is erfc((ln x - μ)/(σ√2))/2, computed directly.
type LogNormal struct {
	mu, sigma float64
}

// NewLogNormal returns the log-normal law whose logarithm has mean mu and
// standard deviation sigma (the median is exp(mu), in the unit of the
// variable). mu must be finite, sigma finite and > 0, and the mean
// exp(μ + σ²/2) and variance (exp(σ²) - 1)·exp(2μ + σ²) finite and > 0 in
// float64 (μ = ±1e308 overflowed to NaN moments): roughly |μ| + σ² below
// 354.
func NewLogNormal(mu, sigma float64) (LogNormal, error) {
	if !finite(mu) {
		return LogNormal{}, paramErr("NewLogNormal", "mu", mu, "must be finite")
	}
	if !finite(sigma) || sigma <= 0 {
		return LogNormal{}, paramErr("NewLogNormal", "sigma", sigma, "must be finite and > 0")
	}
	l := LogNormal{mu: mu, sigma: sigma}
	if m, v := l.Mean(), l.Variance(); !finite(m) || !finite(v) || m <= 0 || v <= 0 {
		return LogNormal{}, paramErr("NewLogNormal", "mu", mu, fmt.Sprintf("must give a finite, positive mean and variance with sigma = %v (mean %v, variance %v)", sigma, m, v))
	}
	return l, nil
}

// MustLogNormal is NewLogNormal that panics on bad input; for examples and tests.
func MustLogNormal(mu, sigma float64) LogNormal {
	l, err := NewLogNormal(mu, sigma)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return l
}

// Mu returns the mean of ln X.
func (l LogNormal) Mu() float64 { return l.mu }

// Sigma returns the standard deviation of ln X.
func (l LogNormal) Sigma() float64 { return l.sigma }

func (l LogNormal) z(x float64) float64 { return (math.Log(x) - l.mu) / (l.sigma * math.Sqrt2) }

// CDF returns erfc(-(ln x - μ)/(σ√2))/2 for x > 0.
func (l LogNormal) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if x <= 0 {
		return 0
	}
	return 0.5 * math.Erfc(-l.z(x))
}

// Survival returns erfc((ln x - μ)/(σ√2))/2 for x > 0.
func (l LogNormal) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if x <= 0 {
		return 1
	}
	return 0.5 * math.Erfc(l.z(x))
}

// Density returns the log-normal density at x (0 for x <= 0).
func (l LogNormal) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	if x <= 0 || math.IsInf(x, 1) {
		return 0
	}
	lx := math.Log(x)
	z := (lx - l.mu) / l.sigma
	return math.Exp(-z*z/2 - lx - math.Log(l.sigma*math.Sqrt(2*math.Pi)))
}

// Quantile returns exp(μ + σz) with Φ(z) = p.
func (l LogNormal) Quantile(p float64) float64 {
	if !isProb(p) {
		return math.NaN()
	}
	return math.Exp(l.mu + l.sigma*stdNormalQuantile(p))
}

// UpperQuantile returns exp(μ + σz) with Q(z) = q, accurate for tiny q.
func (l LogNormal) UpperQuantile(q float64) float64 {
	if !isProb(q) {
		return math.NaN()
	}
	return math.Exp(l.mu - l.sigma*stdNormalQuantile(q))
}

// Mean returns exp(μ + σ²/2).
func (l LogNormal) Mean() float64 { return math.Exp(l.mu + l.sigma*l.sigma/2) }

// Variance returns (exp(σ²) - 1)·exp(2μ + σ²), with exp(σ²) - 1 as expm1.
func (l LogNormal) Variance() float64 {
	s2 := l.sigma * l.sigma
	return math.Expm1(s2) * math.Exp(2*l.mu+s2)
}

// Support returns [0, +Inf).
func (l LogNormal) Support() (lo, hi float64) { return 0, math.Inf(1) }

// Rand draws a log-normal value using r.
func (l LogNormal) Rand(r *rand.Rand) float64 { return math.Exp(l.mu + l.sigma*r.NormFloat64()) }

// String prints the law compactly, e.g. "LogNormal(μ=0, σ=0.25)".
func (l LogNormal) String() string {
	return fmt.Sprintf("LogNormal(μ=%.6g, σ=%.6g)", l.mu, l.sigma)
}
