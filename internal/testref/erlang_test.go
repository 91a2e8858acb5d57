package testref

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"gonum.org/v1/gonum/mathext"
)

// TestErlangTails checks the oracle against gonum's regularised incomplete
// gamma (mathext.GammaIncReg, GammaIncRegComp) at moderate shapes, where
// gonum is accurate, and PoissonMass against the direct form
// λ^j·e^{−λ}/j! from math.Lgamma at small j.
func TestErlangTails(t *testing.T) {
	for _, k := range []int{1, 3, 20, 50, 1000} {
		fk := float64(k)
		for z := -7.0; z <= 9; z += 0.25 {
			x := fk + z*math.Sqrt(fk)
			if x <= 0 {
				continue
			}
			f, s := ErlangTails(k, x)
			assert.InDelta(t, mathext.GammaIncReg(fk, x), f, 1e-14, "CDF k=%d x=%v", k, x)
			want := mathext.GammaIncRegComp(fk, x)
			assert.InDelta(t, 0, s/want-1, 1e-12, "survival k=%d x=%v", k, x)
		}
	}
	for _, lambda := range []float64{0.3, 2, 17.5} {
		for j := 0; j <= 30; j++ {
			lg, _ := math.Lgamma(float64(j + 1))
			want := math.Exp(float64(j)*math.Log(lambda) - lambda - lg)
			assert.InEpsilon(t, want, PoissonMass(j, lambda), 1e-12, "j=%d λ=%v", j, lambda)
		}
	}
}
