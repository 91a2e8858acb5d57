// Package distplot turns laws of package dist into gonum/plot plots and into
// PNG or SVG bytes: the distribution function, the exceedance (survival)
// curve on a linear or logarithmic scale, and the density of the continuous
// part with the atoms drawn as stems. Several laws share one plot, each with
// its legend name.
//
// It is meant for notebooks with a Go kernel and for programs that write
// figures: a plot is a value of gonum/plot's *plot.Plot, so the caller can
// add lines, marks and labels before encoding it. distplot is the only
// package of the module outside examples/ that imports gonum/plot; the
// numerical packages do not depend on it.
//
// What is drawn is computed from the laws' own functions, never estimated
// from samples: the exceedance P(X > x) comes from the law's Survival (never
// 1 − CDF), so a far tail on a log scale is as accurate as the law states;
// atoms come from dist.Atomic; the density from dist.Densitied where the
// law has it, otherwise from a central difference of the distribution
// function with the atoms taken out (its error is the difference rule's,
// O(h²) in the grid step h). Curves are sampled at Options.Points evenly
// spaced abscissae (default 400, at most MaxPoints), and atoms inside the
// range are added as exact abscissae on both sides, so a step is drawn as a
// step.
//
// Every function is safe for concurrent use and deterministic: the same
// call gives the same plot and the same bytes.
package distplot

import (
	"bytes"
	"errors"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/joulelaw/joulelaw/dist"
)

// ErrParam is wrapped by every error that reports a bad argument.
var ErrParam = errors.New("distplot: invalid argument")

// Caps on the sizes distplot accepts.
const (
	// MaxCurves is the largest number of laws on one plot.
	MaxCurves = 64
	// MaxPoints is the largest number of abscissae per curve.
	MaxPoints = 100000
	// MaxSide is the largest width or height of an encoded figure.
	MaxSide = 200 * vg.Centimeter
)

// DefaultPoints is the number of abscissae per curve when Options.Points is 0.
const DefaultPoints = 400

// Curve is one law on a plot.
type Curve struct {
	Name string   // legend entry; empty leaves the curve out of the legend
	Law  dist.Law // the law drawn
}

// Options sets what a plot shows. The zero value is usable: an automatic
// range, DefaultPoints abscissae, the law's own unit on the x axis and a
// linear y axis.
type Options struct {
	Title  string // plot title
	XLabel string // x-axis label, with its unit
	YLabel string // y-axis label; empty gives a label naming the curve kind

	// Min and Max bound the x range in the law's unit. When both are 0 the
	// range is chosen from the laws: from the smallest 1e-4 quantile to the
	// largest upper 1e-4 quantile (Tail overrides 1e-4), widened by 3 % on
	// each side.
	Min, Max float64
	// Tail is the probability left out at each end by the automatic range;
	// 0 means 1e-4. It must be in (0, 0.5).
	Tail float64

	// XScale multiplies x values for display (for example 1e3 to show
	// joules as millijoules, or 1/energy.Year to show seconds as years);
	// 0 means 1. Min and Max stay in the law's unit.
	XScale float64

	// Points is the number of evenly spaced abscissae per curve; 0 means
	// DefaultPoints. At most MaxPoints.
	Points int

	// LogY draws the y axis on a logarithmic scale, with values below
	// Floor drawn at Floor (0 means 1e-7). Used by Survival and CDF.
	LogY  bool
	Floor float64
}

func argErr(fn, param string, value any, rule string) error {
	return fmt.Errorf("distplot.%s: %s = %v: %s: %w", fn, param, value, rule, ErrParam)
}

// Colour returns the i-th colour (i ≥ 0) of the package's palette of seven,
// repeating after the seventh. Curves take colours in order.
func Colour(i int) color.RGBA {
	p := [...]color.RGBA{
		{R: 0, G: 105, B: 125, A: 255},   // deep teal
		{R: 214, G: 110, B: 24, A: 255},  // burnt orange
		{R: 112, G: 58, B: 148, A: 255},  // plum
		{R: 96, G: 130, B: 30, A: 255},   // moss
		{R: 170, G: 40, B: 60, A: 255},   // brick
		{R: 40, G: 70, B: 160, A: 255},   // ink blue
		{R: 120, G: 120, B: 120, A: 255}, // slate
	}
	if i < 0 {
		i = -i
	}
	return p[i%len(p)]
}

// kind is what a curve shows.
type kind int

const (
	kindCDF kind = iota
	kindSurvival
	kindDensity
)

func (k kind) fn() string {
	switch k {
	case kindCDF:
		return "CDF"
	case kindSurvival:
		return "Survival"
	default:
		return "Density"
	}
}

