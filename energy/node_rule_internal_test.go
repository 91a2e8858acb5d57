package energy

import (
	"math"
	"testing"

	gquad "gonum.org/v1/gonum/integrate/quad"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
)

// The floor integral's fixed rule (part, fixedPieces) against an
// independent quadrature: gonum's fixed Gauss–Legendre rule with 6000
// points on [−12, 12] (spacing 0.004, a tenth of the narrowest turn on
// these sites) of the same integrand, φ(u)·Φ̄(±g(u)) with Φ̄ from math.Erfc,
// on the smaller side. Every setting of the test sites and of the
// seven-setting group, at the times where its probit is −8.9 to 8.9 (the
// settings' tables reach ±9), under two conditions. The rule leaves out
// the normal mass beyond ±floorZMax, 2·Φ̄(10.5) = 8.6e-26 (closed form),
// which moves a probit z by at most that over φ(z) (1.1e-9 at |z| = 8.5,
// 3.4e-8 at 8.9); the probits must agree within 1e-9 plus that (measured:
// 2.3e-8 at most, 3.8e-10 beyond the cut's share; with the cut at ±9.3
// before, 1.3e-10 beyond a share of 1.7e-4 at |z| = 8.5).
func TestFloorRuleAgainstGonum(t *testing.T) {
	nodes, clim := tabTestNodes(t)
	std := dist.MustNormal(0, 1)
	worst, beyond := 0.0, 0.0
	for _, cond := range tabTestConditions {
		for gi, node := range nodes {
			l, err := NewNodeLifetime(node, Environment{Climate: clim, Conditions: cond})
			require.NoError(t, err)
			n := l.n
			sc, sa, sf := n.spread.Capacity, n.spread.Active, n.spread.Floor
			for j := range n.settings {
				s := &n.settings[j]
				for _, target := range []float64{-8.9, -8.5, -6, -3, -1, 0, 1, 3, 6, 8.5, 8.9} {
					z := func(x float64) (float64, float64) {
						a, d, _ := n.settingAt(j, x)
						return probitOf(a, d), math.NaN()
					}
					x, _ := probitEnd(z, n.settingLife(j), target, 0.05, false)
					c := n.clocks(x)
					capLeft := n.batch*s.usable - n.nominal*(n.storage+n.sdRate*c[1])
					mean, floorE, h := c[0]*s.rate*s.mu, s.floorP*c[2], n.quiescent*c[0]
					vv := c[0] * s.rate * s.k2
					p := n.part(capLeft, mean, vv, floorE, h, 0, false)
					got := probitOf(p.alive, p.dead)
					// The oracle: the same law's smaller side by gonum's rule.
					m := capLeft - mean
					sd := math.Sqrt(sc*sc*capLeft*capLeft + sa*sa*(mean*mean+vv) + vv)
					side := 1.0 // the alive side
					if got < 0 {
						side = -1 // the dead side is the smaller
					}
					v := gquad.Fixed(func(u float64) float64 {
						g := (floorE*math.Exp(sf*u) + h - m) / sd
						return math.Exp(-u*u/2) / math.Sqrt(2*math.Pi) * 0.5 * math.Erfc(side*g/math.Sqrt2)
					}, -12, 12, 6000, gquad.Legendre{}, 0)
					want := std.Quantile(v)
					if side > 0 {
						want = std.UpperQuantile(v)
					}
					cut := 2 * normSurv(floorZMax) / normPDF(want)
					e := math.Abs(got - want)
					worst = math.Max(worst, e)
					beyond = math.Max(beyond, e-cut)
					assert.InDelta(t, want, got, 1e-9+cut, "group %d setting %d %v, probit %g", gi, j, cond, target)
				}
			}
		}
	}
	t.Logf("largest probit difference against gonum's 6000-point rule: %.2g (%.2g beyond the cut's share)", worst, beyond)
}
