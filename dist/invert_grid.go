package dist

import (
	"math"
	"math/bits"
)

// The bulk CDF on a grid. A law evaluated more than gridAfter times computes
// the Fourier series once on an equispaced grid of N = 2^m >= 2n + 2 points
// over its window (n series terms) — the CDF F, the density f and its
// derivative f', all three from the series differentiated term by term —
// and then answers by quintic Hermite interpolation between grid points
// instead of summing the series. The values come from two complex FFTs of
// length N, each packing two real results (a real series Re Σ A_k·w^{kr}
// is the DFT of the Hermitian sequence A_k/2, conj(A_k)/2 at N - k, so one
// complex FFT of x + i·y gives the two real series of x and y): (F, f) and
// (f', F at the midpoints). The FFT is a radix-2 one of this file (its
// agreement with gonum dsp/fourier is tested), chosen for speed: the grid
// must cost less than a few hundred series values to pay off at 1000 values.
//
// The interpolation error is measured, not assumed: F at every midpoint in
// the window, where a Hermite interpolant's error is largest for a smooth
// function, is compared with the interpolant, and the grid is used only when
// the worst midpoint error is at most gridMaxErr; twice that error, plus the
// FFT's rounding (log2 N·1e-16 times the sum of the terms' magnitudes), is
// added to the stated CDF bound. Where the density has kinks or jumps the
// check fails and the series is summed for each value as before.

const (
	gridAfter   = 32      // bulk evaluations before the grid is built (about the cost of building it)
	gridMaxErr  = 1e-13   // largest accepted midpoint interpolation error
	gridMaxSize = 1 << 17 // (laws at the series cap, 2^16 terms, have jumps and skip the grid)
	gridMinSize = 1 << 10
	gridDropTol = 3e-15 // sum of the magnitudes of the series terms the grid may leave out
	gridPerTerm = 1     // grid points per series term (N >= gridPerTerm·n, a power of 2)
)

// cdfGrid holds F, f and f' of the continuous part at y0 + r·dy.
type cdfGrid struct {
	y0, dy   float64
	F, f, f1 []float64
	err      float64 // worst midpoint error
	round    float64 // FFT rounding bound
}

