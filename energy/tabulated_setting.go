package energy

import (
	"math"
	"sort"

	"github.com/joulelaw/joulelaw/dist"
)

// A setting's own table. With a per-node spread the node model gives, at
// any time, the probit z of the setting's law and its gradient against
// the calendar model's three clocks (node.settingProbit): t, the
// self-discharge clock D(t) and the floor clock Φ(t). The clocks run at
// rates that change at month boundaries, so z(t) has a kink at every one
// of them, but z is smooth in the clocks themselves. Between two knots a
// and b (h = b − a) the table therefore reads
//
//	ẑ(x) = H(x) + Ĝ(x)·(c(x) − c(a) − (x − a)·(c(b) − c(a))/h),
//
// with H the cubic Hermite interpolant of z along the chord from c(a) to
// c(b) (end slopes: the gradients times the chord's rates), Ĝ the gradient
// interpolated linearly between a and b and c(x) the clocks: the first
// term is smooth, the second puts each month boundary's kink where it is,
// to first order in the clocks' departure from the chord. ẑ is a cubic
// between consecutive month boundaries, stored as such. The knots are
// refined by bisection until the interpolant's value at each midpoint is
// within the tolerance of the model's, as for the plain tables: a setting
// needs about a knot per few months instead of a few points per month.

// gradKnot is the node model at one time: the clocks, the probit and its
// gradient against the clocks.
type gradKnot struct {
	t float64
	c [3]float64
	z float64
	g [3]float64
}

// gradKnotAt evaluates setting j of n at t, by the tables' floor rule
// (tabGLNodes).
func (n *node) gradKnotAt(j int, t float64) gradKnot {
	c := n.clocks(t)
	z, g, _, _ := n.settingProbitAt(j, c, true)
	return gradKnot{t: t, c: c, z: z, g: g}
}

// slope returns dz/dt at the knot, right (or left) of its time.
func (n *node) slope(k gradKnot, right bool) float64 {
	r := n.clockRates(k.t, right)
	return k.g[0]*r[0] + k.g[1]*r[1] + k.g[2]*r[2]
}

// gradInterp returns the interpolant between the knots a and b at x in
// [a.t, b.t] and its derivative right (or left) of x.
func (n *node) gradInterp(a, b *gradKnot, x float64, right bool) (z, dz float64) {
	z, dl, dr := n.gradInterpSides(a, b, x, !right, right)
	if right {
		return z, dr
	}
	return z, dl
}

// gradInterpSides is gradInterp with the derivative on the sides asked
// for (left, right; 0 for a side not asked), the same bits as gradInterp
// on each: the table's store reads both sides at a month boundary, where
// only the clocks' rates differ.
func (n *node) gradInterpSides(a, b *gradKnot, x float64, left, right bool) (z, dl, dr float64) {
	sp := newGradSpan(a, b)
	return n.spanSides(&sp, x, left, right)
}

// gradSpan is what the interpolant between the knots a and b reads of
// them apart from the time x (gradInterpSides): computed once for the
// table's store, which reads the interval at each month boundary in it.
type gradSpan struct {
	a, b   *gradKnot
	h      float64    // b.t − a.t
	u      [3]float64 // the chord's clock rates
	sa, sb float64    // the end slopes along the chord
	dg, rg [3]float64 // the gradient's change b.g − a.g, and over h
}

// newGradSpan returns the interval between a and b's gradSpan.
func newGradSpan(a, b *gradKnot) gradSpan {
	sp := gradSpan{a: a, b: b, h: b.t - a.t}
	for i := range sp.u {
		sp.u[i] = (b.c[i] - a.c[i]) / sp.h
	}
	sp.sa = a.g[0]*sp.u[0] + a.g[1]*sp.u[1] + a.g[2]*sp.u[2]
	sp.sb = b.g[0]*sp.u[0] + b.g[1]*sp.u[1] + b.g[2]*sp.u[2]
	for i := 1; i < 3; i++ {
		sp.dg[i] = b.g[i] - a.g[i]
		sp.rg[i] = sp.dg[i] / sp.h
	}
	return sp
}

// spanSides is gradInterpSides on sp's interval, the same bits.
func (n *node) spanSides(sp *gradSpan, x float64, left, right bool) (z, dl, dr float64) {
	a, b := sp.a, sp.b
	s := (x - a.t) / sp.h
	z, dz := hermiteD(a.t, b.t, a.z, b.z, sp.sa, sp.sb, x)
	c := n.clocks(x)
	var rl, rr [3]float64
	if left {
		rl = n.clockRates(x, false)
	}
	if right {
		rr = n.clockRates(x, true)
	}
	dl, dr = dz, dz
	for i := 1; i < 3; i++ {
		dev := c[i] - a.c[i] - (x-a.t)*sp.u[i]
		gi := a.g[i] + s*sp.dg[i]
		z += gi * dev
		dl += sp.rg[i]*dev + gi*(rl[i]-sp.u[i])
		dr += sp.rg[i]*dev + gi*(rr[i]-sp.u[i])
	}
	if !left {
		dl = 0
	}
	if !right {
		dr = 0
	}
	return z, dl, dr
}

