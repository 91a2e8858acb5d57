package testref

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

// TestTwoBinomialCDF: the tabulated two-binomial CDF against (a) exact
// integer arithmetic (binomialTailsBig for both binomials, summed in
// float64) at 300 cycles, and (b) the same sum with every tail from
// BinomialTails at 20 000 cycles, down to 1e-100 in the lower tail;
// relative agreement 1e-11.
func TestTwoBinomialCDF(t *testing.T) {
	for _, tc := range []struct {
		name           string
		k              int
		pa, pb, da, db float64
	}{
		{"300 cycles, da/db = 10·golden ratio", 300, 0.034, 0.15, 0.4356, 0.4356 / (5 * (1 + math.Sqrt(5)))},
		{"20 000 cycles, nearly commensurate", 20_000, 0.4356, 0.15, 0.4356, 0.4356 / 38.6708},
		{"20 000 cycles, commensurate", 20_000, 0.034, 0.15, 0.03, 0.01},
	} {
		t.Run(tc.name, func(t *testing.T) {
			mean := float64(tc.k) * (tc.pa*tc.da + tc.pb*tc.db)
			sd := math.Sqrt(float64(tc.k) * (tc.pa*(1-tc.pa)*tc.da*tc.da + tc.pb*(1-tc.pb)*tc.db*tc.db))
			var oracle func(x float64) float64
			if tc.k <= 300 {
				_, geA, _ := binomialTailsBig(tc.k, tc.pa)
				leB, _, _ := binomialTailsBig(tc.k, tc.pb)
				oracle = func(x float64) float64 {
					s := 0.0
					for j := 0; j <= tc.k; j++ {
						y := (x - float64(j)*tc.da) / tc.db
						if y < 0 {
							continue
						}
						mass := geA[j]
						if j < tc.k {
							mass -= geA[j+1]
						}
						s += mass * leB[min(tc.k, int(math.Floor(y)))]
					}
					return s
				}
			} else {
				m, s := float64(tc.k)*tc.pa, math.Sqrt(float64(tc.k)*tc.pa*(1-tc.pa))
				lo, hi := max(0, int(m-12*s)), min(tc.k, int(m+12*s)+1)
				oracle = func(x float64) float64 { return twoBinomialDirect(tc.k, 0, tc.da, tc.pa, tc.db, tc.pb, x, lo, hi) }
			}
			for z := -8.0; z <= 8; z += 0.53 {
				x := mean + z*sd
				want := oracle(x)
				if want < 1e-100 {
					continue
				}
				got := TwoBinomialCDF(tc.k, 0, tc.da, tc.pa, tc.db, tc.pb, x)
				assert.InDelta(t, 0, (got-want)/want, 1e-11, "x=%g (z=%.2f): got %g want %g", x, z, got, want)
			}
		})
	}
}
