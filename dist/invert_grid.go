package dist

import (
	"math"
	"math/bits"
)

// The bulk CDF on a grid. A law computes, on its first bulk evaluation
// (whatever asks for it: a CDF, a quantile search, the accuracy probes),
// the Fourier series once on an equispaced grid of N >= 2n + 2 points (N a
// power of 2 or 3 times one) over its window (n series terms) — the CDF F,
// the density f and its
// derivative f', all three from the series differentiated term by term —
// and then answers by quintic Hermite interpolation between grid points
// instead of summing the series. The values come from two complex FFTs of
// length N, each packing two real results (a real series Re Σ A_k·w^{kr}
// is the DFT of the Hermitian sequence A_k/2, conj(A_k)/2 at N - k, so one
// complex FFT of x + i·y gives the two real series of x and y): (F, f) and
// (f', F at the midpoints). The FFT is the radix-4 (with a radix-2 or
// radix-3 stage) one of this file (its agreement with gonum dsp/fourier is
// tested), chosen for speed: the grid must cost less than a few hundred
// series values to pay off at 1000 values; the terms are written straight
// into the FFT's input order.
//
// The interpolation error is measured, not assumed: F at every midpoint in
// the window, where a Hermite interpolant's error is largest for a smooth
// function, is compared with the interpolant, and the grid is used only when
// the worst midpoint error is at most gridMaxErr; twice that error, plus the
// FFT's rounding (log2 N·1e-16 times the sum of the terms' magnitudes), is
// added to the stated CDF bound. Where the density has kinks or jumps the
// check fails and the series is summed for each value as before.
//
// Whether the grid is used depends on the law alone, never on how many
// values were asked for before or on which goroutine asked first: every
// bulk value comes from the grid when the grid is accurate, from the series
// otherwise, so the same call returns the same bits whatever ran before
// (an earlier rule that switched to the grid after 32 values made a
// 1e-12 quantile of a 50-fold Weibull sum move by 8e-7 relative with the
// history of calls).

const (
	gridMaxErr  = 1e-13   // largest accepted midpoint interpolation error
	gridMaxSize = 1 << 17 // (laws at the series cap, 2^16 terms, have jumps and skip the grid)
	gridMinSize = 1 << 10
	gridPerTerm = 1 // grid points per series term (N >= gridPerTerm·n)
)

// cdfGrid holds F, f and f' of the continuous part at y0 + r·dy, scaled for
// the interpolation: v[r] = (F, f·dy), w[r] = (f'·dy², the midpoint value
// the check used).
type cdfGrid struct {
	y0, dy float64
	v, w   []complex128
	err    float64 // worst midpoint error
	round  float64 // FFT rounding bound
}

// size returns the number of grid points.
func (g *cdfGrid) size() int { return len(g.v) }

