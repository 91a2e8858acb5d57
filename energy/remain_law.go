package energy

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"slices"
	"sort"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/mills"
	"github.com/joulelaw/joulelaw/internal/root"
)

// rootNear is the half-width, in units of the widest kernel's standard
// deviation, of the bracket a quantile's search tries first around the
// node where the nodes' cumulative weight reaches the level (measured on
// the benchmark's devices: 11 to 21 % fewer evaluations than starting
// from ±(kernelReach+2) of them).
const rootNear = 0.5

// kernelReach is how many of its own standard deviations from a node its
// kernel is evaluated; beyond it the kernel's mass (Φ̄(10) < 7.7e-24) is
// counted as wholly on one side.
const kernelReach = 10

// PosteriorLaw is a law over a device's posterior nodes: the mixture
//
//	Y = min(hi, max(lo, X)),  X ~ Σ_k w_k·N(m_k, s_k²)
//
// with one normal kernel per node (s_k = 0 for a point mass) and the clamp
// to [lo, hi] putting the mass outside on atoms at the ends. The kernels
// carry the per-event noise given the node's factors (for a lifetime: the
// spent energy's standard deviation over the drain rate); the weights are
// the posterior's. Kernels are summed within kernelReach = 10 standard
// deviations of the point asked (the rest counts whole, an error below
// 1e-23), so CDF and Survival cost O(log M) plus the nodes near the point.
//
// Survival is summed directly (never 1 − CDF). The error stated by
// Accuracy is the quadrature's: at the law's 5 %, 50 % and 95 % points,
// the larger of 1.5 times the disagreement of the CDFs of the two
// interleaved halves of the nodes and κ times the importance estimate's
// standard error √(Σ_k w_k²·(h_k − F)²) (delta method, h_k the node's CDF
// at the point), plus 1/M for M nodes with weight; κ = 1 on the prior's
// low-discrepancy point set and 3 after importance stages (a proposal
// fitted to few nodes can miss mass that neither half sees). Where the
// final nodes leave fewer than minResolvedNodes = 64 (or a quarter of the
// prior's) effective (readings that the group's model explains only far
// in its tails: see DeviceModel.Outlier), the law is not resolved and the
// stated error is 1. Checked against the same model on 2^16 nodes over
// 60 devices (ages 300 to 1700 days, readings from the plateau to the end
// of the knee): the stated error exceeded the measured one by at least
// the oracle's own stated error in every case (all 60 have an oracle
// since the ridge stage reaches readings beyond the cell's end; five laws,
// on fewer than 64 effective nodes, state 1; TestPosteriorStatedError). PosteriorLaw
// implements dist.Law, dist.Atomic and dist.Estimated; it is an immutable
// value, safe for concurrent use. A zero PosteriorLaw is not valid: its
// methods return NaN.
type PosteriorLaw struct{ p *postLaw }

type postLaw struct {
	m, s, w    []float64 // sorted by m
	is         []float64 // 1/s, 0 for a point node: a kernel's CDF at x is Φ̄((m − x)·is)
	half       []uint8   // parity of the node's index in the point set
	below      []float64 // below[k] = Σ_{j<k} w_j, len M+1
	above      []float64 // above[k] = Σ_{j>=k} w_j, summed from the top, len M+1
	smax       float64
	q          nodeQuality
	lo, hi     float64
	sLo, sHi   float64 // support
	name, unit string
	scale      float64 // unit divisor for String
	once       sync.Once
	acc        dist.Accuracy
}

// postLawHalf is a postLaw with room for the parities of up to
// DefaultPosteriorNodes nodes (newPostLaw: one allocation instead of two).
type postLawHalf struct {
	postLaw
	half [DefaultPosteriorNodes]uint8
}

// nodeQuality is what a law's stated error needs of its posterior.
type nodeQuality struct {
	ess        float64 // effective number of nodes
	kappa      float64 // factor on the importance standard error: 1 on the prior's point set, 3 after importance stages
	unresolved bool    // the nodes do not reach the posterior: the stated error is 1
}

