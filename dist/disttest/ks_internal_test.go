package disttest

import (
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestKSDistanceExact: with crit = 0 every stretch is refined, so the
// fast distance must equal the plain computation of testref.KSStatistic;
// with a crit above the distance the result must lie between the two.
func TestKSDistanceExact(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	laws := []dist.Law{
		dist.MustNormal(0, 1),
		dist.MustDiscrete([]float64{1, 2, 5}, []float64{0.2, 0.5, 0.3}),
	}
	for _, l := range laws {
		for _, wrong := range []dist.Law{l, dist.MustNormal(0.3, 1)} {
			xs := make([]float64, 5000)
			for i := range xs {
				xs[i] = wrong.Rand(r)
			}
			slices.Sort(xs)
			c := &checker{law: l, qCache: map[float64]float64{}, uqCache: map[float64]float64{}}
			if a, ok := l.(dist.Atomic); ok {
				c.atoms = a.Atoms()
			}
			want := testref.KSStatistic(xs, l.CDF)
			assert.InDelta(t, want, c.ksDistance(xs, 0), 1e-15, "%v", l)
			got := c.ksDistance(xs, want+0.01)
			assert.GreaterOrEqual(t, got, want-1e-15)
			assert.LessOrEqual(t, got, want+0.01)
		}
	}
}