// gradAt returns the gradient against the clocks of a table built by
// clockGrid at t: linear between its knots (the Ĝ of gradInterp, with
// which the table reads), the end knot's beyond its ends; hint is the
// knot interval last read (gk[*hint−1].t < t <= gk[*hint].t), as in
// zAtNear.
func (pt *probitTable) gradAt(t float64, hint *int) [3]float64 {
	ks := pt.gk
	n := len(ks)
	i := *hint
	if !(i > 0 && i < n && ks[i-1].t < t && t <= ks[i].t) {
		i = sort.Search(n, func(q int) bool { return ks[q].t >= t })
		*hint = i
	}
	switch {
	case i == 0:
		return ks[0].g
	case i >= n:
		return ks[n-1].g
	}
	a, b := &ks[i-1], &ks[i]
	s := (t - a.t) / (b.t - a.t)
	var g [3]float64
	for q := range g {
		g[q] = a.g[q] + s*(b.g[q]-a.g[q])
	}
	return g
}

// hermiteD is hermite with its derivative at x.
func hermiteD(t0, t1, z0, z1, d0, d1, x float64) (z, dz float64) {
	h := t1 - t0
	s := (x - t0) / h
	z = hermiteAt(h, s, z0, z1, d0, d1)
	// d/dx of the basis: h00' = 6s(s−1)/h, h10' = (1−4s+3s²), h01' = −h00',
	// h11' = (3s² − 2s).
	dz = 6*s*(s-1)/h*(z0-z1) + (1-4*s+3*s*s)*d0 + (3*s*s-2*s)*d1
	return z, dz
}

// settingTable tabulates setting j of l's node on its own, from where its
// law is tail to where it is 1 − tail or the calendar limit: the table,
// and false when the law is below tail up to the calendar limit (no table
// needed).
func settingTable(l NodeLifetime, j int, tol, tail float64) (probitTable, bool) {
	pt, ok, _ := settingTableWith(&tableScratch{}, l, j, tol, tail, nil, nil, nil)
	return pt, ok
}

// settingEnds is what settingTableWith found of a setting it did not
// tabulate because drop said so (left; the zero value for a setting
// tabulated): the knots at its ends (the lower where its law is about
// tail, the upper at the calendar limit) and the model's evaluations that
// found them.
type settingEnds struct {
	lo, hi gradKnot
	evals  int
	left   bool
}

// settingTableWith is settingTable, with the model at the calendar limit
// given (cal, when not nil: the same knot, not evaluated again) and a
// plan, which sees the table's ends before its knots are placed: where
// the table would end at the calendar limit and it says drop, no table
// is built (ends holds what was found; the table is empty and ok true);
// otherwise its loose, when not nil, gives each interval's factor on the
// tolerance (gradGrid; see tabLooseMax), and a table whose whole span
// gets a factor above 1 starts from tabLooseInitial knots. sc is the
// build's working memory.
func settingTableWith(sc *tableScratch, l NodeLifetime, j int, tol, tail float64, cal0 *gradKnot, memo *endMemo, plan func(lo, hi gradKnot) (drop bool, loose func(a, b *gradKnot) float64)) (pt probitTable, ok bool, ends settingEnds) {
	n := l.n
	std := dist.MustNormal(0, 1)
	zLo, zHi := std.Quantile(tail), std.UpperQuantile(tail)
	guess := n.settingLife(j)
	if !(guess > 0) || math.IsInf(guess, 0) {
		guess = Year
	}
	cal := !math.IsInf(n.calendar, 1)
	if cal {
		guess = min(guess, n.calendar)
	}
	if n.settings[j].sums != nil {
		// No per-node spread: the exact k-fold law, which moves in steps of
		// a period, tabulated by its values alone, refined no finer than
		// two periods.
		probit := func(t float64) float64 {
			a, d, _ := n.settingAt(j, t)
			return probitOf(a, d)
		}
		f := func(t float64) (float64, float64) { return probit(t), math.NaN() }
		var hi, zh float64
		if cal {
			if zc := probit(n.calendar); zc <= zLo {
				return probitTable{}, false, settingEnds{}
			} else if zc <= zHi {
				hi, zh = n.calendar, zc
			}
		}
		lo, zl := probitEnd(f, guess, zLo, tabEndSlack, false)
		if hi == 0 {
			hi, zh = probitEnd(f, max(guess, lo), zHi, tabEndSlack, true)
		}
		if !(lo < hi) {
			lo = max(0, hi*(1-1e-9))
			zl = probit(lo)
		}
		return probitGrid(probit, lo, hi, zl, zh, n.kinks(lo, hi), 2/n.settings[j].rate, tol), true, settingEnds{}
	}
	// The ends' searches remember every knot they evaluate: a time asked
	// again (the calendar limit, where the lower search may start; the
	// upper search's start, where the lower one began) is the same knot,
	// not evaluated twice. Their steps take the probit's slope at the
	// clocks' yearly mean rates (the gradient times (1, D(Year)/Year,
	// Φ(Year)/Year)) rather than the month's: a step spans months to
	// years, over which the seasons' rates average out.
	sc.seen = sc.seen[:0]
	if cal0 != nil {
		sc.seen = append(sc.seen, *cal0)
	}
	evaluated := 0 // the knots seen that were evaluated here
	at := func(t float64) gradKnot {
		for _, k := range sc.seen {
			if k.t == t {
				return k
			}
		}
		k := n.gradKnotAt(j, t)
		sc.seen = append(sc.seen, k)
		evaluated++
		return k
	}
	mean := [3]float64{1, n.months.sdCum[12] / Year, n.months.floorCum[12] / Year}
	f := func(t float64) (float64, float64) {
		k := at(t)
		return k.z, k.g[0]*mean[0] + k.g[1]*mean[1] + k.g[2]*mean[2]
	}
	var hiK gradKnot
	from := 0 // the lower end's search from guess (0) or the calendar limit (1)
	if cal {
		k := at(n.calendar)
		if k.z <= zLo {
			return probitTable{}, false, settingEnds{}
		} else if k.z <= zHi {
			// The table ends at the calendar limit: the lower search
			// starts there, where the law is known already.
			hiK = k
			guess = n.calendar
			from = 1
		}
	}
	zg, _ := f(guess)
	lo, zl := probitEndFrom(f, guess, memo.first(0, from, guess, zg, zLo-tabEndSlack/2), zLo, tabEndSlack, false)
	memo.learn(0, from, guess, zg, lo, zl)
	loK := at(lo)
	if hiK.t == 0 {
		start := max(guess, lo)
		zs, _ := f(start)
		hi, zh := probitEndFrom(f, start, memo.first(1, 0, start, zs, zHi+tabEndSlack/2), zHi, tabEndSlack, true)
		memo.learn(1, 0, start, zs, hi, zh)
		hiK = at(hi)
	}
	if !(loK.t < hiK.t) || (hiK.t-loK.t)/Month > maxKinks {
		// Too narrow or too wide for knots between month boundaries.
		probit := func(t float64) float64 {
			a, d, _ := n.settingAt(j, t)
			return probitOf(a, d)
		}
		lo, hi := loK.t, hiK.t
		if !(lo < hi) {
			lo = max(0, hi*(1-1e-9))
		}
		return probitGrid(probit, lo, hi, probit(lo), probit(hi), n.kinks(lo, hi), 0, tol), true, settingEnds{}
	}
	initial := tabSetInitial
	var loose func(a, b *gradKnot) float64
	if plan != nil {
		var drop bool
		drop, loose = plan(loK, hiK)
		if drop {
			return probitTable{}, true, settingEnds{lo: loK, hi: hiK, evals: evaluated, left: true}
		}
		if loose != nil {
			// The ends lent to loose from sc: pointers to loK and hiK
			// would move them to the heap.
			sc.ends = [2]gradKnot{loK, hiK}
			if loose(&sc.ends[0], &sc.ends[1]) > 1 {
				initial = tabLooseInitial
			}
		}
	}
	pt = n.gradGrid(sc, j, loK, hiK, tol, initial, sc.seen, loose)
	pt.evals += evaluated
	return pt, true, settingEnds{}
}

