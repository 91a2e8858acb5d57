package orderstat

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

// At the switch between the untilted and the tilted transform (m + ½ at
// untiltedSD standard deviations from the mean, and at 2, where the switch
// lay before), the smaller tail is summed from the window, never 1 − the
// larger: on the counts of TestSplitErrExact, at the m on either side of
// those points, the smaller tail (at least 1e-3 there) is within its
// stated relative bound of the exact value in 256-bit arithmetic
// (exactCountMasses), and at 2 standard deviations that bound is at most
// 1e-12 (stated 4e-14 to 4.5e-13): the smaller tail taken as 1 − the
// larger, untilted, over a window reaching only 7 standard deviations + 12
// past the mean on one side, stated 7e-12 to 5e-11 there (1 − the larger
// inherits the larger sum's absolute bound over the smaller value), and
// fails this.
func TestSplitTransformSwitch(t *testing.T) {
	t.Parallel()
	for _, tc := range exactCounts {
		mass := exactCountMasses(tc)
		cm := newCountModel(binomsOf(tc))
		sd := math.Sqrt(cm.variance)
		worst, stated := 0.0, 0.0
		for _, z := range []float64{-2, -untiltedSD, untiltedSD, 2} {
			c := cm.mean + z*sd - 0.5 // m + ½ = mean + z·sd
			for _, m := range []float64{math.Floor(c), math.Ceil(c)} {
				if m < 0 || m >= cm.size {
					continue
				}
				wle, wgt := exactTails(mass, int(m))
				le, gt, rle, rgt := cm.splitTransformErr(m)
				got, want, rel := le, wle, rle
				if wgt < wle {
					got, want, rel = gt, wgt, rgt
				}
				if want < 1e-3 {
					continue
				}
				assert.LessOrEqual(t, relTo(got, want), rel, "%v m=%d (z≈%g): %g, exact %g", tc, int(m), z, got, want)
				worst = math.Max(worst, relTo(got, want))
				if math.Abs(z) == 2 {
					assert.LessOrEqual(t, rel, 1e-12, "%v m=%d (z≈%g): the smaller tail's stated bound", tc, int(m), z)
					stated = math.Max(stated, rel)
				}
			}
		}
		t.Logf("%v: the smaller tail at the switch within %.2g of exact; stated at most %.2g at the former switch", tc, worst, stated)
	}
}