// buildGrid returns the grid, or nil when it is too large or not accurate.
func (l *numLaw) buildGrid() *cdfGrid {
	n := len(l.pr)
	N := gridFFTSize(max(gridMinSize, gridPerTerm*n, 2*n+2))
	if N > gridMaxSize {
		return nil
	}
	plan := newFFTPlan(N)
	a := l.a
	buf := make([]complex128, 2*N)
	x1, x2 := buf[:N:N], buf[N:]
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
		pr, pi := l.pr[k-1], l.pi[k-1]
		vr, vi := pr*zr-pi*zi, pr*zi+pi*zr
		vmr, vmi := vr*mr-vi*mi, vr*mi+vi*mr
		zr, zi = zr*ca-zi*sa, zr*sa+zi*ca
		mr, mi = mr*cm-mi*sm, mr*sm+mi*cm
		fk := float64(k)
		k2 := fk * fk
		absSum += k2 * math.Sqrt(pr*pr+pi*pi)
		// FFT 1: a1 = -i·v (real part Im Σ v…), b1 = k·v (imaginary part
		// Re Σ k·v…); FFT 2: a2 = -i·k²·v (real part Im Σ k²·v…), b2 =
		// -i·v_mid (imaginary part Im Σ v_mid…); x[k] = (a + i·b)/2,
		// x[N-k] = (conj(a) + i·conj(b))/2
		a1r, a1i, b1r, b1i := vi, -vr, fk*vr, fk*vi
		a2r, a2i, b2r, b2i := k2*vi, -k2*vr, vmi, -vmr
		// (written at their places in the FFT's permutation)
		p, q := plan.pos(k), plan.pos(N-k)
		x1[p] = complex((a1r-b1i)/2, (a1i+b1r)/2)
		x1[q] = complex((a1r+b1i)/2, (b1r-a1i)/2)
		x2[p] = complex((a2r-b2i)/2, (a2i+b2r)/2)
		x2[q] = complex((a2r+b2i)/2, (b2r-a2i)/2)
	}
	tw := twiddles(N)
	plan.run(x1, tw)
	plan.run(x2, tw)
	gr := &cdfGrid{y0: a, dy: dy, v: x1, w: x2}
	const invPi = 1 / math.Pi
	c0, c1 := l.w/2-l.mc/l.L, l.w/l.L
	cf, cf1 := l.h*invPi*dy, l.h*l.h*invPi*dy*dy
	for r := 0; r < N; r++ {
		y := a + float64(r)*dy
		F := c0 + c1*y - real(x1[r])*invPi
		fdy := c1*dy + cf*imag(x1[r])
		Fm := c0 + c1*(y+dy/2) - imag(x2[r])*invPi
		x1[r] = complex(F, fdy)
		x2[r] = complex(cf1*real(x2[r]), Fm)
	}
	// the interpolant at t = 1/2: h0 = h5 = 1/2, h1 = -h4 = 5/32,
	// h2 = h3 = 1/64 (the basis of at)
	for r := 0; r+1 < N; r++ {
		if a+(float64(r)+0.5)*dy > l.b {
			break
		}
		p, q := x1[r], x1[r+1]
		got := 0.5*(real(p)+real(q)) + 5.0/32*(imag(p)-imag(q)) + (real(x2[r])+real(x2[r+1]))/64
		gr.err = max(gr.err, math.Abs(got-imag(x2[r])))
	}
	gr.round = float64(bits.Len(uint(N))) * 1e-16 * absSum / math.Pi
	if !(gr.err <= gridMaxErr) {
		return nil
	}
	return gr
}

// twiddles returns exp(-2πi·j/N) for j < 3N/4 (N a power of 2): Sincos up
// to N/8, the rest by the exact symmetries cos(π/2 - x) = sin x,
// exp(-i·(x + π/2)) = -i·exp(-i·x) and exp(-i·(x + π)) = -exp(-i·x).
func twiddles(N int) []complex128 {
	tw := make([]complex128, 3*N/4)
	if N%8 != 0 {
		for j := range tw {
			s, c := math.Sincos(-2 * math.Pi * float64(j) / float64(N))
			tw[j] = complex(c, s)
		}
		return tw
	}
	q := N / 4
	for j := 0; j <= N/8; j++ {
		s, c := math.Sincos(-2 * math.Pi * float64(j) / float64(N))
		tw[j] = complex(c, s)
	}
	for j := N/8 + 1; j < q; j++ {
		t := tw[q-j]
		tw[j] = complex(-imag(t), -real(t))
	}
	for j := q; j < 3*q; j++ {
		t := tw[j-q]
		tw[j] = complex(imag(t), -real(t))
	}
	return tw
}

// fftPlan is a DFT of length N = 2^m, or N = 3·2^m (three sub-DFTs of
// length M = N/3 combined by one radix-3 stage), by decimation in time.
type fftPlan struct {
	N, M  int
	three bool
	shift uint // 64 - log2 M
}

// gridFFTSize returns the smallest N = 2^m or 3·2^m, N >= 8, with N >= n.
func gridFFTSize(n int) int {
	N := 8
	for N < n {
		if 3*N/2 >= n {
			return 3 * N / 2
		}
		N *= 2
	}
	return N
}

func newFFTPlan(N int) fftPlan {
	p := fftPlan{N: N, M: N}
	if N%3 == 0 {
		p.three, p.M = true, N/3
	}
	p.shift = 64 - uint(bits.Len(uint(p.M))-1)
	return p
}

// pos returns where input i goes before run: its bit reversal within M
// (within its third, i mod 3, for N = 3·2^m).
func (p fftPlan) pos(i int) int {
	if !p.three {
		return int(bits.Reverse64(uint64(i)) >> p.shift)
	}
	return (i%3)*p.M + int(bits.Reverse64(uint64(i/3))>>p.shift)
}

