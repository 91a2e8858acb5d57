package energy_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// Profile's quantiles against two oracles: the closed form of a normal
// capacity factor without shared factors (life U·c/P(I), so the
// q-quantile is U·(1 + σ·z_q)/P(I), to within one period of life: the
// cycles begun by t; see closedInterval), and, with shared factors and a
// calendar limit, MixedNodeLifetime's own Quantile (the mixture bracketed
// between every shared node's quantile: the same equation from another
// bracket, to 1e-9 relative); its figure against SearchDesign's at the
// interval the search found.
func TestProfileQuantiles(t *testing.T) {
	const sigma = 0.05
	T := 6 * energy.Year
	levels := []float64{0.01, 0.5, 0.9}
	ivs := []float64{120, 600, 1800, 3600, 7200, 21600, 86400}
	t.Run("closed form", func(t *testing.T) {
		p := energy.DesignProblem{Space: oneChoice(60, 86400), Target: energy.Target{Kind: energy.NodeFlat, Date: T, Level: 0.01},
			Build: designBuilder(energy.NodeSpread{Capacity: sigma}, 0, 0)}
		c := energy.DesignChoice{Link: energy.Link{Transmissions: 1}, Batch: 1}
		rows, err := p.Profile(c, ivs, levels)
		require.NoError(t, err)
		require.Len(t, rows, len(ivs))
		for i, r := range rows {
			c.Interval = ivs[i]
			P := designFloorW + designEnergy(c)/c.UplinkPeriod()
			assert.Equal(t, ivs[i], r.Interval)
			for k, q := range levels {
				want := designCellSmall * (1 + sigma*dist.MustNormal(0, 1).Quantile(q)) / P
				assert.InDelta(t, want, r.Quantiles[k], c.UplinkPeriod()+1e-9*want, "interval %g, level %g", ivs[i], q)
			}
		}
	})
	t.Run("shared factors and calendar", func(t *testing.T) {
		for _, target := range []energy.Target{{Kind: energy.NodeFlat, Date: T, Level: 0.01}, {Kind: energy.GroupFlat, Date: T, Level: 0.1}} {
			p := energy.DesignProblem{Space: oneChoice(60, 86400), Target: target, Count: 50, Shared: energy.SharedSpread{Batch: 0.03},
				Build: designBuilder(energy.NodeSpread{Capacity: sigma, Floor: 0.2}, 9*energy.Year, 0)}
			d, err := energy.SearchDesign(p)
			require.NoError(t, err)
			best := d.Results[d.Best]
			c := best.Choice
			rows, err := p.Profile(c, append(ivs, c.Interval), levels)
			require.NoError(t, err)
			calendar := 0
			for i, r := range rows {
				c.Interval = r.Interval
				cand, err := p.Build(c)
				require.NoError(t, err)
				mixed, err := energy.MixedNodeLifetime(cand.Node, nil, p.Shared)
				require.NoError(t, err)
				for k, q := range levels {
					want := mixed.Quantile(q)
					assert.InDelta(t, want, r.Quantiles[k], 1e-9*want, "%v: interval %g, level %g", target.Kind, r.Interval, q)
					if r.Quantiles[k] == 9*energy.Year {
						calendar++
					}
				}
				if i == len(ivs) {
					assert.Equal(t, best.Probability, r.Probability, "the search's figure")
					assert.True(t, r.Meets)
				}
				assert.Equal(t, r.Probability <= target.Level, r.Meets)
			}
			assert.Positive(t, calendar, "some rows reach the calendar limit")
		}
	})
}

func TestProfileBadInput(t *testing.T) {
	p := energy.DesignProblem{Space: oneChoice(60, 86400), Target: energy.Target{Kind: energy.NodeFlat, Date: energy.Year, Level: 0.01},
		Build: designBuilder(energy.NodeSpread{}, 0, 0)}
	good := energy.DesignChoice{Link: energy.Link{Transmissions: 1}, Batch: 1}
	for _, c := range []struct {
		name    string
		edit    func(c *energy.DesignChoice, ivs, levels *[]float64)
		problem func(p *energy.DesignProblem)
		field   string
	}{
		{"cell", func(c *energy.DesignChoice, _, _ *[]float64) { c.Cell = 1 }, nil, "c.Cell"},
		{"window", func(c *energy.DesignChoice, _, _ *[]float64) { c.Window = -1 }, nil, "c.Window"},
		{"batch", func(c *energy.DesignChoice, _, _ *[]float64) { c.Batch = 0 }, nil, "c.Batch"},
		{"transmissions", func(c *energy.DesignChoice, _, _ *[]float64) { c.Link.Transmissions = 0 }, nil, "Transmissions"},
		{"interval", func(_ *energy.DesignChoice, ivs, _ *[]float64) { *ivs = []float64{600, math.Inf(1)} }, nil, "intervals[1]"},
		{"interval 0", func(_ *energy.DesignChoice, ivs, _ *[]float64) { *ivs = []float64{0} }, nil, "intervals[0]"},
		{"too many intervals", func(_ *energy.DesignChoice, ivs, _ *[]float64) { *ivs = make([]float64, energy.MaxProfileIntervals+1) }, nil, "intervals"},
		{"level", func(_ *energy.DesignChoice, _, l *[]float64) { *l = []float64{0.5, 1} }, nil, "levels[1]"},
		{"too many levels", func(_ *energy.DesignChoice, _, l *[]float64) { *l = make([]float64, energy.MaxProfileLevels+1) }, nil, "levels"},
		{"problem", nil, func(p *energy.DesignProblem) { p.Target.Level = 2 }, "Level"},
	} {
		t.Run(c.name, func(t *testing.T) {
			ch, ivs, levels, pp := good, []float64{600}, []float64{0.5}, p
			if c.edit != nil {
				c.edit(&ch, &ivs, &levels)
			}
			if c.problem != nil {
				c.problem(&pp)
			}
			_, err := pp.Profile(ch, ivs, levels)
			require.Error(t, err)
			assert.True(t, errors.Is(err, energy.ErrParam), "%v", err)
			assert.Contains(t, err.Error(), c.field)
		})
	}
}