// newPostLaw builds the law of the nodes k with w[k] > 0, node(k) giving
// node k's kernel centre and standard deviation, clamped to [lo, hi]. It
// needs at least one node of positive weight and at most
// MaxPosteriorNodes nodes in all.
func newPostLaw(w []float64, node func(k int) (m, s float64), q nodeQuality, lo, hi float64, name, unit string, scale float64) PosteriorLaw {
	nAll, n := len(w), 0
	for _, wk := range w {
		if wk > 0 {
			n++
		}
	}
	// One buffer: the sorted m, s, w and 1/(s·√2) (4n), then below and
	// above (2n+2).
	// Until they are filled, the latter's place holds each node's centre
	// and standard deviation by the node's index (2·nAll; hence the
	// buffer's length 3n + max(2n+2, 2·nAll)).
	buf := make([]float64, 4*n+max(2*n+2, 2*nAll))
	tm, ts := buf[4*n:4*n+nAll], buf[4*n+nAll:4*n+2*nAll]
	// Sort 8-byte keys: the value's order-preserving bits with the low 16
	// replaced by the node's index (at most MaxPosteriorNodes = 2^16
	// nodes), then one insertion pass restores the exact order (value,
	// then index) among values that agree in their top 48 bits.
	// The keys and the sort's room on the stack for the usual sizes, in
	// arrays as small as n allows (an array is zeroed where it is
	// declared, whatever n).
	var keys, tmp []uint64
	switch {
	case n <= DefaultPosteriorNodes:
		var keyBuf, keyTmp [DefaultPosteriorNodes]uint64
		keys, tmp = keyBuf[:0:n], keyTmp[:n]
	case n <= stackNodes:
		var keyBuf, keyTmp [stackNodes]uint64
		keys, tmp = keyBuf[:0:n], keyTmp[:n]
	default:
		keys, tmp = make([]uint64, 0, n), make([]uint64, n)
	}
	tot := 0.0
	for k, wk := range w {
		if wk > 0 {
			tm[k], ts[k] = node(k)
			keys = append(keys, orderBits(tm[k])&^0xffff|uint64(k))
			tot += wk
		}
	}
	sortKeys(keys, tmp)
	less := func(x, y uint64) bool {
		mx, my := tm[x&0xffff], tm[y&0xffff]
		return mx < my || (mx == my && x&0xffff < y&0xffff)
	}
	for i := 1; i < len(keys); i++ {
		for j := i; j > 0 && less(keys[j], keys[j-1]); j-- {
			keys[j], keys[j-1] = keys[j-1], keys[j]
		}
	}
	// The law and its parities in one allocation for up to
	// DefaultPosteriorNodes nodes.
	var p *postLaw
	if n <= DefaultPosteriorNodes {
		ph := new(postLawHalf)
		p = &ph.postLaw
		p.half = ph.half[:n:n]
	} else {
		p = &postLaw{half: make([]uint8, n)}
	}
	p.m, p.s, p.w, p.is = buf[:n:n], buf[n:2*n:2*n], buf[2*n:3*n:3*n], buf[3*n:4*n:4*n]
	p.below, p.above = buf[4*n:5*n+1:5*n+1], buf[5*n+1:6*n+2:6*n+2]
	p.q, p.lo, p.hi, p.name, p.unit, p.scale = q, lo, hi, name, unit, scale
	for i, kk := range keys {
		k := int(kk & 0xffff)
		p.m[i], p.s[i], p.w[i], p.half[i] = tm[k], ts[k], w[k]/tot, uint8(k%2)
		if is := 1 / ts[k]; ts[k] > 0 && is <= math.MaxFloat64 {
			p.is[i] = is
		} else {
			p.s[i] = 0 // a kernel narrower than 1/MaxFloat64 is a point
		}
		if p.s[i] > p.smax {
			p.smax = p.s[i]
		}
	}
	// below and above overwrite the centres by index from here on.
	p.below[0], p.above[n] = 0, 0
	for i := range n {
		p.below[i+1] = p.below[i] + p.w[i]
	}
	for i := n - 1; i >= 0; i-- {
		p.above[i] = p.above[i+1] + p.w[i]
	}
	// Support: the clamp's ends where kernels reach them, else the nodes'
	// (the extreme centres: m is sorted).
	p.sLo, p.sHi = p.m[0], p.m[n-1]
	if p.smax > 0 {
		p.sLo, p.sHi = math.Inf(-1), math.Inf(1)
	}
	p.sLo = min(max(p.sLo, lo), hi)
	p.sHi = max(min(p.sHi, hi), lo)
	return PosteriorLaw{p: p}
}

