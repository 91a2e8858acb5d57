package main

import (
	"fmt"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/joulelaw/joulelaw/dist/distplot"
	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
)

// designFigure draws, for each group at its best choice, the lifetime
// point the target speaks of (years) against the reading interval (log
// scale), with the target date marked and each group's interval found as
// a dot. (For a GroupFlat target the 1 % point is drawn.)
func designFigure(p *fleet.Plan) (*plot.Plot, error) {
	d := p.Design
	pl := plot.New()
	style(pl, fmt.Sprintf("What it takes: the %s point of a node's lifetime against the reading interval", fleet.Percent(d.QuantileQ[0])),
		"reading interval (s, log scale)", "years")
	pl.X.Scale = plot.LogScale{}
	pl.X.Tick.Marker = plot.LogTicks{Prec: -1}
	top := d.TargetYears
	for gi, g := range d.Groups {
		pts := make(plotter.XYs, len(g.Quantiles))
		for i, q := range g.Quantiles {
			pts[i] = plotter.XY{X: q.IntervalS, Y: q.Years[0]}
			top = max(top, q.Years[0])
		}
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, err
		}
		line.Color = distplot.Colour(gi)
		line.Width = vg.Points(1.4)
		pl.Add(line)
		pl.Legend.Add(g.Name, line)
		if g.Feasible {
			// The interval found, at its row's quantile.
			y := d.TargetYears
			for _, q := range g.Quantiles {
				if q.IntervalS == g.ReadingIntervalS {
					y = q.Years[0]
				}
			}
			dot, err := plotter.NewScatter(plotter.XYs{{X: g.ReadingIntervalS, Y: y}})
			if err != nil {
				return nil, err
			}
			dot.Color = distplot.Colour(gi)
			dot.Shape = draw.CircleGlyph{}
			dot.Radius = vg.Points(3)
			pl.Add(dot)
		}
	}
	target, err := plotter.NewLine(plotter.XYs{{X: d.Groups[0].Quantiles[0].IntervalS, Y: d.TargetYears},
		{X: d.Groups[0].Quantiles[len(d.Groups[0].Quantiles)-1].IntervalS, Y: d.TargetYears}})
	if err != nil {
		return nil, err
	}
	target.Color = distplot.Colour(6)
	target.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	pl.Add(target)
	pl.Legend.Add(fmt.Sprintf("target: %s", fleet.Years(d.TargetYears)), target)
	pl.Y.Min, pl.Y.Max = 0, 1.05*top
	pl.Legend.Left = false
	pl.Legend.Top = false
	return pl, nil
}
