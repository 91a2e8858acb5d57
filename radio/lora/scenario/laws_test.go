package scenario_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// The plan's laws of the demo: each group's per-cycle law is the mixture of
// its settings' cycles (its mean the weighted sum of the cycles' means, the
// law of total expectation), the fleet's the groups' mixed by node count,
// and the fleet's largest and smallest cycle follow the closed forms of
// independent groups, P(max ≤ x) = Π_g F_g(x)^n_g and
// P(min > x) = Π_g S_g(x)^n_g (any order-statistics text), evaluated here
// in log space from the group laws.
func TestLawsOfTheDemo(t *testing.T) {
	l, err := scenario.Compute(scenario.Demo(), 2, nil)
	require.NoError(t, err)
	m := l.Model
	require.Len(t, l.GroupEnergy, len(m.Groups))
	require.Len(t, l.GroupMax, len(m.Groups))
	assert.Equal(t, len(m.Groups), l.Site.Groups())
	assert.Equal(t, int64(m.Scenario.TotalNodes()), l.Site.Size())
	fleetMean := 0.0
	for gi, g := range m.Groups {
		require.Len(t, l.Cycles[gi], len(g.AllSettings()))
		want := 0.0
		for i, w := range g.AllWeights() {
			want += w * l.Cycles[gi][i].MeanEnergy()
		}
		assert.InDelta(t, want, l.GroupEnergy[gi].Mean(), 1e-12*want, g.Group.Name)
		fleetMean += float64(g.Group.Nodes) / float64(m.Scenario.TotalNodes()) * want
	}
	assert.InDelta(t, fleetMean, l.FleetEnergy.Mean(), 1e-12*fleetMean)
	for _, q := range []float64{0.1, 0.5, 0.9, 0.999} {
		x := l.FleetMax.Quantile(q)
		logF, logS := 0.0, 0.0
		for gi, g := range m.Groups {
			n := float64(g.Group.Nodes)
			logF += n * math.Log1p(-l.GroupEnergy[gi].Survival(x))
			xm := l.FleetMin.Quantile(q)
			logS += n * math.Log(l.GroupEnergy[gi].Survival(xm))
		}
		assert.InDelta(t, math.Exp(logF), l.FleetMax.CDF(x), 1e-9, "max at q=%g", q)
		assert.InDelta(t, math.Exp(logS), l.FleetMin.Survival(l.FleetMin.Quantile(q)), 1e-9, "min at q=%g", q)
	}
}

// The laws do not depend on the number of workers: the same bits from one
// goroutine and from four.
func TestLawsDeterministic(t *testing.T) {
	a, err := scenario.Compute(scenario.Demo(), 1, nil)
	require.NoError(t, err)
	b, err := scenario.Compute(scenario.Demo(), 4, nil)
	require.NoError(t, err)
	for gi := range a.GroupEnergy {
		for _, q := range []float64{0.01, 0.5, 0.99} {
			assert.Equal(t, a.GroupEnergy[gi].Quantile(q), b.GroupEnergy[gi].Quantile(q))
		}
	}
	fa, err := a.Site.FirstFailure()
	require.NoError(t, err)
	fb, err := b.Site.FirstFailure()
	require.NoError(t, err)
	assert.Equal(t, fa.Quantile(0.5), fb.Quantile(0.5))
}

func TestQuoteEscapesAndCuts(t *testing.T) {
	for _, c := range []struct{ in, quoted, bare string }{
		{"Lower Quillmoor", `"Lower Quillmoor"`, "Lower Quillmoor"},
		{"a\r\nFleet: forged", `"a\r\nFleet: forged"`, `a\r\nFleet: forged`},
		{"\x1b[2J", `"\x1b[2J"`, `\x1b[2J`},
		{"\u202eevil", `"\u202eevil"`, `\u202eevil`},
	} {
		assert.Equal(t, c.quoted, scenario.Quote(c.in))
		assert.Equal(t, c.bare, scenario.Escape(c.in))
	}
	long := ""
	for range 1000 {
		long += "é"
	}
	q := scenario.Quote(long)
	assert.Equal(t, scenario.MaxEcho+3, len([]rune(q)), "MaxEcho runes, the mark and two quotes")
	assert.Equal(t, long, scenario.Escape(long), "Escape keeps the whole text")
}
