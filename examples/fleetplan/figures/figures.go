package main

import (
	"fmt"
	"image/color"
	"os"
	"path/filepath"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/distplot"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
)

var bandFill = color.NRGBA{R: 120, G: 175, B: 190, A: 140}

// writeFigures writes the three figures as PNG and SVG into dir and returns
// the files written.
func writeFigures(p *fleet.Plan, dir string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	figs := []struct {
		name string
		make func(*fleet.Plan) (*plot.Plot, error)
	}{
		{"energy-per-cycle", energyFigure},
		{"lifetime-survival", survivalFigure},
		{"failed-nodes", failedFigure},
	}
	if p.Design != nil {
		figs = append(figs, struct {
			name string
			make func(*fleet.Plan) (*plot.Plot, error)
		}{"what-it-takes", designFigure}) // design_figures.go
	}
	var written []string
	for _, f := range figs {
		pl, err := f.make(p)
		if err != nil {
			return written, fmt.Errorf("%s: %w", f.name, err)
		}
		for _, ext := range []string{".png", ".svg"} {
			path := filepath.Join(dir, f.name+ext)
			if err := distplot.WriteFile(pl, path, 18*vg.Centimeter, 11*vg.Centimeter); err != nil {
				return written, fmt.Errorf("%s: %w", path, err)
			}
			written = append(written, path)
		}
	}
	return written, nil
}

func style(pl *plot.Plot, title, x, y string) {
	pl.Title.Text = title
	pl.Title.TextStyle.Font.Size = vg.Points(11)
	pl.X.Label.Text = x
	pl.Y.Label.Text = y
	pl.Legend.Top = true
	pl.Legend.TextStyle.Font.Size = vg.Points(8)
	pl.Add(plotter.NewGrid())
	pl.X.Tick.Marker = distplot.RoundTicks{}
	pl.Y.Tick.Marker = distplot.RoundTicks{}
}

func energyFigure(p *fleet.Plan) (*plot.Plot, error) {
	l := p.Laws
	lo, _ := l.FleetMin.Support()
	hi := l.FleetMax.UpperQuantile(1e-6)
	lo = min(lo, l.FleetEnergy.Quantile(1e-6))
	span := hi - lo
	if !(span > 1e-6*hi) { // a (nearly) constant energy: show 10 % around it
		span = 0.1 * hi
	}
	lo, hi = max(0, lo-0.03*span), hi+0.03*span
	// The exceedance P(E > x) from each law's survival (never 1 − CDF), on
	// a log scale: atoms show as steps rather than as spikes of a density.
	pl, err := distplot.Survival([]distplot.Curve{
		{Name: "any node's cycle", Law: l.FleetEnergy},
		{Name: fmt.Sprintf("largest of %d", p.Nodes), Law: l.FleetMax},
		{Name: fmt.Sprintf("smallest of %d", p.Nodes), Law: l.FleetMin},
	}, distplot.Options{
		Title:  fmt.Sprintf("Energy per cycle: a node of the fleet, and the largest and smallest of %d nodes", p.Nodes),
		XLabel: "energy per cycle (mJ)", YLabel: "probability of exceeding it (log scale)",
		Min: lo, Max: hi, XScale: 1e3, Points: 601, LogY: true, Floor: 1e-7,
	})
	if err != nil {
		return nil, err
	}
	if err := distplot.MarkX(pl, p.Fleet.OutlierJ*1e3, 6, "outlier threshold"); err != nil {
		return nil, err
	}
	return pl, nil
}

// horizon returns the end (years) of the time axis of the lifetime figures:
// just past the date by which 99.9 % of every group's nodes are flat, at
// most 40 years.
func horizon(p *fleet.Plan) float64 {
	end := 0.0
	for _, l := range p.Laws.GroupLife {
		end = max(end, l.Quantile(0.999)/energy.Year)
	}
	end = max(end, p.Laws.ReplaceAfter/energy.Year)
	return min(40, 1.05*end)
}

func survivalFigure(p *fleet.Plan) (*plot.Plot, error) {
	pl := plot.New()
	style(pl, "Battery lifetime: share of each group's nodes still running", "time since deployment (years)", "share of nodes still running")
	end := horizon(p)
	const n = 300
	for gi, l := range p.Laws.GroupLife {
		pts := make(plotter.XYs, n+1)
		for i := range pts {
			t := end * float64(i) / n
			pts[i] = plotter.XY{X: t, Y: l.Survival(t * energy.Year)}
		}
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, err
		}
		line.Color = distplot.Colour(gi)
		line.Width = vg.Points(1.4)
		pl.Add(line)
		pl.Legend.Add(fmt.Sprintf("%s (%d nodes)", p.Groups[gi].Name, p.Groups[gi].Nodes), line)
	}
	pl.Y.Min, pl.Y.Max = 0, 1.02
	pl.X.Min, pl.X.Max = 0, end
	pl.Legend.Left = true
	pl.Legend.Top = false
	if err := distplot.MarkX(pl, p.Laws.ReplaceAfter/energy.Year, 6, "planned replacement"); err != nil {
		return nil, err
	}
	return pl, nil
}

func failedFigure(p *fleet.Plan) (*plot.Plot, error) {
	pl := plot.New()
	style(pl, fmt.Sprintf("Nodes at the end of their life (flat cell or calendar limit) in the fleet of %d, with the 90 %% band", p.Nodes),
		"time since deployment (years)", "nodes at the end of their life")
	end := horizon(p)
	const n = 120
	var mean, lower, upper plotter.XYs
	for i := 0; i <= n; i++ {
		t := end * float64(i) / n
		c, err := p.Laws.Site.FailedBy(t * energy.Year)
		if err != nil {
			return nil, err
		}
		lo, hi, err := dist.EqualTailed(c, 0.9)
		if err != nil {
			return nil, err
		}
		mean = append(mean, plotter.XY{X: t, Y: c.Mean()})
		lower = append(lower, plotter.XY{X: t, Y: lo})
		upper = append(upper, plotter.XY{X: t, Y: hi})
	}
	ring := append(plotter.XYs{}, lower...)
	for i := len(upper) - 1; i >= 0; i-- {
		ring = append(ring, upper[i])
	}
	band, err := plotter.NewPolygon(ring)
	if err != nil {
		return nil, err
	}
	band.Color = bandFill
	band.LineStyle.Width = 0
	pl.Add(band)
	pl.Legend.Add("90 % band", band)
	line, err := plotter.NewLine(mean)
	if err != nil {
		return nil, err
	}
	line.Color = distplot.Colour(0)
	line.Width = vg.Points(1.5)
	pl.Add(line)
	pl.Legend.Add("expected number", line)
	pl.X.Min, pl.X.Max = 0, end
	pl.Y.Min, pl.Y.Max = 0, float64(p.Nodes)*1.02
	pl.Legend.Left = true
	if err := distplot.MarkX(pl, p.Laws.ReplaceAfter/energy.Year, 6, "planned replacement"); err != nil {
		return nil, err
	}
	pl.Legend.ThumbnailWidth = vg.Points(18)
	return pl, nil
}
