package dist

import "math"

// temmeMinShape is the smallest shape for which Gamma's CDF and Survival
// take Temme's expansion (gamma_temme_tables.go). From there on five terms
// c_0 … c_4 leave a truncation error below |c_5|/a^5 ≈ 3.4e-19 of the
// prefactor exp(−½aη²)/√(2πa) (fewer terms for larger a, at the same
// bound), and for y > 5a the upper tail is below exp(−2.39·a), which
// underflows.
const temmeMinShape = 1000

// temmeTaylorEta is the |η| up to which c_k is summed from its Taylor
// series (23 terms: the last is below 1e-17 of c_k there); beyond it the
// closed forms lose at most a few ulps of c_0.
const temmeTaylorEta = 0.5

// gammaTemme returns P(a, y) and Q(a, y), each computed directly, for a >=
// temmeMinShape and y >= 0 finite, by Temme's uniform expansion. Stated
// relative error of either tail: 8e-16·(8 + ½aη²) — the rounding of the
// exponent ½aη² (in exp and inside erfc, a few ulps of it: 6e-13 where a
// tail underflows, about 1e-14 within a few standard deviations) and a few
// ulps of the value — the truncation (above) being far below it. Measured
// against mpmath at 30 digits (internal/testref.GammaTailTable, shapes 1000
// to 1e14, tails down to 1e-300): at most 0.63 of the stated error
// (TestGammaTemmeAgainstTable).
func gammaTemme(a, y float64) (p, q float64) {
	mu := (y - a) / a // exact for a/2 <= y <= 2a (Sterbenz)
	if mu > 4 {
		return 1, 0 // Q < exp(-2.39·a): below the smallest float64
	}
	half := -log1pmx(mu) // ½η² >= 0
	eta := math.Sqrt(2 * half)
	if mu < 0 {
		eta = -eta
	}
	// How many terms: the first k with |c_k|/a^k below 1e-18·|c_0|
	// (|c_k(0)| <= 4.2e-3 for k <= 5).
	nk := 5
	switch {
	case a >= 1e9:
		nk = 2
	case a >= 3e5:
		nk = 3
	case a >= 1e4:
		nk = 4
	}
	var sum float64
	if math.Abs(eta) <= temmeTaylorEta {
		// Horner in η for each c_k, terms by the size of |η| (coefficients
		// fall by about 3.5 per term: |η|^n/3.5^n below 1e-17).
		nt := 23
		switch ae := math.Abs(eta); {
		case ae <= 0.01:
			nt = 7
		case ae <= 0.05:
			nt = 10
		case ae <= 0.2:
			nt = 15
		}
		ia, ak := 1/a, 1.0
		for k := 0; k < nk; k++ {
			row := &temmeTaylor[k]
			c := row[nt-1]
			for n := nt - 2; n >= 0; n-- {
				c = c*eta + row[n]
			}
			sum += c * ak
			ak *= ia
		}
	} else {
		s := 1 / mu
		ie := 1 / eta
		ie2 := ie * ie
		ia, ak, ep := 1/a, 1.0, ie
		for k := 0; k < nk; k++ {
			row := &temmeS[k]
			c := 0.0
			for j := 2*k + 1; j >= 1; j-- {
				c = (c + row[j]) * s
			}
			c += temmeEta[k] * ep
			sum += c * ak
			ak *= ia
			ep *= ie2
		}
	}
	r := math.Exp(-a*half) / math.Sqrt(2*math.Pi*a) * sum
	e := 0.5 * math.Erfc(math.Abs(eta)*math.Sqrt(a/2)) // the smaller erfc term
	if eta >= 0 {
		return (1 - e) - r, e + r
	}
	return e - r, (1 - e) + r
}