// gradGrid tabulates setting j between the knots lo and hi: tabInitial
// even knots, each interval halved until the interpolant (gradInterp) at
// its midpoint is within tol of the model, then stored as cubics between
// the knots and the month boundaries where the clocks' rates change. A
// knot the ends' searches evaluated already (known) within half a step of
// an even knot's place takes that place (the nearest, in order): the same
// model, one evaluation fewer (the demo's tables 6 % fewer).
//
// The midpoint alone can sit near a zero of the interval's error e(x)
// while e is several times the tolerance elsewhere (the month boundaries'
// second-order terms do not vanish with the interval). The midpoint's
// slope mismatch, free with its gradient, shows it: for e a cubic that
// vanishes at the knots, s(1 − s)·(A + B·(2s − 1)) over the interval's
// fraction s, |e| <= |e(m)| + 0.19·|e'(m)|·(b − a) (e(m) = A/4,
// e'(m)·(b − a) = B/2, |s(1 − s)(2s − 1)| <= √3/18). An interval is
// accepted only where that estimate is within tabSetGuard times tol
// besides: its halves, with the midpoint as a knot, are then within tol
// (TestSettingTablesAgainstDirect measures them against the model). Without
// this guard one of that test's tables erred by 1.0e-3 where 2.2e-4 was
// measured at the midpoints.
//
// That bound is on the part of the error that is smooth in t. Besides it,
// the interpolant follows the clocks' departure δ from the chord to
// first order only: a half keeps (Ĝ − ∇z)·δ − ½·δᵀ·∇²z·δ, and over an
// interval that spans seasons δ is a wave of a year's period, not a
// cubic, which can vanish at the midpoint while it is several tolerances
// on a half (the demo's tables without the next guard: 4 of their 7,694
// intervals above 1.5·tol, the worst 3.3·tol on a half of 1.36 years;
// TestSettingTablesSeasons' settings up to 3.0·tol). The seasonal
// guard (seasonal) estimates that part on each half from the three knots'
// gradients and the clocks at the month boundaries, without evaluating the
// model, and of an interval that passes the checks above, a half is
// accepted only where its estimate is within tabSetSeason times tol (times
// the interval's loose factor) too; the other is checked in its turn. An
// accepted half's error is then its smooth part, about est/16 <= 0.19·tol
// at most (the guard's cubic over half the interval), and its seasonal
// part, which the estimate tracks. Measured against the model at 39 times
// in each half, on the 3,847 intervals of the demo's tables that pass the
// midpoint checks (and the 470 of 36 one-setting laws like the test's):
// where the larger of the halves' estimates is above tol/2, the larger of
// their errors is at most 1.28 times it (0.99); where it is at most tol,
// their errors are at most 0.90·tol (0.89). So a half the guard accepts
// errs by about 1.28·tol at most: within 1.5·tol, the error the tables
// state (settingOut.errZ; 1.5·λ·tol where loose). With the guard, the
// demo's tables' worst interval is 0.90·tol (a loose one in the far
// tail, which the guard does not change; those at tol itself 0.53·tol),
// the test's 0.81·tol. It costs the demo's tables 282 model evaluations
// (9,882 instead of 9,600), the checks of the halves it turns down (454
// where both halves of such an interval were checked).
//
// initial is the first grid's knots (tabSetInitial; tabLooseInitial for a
// loose table).
//
// loose, when not nil, gives an interval's factor on the tolerance (at
// least 1; see tabLooseMax): an interval is accepted where its error is
// within tol times it.
//
// sc is the build's working memory (known may be its seen).
func (n *node) gradGrid(sc *tableScratch, j int, lo, hi gradKnot, tol float64, initial int, known []gradKnot, loose func(a, b *gradKnot) float64) probitTable {
	return n.clockGrid(sc, lo, hi, tol, initial, known, func(t float64) (gradKnot, float64) {
		k := n.gradKnotAt(j, t)
		return k, n.slope(k, true)
	}, loose, false)
}

