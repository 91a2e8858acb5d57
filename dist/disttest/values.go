package disttest

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/joulelaw/joulelaw/dist"
)

// checkSupport: the mean lies in the support (or is NaN or an infinity on
// an unbounded side), the variance is >= 0 or +Inf (NaN only with a NaN or
// infinite mean), and a degenerate support has variance 0.
func (c *checker) checkSupport() {
	l := c.law
	m, v := l.Mean(), l.Variance()
	switch {
	case math.IsNaN(m):
	case math.IsInf(m, 1) && !math.IsInf(c.hi, 1), math.IsInf(m, -1) && !math.IsInf(c.lo, -1):
		c.fail(CheckSupport, "Mean()", "finite mean for a support bounded on that side", g(m))
	case m < c.lo || m > c.hi:
		c.fail(CheckSupport, "Mean()", fmt.Sprintf("a value in the support [%s, %s]", g(c.lo), g(c.hi)), g(m))
	}
	switch {
	case math.IsNaN(v):
		if finite(m) {
			c.fail(CheckSupport, "Variance()", ">= 0 or +Inf (NaN only when the mean does not exist)", "NaN")
		}
	case v < 0 || math.IsInf(v, -1):
		c.fail(CheckSupport, "Variance()", ">= 0", g(v))
	case c.lo == c.hi && v != 0:
		c.fail(CheckSupport, "Variance()", "0 for a one-point support", g(v))
	}
	if finite(c.lo) && finite(c.hi) && !math.IsNaN(v) && v > (c.hi-c.lo)*(c.hi-c.lo)/4*(1+1e-12) {
		c.fail(CheckSupport, "Variance()", fmt.Sprintf("<= (hi-lo)²/4 = %s", g((c.hi-c.lo)*(c.hi-c.lo)/4)), g(v))
	}
}

// checkSpecial: the special values documented on dist.Law.
func (c *checker) checkSpecial() {
	l := c.law
	nan, inf := math.NaN(), math.Inf(1)
	wantNaN := func(name string, got float64) {
		if !math.IsNaN(got) {
			c.fail(CheckSpecial, name, "NaN", g(got))
		}
	}
	wantEq := func(name string, got, want float64) {
		if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
			c.fail(CheckSpecial, name, g(want), g(got))
		}
	}
	wantNaN("CDF(NaN)", l.CDF(nan))
	wantNaN("Survival(NaN)", l.Survival(nan))
	wantNaN("Quantile(NaN)", l.Quantile(nan))
	wantNaN("UpperQuantile(NaN)", l.UpperQuantile(nan))
	if c.density != nil {
		wantNaN("Density(NaN)", c.density(nan))
		for _, x := range []float64{-inf, inf} {
			if d := c.density(x); d != 0 {
				c.fail(CheckSpecial, fmt.Sprintf("Density(%s)", g(x)), "0", g(d))
			}
		}
	}
	if cf, ok := l.(dist.CharFunc); ok {
		if z := cf.CF(nan); !cmplx.IsNaN(z) {
			c.fail(CheckSpecial, "CF(NaN)", "NaN", fmt.Sprint(z))
		}
	}
	wantEq("CDF(-Inf)", l.CDF(-inf), 0)
	wantEq("CDF(+Inf)", l.CDF(inf), 1)
	wantEq("Survival(-Inf)", l.Survival(-inf), 1)
	wantEq("Survival(+Inf)", l.Survival(inf), 0)
	for _, p := range []float64{-inf, -1, -1e-300, math.Nextafter(1, 2), 2, inf} {
		wantNaN(fmt.Sprintf("Quantile(%s)", g(p)), l.Quantile(p))
		wantNaN(fmt.Sprintf("UpperQuantile(%s)", g(p)), l.UpperQuantile(p))
	}
	wantEq("Quantile(0) (lower end of the support)", l.Quantile(0), c.lo)
	wantEq("Quantile(1) (upper end of the support)", l.Quantile(1), c.hi)
	wantEq("UpperQuantile(1) (lower end of the support)", l.UpperQuantile(1), c.lo)
	wantEq("UpperQuantile(0) (upper end of the support)", l.UpperQuantile(0), c.hi)
}