// stackNodes is the largest node count whose scratch (sort keys, log
// weights) lives on the goroutine's stack instead of the heap: the
// default point set and its importance stages (stageFactor·256 = 1024).
// Go zeroes a stack array where it is declared, so each use declares one
// of DefaultPosteriorNodes slots where that holds its size and one of
// stackNodes only otherwise.
const stackNodes = 1024

// sortKeys sorts keys built as newPostLaw builds them (the value's top
// 48 bits, the node's index in the low 16, appended in index order)
// ascending, with tmp (at least as long) as room. Below 64 keys,
// slices.Sort. Otherwise a stable least-significant-digit radix sort, 8
// bits a pass, that skips a pass whose digit is the same for every key
// (the values' common sign and exponent bits), first of the top 32 bits
// only, or of the top 24 where the keys differ in one of their top four
// bits (values of both signs, or exponents that differ in one of their
// top three bits: the 24 hold 12 bits of the mantissa, and each pass
// saved costs about as much as the insertion pass below); then an insertion pass on
// the whole keys puts in order the keys that share the sorted bits
// (values within about 1e-6, or 2.4e-4 with the top 24 bits, of each
// other: few, and those equal in value already in the index's order),
// unless it would move keys more than 4n times, when the radix sort runs
// again on all 64 bits. Either way the keys end in ascending order
// (TestSortKeys).
func sortKeys(keys, tmp []uint64) {
	n := len(keys)
	if n < 64 {
		slices.Sort(keys)
		return
	}
	or, and := uint64(0), ^uint64(0)
	for _, k := range keys {
		or |= k
		and &= k
	}
	diff := or ^ and // the bits that differ between keys
	shift := uint(32)
	if bits.LeadingZeros64(diff) <= 3 {
		shift = 40
	}
	radixKeys(keys, tmp, shift, diff)
	budget := 4 * n
	for i := 1; i < n && budget >= 0; i++ {
		for j := i; j > 0 && keys[j] < keys[j-1]; j-- {
			keys[j], keys[j-1] = keys[j-1], keys[j]
			budget--
		}
	}
	if budget < 0 {
		radixKeys(keys, tmp, 0, diff)
	}
}

// radixKeys sorts keys by their bits from shift up (a multiple of 8)
// with tmp as room: a stable least-significant-digit radix sort, 8 bits a
// pass, skipping a pass whose digit is the same for every key (diff: the
// bits that differ between keys).
func radixKeys(keys, tmp []uint64, shift uint, diff uint64) {
	n := len(keys)
	src, dst := keys, tmp[:n]
	for ; shift < 64; shift += 8 {
		if (diff>>shift)&0xff == 0 {
			continue
		}
		var count [256]int
		for _, k := range src {
			count[(k>>shift)&0xff]++
		}
		sum := 0
		for i, c := range count {
			count[i] = sum
			sum += c
		}
		for _, k := range src {
			d := (k >> shift) & 0xff
			dst[count[d]] = k
			count[d]++
		}
		src, dst = dst, src
	}
	if &src[0] != &keys[0] {
		copy(keys, src)
	}
}

// orderBits returns bits of x whose unsigned order is x's order (−0 below
// +0; x not NaN).
func orderBits(x float64) uint64 {
	b := math.Float64bits(x)
	if b>>63 != 0 {
		return ^b
	}
	return b | 1<<63
}

// window returns the nodes [i, j) whose kernels reach x.
func (p *postLaw) window(x float64) (i, j int) {
	r := kernelReach * p.smax
	return searchFloats(p.m, x-r, false), searchFloats(p.m, x+r, true)
}

// searchFloats returns the first index i of the ascending xs with xs[i] >=
// x (xs[i] > x when strict), len(xs) for none: sort.SearchFloat64s's
// bisection without a call per step.
func searchFloats(xs []float64, x float64, strict bool) int {
	i, j := 0, len(xs)
	for i < j {
		h := int(uint(i+j) >> 1)
		if xs[h] < x || (strict && xs[h] == x) {
			i = h + 1
		} else {
			j = h
		}
	}
	return i
}

// rawCDF is P(X <= x) for the unclamped mixture (cdfDens's).
func (p *postLaw) rawCDF(x float64) float64 {
	c, _, _ := p.cdfDens(x)
	return c
}