// buildGrid returns the grid, or nil when it is too large or not accurate.
func (l *numLaw) buildGrid() *cdfGrid {
	// terms beyond n whose magnitudes sum below gridDropTol are left out
	// (their sum, over π, is added to the stated bound)
	n := len(l.pr)
	var drop float64
	for n > 1 {
		d := math.Hypot(l.pr[n-1], l.pi[n-1])
		if drop+d > gridDropTol {
			break
		}
		drop += d
		n--
	}
	N := gridMinSize
	for N < gridPerTerm*n || N < 2*n+2 {
		N *= 2
	}
	if N > gridMaxSize {
		return nil
	}
	a := l.a
	x1 := make([]complex128, N)
	x2 := make([]complex128, N)
	dy := l.L / float64(N)
	var absSum float64
	// v_k = Mc(ikh)/k·exp(-ikh·a), by rotation resynchronised every 64 terms
	sa, ca := math.Sincos(-l.h * a)
	sm, cm := math.Sincos(-l.h * dy / 2)
	var zr, zi, mr, mi float64
	for k := 1; k <= n; k++ {
		if (k-1)%64 == 0 {
			zi, zr = math.Sincos(-float64(k) * l.h * a)
			mi, mr = math.Sincos(-float64(k) * l.h * dy / 2)
		}
		v := complex(l.pr[k-1], l.pi[k-1]) * complex(zr, zi)
		vm := v * complex(mr, mi)
		zr, zi = zr*ca-zi*sa, zr*sa+zi*ca
		mr, mi = mr*cm-mi*sm, mr*sm+mi*cm
		fk := float64(k)
		absSum += fk * fk * math.Hypot(real(v), imag(v))
		// FFT 1: real part Re Σ(-i·v)… = Im Σ v…, imaginary part Re Σ k·v…
		a1, b1 := complex(imag(v), -real(v)), v*complex(fk, 0)
		// FFT 2: real part Im Σ k²·v…, imaginary part Im Σ v_mid…
		a2, b2 := complex(fk*fk*imag(v), -fk*fk*real(v)), complex(imag(vm), -real(vm))
		x1[k] = (a1 + complex(0, 1)*b1) / 2
		x1[N-k] = (conj(a1) + complex(0, 1)*conj(b1)) / 2
		x2[k] = (a2 + complex(0, 1)*b2) / 2
		x2[N-k] = (conj(a2) + complex(0, 1)*conj(b2)) / 2
	}
	tw := twiddles(N)
	fft2(x1, tw)
	fft2(x2, tw)
	gr := &cdfGrid{y0: a, dy: dy, F: make([]float64, N), f: make([]float64, N), f1: make([]float64, N)}
	h2 := l.h * l.h
	for r := 0; r < N; r++ {
		y := a + float64(r)*dy
		gr.F[r] = l.w/2 + (l.w*y-l.mc)/l.L - real(x1[r])/math.Pi
		gr.f[r] = l.w/l.L + l.h/math.Pi*imag(x1[r])
		gr.f1[r] = h2 / math.Pi * real(x2[r])
	}
	for r := 0; r+1 < N; r++ {
		y := a + (float64(r)+0.5)*dy
		if y > l.b {
			break
		}
		want := l.w/2 + (l.w*y-l.mc)/l.L - imag(x2[r])/math.Pi
		got := gr.at(y)
		gr.err = math.Max(gr.err, math.Abs(got-want))
	}
	gr.round = float64(bits.Len(uint(N)))*1e-16*absSum/math.Pi + drop/math.Pi
	if !(gr.err <= gridMaxErr) {
		return nil
	}
	return gr
}

func conj(z complex128) complex128 { return complex(real(z), -imag(z)) }

// twiddles returns exp(-2πi·j/N) for j < N/2 (N a power of 2).
func twiddles(N int) []complex128 {
	tw := make([]complex128, N/2)
	for j := range tw {
		s, c := math.Sincos(-2 * math.Pi * float64(j) / float64(N))
		tw[j] = complex(c, s)
	}
	return tw
}

// fft2 replaces x by its DFT Σ_j x_j·exp(-2πi·jr/N), in place, by the
// iterative radix-2 Cooley–Tukey algorithm (len(x) a power of 2, tw from
// twiddles).
func fft2(x []complex128, tw []complex128) {
	N := len(x)
	shift := 64 - uint(bits.Len(uint(N))-1)
	for i := 0; i < N; i++ {
		j := int(bits.Reverse64(uint64(i)) >> shift)
		if j > i {
			x[i], x[j] = x[j], x[i]
		}
	}
	for size := 2; size <= N; size *= 2 {
		half, step := size/2, N/size
		for start := 0; start < N; start += size {
			for k := 0; k < half; k++ {
				w := tw[k*step]
				u, v := x[start+k], x[start+k+half]*w
				x[start+k], x[start+k+half] = u+v, u-v
			}
		}
	}
}

// at returns the quintic Hermite interpolant at y (inside the grid).
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
	t2 := t * t
	t3 := t2 * t
	t4, t5 := t3*t, t3*t2
	h0 := 1 - 10*t3 + 15*t4 - 6*t5
	h1 := t - 6*t3 + 8*t4 - 3*t5
	h2 := 0.5 * (t2 - 3*t3 + 3*t4 - t5)
	h3 := 0.5 * (t3 - 2*t4 + t5)
	h4 := -4*t3 + 7*t4 - 3*t5
	h5 := 10*t3 - 15*t4 + 6*t5
	d, d2 := g.dy, g.dy*g.dy
	return h0*g.F[r] + h1*d*g.f[r] + h2*d2*g.f1[r] + h3*d2*g.f1[r+1] + h4*d*g.f[r+1] + h5*g.F[r+1]
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