// tableScratch is the working memory of the tables a law's build makes
// in turn (tabulateWith: its settings' tables, then its mixture's): the
// refinement's buffers (halveUntil), the first grid's knots, the knots
// the ends' searches evaluated (settingTableWith), the month boundaries
// (appendKinks), the memory of the settings' tables built by clockGrid
// (cells, knots) and of their results, which live only while the law is
// built. One owner (a worker, a call) lends it to one build at a time,
// never to two goroutines at once; reset frees it all for the next
// build, and no result refers to it.
type tableScratch struct {
	halve halveBufs[gradKnot]
	first []gradKnot
	seen  []gradKnot
	ends  [2]gradKnot // a table's ends, lent to its loose
	kinks []float64
	cells slab[float64]
	knots slab[gradKnot]

	// The settings' order and their model at the calendar limit
	// (settingTables), their results, as the mixture reads them
	// (tabulateWith), and the interval each last read (its hints); the
	// model at the calendar limit as the law's profile reads it
	// (tabulateWith).
	order    []int
	cals     []gradKnot
	outs     []settingOut
	sets     []mixSet
	hints    []int
	calParts []calPart
}

// reset frees everything sc handed out, for the next build.
func (sc *tableScratch) reset() {
	sc.cells.reset()
	sc.knots.reset()
}

// slab hands out memory from chunks that it keeps: reset makes them all
// free again, so that the memory taken before is handed out anew.
type slab[E any] struct {
	chunks [][]E
	i, off int // the chunk being handed out and its first free element
}

// take returns n elements (their values left from before; length and
// capacity n), from the free chunks in turn, a new chunk (twice the last,
// at least n and 256 elements) where none has the room.
func (s *slab[E]) take(n int) []E {
	for ; s.i < len(s.chunks); s.i, s.off = s.i+1, 0 {
		if c := s.chunks[s.i]; s.off+n <= len(c) {
			s.off += n
			return c[s.off-n : s.off : s.off]
		}
	}
	size := max(n, 256)
	if k := len(s.chunks); k > 0 {
		size = max(size, 2*len(s.chunks[k-1]))
	}
	s.chunks = append(s.chunks, make([]E, size))
	s.off = n
	return s.chunks[s.i][:n:n]
}

// reset makes every chunk free.
func (s *slab[E]) reset() { s.i, s.off = 0, 0 }

