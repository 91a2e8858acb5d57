package main

import (
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// The program's own palette.
var palette = []color.RGBA{
	{R: 0, G: 105, B: 125, A: 255},   // deep teal
	{R: 214, G: 110, B: 24, A: 255},  // burnt orange
	{R: 112, G: 58, B: 148, A: 255},  // plum
	{R: 96, G: 130, B: 30, A: 255},   // moss
	{R: 170, G: 40, B: 60, A: 255},   // brick
	{R: 40, G: 70, B: 160, A: 255},   // ink blue
	{R: 120, G: 120, B: 120, A: 255}, // slate
}

var bandFill = color.NRGBA{R: 120, G: 175, B: 190, A: 140}

func colour(i int) color.RGBA { return palette[i%len(palette)] }

// writeFigures writes the three figures as PNG and SVG into dir and returns
// the files written.
func writeFigures(p *Plan, dir string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	figs := []struct {
		name string
		make func(*Plan) (*plot.Plot, error)
	}{
		{"energy-per-cycle", energyFigure},
		{"lifetime-survival", survivalFigure},
		{"failed-nodes", failedFigure},
	}
	var written []string
	for _, f := range figs {
		pl, err := f.make(p)
		if err != nil {
			return written, fmt.Errorf("%s: %w", f.name, err)
		}
		for _, ext := range []string{".png", ".svg"} {
			path := filepath.Join(dir, f.name+ext)
			if err := pl.Save(18*vg.Centimeter, 11*vg.Centimeter, path); err != nil {
				return written, fmt.Errorf("%s: %w", path, err)
			}
			written = append(written, path)
		}
	}
	return written, nil
}

// roundTicks puts labelled ticks at round steps (1, 2 or 5 times a power of
// ten, common practice for chart axes) giving 3 to 9 labels, with an
// unlabelled tick halfway between, and labels in plain decimals without
// trailing zeros ("0, 5, 10" rather than "0.00, 5.00, 10.00").
type roundTicks struct{}

// Ticks implements plot.Ticker.
func (roundTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		return nil
	}
	step := roundStep((hi - lo) / 8)
	var ticks []plot.Tick
	for k := math.Ceil(lo / step * 2); k <= math.Floor(hi/step*2); k++ {
		x := k * step / 2
		if math.Mod(k, 2) != 0 {
			ticks = append(ticks, plot.Tick{Value: x})
			continue
		}
		ticks = append(ticks, plot.Tick{Value: x, Label: strconv.FormatFloat(roundTo(x, step), 'f', -1, 64)})
	}
	return ticks
}

// decadeTicks labels each power of ten of a logarithmic axis: plain
// decimals down to 0.001, then 1e-4, 1e-5, ….
type decadeTicks struct{}

// Ticks implements plot.Ticker.
func (decadeTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) || math.IsInf(hi, 0) {
		return nil
	}
	var ticks []plot.Tick
	for k := math.Ceil(math.Log10(lo) - 1e-9); k <= math.Floor(math.Log10(hi)+1e-9); k++ {
		label := fmt.Sprintf("1e%d", int(k))
		if k >= -3 {
			label = strconv.FormatFloat(math.Pow(10, k), 'f', -1, 64)
		}
		ticks = append(ticks, plot.Tick{Value: math.Pow(10, k), Label: label})
	}
	return ticks
}

// roundStep returns the smallest of 1, 2 and 5 times a power of ten that is
// at least x (> 0).
func roundStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= x*(1-1e-12) {
			return m * p
		}
	}
	return 10 * p
}

// roundTo rounds x to a multiple of step's decimal digits, so that 0.30000000000000004 prints as 0.3.
func roundTo(x, step float64) float64 {
	d := math.Max(0, -math.Floor(math.Log10(step))+1)
	f := math.Pow(10, d)
	return math.Round(x*f) / f
}

func style(pl *plot.Plot, title, x, y string) {
	pl.Title.Text = title
	pl.Title.TextStyle.Font.Size = vg.Points(11)
	pl.X.Label.Text = x
	pl.Y.Label.Text = y
	pl.Legend.Top = true
	pl.Legend.TextStyle.Font.Size = vg.Points(8)
	pl.Add(plotter.NewGrid())
	pl.X.Tick.Marker = roundTicks{}
	pl.Y.Tick.Marker = roundTicks{}
}

// exceedance returns P(E > x) of l at the energies xs (J), as a curve in
// mJ, floored at floor for a logarithmic axis. The survival is computed
// directly (never 1 − CDF), so the far tail is accurate; a law with atoms
// shows as steps rather than as spikes of a density.
func exceedance(l dist.Law, xs []float64, floor float64) plotter.XYs {
	pts := make(plotter.XYs, len(xs))
	for i, x := range xs {
		pts[i] = plotter.XY{X: x * 1e3, Y: math.Max(l.Survival(x), floor)}
	}
	return pts
}

