package energy

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// momentShiftBound bounds the distance of newMomentRule's nodes from the
// mean, and its recurrence coefficients are those of the rule: the
// eigenvalues of the Jacobi matrix they make (gonum's symmetric eigen
// solver, an independent oracle; Golub and Welsch, Math. Comp.
// 23:221–230, 1969) are the rule's standardized nodes.
func TestMomentShiftBound(t *testing.T) {
	type law struct{ l3, l4, l5 float64 }
	var cases []law
	// Near normal (the sums of many cycles: l_r / k^{r/2−1}) to skewed
	// and heavy-tailed single cycles.
	for _, k := range []float64{1, 3, 10, 100, 1e4, 1e7} {
		for _, c := range []law{{0, 0, 0}, {1, 1.5, 2}, {2, 6, 24}, {-0.5, 0.2, -1}, {0.3, -0.5, 0.1}, {4, 30, 300}, {1.2, 0.5, -3}} {
			cases = append(cases, law{c.l3 / math.Sqrt(k), c.l4 / k, c.l5 / math.Pow(k, 1.5)})
		}
	}
	bounded := 0
	for _, c := range cases {
		t.Run(fmt.Sprintf("l3=%.3g,l4=%.3g,l5=%.3g", c.l3, c.l4, c.l5), func(t *testing.T) {
			const mu, k2 = 1e4, 4.0
			rule := newMomentRule(3, mu, k2, c.l3, c.l4, c.l5)
			shift := 0.0
			for i := range rule.n {
				shift = math.Max(shift, math.Abs(rule.x[i]-mu))
			}
			ub, ok := momentShiftBound(mu, k2, c.l3, c.l4, c.l5)
			if !ok {
				return
			}
			bounded++
			require.GreaterOrEqual(t, ub, shift)
			// Not far above: Gershgorin's radii add at most √β2 + 1.
			require.Less(t, ub, shift+2*math.Sqrt(k2)*(1+math.Sqrt(c.l4+2-c.l3*c.l3)))
			if rule.n != 3 {
				return
			}
			m3, m4, m5 := c.l3, c.l4+3, c.l5+10*c.l3
			b2 := m4 - m3*m3 - 1
			a2 := (m5 + m3*m3*m3 - 2*m3*m4) / b2
			jac := mat.NewSymDense(3, []float64{0, 1, 0, 1, m3, math.Sqrt(b2), 0, math.Sqrt(b2), a2})
			var eig mat.EigenSym
			require.True(t, eig.Factorize(jac, false))
			ev := eig.Values(nil) // ascending
			for i := range 3 {
				require.InDelta(t, (rule.x[i]-mu)/math.Sqrt(k2), ev[i], 1e-9, "node %d", i)
			}
		})
	}
	require.Greater(t, bounded, len(cases)/2)
}

// On the test sites' settings, at times across their laws, the bound is
// given and holds for the rule accuracyAtZKnown builds.
func TestMomentShiftBoundOnSettings(t *testing.T) {
	spec := tabTestSpec(t)
	many, _ := tabManySpec(t)
	for _, node := range []NodeSpec{spec.Groups[0].Node, spec.Groups[1].Node, many} {
		l, err := NewNodeLifetime(node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
		require.NoError(t, err)
		for _, y := range []float64{0.05, 0.5, 2, 5, 10, 20} {
			t0 := y * Year
			for j := range l.n.settings {
				s := &l.n.settings[j]
				k := t0 * s.rate
				kmu, kk2, l3, l4, l5 := k*s.mu, k*s.k2, s.l3/math.Sqrt(k), s.l4/k, s.l5/math.Pow(k, 1.5)
				ub, ok := momentShiftBound(kmu, kk2, l3, l4, l5)
				require.True(t, ok, "setting %d at %g y", j, y)
				rule := newMomentRule(3, kmu, kk2, l3, l4, l5)
				for i := range rule.n {
					require.LessOrEqual(t, math.Abs(rule.x[i]-kmu), ub, "setting %d at %g y, node %d", j, y, i)
				}
			}
		}
	}
}
