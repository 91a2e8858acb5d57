package energy

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The floor integral with shared pieces (floorShare), as accuracyAtZKnown
// takes it: the law p on its own pieces is the same bits as without
// sharing (with the gradient too, and whatever evaluations filled the
// share before), and the moment rule's nodes on p's pieces agree with an
// independent quadrature, gonum's fixed Gauss–Legendre rule with 12000
// points over the cut interval of the same integrand (Φ̄ from math.Erfc),
// on the smaller side: within half the tables' rule's margin
// (min(tabRuleRel of the side, tabRuleAbs)/2, as TestFloorRuleErrorAgainstGonum
// asks of the rule on the nodes' own pieces) for the tables' rule, and
// within 1e-7 of the side for the node's (measured: 4.1e-5 and 1.3e-8
// of the side on p's pieces, 3.8e-5 and 1.0e-8 on their own). Every
// setting of the test sites, at the times where its probit is −8.5 to 8.5
// (the range accuracyAtZKnown evaluates), under two conditions.
func TestFloorShareAgainstGonum(t *testing.T) {
	for _, tab := range []bool{true, false} {
		t.Run(fmt.Sprintf("tab=%v", tab), func(t *testing.T) {
			worst, worstOwn, checked := 0.0, 0.0, 0
			forEachTestLaw(t, func(gi int, cond Conditions, l NodeLifetime) {
				n := l.n
				for j := range n.settings {
					s := &n.settings[j]
					for _, target := range []float64{-8.5, -6, -3, -1, 0, 1, 3, 6, 8.5} {
						k, capLeft, floorE, h := settingArgsAtProbit(n, j, target)
						mean, vv := k*s.mu, k*s.k2
						rule := newMomentRule(3, mean, vv, s.l3/math.Sqrt(k), s.l4/k, s.l5/math.Pow(k, 1.5))
						var fs floorShare
						// The nodes first, then p with and without the
						// gradient: p's bits do not depend on what
						// filled the share.
						n.shareFloor(&fs, capLeft, mean, vv, floorE, h, tab)
						var got [3]partOut
						for i := range rule.n {
							got[i] = n.partRuleShared(capLeft, rule.x[i], 0, floorE, h, 0, false, false, tab, &fs)
						}
						for _, grad := range []bool{false, true} {
							want := n.partRule(capLeft, mean, vv, floorE, h, 0, grad, false, tab)
							p := n.partRuleShared(capLeft, mean, vv, floorE, h, 0, grad, false, tab, &fs)
							require.Equal(t, want, p, "group %d setting %d, probit %g, grad %v", gi, j, target, grad)
						}
						for i := range rule.n {
							side, small := 1.0, got[i].alive
							if got[i].dead < got[i].alive {
								side, small = -1, got[i].dead
							}
							if small < 1e-300 {
								continue
							}
							want := floorOracle(n, capLeft, rule.x[i], 0, floorE, h, side, floorZMax, 12000)
							e := math.Abs(small - want)
							worst = math.Max(worst, e/want)
							own := n.partRule(capLeft, rule.x[i], 0, floorE, h, 0, false, false, tab)
							worstOwn = math.Max(worstOwn, math.Abs(math.Min(own.alive, own.dead)-want)/want)
							checked++
							if tab {
								assert.LessOrEqual(t, e, math.Min(tabRuleRel*want, tabRuleAbs)/2, "group %d setting %d %v, probit %g, node %d", gi, j, cond, target, i)
							} else {
								assert.LessOrEqual(t, e, 1e-7*want, "group %d setting %d %v, probit %g, node %d", gi, j, cond, target, i)
							}
						}
					}
				}
			})
			require.Positive(t, checked)
			t.Logf("%d nodes; largest error against gonum's 12000-point rule: %.2g of the side (on their own pieces %.2g)", checked, worst, worstOwn)
		})
	}
}

// settingArgsAtProbit returns part's arguments for setting j (the cycles
// k run, capLeft, floorE and h; the mean is k·mu and the variance k·k2) at
// the time where the setting's probit is target.
func settingArgsAtProbit(n *node, j int, target float64) (k, capLeft, floorE, h float64) {
	s := &n.settings[j]
	z := func(x float64) (float64, float64) {
		a, d, _ := n.settingAt(j, x)
		return probitOf(a, d), math.NaN()
	}
	x, _ := probitEnd(z, n.settingLife(j), target, 0.05, false)
	c := n.clocks(x)
	return c[0] * s.rate, n.batch*s.usable - n.nominal*(n.storage+n.sdRate*c[1]), s.floorP * c[2], n.quiescent * c[0]
}