// clockGrid is gradGrid's construction for any probit that is smooth in
// the clocks: at returns the knot (the probit and its gradient against
// the clocks) at a time and the probit's exact slope right of it (the
// guard's). loose is gradGrid's (nil for none); the table's worst is then
// the largest error measured on the intervals accepted at tol itself. sc
// is the build's working memory (known may be its seen). A setting's
// table (own false) lives in sc's memory, until its reset, and keeps its
// knots (gk: gradAt reads them); a mixture's (own) has memory of its own
// and no knots (they are not read).
func (n *node) clockGrid(sc *tableScratch, lo, hi gradKnot, tol float64, initial int, known []gradKnot, at func(t float64) (gradKnot, float64), loose func(a, b *gradKnot) float64, own bool) probitTable {
	ks := append(growBuf(sc.first, initial), lo)
	evals := 0
	step := (hi.t - lo.t) / float64(initial-1)
	for i := 1; i < initial-1; i++ {
		x := lo.t + step*float64(i)
		best := -1
		for q := range known {
			k := &known[q]
			if d := math.Abs(k.t - x); d <= step/2 && k.t > ks[len(ks)-1].t && k.t < hi.t && (best < 0 || d < math.Abs(known[best].t-x)) {
				best = q
			}
		}
		if best >= 0 {
			ks = append(ks, known[best])
			continue
		}
		k, _ := at(x)
		ks = append(ks, k)
		evals++
	}
	ks = append(ks, hi)
	sc.first = ks
	finite := func(k *gradKnot) bool { return !math.IsInf(k.z, 0) && !math.IsNaN(k.z) }
	tight := 0.0       // the largest error accepted at tol itself
	var sr seasonRates // the seasonal guard's bounds
	if !own {
		sr = n.seasonRates()
	}
	ks, worst, splits := halveUntil(ks, &sc.halve, tol, nil, func(a, b *gradKnot) bool {
		return b.t-a.t <= 1e-9*b.t || (!finite(a) && a.z == b.z)
	}, func(_ int, a, b *gradKnot) (gradKnot, float64, float64) {
		m, sm := at(a.t + (b.t-a.t)/2)
		if !finite(a) || !finite(b) || !finite(&m) {
			return m, math.Inf(1), math.Inf(1)
		}
		lam := 1.0
		if loose != nil {
			lam = loose(a, b)
		}
		zi, dzi := n.gradInterp(a, b, m.t, true)
		e := math.Abs(zi - m.z)
		if est := e + 0.2*math.Abs(dzi-sm)*(b.t-a.t); est > tabSetGuard*tol*lam {
			return m, est / lam, est / lam // the halves are checked in their turn
		}
		e0, e1 := e/lam, e/lam
		if limit := tabSetSeason * tol * lam; !own && e <= tol*lam {
			// A half whose seasonal estimate is above the limit is
			// checked in its turn (its error here above tol), the other
			// accepted.
			s := n.seasonal(a, &m, b, &sr, limit)
			if s[0] > limit {
				e0 = s[0] / (tabSetSeason * lam)
			}
			if s[1] > limit {
				e1 = s[1] / (tabSetSeason * lam)
			}
		}
		if lam == 1 && e <= tol && (e0 <= tol || e1 <= tol) {
			tight = max(tight, e)
		}
		return m, e0, e1
	})
	if loose != nil {
		worst = tight
	}
	evals += splits
	// Store: points at the knots and the month boundaries between them,
	// the four slices in one piece of memory (at most np points, np − 1
	// pieces); a setting's knots copied out of the refinement's buffers.
	sc.kinks = n.appendKinks(sc.kinks[:0], lo.t, hi.t)
	kinks := sc.kinks
	pt := probitTable{kinks: len(kinks), worst: worst, evals: evals}
	np := len(ks) + len(kinks)
	var cells []float64
	if own {
		cells = make([]float64, 4*np)
	} else {
		cells = sc.cells.take(4 * np)
		pt.gk = sc.knots.take(len(ks))
		copy(pt.gk, ks)
	}
	pt.t = append(cells[:0:np], ks[0].t)
	pt.z = append(cells[np:np:2*np], ks[0].z)
	pt.d0, pt.d1 = cells[2*np:2*np:3*np], cells[3*np:3*np:4*np]
	for i := 0; i+1 < len(ks); i++ {
		a, b := &ks[i], &ks[i+1]
		ok := finite(a) && finite(b)
		d0 := 0.0
		var sp gradSpan // the interval's, read at each month boundary in it
		if ok {
			sp = newGradSpan(a, b)
			_, _, d0 = n.spanSides(&sp, a.t, false, true)
		}
		for len(kinks) > 0 && kinks[0] <= a.t {
			kinks = kinks[1:]
		}
		for {
			x1, z1, d1 := b.t, b.z, 0.0
			last := len(kinks) == 0 || kinks[0] >= b.t
			if !last {
				x1 = kinks[0]
				kinks = kinks[1:]
			}
			dRight := 0.0 // the slope right of a month boundary: the next piece's d0
			if ok {
				var zx float64
				zx, d1, dRight = n.spanSides(&sp, x1, true, !last)
				if !last {
					z1 = zx
				}
			}
			pt.t, pt.z = append(pt.t, x1), append(pt.z, z1)
			pt.d0, pt.d1 = append(pt.d0, d0), append(pt.d1, d1)
			if last {
				break
			}
			if ok {
				d0 = dRight
			}
		}
	}
	return pt
}

// probitEnd returns a time t and its probit z(t) (z increasing in t) with
// z(t) in [target − slack, target] (upper: [target, target + slack]).
// f returns the probit and its slope (NaN if unknown: the secant through
// the last two points is used). Newton steps from guess, kept inside the
// bracket once there is one (bisection otherwise), growing steps before;
// at most 100 evaluations, then the bracket's end on the asked side. Where
// f gives slopes, a step after the first also takes the curvature that
// the previous point shows (z ≈ z_t + d·Δ + c·Δ², c from the previous
// point's probit): the probit of a setting's law is concave over most of
// its range, so that a Newton step overshoots going down and falls short
// going up.
func probitEnd(f func(float64) (float64, float64), guess, target, slack float64, upper bool) (float64, float64) {
	return probitEndFrom(f, guess, math.NaN(), target, slack, upper)
}

// endMemo is what the end searches of a node's settings found, for the
// next setting's (settingTables tabulates them in turn, in one order
// whatever ran before): per search (d[0] the lower end's, from the
// setting's own guess or from the calendar limit; d[1] the upper end's),
// the probit's change per relative change in time from the search's start
// to its end, (z_end − z_start)·t_start/(t_end − t_start); 0 before any.
// A node's settings differ by their radio setting, so that their probits
// differ more in scale than in shape: a step the last search took
// predicts the next search's first (endMemo.first) within the ends' slack
// often enough, one evaluation of the model instead of two or three (the
// demo's end searches 2,926 evaluations instead of 3,468; its settings'
// tables 9,150 instead of 9,600, as fewer of the searches' knots lie
// where a first grid takes them). The prediction moves the search's path
// alone: the end is still where the model's probit is within the slack of
// its level.
type endMemo struct {
	d [2][2]float64
}

// first returns the first step that the search (upper: 1 for the upper
// end; from: 1 for a search from the calendar limit) from t, probit z, to
// aim takes where an earlier one is remembered: t + (aim − z)·t/d; NaN
// otherwise (and for a nil memo).
func (m *endMemo) first(upper, from int, t, z, aim float64) float64 {
	if m == nil || !(m.d[upper][from] > 0) {
		return math.NaN()
	}
	return t + (aim-z)*t/m.d[upper][from]
}

// learn remembers the search from t (probit z) that ended at te (probit
// ze); a nil memo remembers nothing.
func (m *endMemo) learn(upper, from int, t, z, te, ze float64) {
	if d := (ze - z) * t / (te - t); m != nil && d > 0 && !math.IsInf(d, 0) {
		m.d[upper][from] = d
	}
}