// cdfDens returns P(X <= x) for the unclamped mixture, its density at x
// (1/s) and the density's slope (1/s²), from one exponential a kernel. Each kernel within kernelReach
// of its own standard deviations (the window is that of the widest) adds
// w·Φ̄(z), z = (m − x)/s: φ(z)·R(|z|) with Mills' ratio R (internal/mills)
// where |z| >= mills.SmallX (1 − φ(z)·R(−z) for z < 0), erfc(z/√2)/2
// nearer 0; within mills.UpperMaxRelErr of Φ̄ (relative) at |z| < 9 and
// 5e-15 beyond, where φ's exponent rounds (the sum's absolute error is
// below 1e-14).
func (p *postLaw) cdfDens(x float64) (c, dens, slope float64) {
	i, j := p.window(x)
	c = p.below[i]
	for k := i; k < j; k++ {
		if p.s[k] == 0 {
			if p.m[k] <= x {
				c += p.w[k]
			}
			continue
		}
		switch z := (p.m[k] - x) * p.is[k]; {
		case z < -kernelReach:
			c += p.w[k]
		case z <= kernelReach:
			phi := math.Exp(-0.5*z*z) * invSqrt2Pi
			wd := p.w[k] * phi * p.is[k]
			dens += wd
			slope += wd * z * p.is[k]
			var up float64
			switch a := math.Abs(z); {
			case a < mills.SmallX:
				up = 0.5 * math.Erfc(z/math.Sqrt2)
			case z < 0:
				up = 1 - phi*mills.Ratio(a)
			default:
				up = phi * mills.Ratio(a)
			}
			c += p.w[k] * up
		}
	}
	return min(1, c), dens, slope
}

// invSqrt2Pi is 1/√(2π), the standard normal density at 0.
const invSqrt2Pi = 0.3989422804014327

// rawSurv is P(X > x) for the unclamped mixture, summed directly.
func (p *postLaw) rawSurv(x float64) float64 {
	i, j := p.window(x)
	c := p.above[j]
	for k := i; k < j; k++ {
		if p.s[k] == 0 {
			if p.m[k] > x {
				c += p.w[k]
			}
			continue
		}
		switch z := (x - p.m[k]) * p.is[k]; {
		case z < -kernelReach:
			c += p.w[k]
		case z <= kernelReach:
			c += p.w[k] * normSurv(z)
		}
	}
	return min(1, c)
}

// CDF returns P(Y <= x); NaN for NaN x.
func (l PosteriorLaw) CDF(x float64) float64 {
	p := l.p
	switch {
	case p == nil || math.IsNaN(x):
		return math.NaN()
	case x < p.lo || x < p.sLo:
		return 0
	case x >= p.hi || x >= p.sHi:
		return 1
	}
	return p.rawCDF(x)
}

// Survival returns P(Y > x), summed directly; NaN for NaN x.
func (l PosteriorLaw) Survival(x float64) float64 {
	p := l.p
	switch {
	case p == nil || math.IsNaN(x):
		return math.NaN()
	case x < p.lo || x < p.sLo:
		return 1
	case x >= p.hi || x >= p.sHi:
		return 0
	}
	return p.rawSurv(x)
}

// Quantile returns inf{x : CDF(x) >= prob}, to a relative 1e-10 of the
// support's scale (see root); NaN outside [0, 1].
func (l PosteriorLaw) Quantile(prob float64) float64 {
	p := l.p
	switch {
	case p == nil || !(prob >= 0 && prob <= 1):
		return math.NaN()
	case prob == 0:
		return p.sLo
	case prob == 1:
		return p.sHi
	}
	// (a level the low end's atom reaches gives the low end: root)
	k := sort.Search(len(p.m), func(k int) bool { return p.below[k+1] >= prob })
	k = min(k, len(p.m)-1)
	if x, ok := p.newtonQuantile(k, prob); ok {
		return x
	}
	return p.root(k, func(x float64) float64 { return l.CDF(x) - prob })
}