// checkRange: CDF and Survival lie in [0, 1] on the grid; below the
// support CDF = 0 and Survival = 1, at and above its upper end CDF = 1 and
// Survival = 0 (within the CDF tolerance).
func (c *checker) checkRange() {
	tol := c.cfg.cdfAbs
	for i, x := range c.grid {
		F, S := c.gridF[i], c.gridS[i]
		at := "x = " + g(x)
		if !(F >= 0 && F <= 1) {
			c.fail(CheckRange, at, "CDF in [0, 1]", g(F))
		}
		if !(S >= 0 && S <= 1) {
			c.fail(CheckRange, at, "Survival in [0, 1]", g(S))
		}
		if x < c.lo && (F > tol || S < 1-tol) {
			c.fail(CheckRange, at+" (below the support)", "CDF 0, Survival 1", fmt.Sprintf("CDF %s, Survival %s", g(F), g(S)))
		}
		if x >= c.hi && (F < 1-tol || S > tol) {
			c.fail(CheckRange, at+" (at or above the support's upper end)", "CDF 1, Survival 0", fmt.Sprintf("CDF %s, Survival %s", g(F), g(S)))
		}
	}
}

// checkMonotone: along the sorted grid CDF never decreases and Survival
// never increases, by more than the CDF tolerance.
func (c *checker) checkMonotone() {
	tol := c.cfg.cdfAbs
	prevF, prevS, prevX := 0.0, 1.0, math.Inf(-1)
	for i, x := range c.grid {
		F, S := c.gridF[i], c.gridS[i]
		if F < prevF-tol {
			c.fail(CheckMonotone, fmt.Sprintf("x = %s after x = %s", g(x), g(prevX)),
				fmt.Sprintf("CDF >= %s", g(prevF)), g(F))
		}
		if S > prevS+tol {
			c.fail(CheckMonotone, fmt.Sprintf("x = %s after x = %s", g(x), g(prevX)),
				fmt.Sprintf("Survival <= %s", g(prevS)), g(S))
		}
		if !math.IsNaN(F) {
			prevF = F
		}
		if !math.IsNaN(S) {
			prevS = S
		}
		prevX = x
	}
}

// checkComplement: |CDF(x) + Survival(x) - 1| <= max(1e-12, 2·tolerance).
func (c *checker) checkComplement() {
	tol := max(1e-12, 2*c.cfg.cdfAbs)
	for i, x := range c.grid {
		F, S := c.gridF[i], c.gridS[i]
		if d := F + S - 1; !(math.Abs(d) <= tol) {
			c.fail(CheckComplement, "x = "+g(x), fmt.Sprintf("CDF + Survival = 1 within %s", g(tol)),
				fmt.Sprintf("CDF %s + Survival %s - 1 = %s", g(F), g(S), g(d)))
		}
	}
}

// checkReference: Survival (or CDF) against each reference given by
// option, relative to the reference value; for an Estimated law also its
// own reported SurvivalRel where the reference is >= TailFloor.
func (c *checker) checkReference() {
	l := c.law
	est, isEst := l.(dist.Estimated)
	for _, r := range c.cfg.refs {
		name, fn := "CDF", l.CDF
		if r.survival {
			name, fn = "Survival", l.Survival
		}
		for _, x := range r.xs {
			want, got := r.f(x), fn(x)
			at := fmt.Sprintf("%s(%s)", name, g(x))
			if math.IsNaN(want) {
				c.fail(CheckReference, at, "a reference value", "NaN from the reference function")
				continue
			}
			if e := math.Abs(got - want); !(e <= r.relTol*math.Abs(want)) {
				c.fail(CheckReference, at, fmt.Sprintf("%s within relative %s", g(want), g(r.relTol)),
					fmt.Sprintf("%s (relative error %.3g)", g(got), e/math.Abs(want)))
			}
			if isEst && r.survival {
				a := est.Accuracy()
				if want >= a.TailFloor && want > 0 && math.Abs(got-want) > (a.SurvivalRel+4*eps)*want {
					c.fail(CheckReference, at+" (reported accuracy)",
						fmt.Sprintf("relative error within the reported SurvivalRel %s", g(a.SurvivalRel)),
						fmt.Sprintf("%.3g", math.Abs(got-want)/want))
				}
			}
		}
	}
}