// resolved is an Options with its defaults filled in and checked.
type resolved struct {
	lo, hi, scale, floor float64
	points               int
}

func resolve(fn string, curves []Curve, o Options) (resolved, error) {
	var r resolved
	if len(curves) == 0 {
		return r, argErr(fn, "curves", "[]", "must hold at least one law")
	}
	if len(curves) > MaxCurves {
		return r, argErr(fn, "len(curves)", len(curves), fmt.Sprintf("must be at most MaxCurves = %d", MaxCurves))
	}
	for i, c := range curves {
		if c.Law == nil {
			return r, argErr(fn, fmt.Sprintf("curves[%d].Law", i), nil, "must not be nil")
		}
	}
	r.points = o.Points
	if r.points == 0 {
		r.points = DefaultPoints
	}
	if r.points < 2 || r.points > MaxPoints {
		return r, argErr(fn, "Options.Points", o.Points, fmt.Sprintf("must be 0 (default) or in [2, MaxPoints = %d]", MaxPoints))
	}
	r.scale = o.XScale
	if r.scale == 0 {
		r.scale = 1
	}
	if !(r.scale > 0) || math.IsInf(r.scale, 0) {
		return r, argErr(fn, "Options.XScale", o.XScale, "must be 0 (meaning 1) or finite and > 0")
	}
	r.floor = o.Floor
	if r.floor == 0 {
		r.floor = 1e-7
	}
	if !(r.floor > 0 && r.floor < 1) {
		return r, argErr(fn, "Options.Floor", o.Floor, "must be 0 (meaning 1e-7) or in (0, 1)")
	}
	tail := o.Tail
	if tail == 0 {
		tail = 1e-4
	}
	if !(tail > 0 && tail < 0.5) {
		return r, argErr(fn, "Options.Tail", o.Tail, "must be 0 (meaning 1e-4) or in (0, 0.5)")
	}
	if o.Min != 0 || o.Max != 0 {
		if math.IsNaN(o.Min) || math.IsNaN(o.Max) || math.IsInf(o.Min, 0) || math.IsInf(o.Max, 0) || !(o.Max > o.Min) {
			return r, argErr(fn, "Options.Min, Options.Max", fmt.Sprintf("%g, %g", o.Min, o.Max), "must be finite with Min < Max (or both 0 for an automatic range)")
		}
		r.lo, r.hi = o.Min, o.Max
		return r, nil
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, c := range curves {
		a, b := c.Law.Quantile(tail), c.Law.UpperQuantile(tail)
		if math.IsNaN(a) || math.IsNaN(b) || math.IsInf(a, 0) || math.IsInf(b, 0) {
			return r, argErr(fn, fmt.Sprintf("curves[%d].Law", i), c.Law,
				fmt.Sprintf("its %g quantiles are not finite (%g, %g): give Options.Min and Options.Max", tail, a, b))
		}
		lo, hi = min(lo, a), max(hi, b)
	}
	span := hi - lo
	if !(span > 1e-9*max(math.Abs(lo), math.Abs(hi))) {
		// A (nearly) constant law: show 10 % around it, or ±1 about 0.
		span = 0.1 * max(math.Abs(lo), math.Abs(hi))
		if span == 0 {
			span = 1
		}
		lo, hi = lo-span, hi+span
	}
	r.lo, r.hi = lo-0.03*span, hi+0.03*span
	return r, nil
}

// abscissae returns the evenly spaced grid of r with, for every atom of l
// inside it, the atom's value and its left neighbour nextafter-down added,
// so that steps are vertical.
func abscissae(r resolved, l dist.Law) []float64 {
	xs := make([]float64, 0, r.points+8)
	for i := 0; i < r.points; i++ {
		xs = append(xs, r.lo+(r.hi-r.lo)*float64(i)/float64(r.points-1))
	}
	if a, ok := l.(dist.Atomic); ok {
		atoms := a.Atoms()
		if len(atoms) <= MaxPoints {
			for _, at := range atoms {
				if at.Value > r.lo && at.Value < r.hi {
					xs = append(xs, math.Nextafter(at.Value, math.Inf(-1)), at.Value)
				}
			}
		}
	}
	sort.Float64s(xs)
	return xs
}

// Values returns what a plot of the given kind draws for l at the
// abscissae xs (in the law's unit): "cdf" gives P(X ≤ x), "survival" gives
// P(X > x) from the law's Survival (never 1 − CDF), and "density" gives the
// density of the continuous part (dist.Densitied where available,
// otherwise the central difference of the CDF with step h = 1e-4 of the
// spread of xs, atoms taken out). NaN answers of the law are errors.
func Values(kindName string, l dist.Law, xs []float64) ([]float64, error) {
	var k kind
	switch kindName {
	case "cdf":
		k = kindCDF
	case "survival":
		k = kindSurvival
	case "density":
		k = kindDensity
	default:
		return nil, argErr("Values", "kind", strconv.Quote(kindName), `must be "cdf", "survival" or "density"`)
	}
	if l == nil {
		return nil, argErr("Values", "l", nil, "must not be nil")
	}
	if len(xs) > MaxPoints {
		return nil, argErr("Values", "len(xs)", len(xs), fmt.Sprintf("must be at most MaxPoints = %d", MaxPoints))
	}
	h := 0.0
	if len(xs) > 1 {
		lo, hi := xs[0], xs[0]
		for _, x := range xs {
			lo, hi = min(lo, x), max(hi, x)
		}
		h = 1e-4 * (hi - lo)
	}
	return values(k, l, xs, h)
}

func values(k kind, l dist.Law, xs []float64, h float64) ([]float64, error) {
	ys := make([]float64, len(xs))
	var atoms []dist.Atom
	if a, ok := l.(dist.Atomic); ok {
		atoms = a.Atoms()
	}
	dens, hasDensity := l.(dist.Densitied)
	for i, x := range xs {
		var y float64
		switch k {
		case kindCDF:
			y = l.CDF(x)
		case kindSurvival:
			y = l.Survival(x)
		case kindDensity:
			if hasDensity {
				y = dens.Density(x)
				break
			}
			if !(h > 0) {
				h = 1e-6 * max(1, math.Abs(x))
			}
			a, b := x-h, x+h
			m := l.CDF(b) - l.CDF(a)
			for _, at := range atoms {
				if at.Value > a && at.Value <= b {
					m -= at.Mass
				}
			}
			y = max(0, m/(b-a))
		}
		if math.IsNaN(y) {
			return nil, fmt.Errorf("distplot: the law %v answers NaN at x = %g (%s): %w", l, x, k.fn(), ErrParam)
		}
		ys[i] = y
	}
	return ys, nil
}

// CDF returns a plot of the distribution functions P(X ≤ x) of the curves.
func CDF(curves []Curve, o Options) (*plot.Plot, error) {
	return lines(kindCDF, curves, o, "probability of not exceeding")
}

// Survival returns a plot of the exceedance curves P(X > x) of the curves,
// computed from each law's Survival (never 1 − CDF). With Options.LogY the
// far tail is drawn down to Options.Floor; atoms show as steps.
func Survival(curves []Curve, o Options) (*plot.Plot, error) {
	return lines(kindSurvival, curves, o, "probability of exceeding")
}

// Density returns a plot of the density of each law's continuous part and,
// for laws with atoms, stems at the atoms whose heights are their
// probabilities (the legend says so: a stem's height is a probability, not
// a density). Options.LogY is not used.
func Density(curves []Curve, o Options) (*plot.Plot, error) {
	o.LogY = false
	return lines(kindDensity, curves, o, "density of the continuous part (per x unit)")
}

func lines(k kind, curves []Curve, o Options, ylabel string) (*plot.Plot, error) {
	r, err := resolve(k.fn(), curves, o)
	if err != nil {
		return nil, err
	}
	pl := plot.New()
	pl.Title.Text = o.Title
	pl.Title.TextStyle.Font.Size = vg.Points(11)
	pl.X.Label.Text = o.XLabel
	pl.Y.Label.Text = o.YLabel
	if o.YLabel == "" {
		pl.Y.Label.Text = ylabel
		if o.LogY {
			pl.Y.Label.Text += " (log scale)"
		}
	}
	pl.Legend.Top = true
	pl.Legend.TextStyle.Font.Size = vg.Points(8)
	pl.Add(plotter.NewGrid())
	pl.X.Tick.Marker = RoundTicks{}
	pl.Y.Tick.Marker = RoundTicks{}
	if o.LogY {
		pl.Y.Scale = plot.LogScale{}
		pl.Y.Tick.Marker = DecadeTicks{}
		pl.Y.Min, pl.Y.Max = r.floor, 1.5
	}
	stemNoted := false
	for i, c := range curves {
		xs := abscissae(r, c.Law)
		ys, err := values(k, c.Law, xs, 1e-4*(r.hi-r.lo))
		if err != nil {
			return nil, fmt.Errorf("distplot.%s: curves[%d]: %w", k.fn(), i, err)
		}
		pts := make(plotter.XYs, len(xs))
		for j := range xs {
			y := ys[j]
			if o.LogY {
				y = max(y, r.floor)
			}
			pts[j] = plotter.XY{X: xs[j] * r.scale, Y: y}
		}
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, fmt.Errorf("distplot.%s: curves[%d]: %w", k.fn(), i, err)
		}
		line.Color = Colour(i)
		line.Width = vg.Points(1.3)
		pl.Add(line)
		if c.Name != "" {
			pl.Legend.Add(c.Name, line)
		}
		if k != kindDensity {
			continue
		}
		a, ok := c.Law.(dist.Atomic)
		if !ok {
			continue
		}
		for _, at := range a.Atoms() {
			if at.Value < r.lo || at.Value > r.hi {
				continue
			}
			stem, err := plotter.NewLine(plotter.XYs{{X: at.Value * r.scale, Y: 0}, {X: at.Value * r.scale, Y: at.Mass}})
			if err != nil {
				return nil, fmt.Errorf("distplot.Density: curves[%d]: %w", i, err)
			}
			stem.Color = Colour(i)
			stem.Width = vg.Points(2.2)
			pl.Add(stem)
			if !stemNoted {
				pl.Legend.Add("atom (height = its probability)", stem)
				stemNoted = true
			}
		}
	}
	pl.X.Min, pl.X.Max = r.lo*r.scale, r.hi*r.scale
	return pl, nil
}