// newtonQuantile returns inf{x : CDF(x) >= prob} by Halley's steps on the
// CDF with the mixture's density and its slope (cdfDens: Newton's step
// s = −g/g′ divided by 1 + s·g″/(2g′), cubic convergence; Newton's own
// where that divisor is below 1/2), from node k (the node where the
// cumulative weight reaches prob). Where the kernels near node k overlap
// their neighbours, the first point is where the nodes' mid-rank CDF
// (below[i] + w_i/2 at m_i, linear between the centres) reaches prob;
// where they are apart (narrower than the centres' spacing: the CDF
// climbs by w_k within node k's own kernel), it is where that kernel
// alone takes the CDF from below[k] to prob, m_k + s_k·Φ⁻¹((prob −
// below[k])/w_k) (dist's normal quantile). The steps stop when one is at
// most tol/4 (tol = 1e-10 of the larger of |x| and smax/2, root's
// resolution), and one more evaluation, tol·3/4 from the last point on
// the answer's other side, confirms a bracket at most tol wide whose
// right end is returned (root's contract). ok is false, and Quantile uses
// root, where node k is a point, kernels apart cannot reach the level
// from node k's alone, a step leaves the bracket the signs have set or
// the interior of the support, the density vanishes, six steps do not
// converge or the confirming value has the wrong sign.
func (p *postLaw) newtonQuantile(k int, prob float64) (float64, bool) {
	n := len(p.m)
	if p.s[k] == 0 || n < 2 {
		return 0, false
	}
	lo, hi := max(p.lo, p.sLo), min(p.hi, p.sHi)
	var x float64
	// local spacing of the centres around k against the kernel's width
	kl, kh := max(k-1, 0), min(k+1, n-1)
	if (p.m[kh]-p.m[kl])/float64(kh-kl) > p.s[k] {
		// kernels apart: the seed is where node k's own kernel takes the
		// CDF from below[k] to the level
		r := (prob - p.below[k]) / p.w[k]
		if !(r > 0 && r < 1) {
			return 0, false
		}
		x = p.m[k] + p.s[k]*dist.MustNormal(0, 1).Quantile(r)
	} else {
		// the seed: the mid-rank CDF F̃_i = below[i] + w_i/2, linear in x
		// between the centres around the level
		mid := func(i int) float64 { return p.below[i] + 0.5*p.w[i] }
		i := k
		if prob < mid(k) && k > 0 {
			i = k - 1
		}
		x = p.m[i]
		if i+1 < n {
			f0, f1 := mid(i), mid(i+1)
			t := min(1, max(0, (prob-f0)/(f1-f0)))
			x = p.m[i] + t*(p.m[i+1]-p.m[i])
		}
	}
	a, b := lo, hi // g < 0 at a, g >= 0 at b (the ends themselves not evaluated)
	for range 6 {
		if !(x > a && x < b) {
			return 0, false
		}
		tol := 1e-10 * max(math.Abs(x), 0.5*p.smax)
		c, dens, slope := p.cdfDens(x)
		g := c - prob
		if g >= 0 {
			b = x
		} else {
			a = x
		}
		if !(dens > 0) {
			return 0, false
		}
		step := -g / dens
		if dv := 1 + step*slope/(2*dens); dv >= 0.5 {
			step /= dv
		}
		if math.Abs(step) <= tol/4 {
			if g >= 0 {
				if y := x - 0.75*tol; y > lo && p.rawCDF(y) < prob {
					return x, true
				}
				return 0, false
			}
			if y := x + 0.75*tol; y < hi && p.rawCDF(y) >= prob {
				return y, true
			}
			return 0, false
		}
		x += step
	}
	return 0, false
}

// UpperQuantile returns inf{x : Survival(x) <= q}, from the survival
// itself (accurate for small q); NaN outside [0, 1].
func (l PosteriorLaw) UpperQuantile(q float64) float64 {
	p := l.p
	switch {
	case p == nil || !(q >= 0 && q <= 1):
		return math.NaN()
	case q == 1:
		return p.sLo
	case q == 0:
		return p.sHi
	}
	// the low end where its atom leaves at most q above it (root); else
	// the node where the mass above falls to q
	k := sort.Search(len(p.m), func(k int) bool { return p.above[k+1] <= q })
	k = min(k, len(p.m)-1)
	return p.root(k, func(x float64) float64 { return q - l.Survival(x) })
}