// probitEndFrom is probitEnd with its first step after guess at first,
// where that is a time on the side of guess the search heads to, within a
// factor 64 of guess (a prediction: endMemo); NaN for none.
func probitEndFrom(f func(float64) (float64, float64), guess, first, target, slack float64, upper bool) (float64, float64) {
	aim := target - slack/2
	if upper {
		aim = target + slack/2
	}
	good := func(z float64) bool {
		if upper {
			return z >= target && z <= target+slack
		}
		return z <= target && z >= target-slack
	}
	var a, za, b, zb float64
	haveA, haveB := false, false
	t := guess
	z, d := f(t)
	slopes := !math.IsNaN(d)
	pt, pz := math.NaN(), math.NaN()
	step := 0.05
	for range 100 {
		if good(z) {
			return t, z
		}
		if z < aim {
			a, za, haveA = t, z, true
		} else {
			b, zb, haveB = t, z, true
		}
		if haveA && haveB && b-a <= 1e-12*b {
			break
		}
		finite := !math.IsInf(z, 0) && !math.IsNaN(z)
		if !(d > 0) && finite && !math.IsInf(pz, 0) && !math.IsNaN(pz) && pt != t {
			d = (z - pz) / (t - pt)
		}
		nt := math.NaN()
		if finite && d > 0 && !math.IsInf(d, 0) {
			nt = t + (aim-z)/d
			if slopes && !math.IsNaN(pt) && !math.IsInf(pz, 0) && !math.IsNaN(pz) && pt != t {
				// The root of z + d·Δ + c·Δ² = aim nearest Δ = 0 (none where
				// the parabola turns first: the Newton step, kept below).
				c := (pz - z - d*(pt-t)) / ((pt - t) * (pt - t))
				r := aim - z
				if q := d*d + 4*c*r; q >= 0 {
					nt = t + 2*r/(d+math.Sqrt(q))
				}
			}
		}
		switch {
		case haveA && haveB:
			if !(nt > a && nt < b) {
				nt = a + (b-a)/2
				if !math.IsInf(za, 0) && !math.IsInf(zb, 0) && zb > za {
					if s := a + (aim-za)*(b-a)/(zb-za); s > a+0.01*(b-a) && s < b-0.01*(b-a) {
						nt = s
					}
				}
			}
		case haveA:
			if !(nt > t) {
				nt = t * (1 + step)
				step *= 2
			}
			nt = min(nt, 2*t)
		default:
			if !(nt < t) {
				nt = t / (1 + step)
				step *= 2
			}
			nt = max(nt, t/2)
		}
		if !math.IsNaN(first) {
			if (upper && first > t && first < 64*t) || (!upper && first < t && first > t/64) {
				nt = first
			}
			first = math.NaN()
		}
		pt, pz = t, z
		t = nt
		z, d = f(t)
	}
	if upper && haveB {
		return b, zb
	}
	if !upper && haveA {
		return a, za
	}
	return t, z
}

// A setting that runs out before the calendar limit only with a tiny
// chance, next to settings that have run out with a far larger one by the
// time its own law rises from its tail, is left out of the mixture: read
// as lasting to the calendar limit, and its mass counted in the stated
// error. Its lower end's search (where its law is about tabSetTail, tLo)
// and its law at the calendar limit (p = P(run out by it)) are what the
// test reads: its weight w times p at most tabDropAbs, and at most
// tabDropRel of the CDF at tLo of the settings tabulated before it (read
// from their tables, within a per cent of the model; the settings are
// tabulated in the order of their probits at the calendar limit, highest
// first, so that the ones that run out first are there). The law
// monotone, the mixture's CDF errs by at most w·Φ(z(tLo)) before tLo and
// by at most w·p from there on, which is at most w·p/(0.99·F_before(tLo))
// of the mixture's CDF there and later (tabulated.errAt); its survival by
// at most w·p, relative to the left-out settings' own survival to the
// calendar limit, Σ w·(1 − p), below any survival read. When this came
// in, the demo's 96 laws left out 504 of their 1344 settings this way
// (those with p below about 1e-8), and their settings' tables took 18,925
// evaluations of the model instead of 23,027: each left-out setting costs
// the 3 or 4 of its ends' searches instead of 11 on average. On
// 2026-12-04 (fourth session) its 84 laws leave out 458 of 1,176 settings,
// and the settings' tables take about 9,400 evaluations in all.
const (
	tabDropAbs = 1e-9 // a left-out setting's weight times its chance of running out before the calendar limit, at most
	tabDropRel = 1e-6 // and its bound relative to the mixture's CDF from its lower end on, at most
)

