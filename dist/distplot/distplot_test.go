package distplot_test

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/distplot"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// hidden keeps only the dist.Law methods of a law, so that distplot cannot
// see its density or atoms.
type hidden struct{ dist.Law }

// The exceedance curve is the law's own survival, accurate far into the
// tail: against testref.NormalUpperTail (1600-bit values, Abramowitz &
// Stegun eq. 7.1.6) for the standard normal.
func TestValuesSurvivalFarTail(t *testing.T) {
	n := dist.MustNormal(0, 1)
	var xs, want []float64
	for _, p := range testref.NormalUpperTail {
		xs = append(xs, p.Z)
		want = append(want, p.Q)
	}
	got, err := distplot.Values("survival", n, xs)
	require.NoError(t, err)
	for i := range xs {
		assert.InDelta(t, 1, got[i]/want[i], 1e-12, "Q(%g)", xs[i])
	}
}

// The distribution function against gonum's exponential (an independent
// implementation), and the density of a law without dist.Densitied by the
// central difference of its CDF against the closed form e^{-x}.
func TestValuesCDFAndDensity(t *testing.T) {
	e := dist.MustExponential(1)
	ref := distuv.Exponential{Rate: 1}
	xs := []float64{0.01, 0.5, 1, 2, 5, 10}
	got, err := distplot.Values("cdf", e, xs)
	require.NoError(t, err)
	for i, x := range xs {
		assert.InDelta(t, ref.CDF(x), got[i], 1e-15, "CDF(%g)", x)
	}
	// Central difference with h = 1e-4·(10 − 0.01): error h²/6·|f'''| ≤ 2e-7·f.
	d, err := distplot.Values("density", hidden{e}, xs)
	require.NoError(t, err)
	for i, x := range xs {
		assert.InDelta(t, 1, d[i]/math.Exp(-x), 2e-7, "density(%g)", x)
	}
}

// At an atom, the density of the continuous part leaves the atom out: a
// 0.3 point mass at 1 mixed with 0.7 Exp(1) has continuous density
// 0.7·e^{-x} everywhere, the atom included (closed form).
func TestValuesDensityLeavesAtomsOut(t *testing.T) {
	m, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(1), dist.MustExponential(1)})
	require.NoError(t, err)
	xs := []float64{0.5, 1, 1.5, 3}
	for _, l := range []dist.Law{m, hiddenAtoms{m}} {
		d, err := distplot.Values("density", l, xs)
		require.NoError(t, err)
		for i, x := range xs {
			assert.InDelta(t, 1, d[i]/(0.7*math.Exp(-x)), 1e-6, "%T density(%g)", l, x)
		}
	}
}

// hiddenAtoms hides the density but keeps the atoms.
type hiddenAtoms struct{ dist.Law }

func (h hiddenAtoms) Atoms() []dist.Atom { return h.Law.(dist.Atomic).Atoms() }

// The automatic range runs from the smallest 1e-4 quantile to the largest
// upper 1e-4 quantile, widened by 3 % each side; quantiles from gonum's
// normal (an independent implementation).
func TestAutomaticRange(t *testing.T) {
	pl, err := distplot.CDF([]distplot.Curve{
		{Name: "a", Law: dist.MustNormal(0, 1)},
		{Name: "b", Law: dist.MustNormal(2, 0.5)},
	}, distplot.Options{XScale: 1e3})
	require.NoError(t, err)
	lo := distuv.Normal{Mu: 0, Sigma: 1}.Quantile(1e-4)
	hi := distuv.Normal{Mu: 2, Sigma: 0.5}.Quantile(1 - 1e-4)
	span := hi - lo
	assert.InDelta(t, (lo-0.03*span)*1e3, pl.X.Min, 1e-6)
	assert.InDelta(t, (hi+0.03*span)*1e3, pl.X.Max, 1e-6)

	// A constant law gets 10 % of its value on each side, widened by 3 % of that.
	pl, err = distplot.Survival([]distplot.Curve{{Law: dist.MustPointMass(2)}}, distplot.Options{})
	require.NoError(t, err)
	assert.InDelta(t, 2-0.2-0.03*0.2, pl.X.Min, 1e-12)
	assert.InDelta(t, 2+0.2+0.03*0.2, pl.X.Max, 1e-12)
}