// root finds the smallest x with g(x) >= 0 (g non-decreasing), to a
// relative 1e-10 of the bracket's scale, starting from a bracket around
// node k (±rootNear·smax, widened to ±(kernelReach+2)·smax and then to
// the support's end on a side whose sign is wrong): the library's one
// root finder (internal/root: regula falsi with the Illinois
// modification, Dowell and Jarratt, BIT 11 (1971) 168–174, with a
// bisection step whenever the bracket has not halved in three steps, so
// that a step-shaped g (point nodes) still halves the bracket at least
// every fourth step). A g(x) >= 0 at the support's low end gives that end.
func (p *postLaw) root(k int, g func(float64) float64) float64 {
	r := (kernelReach + 2) * p.smax
	a := max(p.sLo, p.m[k]-rootNear*p.smax)
	ga := g(a)
	for _, lo := range [2]float64{max(p.sLo, p.m[k]-r), p.sLo} {
		if ga < 0 || a <= p.sLo {
			break
		}
		if lo < a {
			a = lo
			ga = g(a)
		}
	}
	if ga >= 0 {
		return a
	}
	b := min(p.sHi, p.m[k]+rootNear*p.smax)
	gb := g(b)
	for _, hi := range [2]float64{min(p.sHi, p.m[k]+r), p.sHi} {
		if gb >= 0 || b >= p.sHi {
			break
		}
		if hi > b {
			b = hi
			gb = g(b)
		}
	}
	scale := max(math.Abs(a), math.Abs(b))
	if math.IsInf(b, 1) {
		b = p.m[len(p.m)-1] + r + 1
		for i := 0; i < 2100; i++ {
			if gb = g(b); gb >= 0 {
				break
			}
			b = 2*b + 1
		}
		scale = math.Abs(b)
	}
	return root.Illinois(g, a, b, ga, gb, 1e-10*scale)
}

// posPart returns E[(X − c)⁺] for X ~ N(m, s²).
func posPart(m, s, c float64) float64 {
	if s == 0 {
		return max(m-c, 0)
	}
	z := (m - c) / s
	return (m-c)*normSurv(-z) + s*normPDF(z)
}

// sqAbove returns E[X²·1{X > c}] for X ~ N(m, s²).
func sqAbove(m, s, c float64) float64 {
	if s == 0 {
		if m > c {
			return m * m
		}
		return 0
	}
	if math.IsInf(c, 1) {
		return 0
	}
	if math.IsInf(c, -1) {
		return m*m + s*s
	}
	al := (c - m) / s
	return (m*m+s*s)*normSurv(al) + s*(m+c)*normPDF(al)
}

// moments returns the mean and variance of Y, computed about the nodes'
// weighted centre.
func (p *postLaw) moments() (mean, variance float64) {
	c0 := 0.0
	for k := range p.m {
		c0 += p.w[k] * p.m[k]
	}
	lo, hi := p.lo-c0, p.hi-c0
	e1, e2 := 0.0, 0.0
	for k := range p.m {
		m, s := p.m[k]-c0, p.s[k]
		// E[clamp] = lo + E[(X−lo)⁺] − E[(X−hi)⁺] (terms at infinite ends vanish)
		y := 0.0
		if math.IsInf(lo, -1) {
			y = m
		} else {
			y = lo + posPart(m, s, lo)
		}
		if !math.IsInf(hi, 1) {
			y -= posPart(m, s, hi)
		}
		// E[clamp²] = lo²·P(X <= lo) + E[X²·1{lo < X <= hi}] + hi²·P(X > hi)
		q := sqAbove(m, s, lo) - sqAbove(m, s, hi)
		if !math.IsInf(lo, -1) {
			pl := 0.0
			if s == 0 {
				if m <= lo {
					pl = 1
				}
			} else {
				pl = normSurv((m - lo) / s)
			}
			q += lo * lo * pl
		}
		if !math.IsInf(hi, 1) {
			ph := 0.0
			if s == 0 {
				if m > hi {
					ph = 1
				}
			} else {
				ph = normSurv((hi - m) / s)
			}
			q += hi * hi * ph
		}
		e1 += p.w[k] * y
		e2 += p.w[k] * q
	}
	return c0 + e1, max(0, e2-e1*e1)
}

// Mean returns E[Y] in closed form over the kernels.
func (l PosteriorLaw) Mean() float64 {
	if l.p == nil {
		return math.NaN()
	}
	m, _ := l.p.moments()
	return m
}

// Variance returns Var[Y] in closed form over the kernels.
func (l PosteriorLaw) Variance() float64 {
	if l.p == nil {
		return math.NaN()
	}
	_, v := l.p.moments()
	return v
}

// Support returns the interval the law lives on: [lo, hi] where kernels
// reach the clamp's ends, the extreme point nodes otherwise.
func (l PosteriorLaw) Support() (lo, hi float64) {
	if l.p == nil {
		return math.NaN(), math.NaN()
	}
	return l.p.sLo, l.p.sHi
}