// MarkX draws a dashed vertical line at x (in display units, that is after
// XScale) across the plot's current y range, with a legend entry when name
// is not empty, in the palette's i-th colour.
func MarkX(pl *plot.Plot, x float64, i int, name string) error {
	if pl == nil {
		return argErr("MarkX", "pl", nil, "must not be nil")
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return argErr("MarkX", "x", x, "must be finite")
	}
	ymin, ymax := pl.Y.Min, pl.Y.Max
	if !(ymax > ymin) {
		ymin, ymax = 0, 1
	}
	line, err := plotter.NewLine(plotter.XYs{{X: x, Y: ymin}, {X: x, Y: ymax}})
	if err != nil {
		return fmt.Errorf("distplot.MarkX: %w", err)
	}
	line.Color = Colour(i)
	line.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	pl.Add(line)
	if name != "" {
		pl.Legend.Add(name, line)
	}
	return nil
}

// Encode renders pl at the given size in "png" or "svg" and returns the
// bytes. Width and height must be positive and at most MaxSide.
func Encode(pl *plot.Plot, format string, width, height vg.Length) ([]byte, error) {
	if pl == nil {
		return nil, argErr("Encode", "pl", nil, "must not be nil")
	}
	format = strings.ToLower(format)
	if format != "png" && format != "svg" {
		return nil, argErr("Encode", "format", strconv.Quote(format), `must be "png" or "svg"`)
	}
	for _, s := range []struct {
		name string
		v    vg.Length
	}{{"width", width}, {"height", height}} {
		if !(s.v > 0 && s.v <= MaxSide) {
			return nil, argErr("Encode", s.name, s.v, fmt.Sprintf("must be > 0 and at most MaxSide = %v", MaxSide))
		}
	}
	w, err := pl.WriterTo(width, height, format)
	if err != nil {
		return nil, fmt.Errorf("distplot.Encode: %w", err)
	}
	var buf bytes.Buffer
	if _, err := w.WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("distplot.Encode: %w", err)
	}
	return buf.Bytes(), nil
}