// Every kind of plot encodes as PNG and SVG, and the bytes are the same
// whatever else runs at the same time.
func TestEncodeDeterministic(t *testing.T) {
	m, err := dist.Mixture([]float64{0.3, 0.7}, []dist.Law{dist.MustPointMass(1), dist.MustExponential(1)})
	require.NoError(t, err)
	curves := []distplot.Curve{{Name: "mixture", Law: m}, {Name: "normal", Law: dist.MustNormal(1, 0.3)}}
	makers := []func([]distplot.Curve, distplot.Options) (*plot.Plot, error){distplot.CDF, distplot.Survival, distplot.Density}
	for _, mk := range makers {
		for _, format := range []string{"png", "svg"} {
			render := func() []byte {
				pl, err := mk(curves, distplot.Options{Title: "t", XLabel: "x (J)", LogY: true})
				require.NoError(t, err)
				require.NoError(t, distplot.MarkX(pl, 1.5, 6, "a mark"))
				b, err := distplot.Encode(pl, format, 12*vg.Centimeter, 8*vg.Centimeter)
				require.NoError(t, err)
				return b
			}
			first := render()
			if format == "png" {
				assert.True(t, bytes.HasPrefix(first, []byte("\x89PNG\r\n\x1a\n")), "PNG signature (ISO/IEC 15948 §5.2)")
			} else {
				assert.Contains(t, string(first), "<svg")
			}
			var wg sync.WaitGroup
			outs := make([][]byte, 4)
			for i := range outs {
				wg.Add(1)
				go func() { defer wg.Done(); outs[i] = render() }()
			}
			wg.Wait()
			for _, o := range outs {
				assert.True(t, bytes.Equal(first, o), "same bytes")
			}
		}
	}
}

// WriteFile leaves the figure in place and no temporary file; a failed
// write leaves nothing behind and keeps an existing figure intact.
func TestWriteFile(t *testing.T) {
	dir := t.TempDir()
	pl, err := distplot.CDF([]distplot.Curve{{Law: dist.MustNormal(0, 1)}}, distplot.Options{})
	require.NoError(t, err)
	path := filepath.Join(dir, "cdf.png")
	require.NoError(t, distplot.WriteFile(pl, path, 10*vg.Centimeter, 6*vg.Centimeter))
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.True(t, bytes.HasPrefix(b, []byte("\x89PNG")))
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	assert.Len(t, entries, 1)

	// An unknown extension fails before anything is written.
	err = distplot.WriteFile(pl, filepath.Join(dir, "cdf.gif"), 10*vg.Centimeter, 6*vg.Centimeter)
	assert.ErrorIs(t, err, distplot.ErrParam)
	// A missing directory fails, and the old figure is untouched.
	err = distplot.WriteFile(pl, filepath.Join(dir, "no", "cdf.png"), 10*vg.Centimeter, 6*vg.Centimeter)
	assert.Error(t, err)
	after, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.Equal(t, b, after)
	entries, err = os.ReadDir(dir)
	require.NoError(t, err)
	assert.Len(t, entries, 1)
}