// Atoms returns the point masses: the nodes without kernel (merged where
// equal) and the clamp's ends where mass is pushed onto them.
func (l PosteriorLaw) Atoms() []dist.Atom {
	p := l.p
	if p == nil {
		return nil
	}
	var out []dist.Atom
	add := func(v, w float64) {
		if w <= 0 {
			return
		}
		if n := len(out); n > 0 && out[n-1].Value == v {
			out[n-1].Mass += w
			return
		}
		out = append(out, dist.Atom{Value: v, Mass: w})
	}
	if !math.IsInf(p.lo, -1) {
		add(p.lo, p.rawCDF(p.lo))
	}
	for k := range p.m {
		if p.s[k] == 0 && p.m[k] > p.lo && p.m[k] < p.hi {
			add(p.m[k], p.w[k])
		}
	}
	if !math.IsInf(p.hi, 1) {
		add(p.hi, p.rawSurv(p.hi)+atMass(p, p.hi))
	}
	return out
}

// atMass is the mass of point nodes exactly at x.
func atMass(p *postLaw, x float64) float64 {
	s := 0.0
	for k := range p.m {
		if p.s[k] == 0 && p.m[k] == x {
			s += p.w[k]
		}
	}
	return s
}

// Rand draws a node by its weight, then a value from its kernel, clamped.
func (l PosteriorLaw) Rand(r *rand.Rand) float64 {
	p := l.p
	if p == nil {
		return math.NaN()
	}
	u := r.Float64()
	k := sort.Search(len(p.m), func(k int) bool { return p.below[k+1] > u })
	k = min(k, len(p.m)-1)
	x := p.m[k]
	if p.s[k] > 0 {
		x += p.s[k] * r.NormFloat64()
	}
	return min(p.hi, max(p.lo, x))
}

// Nodes returns the number of nodes with weight.
func (l PosteriorLaw) Nodes() int {
	if l.p == nil {
		return 0
	}
	return len(l.p.m)
}

// Accuracy returns the stated error (see PosteriorLaw), computed on first
// use.
func (l PosteriorLaw) Accuracy() dist.Accuracy {
	p := l.p
	if p == nil {
		return dist.Accuracy{CDFAbs: math.NaN(), SurvivalRel: math.NaN(), TailFloor: math.NaN()}
	}
	p.once.Do(func() {
		worst, se := 0.0, 0.0
		hs := make([]float64, len(p.m))
		for _, q := range []float64{0.05, 0.5, 0.95} {
			x := l.Quantile(q)
			var c, w [2]float64
			for k := range p.m {
				h := p.half[k]
				w[h] += p.w[k]
				v := 0.0
				switch {
				case p.s[k] == 0:
					if p.m[k] <= x {
						v = 1
					}
				default:
					v = normSurv((p.m[k] - x) / p.s[k])
				}
				hs[k] = v
				c[h] += p.w[k] * v
			}
			if w[0] > 0 && w[1] > 0 {
				worst = max(worst, math.Abs(c[0]/w[0]-c[1]/w[1]))
			} else {
				worst = 1 // one half carries no weight: the nodes cannot tell
			}
			// The self-normalised importance estimate's standard error
			// (delta method): √(Σ w_k²·(h_k − F)²), h_k the node's CDF at x.
			f := c[0] + c[1]
			v := 0.0
			for k, wk := range p.w {
				d := wk * (hs[k] - f)
				v += d * d
			}
			se = max(se, math.Sqrt(v))
		}
		e := min(1, max(1.5*worst, p.q.kappa*se)+1/float64(len(p.m))+1e-23)
		if p.q.unresolved {
			e = 1
		}
		// The error is absolute: relative to a survival S it is e/S, so
		// the relative bound is stated down to 1e-12 only.
		p.acc = dist.Accuracy{CDFAbs: e, TailFloor: 1e-12, SurvivalRel: e / 1e-12,
			Method: "mixture over a low-discrepancy point set of the per-node factors, weighted by the readings' likelihood; error from its two interleaved halves"}
	})
	return p.acc
}

// String summarises the law: its name, median and 5–95 % range in its
// unit.
func (l PosteriorLaw) String() string {
	p := l.p
	if p == nil {
		return "PosteriorLaw(invalid)"
	}
	return fmt.Sprintf("%s(median %.4g %s, 5–95%% [%.4g, %.4g] %s, %d nodes)", p.name,
		l.Quantile(0.5)/p.scale, p.unit, l.Quantile(0.05)/p.scale, l.Quantile(0.95)/p.scale, p.unit, len(p.m))
}
