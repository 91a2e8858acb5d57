package lifesim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/lifesim"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// Shared factors dominate: a site temperature offset of sd 8 °C (it
// moves lifetimes by far more than their spread given the shared factors)
// and 20 nodes a group, so that the fleet laws are steep in the shared
// offset. The sampled fleets against Site's laws: each Kolmogorov–Smirnov
// distance must lie within the DKW–Massart bound at level 1e-6 (Massart,
// Ann. Probab. 18 (1990) 1269–1283) plus the law's stated CDF error, which
// includes the shared rule's; and the stated error must stay useful
// (below 0.02). With the former fixed 7 × 3 Gauss–Hermite rule the first
// failure erred by 0.21 at 8 °C, unstated. The failed counts state their
// Poisson-binomial error only (the rule's is not in it); the check holds
// them to the bound with the site's node-law error beside it.
func TestSharedDominated(t *testing.T) {
	for i, sdT := range []float64{8} {
		t.Run(fmt.Sprintf("sd %g °C", sdT), func(t *testing.T) {
			spec := siteSpec(t)
			spec.Shared = energy.SharedSpread{Batch: 0.03, Temperature: sdT}
			for i := range spec.Groups {
				spec.Groups[i].Count = 20
			}
			site, err := energy.NewSite(spec)
			require.NoError(t, err)
			p, err := lifesim.NewPlayer(spec)
			require.NoError(t, err)
			const F = 1000
			fleets := make([]lifesim.Fleet, F)
			require.NoError(t, parallel(F, 604+uint64(i), func(i int, r *rand.Rand) error {
				f, err := p.Fleet(r)
				fleets[i] = f
				return err
			}))
			bound := testref.KSCritical(F, testref.KSLevel)
			check := func(what string, law dist.Law, xs []float64) {
				slices.Sort(xs)
				d, _ := testref.KSGridBounds(xs, law.CDF, ksGrid)
				stated := 0.0
				if e, ok := law.(dist.Estimated); ok {
					stated = e.Accuracy().CDFAbs
				}
				if _, count := law.(dist.Atomic); count {
					stated = math.Max(stated, site.Accuracy().CDFAbs)
				}
				assert.LessOrEqual(t, d, bound+stated, "%s: KS of %d sampled fleets, stated error %.2g", what, F, stated)
				assert.Less(t, stated, 0.02, "%s: the stated error", what)
				t.Logf("| %s, shared sd %g °C | %d | %.4f | %.4f | %.2g |", what, sdT, F, d, bound, stated)
			}
			ff, err := site.FirstFailure()
			require.NoError(t, err)
			xs := make([]float64, F)
			for i, f := range fleets {
				xs[i] = f.FirstFailure()
			}
			check("Site.FirstFailure", ff, xs)
			for g := range spec.Groups {
				law, err := site.GroupFirstFailure(g)
				require.NoError(t, err)
				xs := make([]float64, F)
				for i, f := range fleets {
					xs[i] = f.Group(g).FirstFailure()
				}
				check(fmt.Sprintf("Site.GroupFirstFailure(%s)", site.Name(g)), law, xs)
			}
			half, err := site.FractionFailed(0.5)
			require.NoError(t, err)
			for i, f := range fleets {
				ls := make([]float64, len(f.Nodes))
				for j, n := range f.Nodes {
					ls[j] = n.Lifetime
				}
				slices.Sort(ls)
				xs[i] = ls[len(ls)/2-1]
			}
			check("Site.FractionFailed(0.5)", half, xs)
			for _, y := range []float64{0.9, 1.1} {
				law, err := site.FailedBy(y * energy.Year)
				require.NoError(t, err)
				for i, f := range fleets {
					xs[i] = float64(f.FailedBy(y * energy.Year))
				}
				// Counts: the DKW bound is conservative for a discrete law.
				check(fmt.Sprintf("Site.FailedBy(%g y)", y), law, xs)
			}
		})
	}
}