// Bad arguments are errors wrapping ErrParam that name the argument.
func TestBadArguments(t *testing.T) {
	n := dist.MustNormal(0, 1)
	one := []distplot.Curve{{Law: n}}
	many := make([]distplot.Curve, distplot.MaxCurves+1)
	for i := range many {
		many[i].Law = n
	}
	for _, c := range []struct {
		name   string
		curves []distplot.Curve
		o      distplot.Options
		param  string
	}{
		{"no curves", nil, distplot.Options{}, "curves"},
		{"too many curves", many, distplot.Options{}, "len(curves)"},
		{"nil law", []distplot.Curve{{Name: "x"}}, distplot.Options{}, "curves[0].Law"},
		{"one point", one, distplot.Options{Points: 1}, "Options.Points"},
		{"too many points", one, distplot.Options{Points: distplot.MaxPoints + 1}, "Options.Points"},
		{"negative scale", one, distplot.Options{XScale: -1}, "Options.XScale"},
		{"floor above 1", one, distplot.Options{Floor: 2}, "Options.Floor"},
		{"tail too wide", one, distplot.Options{Tail: 0.6}, "Options.Tail"},
		{"empty range", one, distplot.Options{Min: 2, Max: 1}, "Options.Min, Options.Max"},
		{"infinite range", one, distplot.Options{Min: 0, Max: math.Inf(1)}, "Options.Min, Options.Max"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := distplot.Survival(c.curves, c.o)
			require.ErrorIs(t, err, distplot.ErrParam)
			assert.Contains(t, err.Error(), c.param+" = ")
		})
	}
	pl, err := distplot.CDF(one, distplot.Options{})
	require.NoError(t, err)
	for _, c := range []struct {
		format string
		w, h   vg.Length
		param  string
	}{
		{"gif", 10, 10, "format"},
		{"png", 0, 10, "width"},
		{"svg", 10, distplot.MaxSide + 1, "height"},
	} {
		_, err := distplot.Encode(pl, c.format, c.w, c.h)
		require.ErrorIs(t, err, distplot.ErrParam)
		assert.True(t, strings.Contains(err.Error(), c.param+" = "), err.Error())
	}
	_, err = distplot.Values("pdf", n, []float64{0})
	assert.ErrorIs(t, err, distplot.ErrParam)
	_, err = distplot.Values("cdf", nil, []float64{0})
	assert.ErrorIs(t, err, distplot.ErrParam)
	_, err = distplot.Values("cdf", n, make([]float64, distplot.MaxPoints+1))
	assert.ErrorIs(t, err, distplot.ErrParam)
	assert.ErrorIs(t, distplot.MarkX(nil, 1, 0, ""), distplot.ErrParam)
	assert.ErrorIs(t, distplot.MarkX(pl, math.NaN(), 0, ""), distplot.ErrParam)
	_, err = distplot.Values("cdf", nanLaw{n}, []float64{0})
	assert.ErrorIs(t, err, distplot.ErrParam, "a NaN answer is an error, not a silent gap")
}

type nanLaw struct{ dist.Law }

func (nanLaw) CDF(float64) float64 { return math.NaN() }

// Axis ticks fall on the 1-2-5 series of round steps (common practice for
// chart axes), labelled in plain decimals; a logarithmic axis labels each
// power of ten.
func TestTicks(t *testing.T) {
	labels := func(ts []plot.Tick) []string {
		var out []string
		for _, tk := range ts {
			if tk.Label != "" {
				out = append(out, tk.Label)
			}
		}
		return out
	}
	for _, c := range []struct {
		lo, hi float64
		want   []string
	}{
		{0, 15.3, []string{"0", "2", "4", "6", "8", "10", "12", "14"}},
		{0, 1.02, []string{"0", "0.2", "0.4", "0.6", "0.8", "1"}},
		{0, 1680, []string{"0", "500", "1000", "1500"}},
		{22.2, 31.1, []string{"24", "26", "28", "30"}},
		{0, 306, []string{"0", "50", "100", "150", "200", "250", "300"}},
	} {
		assert.Equal(t, c.want, labels(distplot.RoundTicks{}.Ticks(c.lo, c.hi)), "[%g, %g]", c.lo, c.hi)
	}
	assert.Equal(t, []string{"1e-7", "1e-6", "1e-5", "1e-4", "0.001", "0.01", "0.1", "1"}, labels(distplot.DecadeTicks{}.Ticks(1e-7, 1.5)))
	assert.Empty(t, distplot.RoundTicks{}.Ticks(1, 1))
	assert.Empty(t, distplot.DecadeTicks{}.Ticks(0, 1))
}