// Where a setting's law is small beside the mixture's both ways, its table
// is built to a looser tolerance, interval by interval: on an interval
// [a, b] of its table the probit error δ moves the mixture's CDF by at
// most w·δ·(1 + |z|)·F_j·1.01 (as every setting's, tabulated.errAt), and
// w·F_j is at most e times the mixture's CDF and survival there,
// e = max(ρ, s): ρ = w·Φ(z_b) over f, the CDF at a of the settings
// tabulated before it (each read from its table lowered by its largest
// probit error: a lower bound on the mixture's CDF from a on), and
// s = Φ(z_b)/(1 − Φ(z_b)), the setting's own survival being part of the
// mixture's (with z_b at most tabLooseZ, so that F_j is its smaller side
// on the interval). The interval's tolerance is tabSetZTol times
// λ = min(tabLooseMax, tabLooseShare/(1.5·N·e),
// 0.4·tabLooseShare/(1.5·N·w·φ(z_b + tabLooseShift))) for N settings,
// and where λ > 1 its error, 1.5·λ·tabSetZTol (the midpoint checks no
// longer bound it by themselves there: TestSettingTablesAgainstDirect),
// is stated apart (tabulated.looseRel, looseAbs: per table the largest
// over its loose intervals, λ·e and w·φ·λ), so the loose intervals add
// at most tabLooseShare of the full tolerance's stated parts, relative
// and absolute. tabLooseMax keeps every reading within 0.045 of the model
// in probit (accuracyAtZ's pruning reads them moved toward 0 by the
// excess over 0.01). The settings are tabulated in the order of their
// probits at the calendar limit, highest first, so that the ones that run
// out first are there to compare with: in the demo the lower tails of
// most of the others are loose, and settings whose law is small all
// through before the calendar limit wholly so.
const (
	tabLooseMax   = 100                            // a setting table's tolerance at most tabLooseMax·tabSetZTol
	tabLooseShare = 0.25                           // the loose tables' stated errors, at most tabLooseShare of the full tolerance's in all
	tabLooseZ     = -1.0                           // a loose interval's probit at its upper end, at most
	tabLooseShift = 1.5 * tabLooseMax * tabSetZTol // a loose interval's probit error, at most
	// tabLooseInitial is the first grid's knots of a table loose over its
	// whole span: at its tolerance the intervals of tabSetInitial's grid
	// pass their first check (the demo's: 9 knots each).
	tabLooseInitial = 3
)

// droppedMass returns the bound on a left-out setting's mass before the
// calendar limit: w·Φ(z) for its probit z there, raised by 1e-9 of
// itself for the probit's round trip (a few units in the last place).
func droppedMass(w, z float64) float64 { return w * normSurv(-z) * (1 + 1e-9) }

// settingOut is one setting's result in settingTables: its table (ok
// false where its law is below tabSetTail up to the calendar limit), or,
// where it is left out, its ends and its bound relative to the mixture's
// CDF; with the largest terms of its intervals built to a looser
// tolerance (see tabLooseMax).
type settingOut struct {
	pt   probitTable
	ok   bool
	ends settingEnds
	rel  float64
	// The table's loose intervals (tabLooseMax): the largest of their
	// stated errors relative to the mixture's smaller side (looseRel) and
	// absolute (looseAbs), of their probit errors beyond 0.01 (slack,
	// at least 0) and of all its probit errors (errZ: 1.5·tabSetZTol
	// without loose intervals).
	looseRel, looseAbs, slack, errZ float64
	// part's output at the calendar limit (calOK where it was evaluated
	// there), for the law's error profile (NodeLifetime.accuracyAtZ).
	cal   partOut
	calOK bool
}

// settingTables tabulates the settings of l's node (settingTableWith),
// leaving out those that cannot matter (see tabDropAbs) where the node
// has a calendar limit and a per-node spread.
//
// sc is the call's working memory, lent to each table's build in turn.
func (n *node) settingTables(sc *tableScratch, l NodeLifetime) []settingOut {
	out := grown(sc.outs, len(n.settings))
	sc.outs = out
	order := grown(sc.order, len(n.settings))
	sc.order = order
	for j := range order {
		order[j] = j
	}
	var cals []gradKnot // the model at the calendar limit, per setting
	if !math.IsInf(n.calendar, 1) && !n.spread.IsZero() {
		cals = grown(sc.cals, len(n.settings))
		sc.cals = cals
		// The law at the calendar limit from the same evaluations, summed
		// as energyAt sums (the same bits: settingProbitAt, by the node's
		// own floor rule), for EnergyBinds and the table's atom
		// (atCalendar); the tables' knots there are these (the node law's
		// values, the tables' others the tables' rule's), and the profile
		// reads them as such (accuracyAtZKnown).
		var alive, dead float64
		exact := true
		c := n.clocks(n.calendar)
		for j := range cals {
			z, g, p, ok := n.settingProbitAt(j, c, false)
			cals[j] = gradKnot{t: n.calendar, c: c, z: z, g: g}
			out[j].cal, out[j].calOK = p, ok
			w := n.settings[j].w
			alive += w * p.alive
			dead += w * p.dead
			exact = exact && n.settings[j].sums == nil
		}
		if exact {
			l.seedCalendar(alive, dead)
		}
		sort.SliceStable(order, func(a, b int) bool { return cals[order[a]].z > cals[order[b]].z })
	}
	// The setting being tabulated, for the closures below (made once):
	// its weight w, its result o and its bound relative to the mixture
	// where it is left out (rel).
	var (
		w    float64
		o    *settingOut
		rel  float64
		memo endMemo // the end searches so far
	)
	// before is the CDF at t of the settings tabulated so far, each read
	// from its table lowered by its largest probit error: a lower bound on
	// the mixture's from t on.
	before := func(t float64) float64 {
		f := 0.0
		for i := range out {
			pt := &out[i].pt
			if pt.t == nil || t < pt.t[0] {
				continue // none yet, or read as 0 before its table
			}
			f += n.settings[i].w * normSurv(-(pt.zAt(min(t, pt.t[len(pt.t)-1])) - out[i].errZ))
		}
		return f
	}
	N := float64(len(n.settings))
	loose := func(a, b *gradKnot) float64 {
		if !(b.z <= tabLooseZ) {
			return 1
		}
		P := normSurv(-b.z) * (1 + 1e-9)
		e := max(w*P/before(a.t), P/(1-P))
		phi := normPDF(b.z + tabLooseShift)
		lam := min(tabLooseMax, min(tabLooseShare/(1.5*N*e), tabLooseShare*0.4/(1.5*N*w*phi)))
		if !(lam > 1) {
			return 1
		}
		// Every interval offered, accepted or not: the largest are at
		// least those of the intervals kept.
		d := 1.5 * tabSetZTol * lam
		o.looseRel = max(o.looseRel, d*e)
		o.looseAbs = max(o.looseAbs, w*phi*d)
		o.slack = max(o.slack, d-0.01)
		o.errZ = max(o.errZ, d)
		return lam
	}
	plan := func(lo, hi gradKnot) (bool, func(a, b *gradKnot) float64) {
		if hi.t == n.calendar {
			p := droppedMass(w, hi.z)
			rel = p / before(lo.t)
			if p <= tabDropAbs && rel <= tabDropRel {
				return true, nil
			}
		}
		return false, loose
	}
	for _, j := range order {
		if cals == nil {
			out[j].pt, out[j].ok, _ = settingTableWith(sc, l, j, tabSetZTol, tabSetTail, nil, &memo, nil)
			continue
		}
		w, o, rel = n.settings[j].w, &out[j], 0
		o.errZ = 1.5 * tabSetZTol
		o.pt, o.ok, o.ends = settingTableWith(sc, l, j, tabSetZTol, tabSetTail, &cals[j], &memo, plan)
		o.rel = rel
		if o.ends.left || !o.ok {
			o.looseRel, o.looseAbs, o.slack = 0, 0, 0
		}
		// The model at the calendar limit, evaluated here.
		if o.ends.left {
			o.ends.evals++
		} else if o.ok {
			o.pt.evals++
		}
	}
	return out
}

