package energy

import (
	"math"
	"testing"

	gquad "gonum.org/v1/gonum/integrate/quad"

	"github.com/stretchr/testify/assert"

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
	std := dist.MustNormal(0, 1)
	worst, beyond := 0.0, 0.0
	forEachTestLaw(t, func(gi int, cond Conditions, l NodeLifetime) {
		n := l.n
		for j := range n.settings {
			s := &n.settings[j]
			for _, target := range []float64{-8.9, -8.5, -6, -3, -1, 0, 1, 3, 6, 8.5, 8.9} {
				k, capLeft, floorE, h := settingArgsAtProbit(n, j, target)
				mean, vv := k*s.mu, k*s.k2
				p := n.part(capLeft, mean, vv, floorE, h, 0, false)
				got := probitOf(p.alive, p.dead)
				// The oracle: the same law's smaller side by gonum's rule.
				side := 1.0 // the alive side
				if got < 0 {
					side = -1 // the dead side is the smaller
				}
				v := floorOracle(n, capLeft, mean, vv, floorE, h, side, 12, 6000)
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
	})
	t.Logf("largest probit difference against gonum's 6000-point rule: %.2g (%.2g beyond the cut's share)", worst, beyond)
}

// adaptivePart is normalPart's floor integral (vv = 0) by adaptive
// quadrature (internal/quad, through integratePiecesTol), an independent
// path for the tests: P(alive), P(dead) and the quadrature's error
// estimate. Like the rule it integrates the smaller side, to a relative
// tolerance of 1e-10 of that side, over the rule's pieces.
func (n *node) adaptivePart(capLeft, mean, floorE, h float64) (alive, dead, errEst float64) {
	sc, sa, sf := n.spread.Capacity, n.spread.Active, n.spread.Floor
	m := capLeft - mean
	sd := math.Sqrt(sc*sc*capLeft*capLeft + sa*sa*mean*mean)
	if sf == 0 || floorE == 0 || sd == 0 {
		a, d, _ := n.normalPart(capLeft, mean, 0, floorE, h, 0)
		return a, d, 0
	}
	g := func(z float64) float64 { return (floorE*math.Exp(sf*z) + h - m) / sd }
	var ptsBuf [16]float64
	pts := floorPieces(ptsBuf[:0], floorE, m-h, sd, sf)
	side := 1.0 // the alive side, if smaller (read off the median floor)
	if !(g(0) > 0) {
		side = -1
	}
	v, e := integratePiecesTol(func(z float64) float64 { return normPDF(z) * normSurv(side*g(z)) }, pts[0], pts[len(pts)-1], pts[1:len(pts)-1], 1e-10)
	if side > 0 {
		return v, 1 - v, e
	}
	return 1 - v, v, e
}

// floorRuleError, the fixed rule's error estimate used by accuracyAt (the
// rule against itself on halved pieces), against the rule's true error:
// the difference from gonum's fixed Gauss–Legendre rule with 12000 points
// over the same cut interval [−floorZMax, floorZMax] (spacing 0.002, a
// twentieth of the narrowest turn on these sites), on the smaller side.
// The estimate must bound the error up to the oracle's own, allowed as
// 2e-14 of the side (gonum's 6000- and 12000-point values differ by at
// most 9.5e-15 of it here). With the node's 16-point rule (measured: an
// error of up to 1.7e-8 of the side, at probit −8.9, where the halves'
// difference is within 1 % of it) and with a coarse 6-point rule in its
// place, whose error the estimate must catch: the test fails if the check
// stops seeing a bad rule (measured: errors up to 0.0092 of the side, the
// halves' difference within 25 % of each; the estimate is twice that).
// And with the tables' 10-point rule (tabGLNodes), whose error must also
// stay within half its margins between measured times, tabRuleRel of the
// side and tabRuleAbs absolute (measured: 3.5e-5 of the side, 2.0e-8
// absolute, 5.7e-6 in probit).
func TestFloorRuleErrorAgainstGonum(t *testing.T) {
	for _, tc := range []struct {
		name     string
		points   int     // the rule's nodes (glNodes, or fewer)
		tab      bool    // the tables' rule (points is tabGLNodes)
		worstMin float64 // the largest relative error must reach this: a bad rule must show
	}{
		{"the node's 16-point rule", glNodes, false, 0},
		{"the tables' 10-point rule", tabGLNodes, true, 0},
		{"a coarse 6-point rule", 6, false, 1e-4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			worst, worstAbs := 0.0, 0.0
			forEachTestLaw(t, func(gi int, cond Conditions, l NodeLifetime) {
				n := l.n
				if !tc.tab && tc.points != glNodes {
					// A copy of the node with the coarse rule (gonum's nodes).
					c := *n
					c.glx, c.glw = glRule(tc.points)
					n = &c
				}
				for j := range n.settings {
					s := &n.settings[j]
					for _, target := range []float64{-8.9, -8.5, -6, -3, -1, 0, 1, 3, 6, 8.5, 8.9} {
						// The times from the node's own rule.
						k, capLeft, floorE, h := settingArgsAtProbit(l.n, j, target)
						mean, vv := k*s.mu, k*s.k2
						p := n.partRule(capLeft, mean, vv, floorE, h, 0, false, false, tc.tab)
						est := n.floorRuleError(capLeft, mean, vv, floorE, h, p, tc.tab)
						side, small := 1.0, p.alive // the alive side
						if p.dead < p.alive {
							side, small = -1, p.dead
						}
						want := floorOracle(n, capLeft, mean, vv, floorE, h, side, floorZMax, 12000)
						e := math.Abs(small - want)
						worst, worstAbs = math.Max(worst, e/want), math.Max(worstAbs, e)
						if tc.tab {
							assert.LessOrEqual(t, e, math.Min(tabRuleRel*want, tabRuleAbs)/2, "group %d setting %d %v, probit %g: the tables' rule's error against half its margin", gi, j, cond, target)
						}
						assert.LessOrEqual(t, e, est+2e-14*want, "group %d setting %d %v, probit %g: error %.3g of the side, estimate %.3g", gi, j, cond, target, e/want, est/want)
					}
				}
			})
			assert.GreaterOrEqual(t, worst, tc.worstMin, "the rule's largest error")
			t.Logf("largest error against gonum's 12000-point rule: %.2g of the side, %.2g absolute", worst, worstAbs)
		})
	}
}

// floorOracle is the floor integral's side by gonum's fixed Gauss–Legendre
// rule with points nodes on [−reach, reach] (the oracle of the tests here):
// ∫ φ(u)·Φ̄(side·g(u)) du, g(u) = (L·e^{σ_f u} + h − m)/sd, m = capLeft −
// mean, sd² = σ_c²·capLeft² + σ_a²·(mean² + vv) + vv, Φ̄ from math.Erfc.
func floorOracle(n *node, capLeft, mean, vv, floorE, h, side, reach float64, points int) float64 {
	sc, sa, sf := n.spread.Capacity, n.spread.Active, n.spread.Floor
	m := capLeft - mean
	sd := math.Sqrt(sc*sc*capLeft*capLeft + sa*sa*(mean*mean+vv) + vv)
	return gquad.Fixed(func(u float64) float64 {
		g := (floorE*math.Exp(sf*u) + h - m) / sd
		return math.Exp(-u*u/2) / math.Sqrt(2*math.Pi) * 0.5 * math.Erfc(side*g/math.Sqrt2)
	}, -reach, reach, points, gquad.Legendre{}, 0)
}

// TestTabFloorSkip: the tables' rule (tabGLNodes) leaves out pieces and
// terms below tabFloorSkip of its sum so far, and so moves the smaller
// side by less than 2·tabFloorSkip of itself (fixedPieces), against the
// same rule on the same pieces with the node's rule's shares (floorSkip
// and 1e-17: within floorSkip + 1e-17 of the rule's full sum), on the
// test sites' settings from probit −8.9 to 8.9 (measured: 1.2e-9). The
// probit's gradient, whose sums lose the pieces left out (their φ(±g) at
// most (y + 1/y)·Φ̄(y) at y = ±g > 0), within 1e-6 relative (measured:
// 2.9e-9), far inside the tables' probit tolerance (tabSetZTol).
func TestTabFloorSkip(t *testing.T) {
	worst, worstGrad := 0.0, 0.0
	forEachTestLaw(t, func(gi int, cond Conditions, l NodeLifetime) {
		n := l.n
		full := *n // the tables' rule with the node's rule's shares
		full.glx, full.glw = n.tgx, n.tgw
		for j := range n.settings {
			s := &n.settings[j]
			for _, target := range []float64{-8.9, -8.5, -6, -3, -1, 0, 1, 3, 6, 8.5, 8.9} {
				k, capLeft, floorE, h := settingArgsAtProbit(n, j, target)
				got := n.partRule(capLeft, k*s.mu, k*s.k2, floorE, h, 0, true, false, true)
				want := full.partRule(capLeft, k*s.mu, k*s.k2, floorE, h, 0, true, false, false)
				gs, ws := math.Min(got.alive, got.dead), math.Min(want.alive, want.dead)
				e := math.Abs(gs-ws) / ws
				worst = math.Max(worst, e)
				assert.LessOrEqual(t, e, 2*tabFloorSkip+floorSkip+1e-17+4*0x1p-52, "group %d setting %d %v, probit %g", gi, j, cond, target)
				for i := range got.dz {
					if d := math.Abs(got.dz[i] - want.dz[i]); d > 0 {
						worstGrad = math.Max(worstGrad, d/math.Abs(want.dz[i]))
						assert.LessOrEqual(t, d, 1e-6*math.Abs(want.dz[i]), "group %d setting %d %v, probit %g, gradient %d", gi, j, cond, target, i)
					}
				}
			}
		}
	})
	t.Logf("the tables' shares move the smaller side by %.3g of itself at most, the probit's gradient by %.3g", worst, worstGrad)
}
