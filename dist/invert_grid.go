package dist

import (
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// The bulk CDF on a grid. A law evaluated many times (more than gridAfter
// bulk values) computes the Fourier series once on an equispaced grid of N
// points over its window — one FFT for the CDF values, one for the density
// (the series differentiated term by term) — and then answers by cubic
// Hermite interpolation between grid points instead of summing the series.
// The interpolation error is measured, not assumed: a third FFT gives the
// series at every midpoint, where a cubic Hermite interpolant's error is
// largest for a smooth function, and the grid is used only when the worst
// midpoint error is at most gridMaxErr; twice that error is added to the
// stated CDF bound. Where the density has kinks or jumps the check fails and
// the series is summed for each value as before.

const (
	gridAfter   = 2048  // bulk evaluations before the grid is built (about the cost of building it)
	gridMaxErr  = 1e-13 // largest accepted midpoint interpolation error
	gridMaxSize = 1 << 17
	gridPerTerm = 8 // grid points per series term
)

// cdfGrid holds F and f of the continuous part at y0 + r·dy.
type cdfGrid struct {
	y0, dy float64
	F, f   []float64
	err    float64 // worst midpoint error
}

// buildGrid returns the grid, or nil when it is too large or not accurate.
func (l *numLaw) buildGrid() *cdfGrid {
	n := len(l.pr)
	N := fftSize(max(gridPerTerm*n, 1024))
	if N > gridMaxSize || n >= N {
		return nil
	}
	a := l.a
	g := make([]complex128, N)
	d := make([]complex128, N)
	m := make([]complex128, N)
	dy := l.L / float64(N)
	for k := 1; k <= n; k++ {
		s, c := math.Sincos(-float64(k) * l.h * a)
		v := complex(l.pr[k-1], l.pi[k-1]) * complex(c, s)
		g[k] = v
		d[k] = v * complex(float64(k), 0)
		s2, c2 := math.Sincos(-float64(k) * l.h * dy / 2)
		m[k] = v * complex(c2, s2)
	}
	fft := fourier.NewCmplxFFT(N)
	fft.Coefficients(g, g)
	fft.Coefficients(d, d)
	fft.Coefficients(m, m)
	gr := &cdfGrid{y0: a, dy: dy, F: make([]float64, N), f: make([]float64, N)}
	for r := 0; r < N; r++ {
		y := a + float64(r)*dy
		gr.F[r] = l.w/2 + (l.w*y-l.mc)/l.L - imag(g[r])/math.Pi
		gr.f[r] = l.w/l.L + l.h/math.Pi*real(d[r])
	}
	for r := 0; r+1 < N; r++ {
		y := a + (float64(r)+0.5)*dy
		if y > l.b {
			break
		}
		want := l.w/2 + (l.w*y-l.mc)/l.L - imag(m[r])/math.Pi
		got := gr.at(y)
		gr.err = math.Max(gr.err, math.Abs(got-want))
	}
	if !(gr.err <= gridMaxErr) {
		return nil
	}
	return gr
}

// at returns the cubic Hermite interpolant at y (inside the grid).
func (g *cdfGrid) at(y float64) float64 {
	u := (y - g.y0) / g.dy
	r := int(u)
	if r < 0 {
		r = 0
	}
	if r >= len(g.F)-1 {
		r = len(g.F) - 2
	}
	t := u - float64(r)
	t2, t1 := t*t, 1-t
	h00 := (1 + 2*t) * t1 * t1
	h10 := t * t1 * t1
	h01 := t2 * (3 - 2*t)
	h11 := t2 * (t - 1)
	return h00*g.F[r] + h10*g.dy*g.f[r] + h01*g.F[r+1] + h11*g.dy*g.f[r+1]
}

// bulk returns the bulk CDF value at centred y, from the grid once it is
// built and accurate, else from the series.
func (l *numLaw) bulk(y float64) float64 {
	if l.gridOnce == nil || l.calls.Add(1) <= gridAfter {
		return l.bulkCDF(y)
	}
	l.gridOnce.Do(func() { l.grid = l.buildGrid() })
	if l.grid == nil {
		return l.bulkCDF(y)
	}
	return l.grid.at(y)
}
