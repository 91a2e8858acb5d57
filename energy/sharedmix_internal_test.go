package energy

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// The mixtures' quantiles try the corners' bracket first and fall back to
// all components' where it does not hold. Checked on a mixture of five
// normals (means 10 to 50, weights of a 5-node Gauss–Hermite rule) against
// its CDF by gonum's distuv.Normal (the mixture's CDF at the answer is p,
// and just below it less: an answer to 1e-12 relative), with the corners
// at the ends (they bracket), in the middle (they do not: the fallback),
// and none.
func TestSharedMixtureQuantileCorners(t *testing.T) {
	means := []float64{10, 20, 30, 40, 50}
	w := []float64{0.0113, 0.2221, 0.5333, 0.2221, 0.0113}
	tot := 0.0
	for _, x := range w {
		tot += x
	}
	laws := make([]dist.Law, len(means))
	for i, m := range means {
		w[i] /= tot
		laws[i] = dist.MustNormal(m, 3)
	}
	cdf := func(x float64) float64 {
		s := 0.0
		for i, m := range means {
			s += w[i] * distuv.Normal{Mu: m, Sigma: 3}.CDF(x)
		}
		return s
	}
	surv := func(x float64) float64 {
		s := 0.0
		for i, m := range means {
			s += w[i] * distuv.Normal{Mu: m, Sigma: 3}.Survival(x)
		}
		return s
	}
	for _, c := range []struct {
		name    string
		corners []int
	}{{"corners at the ends", []int{0, 4}}, {"corners in the middle", []int{2, 3}}, {"no corners", nil},
		{"a first and last corner that do not always bracket", []int{1, 0, 4, 3}}} {
		m := newSharedMixture("test", w, laws)
		m.corners = c.corners
		for _, p := range []float64{1e-9, 0.01, 0.3, 0.5, 0.9, 0.999} {
			x := m.Quantile(p)
			assert.InDelta(t, p, cdf(x), 1e-9*p+1e-15, "%s: CDF at Quantile(%g)", c.name, p)
			assert.Less(t, cdf(x-1e-10*math.Abs(x)), p, "%s: Quantile(%g) is the smallest", c.name, p)
			u := m.UpperQuantile(p)
			assert.InDelta(t, p, surv(u), 1e-9*p+1e-15, "%s: Survival at UpperQuantile(%g)", c.name, p)
			assert.Greater(t, surv(u-1e-10*math.Abs(u)), p, "%s: UpperQuantile(%g) is the smallest", c.name, p)
		}
	}
	// An answer at an atom that every corner reaches (a calendar limit):
	// normals mixed with a point mass at 45 holding 0.6; the 0.5 point is
	// the atom (closed form: the normals below 45 hold less than 0.5).
	atomLaws := []dist.Law{dist.MustNormal(10, 3), dist.MustPointMass(45), dist.MustPointMass(45)}
	am := newSharedMixture("atom", []float64{0.4, 0.3, 0.3}, atomLaws)
	am.corners = []int{1, 2}
	assert.Equal(t, 45.0, am.Quantile(0.5))
	assert.Equal(t, 45.0, am.UpperQuantile(0.5))
	assert.InDelta(t, 10.0, am.Quantile(0.2), 1e-9, "the normal's median: 0.4·Φ(0) = 0.2")

	// Where the corners bracket, they are used: the answer needs their two
	// quantiles, not all five (counted through the components).
	n := 0
	counted := make([]dist.Law, len(laws))
	for i, l := range laws {
		counted[i] = quantileCounter{l, &n}
	}
	m := newSharedMixture("test", w, counted)
	m.corners = []int{0, 4}
	m.Quantile(0.3)
	assert.Equal(t, 2, n, "component quantiles asked")

	// Four corners: the first and the last (means 20 and 40) bracket the
	// 0.3 point, so two are asked; not the 1e-9 point (about −6.8, from the
	// mean-10 component: 0.011·Φ((x − 10)/3) = 1e-9), so all four are.
	m.corners = []int{1, 0, 4, 3}
	for _, c := range []struct {
		p    float64
		want int
	}{{0.3, 2}, {1e-9, 4}} {
		n = 0
		x := m.Quantile(c.p)
		assert.Equal(t, c.want, n, "component quantiles asked for the %g point", c.p)
		assert.InDelta(t, c.p, cdf(x), 1e-9*c.p, "CDF at Quantile(%g)", c.p)
	}
}

// quantileCounter counts the calls of Quantile.
type quantileCounter struct {
	dist.Law
	n *int
}

func (q quantileCounter) Quantile(p float64) float64 { *q.n++; return q.Law.Quantile(p) }