// run replaces the permuted x by its DFT Σ_j x_j·exp(-2πi·jr/N) (tw from
// twiddles(N)). The radix-3 stage: with ω = exp(-2πi/3), a, b·W^r, c·W^2r
// the three sub-DFTs at r < M (W = exp(-2πi/N)), s = b + c, d = b - c:
// X[r] = a + s, X[r+M] = a - s/2 - i·(√3/2)·d, X[r+2M] = a - s/2 + i·(√3/2)·d.
func (p fftPlan) run(x, tw []complex128) {
	if !p.three {
		fftStages(x, tw, 1)
		return
	}
	M := p.M
	x0, x1, x2 := x[:M:M], x[M:2*M:2*M], x[2*M:3*M:3*M]
	fftStages(x0, tw, 3)
	fftStages(x1, tw, 3)
	fftStages(x2, tw, 3)
	const h3 = 0.8660254037844386 // √3/2
	for r := range x0 {
		a, b, c := x0[r], x1[r], x2[r]
		if r > 0 {
			b *= tw[r]
			c *= tw[2*r]
		}
		sm, d := b+c, b-c
		t := a - sm/2
		id := complex(-h3*imag(d), h3*real(d)) // i·(√3/2)·d
		x0[r], x1[r], x2[r] = a+sm, t-id, t+id
	}
}

// fft2 replaces x by its DFT Σ_j x_j·exp(-2πi·jr/N), in place (len(x) a
// power of 2, or 3 times one, at least 8; tw from twiddles): the
// permutation of fftPlan, then its stages.
func fft2(x []complex128, tw []complex128) {
	p := newFFTPlan(len(x))
	y := make([]complex128, len(x))
	for i, v := range x {
		y[p.pos(i)] = v
	}
	p.run(y, tw)
	copy(x, y)
}

// fftStages is the DFT of length N = len(x), a power of 2, of x held in
// bit-reversed order, in place: decimation-in-time stages, two radix-2
// stages at a time as one radix-4 butterfly (three twiddle products per
// four points instead of four, half the passes over x), with one radix-2
// stage first when log2 N is odd. Its twiddle exp(-2πi·j/N) is tw[j·stride].
func fftStages(x []complex128, tw []complex128, stride int) {
	N := len(x)
	if N < 2 {
		return
	}
	L := 1
	if bits.TrailingZeros(uint(N))%2 == 1 {
		for s := 0; s < N; s += 2 {
			u, v := x[s], x[s+1]
			x[s], x[s+1] = u+v, u-v
		}
		L = 2
	}
	// a block of 4L holds the length-L DFTs A, B, C, D of the indices ≡ 0,
	// 2, 1, 3 (mod 4) of its sequence; with W = exp(-2πi/4L),
	// b = W^2k·B, c = W^k·C, d = W^3k·D:
	// X[k] = A+b+c+d, X[k+L] = A-b-i(c-d), X[k+2L] = A+b-c-d, X[k+3L] = A-b+i(c-d)
	for ; 4*L <= N; L *= 4 {
		step := stride * N / (4 * L)
		for s := 0; s < N; s += 4 * L {
			blk := x[s : s+4*L : s+4*L]
			q0, q1, q2, q3 := blk[:L:L], blk[L:2*L:2*L], blk[2*L:3*L:3*L], blk[3*L:]
			for k := range q0 {
				a := q0[k]
				b, c, d := q1[k], q2[k], q3[k]
				if k > 0 {
					b *= tw[2*k*step]
					c *= tw[k*step]
					d *= tw[3*k*step]
				}
				apb, amb, cpd, cmd := a+b, a-b, c+d, c-d
				icmd := complex(-imag(cmd), real(cmd)) // i·(c-d)
				q0[k], q1[k], q2[k], q3[k] = apb+cpd, amb-icmd, apb-cpd, amb+icmd
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
	if r >= len(g.v)-1 {
		r = len(g.v) - 2
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
	p, q := g.v[r], g.v[r+1]
	return h0*real(p) + h1*imag(p) + h2*real(g.w[r]) + h3*real(g.w[r+1]) + h4*imag(q) + h5*real(q)
}

// bulk returns the bulk CDF value at centred y: from the grid (built on the
// first call) when it is accurate, else from the series; the choice depends
// on the law only.
func (l *numLaw) bulk(y float64) float64 {
	if l.gridOnce == nil {
		return l.bulkCDF(y)
	}
	l.gridOnce.Do(func() { l.grid = l.buildGrid() })
	if l.grid == nil {
		return l.bulkCDF(y)
	}
	return l.grid.at(y)
}