// seasonRates is, per clock, the spread of its monthly rates over the
// year (the largest less the smallest) and the largest ratio of a clock's
// departure from its chord to its advance on any interval (the spread
// over four times the smallest rate, +Inf where a rate is 0): the bounds
// that let gradGrid's seasonal guard (seasonal) pass an interval without
// visiting its month boundaries. The clock t (index 0) has none.
type seasonRates struct {
	spread, rho [3]float64
}

// seasonRates returns n's (see the type).
func (n *node) seasonRates() seasonRates {
	var sr seasonRates
	for i, rates := range [3]*[12]float64{nil, &n.months.sdFactor, &n.months.floorRate} {
		if rates == nil {
			continue
		}
		lo, hi := rates[0], rates[0]
		for _, r := range rates[1:] {
			lo, hi = min(lo, r), max(hi, r)
		}
		sr.spread[i] = hi - lo
		sr.rho[i] = sr.spread[i] / (4 * lo)
		if sr.spread[i] == 0 {
			sr.rho[i] = 0
		}
	}
	return sr
}

// seasonal returns the estimates of the seasonal part of the error that
// the halves [a, m] and [m, b] of an interval checked at its midpoint m
// keep (gradGrid's seasonal guard), each half's: on a half
// [p, q], Σ_i (|g_i(q) − g_i(p)|·ρ/2 + |g_i(a) − 2·g_i(m) + g_i(b)|/8)·δ_i
// over the clocks D and Φ, with δ_i the clock's largest departure from
// its chord on the half (at a month boundary, where its rate changes)
// and ρ the largest δ_k over the clock's advance on the half
// |c_k(q) − c_k(p)|. The second term is the error of the gradient
// interpolated linearly on a half (its second difference over the three
// knots), times the departure it multiplies; the first, the departure's
// own second-order term ½·δᵀ·∇²z·δ, with the Hessian along δ taken as
// along the chord, where the gradient's change shows it (∇²z·Δc = Δg),
// scaled by ρ. Where the bounds of sr (δ_i at most a half's length times
// the spread over four, ρ at most sr.rho) put the estimate within limit,
// that bound is returned for both and no month boundary is visited.
func (n *node) seasonal(a, m, b *gradKnot, sr *seasonRates, limit float64) [2]float64 {
	var d1, d2 [3]float64 // per clock: the gradient's largest change over a half, its second difference over 8
	rho := 0.0
	for i := 1; i < 3; i++ {
		d1[i] = max(math.Abs(m.g[i]-a.g[i]), math.Abs(b.g[i]-m.g[i]))
		d2[i] = math.Abs(a.g[i]-2*m.g[i]+b.g[i]) / 8
		rho = max(rho, sr.rho[i])
	}
	h := max(m.t-a.t, b.t-m.t)
	crude := 0.0
	for i := 1; i < 3; i++ {
		crude += (d1[i]*rho/2 + d2[i]) * h * sr.spread[i] / 4
	}
	if crude <= limit {
		return [2]float64{crude, crude}
	}
	var est [2]float64
	for hi, half := range [2][2]*gradKnot{{a, m}, {m, b}} {
		p, q := half[0], half[1]
		w := q.t - p.t
		var dev [3]float64
		for k := math.Floor(p.t/Month) + 1; k*Month < q.t; k++ {
			x := k * Month
			c := n.clocks(x)
			for i := 1; i < 3; i++ {
				dev[i] = max(dev[i], math.Abs(c[i]-p.c[i]-(x-p.t)*(q.c[i]-p.c[i])/w))
			}
		}
		r := 0.0
		for k := 1; k < 3; k++ {
			if dc := math.Abs(q.c[k] - p.c[k]); dc > 0 {
				r = max(r, dev[k]/dc)
			}
		}
		e := 0.0
		for i := 1; i < 3; i++ {
			e += (math.Abs(q.g[i]-p.g[i])*r/2 + d2[i]) * dev[i]
		}
		est[hi] = e
	}
	return est
}