// WriteFile renders pl in the format named by path's extension (".png" or
// ".svg") and writes it to path safely: to a temporary file in the same
// directory, checked, synced and closed, then renamed over path, so a
// failed or interrupted write never leaves a truncated figure behind.
func WriteFile(pl *plot.Plot, path string, width, height vg.Length) error {
	ext := strings.TrimPrefix(strings.ToLower(filepath.Ext(path)), ".")
	b, err := Encode(pl, ext, width, height)
	if err != nil {
		return err
	}
	return writeAtomic(path, b)
}

func writeAtomic(path string, b []byte) (err error) {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("distplot.WriteFile: %w", err)
	}
	tmp := f.Name()
	if err = f.Chmod(0o644); err != nil {
		_ = f.Close()
		_ = os.Remove(tmp) // best effort: nothing was written
		return fmt.Errorf("distplot.WriteFile: %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			_ = os.Remove(tmp) // best effort: the write already failed
		}
	}()
	if _, err = io.Copy(f, bytes.NewReader(b)); err != nil {
		_ = f.Close()
		return fmt.Errorf("distplot.WriteFile: %s: %w", path, err)
	}
	if err = f.Sync(); err != nil {
		_ = f.Close()
		return fmt.Errorf("distplot.WriteFile: %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("distplot.WriteFile: %s: %w", path, err)
	}
	if err = os.Rename(tmp, path); err != nil {
		return fmt.Errorf("distplot.WriteFile: %s: %w", path, err)
	}
	return nil
}