func energyFigure(p *Plan) (*plot.Plot, error) {
	pl := plot.New()
	style(pl, fmt.Sprintf("Energy per cycle: a node of the fleet, and the largest and smallest of %d nodes", p.Nodes),
		"energy per cycle (mJ)", "probability of exceeding it (log scale)")
	l := p.laws
	lo, _ := l.minEnergy.Support()
	hi := l.maxEnergy.UpperQuantile(1e-6)
	lo = math.Min(lo, l.fleetEnergy.Quantile(1e-6))
	span := hi - lo
	if !(span > 1e-6*hi) { // a (nearly) constant energy: show 10 % around it
		span = 0.1 * hi
	}
	lo, hi = math.Max(0, lo-0.03*span), hi+0.03*span
	const points = 600
	xs := make([]float64, points+1)
	for i := range xs {
		xs[i] = lo + (hi-lo)*float64(i)/points
	}
	const floor = 1e-7
	pl.Y.Scale = plot.LogScale{}
	pl.Y.Tick.Marker = decadeTicks{}
	curves := []struct {
		name string
		law  dist.Law
		c    color.RGBA
	}{
		{"any node's cycle", l.fleetEnergy, colour(0)},
		{fmt.Sprintf("largest of %d", p.Nodes), l.maxEnergy, colour(4)},
		{fmt.Sprintf("smallest of %d", p.Nodes), l.minEnergy, colour(3)},
	}
	for _, c := range curves {
		line, err := plotter.NewLine(exceedance(c.law, xs, floor))
		if err != nil {
			return nil, err
		}
		line.Color = c.c
		line.Width = vg.Points(1.3)
		pl.Add(line)
		pl.Legend.Add(c.name, line)
	}
	pl.Y.Min, pl.Y.Max = floor, 1.5
	if err := markX(pl, p.Fleet.OutlierJ*1e3, colour(6), "outlier threshold"); err != nil {
		return nil, err
	}
	return pl, nil
}

// markX draws a dashed vertical line at x across the plot's y range.
func markX(pl *plot.Plot, x float64, c color.RGBA, name string) error {
	ymin, ymax := pl.Y.Min, pl.Y.Max
	line, err := plotter.NewLine(plotter.XYs{{X: x, Y: ymin}, {X: x, Y: ymax}})
	if err != nil {
		return err
	}
	line.Color = c
	line.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	pl.Add(line)
	pl.Legend.Add(name, line)
	return nil
}

// horizon returns the end (years) of the time axis of the lifetime figures:
// just past the date by which 99.9 % of every group's nodes are flat, at
// most 40 years.
func horizon(p *Plan) float64 {
	end := 0.0
	for _, l := range p.laws.groupLife {
		end = math.Max(end, l.Quantile(0.999)/energy.Year)
	}
	end = math.Max(end, p.laws.replaceAfter/energy.Year)
	return math.Min(40, 1.05*end)
}

func survivalFigure(p *Plan) (*plot.Plot, error) {
	pl := plot.New()
	style(pl, "Battery lifetime: share of each group's nodes still running", "time since deployment (years)", "share of nodes still running")
	end := horizon(p)
	const n = 300
	for gi, l := range p.laws.groupLife {
		pts := make(plotter.XYs, n+1)
		for i := range pts {
			t := end * float64(i) / n
			pts[i] = plotter.XY{X: t, Y: l.Survival(t * energy.Year)}
		}
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, err
		}
		line.Color = colour(gi)
		line.Width = vg.Points(1.4)
		pl.Add(line)
		pl.Legend.Add(fmt.Sprintf("%s (%d nodes)", p.Groups[gi].Name, p.Groups[gi].Nodes), line)
	}
	pl.Y.Min, pl.Y.Max = 0, 1.02
	pl.X.Min, pl.X.Max = 0, end
	pl.Legend.Left = true
	pl.Legend.Top = false
	if err := markX(pl, p.laws.replaceAfter/energy.Year, colour(6), "planned replacement"); err != nil {
		return nil, err
	}
	return pl, nil
}

func failedFigure(p *Plan) (*plot.Plot, error) {
	pl := plot.New()
	style(pl, fmt.Sprintf("Nodes at the end of their life (flat cell or calendar limit) in the fleet of %d, with the 90 %% band", p.Nodes),
		"time since deployment (years)", "nodes at the end of their life")
	end := horizon(p)
	const n = 120
	var mean, lower, upper plotter.XYs
	for i := 0; i <= n; i++ {
		t := end * float64(i) / n
		c, err := p.laws.site.FailedBy(t * energy.Year)
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
	line.Color = colour(0)
	line.Width = vg.Points(1.5)
	pl.Add(line)
	pl.Legend.Add("expected number", line)
	pl.X.Min, pl.X.Max = 0, end
	pl.Y.Min, pl.Y.Max = 0, float64(p.Nodes)*1.02
	pl.Legend.Left = true
	if err := markX(pl, p.laws.replaceAfter/energy.Year, colour(6), "planned replacement"); err != nil {
		return nil, err
	}
	pl.Legend.ThumbnailWidth = vg.Points(18)
	return pl, nil
}
