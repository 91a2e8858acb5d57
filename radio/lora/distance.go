package lora

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Annulus is the law of the distance to the centre of a point drawn
// uniformly over the annulus Inner ≤ r ≤ Outer (a disk when Inner = 0): the
// distance, in metres, from a gateway to a node placed at random in its
// service area.
//
//	F(r) = (r² − a²)/(R² − a²),  f(r) = 2r/(R² − a²)   for a ≤ r ≤ R
//
// It implements dist.Law and dist.Densitied; it is an immutable value. All
// methods return NaN for a NaN argument; CDF and Survival follow the
// conventions of dist.Law at ±Inf.
type Annulus struct {
	inner, outer float64
}

// MaxRadius caps the radii of NewDisk and NewAnnulus (m): 10^8 m is beyond
// any terrestrial link, and above about 1e154 m the squared radii the law
// is made of overflow (its CDF and moments became NaN).
const MaxRadius = 1e8

// NewDisk returns the distance law of a point uniform over a disk of the
// given radius (m, > 0 and at most MaxRadius).
func NewDisk(radius float64) (Annulus, error) {
	if !(radius > 0 && radius <= MaxRadius) {
		return Annulus{}, paramErr("NewDisk", "radius", radius, fmt.Sprintf("must be > 0 m and at most MaxRadius = %g m", MaxRadius))
	}
	return Annulus{outer: radius}, nil
}

// NewAnnulus returns the distance law of a point uniform over the annulus
// between inner and outer radii (m): 0 ≤ inner < outer ≤ MaxRadius.
func NewAnnulus(inner, outer float64) (Annulus, error) {
	if !(inner >= 0 && inner < MaxRadius) {
		return Annulus{}, paramErr("NewAnnulus", "inner", inner, fmt.Sprintf("must be >= 0 m and below MaxRadius = %g m", MaxRadius))
	}
	if !(outer > inner && outer <= MaxRadius) {
		return Annulus{}, paramErr("NewAnnulus", "outer", outer, fmt.Sprintf("must be > inner (%g m) and at most MaxRadius = %g m", inner, MaxRadius))
	}
	return Annulus{inner: inner, outer: outer}, nil
}

// Inner returns the inner radius (m).
func (a Annulus) Inner() float64 { return a.inner }

// Outer returns the outer radius (m).
func (a Annulus) Outer() float64 { return a.outer }

// span returns R² − a², computed as (R − a)(R + a).
func (a Annulus) span() float64 { return (a.outer - a.inner) * (a.outer + a.inner) }

// CDF returns (r² − a²)/(R² − a²) on [a, R].
func (a Annulus) CDF(r float64) float64 {
	switch {
	case math.IsNaN(r):
		return r
	case r <= a.inner:
		return 0
	case r >= a.outer:
		return 1
	}
	return (r - a.inner) * (r + a.inner) / a.span()
}

// Survival returns (R² − r²)/(R² − a²) on [a, R], computed directly.
func (a Annulus) Survival(r float64) float64 {
	switch {
	case math.IsNaN(r):
		return r
	case r <= a.inner:
		return 1
	case r >= a.outer:
		return 0
	}
	return (a.outer - r) * (a.outer + r) / a.span()
}

// Density returns 2r/(R² − a²) on [a, R] and 0 elsewhere.
func (a Annulus) Density(r float64) float64 {
	switch {
	case math.IsNaN(r):
		return r
	case r < a.inner || r > a.outer:
		return 0
	}
	return 2 * r / a.span()
}

// Quantile returns √(a² + p(R² − a²)); NaN for p outside [0, 1].
func (a Annulus) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	return min(max(math.Sqrt(a.inner*a.inner+p*a.span()), a.inner), a.outer)
}

// UpperQuantile returns √(R² − q(R² − a²)), accurate for tiny q; NaN for q
// outside [0, 1].
func (a Annulus) UpperQuantile(q float64) float64 {
	if !(q >= 0 && q <= 1) {
		return math.NaN()
	}
	return min(max(math.Sqrt(a.outer*a.outer-q*a.span()), a.inner), a.outer)
}

// Mean returns (2/3)(R³ − a³)/(R² − a²) = (2/3)(R² + Ra + a²)/(R + a).
func (a Annulus) Mean() float64 {
	R, r := a.outer, a.inner
	return 2 * (R*R + R*r + r*r) / (3 * (R + r))
}

// Variance returns E[r²] − E[r]², with E[r²] = (R² + a²)/2.
func (a Annulus) Variance() float64 {
	m := a.Mean()
	return max((a.outer*a.outer+a.inner*a.inner)/2-m*m, 0)
}

// Support returns [a, R].
func (a Annulus) Support() (lo, hi float64) { return a.inner, a.outer }

// Rand draws a distance by inversion, using r.
func (a Annulus) Rand(r *rand.Rand) float64 { return a.Quantile(r.Float64()) }

// String prints "Annulus(a, R) m" or "Disk(R) m".
func (a Annulus) String() string {
	if a.inner == 0 {
		return fmt.Sprintf("Disk(%g) m", a.outer)
	}
	return fmt.Sprintf("Annulus(%g, %g) m", a.inner, a.outer)
}
