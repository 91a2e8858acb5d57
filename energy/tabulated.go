package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"
	"sync"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/mills"
)

// Tables of node laws: the probit z(t) of P(run out by t), taken from the
// smaller tail so that it keeps its precision far out, is smooth and nearly
// linear in t where a law is near normal; it is tabulated on a grid refined
// by bisection until a midpoint's monotone cubic (Fritsch and Carlson, SIAM
// J. Numer. Anal. 17 (1980) 238–246) interpolant is within a probit
// tolerance of the law, between the times where the law is 1e-14 and
// 1 − 1e-14.
//
// A law over several settings is a mixture whose probit has bumps where
// settings of different lifetimes take over, so it needs many points; each
// setting's own law is near normal and needs few. Each setting is
// therefore tabulated on its own (from the node model, between its 1e-18
// and 1 − 1e-18 points), and the mixture's table is built from those
// tables, each point costing a normal tail per setting instead of the
// node model's floor integral per setting. Where every setting's table is
// built in the clocks (clockGrid), so is the mixture's: its probit is
// smooth in them as theirs are, and needs a knot per few months instead
// of one at every month boundary and another between each two (the
// demo's 96 mixtures: 94 evaluations each instead of 307, 239 points
// instead of 307; 0.93 of the demo's instructions); its tolerance is a
// quarter of tabZTol, so that the largest error it measures stays within
// what the month-by-month grid measured (the demo's stated errors all the
// same or lower).
const (
	tabZTol       = 7e-4        // probit tolerance of a mixture's table against the settings' tables
	tabMixTol     = tabZTol / 4 // the same for a mixture's table built in the clocks (clockGrid)
	tabSetZTol    = 3e-4        // probit tolerance of a setting's table against the node model
	tabMaxPoints  = 4096        // cap on a table's points
	tabInitial    = 9           // points of the first grid
	tabSetInitial = 5           // knots of a setting's first grid (with gradients)
	tabSetGuard   = 3           // a setting table's interval's estimated largest error, in tolerances (gradGrid)
	tabSetSeason  = 1           // a setting table's halves' estimated seasonal error, in tolerances (gradGrid)
	tabTail       = 1e-14       // a table spans the law from tabTail to 1 − tabTail
	tabSetTail    = 1e-18       // a setting's table spans its law from tabSetTail to 1 − tabSetTail
	tabEndSlack   = 0.25        // probit by which a setting table's end may lie beyond its level
	tabCut        = 9.5         // a setting's probit beyond ±tabCut counts as 0 or 1 in the mixture (Φ̄(9.5) = 1.05e-21)
)

// probitTable is a monotone piecewise cubic in probit space: the probit z
// at the times t (ascending) with PCHIP slopes per interval.
type probitTable struct {
	t, z   []float64  // grid, probit
	d0, d1 []float64  // per interval i: the PCHIP slopes at t[i] and t[i+1]
	kinks  int        // month boundaries seeded into the grid
	gk     []gradKnot // a table built by clockGrid: its knots (nil for others)
	worst  float64    // the largest probit error measured (the tolerance at most)
	evals  int        // the law's evaluations that built the table
}

// tabulated is a NodeLifetime read from a table; it implements dist.Law,
// dist.Atomic and dist.Estimated.
type tabulated struct {
	probitTable
	src    NodeLifetime
	cal    float64 // calendar limit (+Inf for none)
	atom   float64 // mass at the calendar limit
	acc    dist.Accuracy
	tabCDF float64 // the table's own part of acc.CDFAbs (interpolation against direct evaluation)
	tabRel float64 // and of acc.SurvivalRel
	// The settings' tables' part of the error: their largest probit error
	// setWorst, the largest |probit| at their ends setZ (so the CDF error
	// is at most setWorst·(1 + setZ)·min(F, 1 − F), Gordon's inequality
	// for Mills' ratio), and the mass beyond their ends setBeyond.
	setWorst, setZ, setBeyond float64
	// The settings' tables' intervals built to a looser tolerance
	// (tabLooseMax): their probit errors (1.5 times their tolerances: the
	// midpoint checks do not bound them by themselves there) times their
	// factors e, the largest of each table, summed over the tables
	// (looseRel, relative to the mixture's smaller side, with (1 + setZ)
	// as setWorst), and times w·φ at the interval's end nearer 0 moved by
	// tabLooseShift, likewise (looseAbs, the CDF's absolute error).
	looseRel, looseAbs  float64
	setPoints, setEvals int // the settings' tables' points and the node model's evaluations, in all
	// The settings left out (tabDropAbs): their mass before the
	// calendar limit, in all (dropAbs), its bound relative to the law's
	// CDF from each one's lower end on (dropRel) and relative to the
	// survival (dropSurv).
	dropAbs, dropRel, dropSurv float64
	dropped                    int // how many
	// The node law's own stated CDF error (NodeLifetime.accuracyAt)
	// measured at the times profT (ascending): profE.
	profT, profE []float64
	lz           *tabLazy // the moments, computed on first use
}

// tabLazy holds a table's moments with their estimated errors, computed
// once on first use (the same computation whenever it runs, so the same
// bits).
type tabLazy struct {
	once            sync.Once
	mean, vari      float64
	meanErr, varErr float64
}

// probitOf returns the probit of the smaller tail: Φ⁻¹(dead) for dead <=
// 1/2, else −Φ⁻¹(alive) from the upper side.
func probitOf(alive, dead float64) float64 {
	std := dist.MustNormal(0, 1)
	if dead <= 0.5 {
		return std.Quantile(max(dead, 0))
	}
	return std.UpperQuantile(max(alive, 0))
}

// probitGrid tabulates probit on [lo, hi] (zl, zh its values at the ends):
// a first grid (firstGrid), then intervals are halved (halveUntil) until a
// PCHIP cubic's value at each midpoint is within tol of the probit there,
// or the interval is no wider than minWidth. Kinks stay knots with
// one-sided slopes on either side, so that no cubic straddles one.
func probitGrid(probit func(float64) float64, lo, hi, zl, zh float64, kinks []float64, minWidth, tol float64) probitTable {
	type knot struct {
		t, z float64
		kink bool
	}
	ts, kink := firstGrid(lo, hi, kinks)
	ks := make([]knot, len(ts))
	for i, x := range ts {
		ks[i] = knot{t: x, kink: kink[i]}
		switch i {
		case 0:
			ks[i].z = zl
		case len(ts) - 1:
			ks[i].z = zh
		default:
			ks[i].z = probit(x)
		}
	}
	unpack := func(ks []knot) (ts, zs []float64, kink []bool) {
		ts, zs, kink = make([]float64, len(ks)), make([]float64, len(ks)), make([]bool, len(ks))
		for i, k := range ks {
			ts[i], zs[i], kink[i] = k.t, k.z, k.kink
		}
		return ts, zs, kink
	}
	var d0, d1 []float64
	ks, worst, evals := halveUntil(ks, &halveBufs[knot]{}, tol, func(ks []knot) {
		d0, d1 = pchipIntervals(unpack(ks))
	}, func(a, b *knot) bool {
		return b.t-a.t <= minWidth || (math.IsInf(a.z, 0) && a.z == b.z)
	}, func(i int, a, b *knot) (knot, float64, float64) {
		m := knot{t: a.t + (b.t-a.t)/2}
		m.z = probit(m.t)
		if math.IsInf(m.z, 0) || math.IsInf(a.z, 0) || math.IsInf(b.z, 0) {
			return m, math.Inf(1), math.Inf(1)
		}
		e := math.Abs(hermite(a.t, b.t, a.z, b.z, d0[i], d1[i], m.t) - m.z)
		return m, e, e
	})
	pt := probitTable{kinks: len(kinks), worst: worst, evals: evals + len(ts) - 2}
	pt.t, pt.z, kink = unpack(ks)
	pt.d0, pt.d1 = pchipIntervals(pt.t, pt.z, kink)
	return pt
}

// firstGrid returns a table's first grid on [lo, hi]: tabInitial even
// steps and the kinks (month boundaries where the monthly factors change),
// marked as such.
func firstGrid(lo, hi float64, kinks []float64) (ts []float64, kink []bool) {
	for i := range tabInitial {
		x := lo + (hi-lo)*float64(i)/float64(tabInitial-1)
		for len(kinks) > 0 && kinks[0] <= x {
			if kinks[0] < x && (len(ts) == 0 || kinks[0] > ts[len(ts)-1]) {
				ts, kink = append(ts, kinks[0]), append(kink, true)
			}
			kinks = kinks[1:]
		}
		if len(ts) > 0 && ts[len(ts)-1] == x {
			continue
		}
		ts, kink = append(ts, x), append(kink, false)
	}
	return ts, kink
}

// halveUntil is the tables' one refinement: pass by pass, the interval
// between consecutive knots a and b is split at its midpoint by split,
// which returns the midpoint's knot and the interpolant's error there,
// for each half (the same for both but where a half may be judged on its
// own: gradGrid's seasonal guard); the midpoint joins the knots either
// way, and a half whose error is within tol is not checked again (it is
// closer still). An
// interval is left alone where skip says so or when the knots would pass
// tabMaxPoints; at most 40 passes. pass, if not nil, sees the knots at the
// start of each pass. It returns the knots, the largest error within tol
// measured and the number of splits. The passes write into buf (ks is
// only read, and must not be one of its buffers); the knots returned are
// buf's, until it is lent again.
func halveUntil[K any](ks []K, buf *halveBufs[K], tol float64, pass func([]K), skip func(a, b *K) bool, split func(i int, a, b *K) (K, float64, float64)) ([]K, float64, int) {
	worst, evals := 0.0, 0
	// The first pass's marks in buf.done[1], which it does not write: a
	// pass writes its knots and marks into the buffers the pass before
	// last wrote (w), sized for the intervals still to be checked, and
	// reads the others, never the same memory.
	done := grown(buf.done[1], len(ks)-1)
	buf.done[1] = done
	w := 0
	for range 40 {
		if pass != nil {
			pass(ks)
		}
		open := 0
		for _, d := range done {
			if !d {
				open++
			}
		}
		need := len(ks) + open
		buf.ks[w], buf.done[w] = growBuf(buf.ks[w], need), growBuf(buf.done[w], need)
		nk := append(buf.ks[w][:0], ks[0])
		nd := buf.done[w][:0]
		refined := false
		for i := 0; i+1 < len(ks); i++ {
			a, b := &ks[i], &ks[i+1]
			full := len(nk)+2*(len(ks)-i) > tabMaxPoints
			if done[i] || full || skip(a, b) {
				nk = append(nk, *b)
				nd = append(nd, true)
				continue
			}
			m, e0, e1 := split(i, a, b)
			evals++
			ok0, ok1 := e0 <= tol, e1 <= tol
			if ok0 {
				worst = max(worst, e0)
			}
			if ok1 {
				worst = max(worst, e1)
			}
			refined = refined || !ok0 || !ok1
			nk = append(nk, m, *b)
			nd = append(nd, ok0, ok1)
		}
		ks, done = nk, nd
		w = 1 - w
		if !refined {
			break
		}
	}
	return ks, worst, evals
}

// halveBufs is halveUntil's working memory: the two buffers of knots its
// passes write by turns, and their intervals' marks (whether each is
// checked). One owner (a table's build, or the call that builds tables in
// turn: tableScratch) lends it to one halveUntil at a time.
type halveBufs[K any] struct {
	ks   [2][]K
	done [2][]bool
}

// growBuf returns s emptied, with room for at least n elements: s's own
// memory where it has the room, else new memory for n and a quarter more
// (the buffers serve table after table, each a little larger: a Site's
// build grows them a few times instead of at each new largest table).
func growBuf[E any](s []E, n int) []E {
	if cap(s) < n {
		return make([]E, 0, n+n/4)
	}
	return s[:0]
}

// mixSet is one setting as a law's mixture reads it (tabulateWith).
type mixSet struct {
	w            float64
	pt           probitTable
	cutLo, cutHi float64 // before cutLo the table reads below −tabCut, after cutHi above tabCut
	// A setting left out (tabDropAbs): its probit's upper
	// bounds, zLo before tLo and zCal from there to the calendar
	// limit.
	dropped        bool
	tLo, zLo, zCal float64
	// slack: a loose table's (tabLooseMax) largest probit error
	// beyond 0.01, by which zOf moves its reading toward 0.
	slack float64
}

// tabulate builds the table of l.
func tabulate(l NodeLifetime) tabulated { return tabulateWith(&tableScratch{}, l) }

// tabulateWith is tabulate with sc as the working memory of the tables it
// builds: reset first, so that a caller may lend the same to one law
// after another (never two at once); nothing in the result refers to it.
func tabulateWith(sc *tableScratch, l NodeLifetime) tabulated {
	sc.reset()
	n := l.n
	tb := tabulated{src: l, cal: n.calendar}
	std := dist.MustNormal(0, 1)
	zLo, zHi := std.Quantile(tabTail), std.UpperQuantile(tabTail)
	var probit func(float64) float64
	var zOf func(j int, t float64) float64 // a setting's probit from its table
	var guessLo, guessHi float64
	var calParts []calPart // the settings' model at the calendar limit (settingTables)
	minWidth := 0.0
	if n.spread.IsZero() {
		// Exact k-fold laws move in steps of a period: refine no finer.
		for _, s := range n.settings {
			minWidth = max(minWidth, 2/s.rate)
		}
	}
	{
		// Each setting's own table, then the mixture's from them.
		tables := n.settingTables(sc, l)
		for j := range tables {
			if tables[j].calOK {
				if calParts == nil {
					calParts = grown(sc.calParts, len(tables))
					sc.calParts = calParts
				}
				calParts[j] = calPart{p: tables[j].cal, ok: true}
			}
		}
		sets := growBuf(sc.sets, len(n.settings))
		sc.sets = sets
		guessLo, guessHi = math.Inf(1), 0
		var dropSurvW float64 // the dropped settings' weight times their survival to the calendar limit
		for j := range n.settings {
			st, ok := tables[j].pt, tables[j].ok
			w := n.settings[j].w
			if d := &tables[j]; d.ends.left {
				// Left out: read as lasting to the calendar limit (its mass
				// before there in the error, tabDropAbs).
				tb.setEvals += d.ends.evals
				tb.setBeyond += w * normSurv(-d.ends.lo.z)
				tb.dropAbs += droppedMass(w, d.ends.hi.z)
				tb.dropped++
				tb.dropRel += d.rel
				dropSurvW += w * normSurv(d.ends.hi.z)
				sets = append(sets, mixSet{w: w, cutLo: math.Inf(1), cutHi: math.Inf(1),
					dropped: true, tLo: d.ends.lo.t, zLo: d.ends.lo.z, zCal: d.ends.hi.z})
				continue
			}
			if !ok {
				// The setting's law is below tabSetTail up to the
				// calendar limit: it counts as alive throughout.
				tb.setBeyond += w * tabSetTail
				sets = append(sets, mixSet{w: w, cutLo: math.Inf(1), cutHi: math.Inf(1)})
				continue
			}
			tb.setPoints += len(st.t)
			tb.setEvals += st.evals
			// Its loose intervals' errors apart (tabLooseMax); its worst
			// is that of the intervals at the full tolerance.
			tb.looseRel += tables[j].looseRel
			tb.looseAbs += tables[j].looseAbs
			tb.setWorst = max(tb.setWorst, st.worst)
			z0, z1 := st.z[0], st.z[len(st.z)-1]
			tb.setZ = max(tb.setZ, max(math.Abs(z0), math.Abs(z1)))
			// Before its first time the setting's law is below Φ(z0)
			// (monotone), as is its table's continuation; after its last
			// (unless that is the calendar limit, beyond which nothing is
			// read) within Φ̄(z1) of 1; beyond ±tabCut the mixture reads 0
			// or 1.
			beyond := normSurv(-z0)
			if st.t[len(st.t)-1] < n.calendar {
				beyond = max(beyond, normSurv(z1))
			}
			tb.setBeyond += w * (beyond + normSurv(tabCut))
			guessLo, guessHi = min(guessLo, st.t[0]), max(guessHi, st.t[len(st.t)-1])
			se := mixSet{w: w, pt: st, cutLo: math.Inf(-1), cutHi: math.Inf(1), slack: max(0, tables[j].slack)}
			if d := st.d0[0]; z0 <= -tabCut {
				se.cutLo = st.t[0]
			} else if d > 0 {
				se.cutLo = st.t[0] - (z0+tabCut)/d
			}
			if d := st.d1[len(st.d1)-1]; z1 >= tabCut {
				se.cutHi = st.t[len(st.t)-1]
			} else if d > 0 {
				se.cutHi = st.t[len(st.t)-1] + (tabCut-z1)/d
			}
			sets = append(sets, se)
		}
		if tb.dropAbs > 0 {
			tb.dropSurv = tb.dropAbs / dropSurvW
		}
		zOf = func(j int, t float64) float64 {
			if s := &sets[j]; s.dropped {
				// Upper bounds (the law is monotone): the profile's
				// bounds from them are the larger (accuracyAtZ).
				if t < s.tLo {
					return s.zLo
				}
				return s.zCal
			}
			if sets[j].pt.t == nil {
				return math.Inf(-1) // below tabSetTail up to the calendar limit
			}
			// Beyond a table's ends the law is beyond the end's probit
			// (monotone): read the end. accuracyAtZ takes the reading
			// within 0.01 of the model: where a table may be loose (its
			// probit below tabLooseZ + tabLooseShift) the reading is moved
			// toward 0 by its loose intervals' largest error beyond that,
			// so that its |z| − 0.01 stays a lower bound.
			pt := &sets[j].pt
			z := pt.zAt(min(max(t, pt.t[0]), pt.t[len(pt.t)-1]))
			if z <= tabLooseZ+tabLooseShift {
				z += sets[j].slack
			}
			return z
		}
		// The mixture's probit from the settings' tables, with its slopes
		// left and right of t: dF/dt = Σ w·φ(z_j)·z_j'(t), z' = F'/φ(z).
		// hints[i] is the interval of set i's table last read: the grids
		// ask for times in ascending order within a pass, so most reads
		// need no search (the same values: zAtD2Near).
		//
		// With grad, mixAt also returns the probit's gradient against the
		// clocks, Σ w·φ(z_j)·Ĝ_j(t)/φ(z), Ĝ_j the settings' tables' own
		// (gradAt, the gradient with which each reads between its knots):
		// the mixture of probits smooth in the clocks is smooth in them
		// too, and is tabulated as they are (clockGrid).
		sc.hints = grown(sc.hints, 2*len(sets))
		hints, ghints := sc.hints[:len(sets)], sc.hints[len(sets):]
		mixAt := func(t float64, grad bool) (z, dl, dr float64, g [3]float64) {
			var dead, alive, fl, fr float64
			var gs [3]float64
			for i := range sets {
				s := &sets[i]
				if t < s.cutLo {
					alive += s.w
					continue
				}
				if t > s.cutHi {
					dead += s.w
					continue
				}
				zj, dlj, drj := s.pt.zAtD2Near(t, &hints[i])
				// One tail from erfc, the other its complement (at least
				// 1/2, so nothing is lost); the density with it, from the
				// same exponential (mills.UpperDensity: φ(−z) = φ(z)).
				var pdf float64
				switch {
				case zj < -tabCut:
					alive += s.w
					continue
				case zj > tabCut:
					dead += s.w
					continue
				case zj <= 0:
					var d float64
					d, pdf = mills.UpperDensity(-zj)
					dead += s.w * d
					alive += s.w * (1 - d)
				default:
					var a float64
					a, pdf = mills.UpperDensity(zj)
					dead += s.w * (1 - a)
					alive += s.w * a
				}
				phi := s.w * pdf
				fl += phi * dlj
				fr += phi * drj
				if grad {
					gj := s.pt.gradAt(t, &ghints[i])
					for q := range gs {
						gs[q] += phi * gj[q]
					}
				}
			}
			z = probitOf(alive, dead)
			if phi := normPDF(z); phi > 0 && !math.IsInf(z, 0) {
				dl, dr = fl/phi, fr/phi
				for q := range g {
					g[q] = gs[q] / phi
				}
			}
			return z, dl, dr, g
		}
		mix := func(t float64) (z, dl, dr float64) {
			z, dl, dr, _ = mixAt(t, false)
			return z, dl, dr
		}
		// Every setting's table built by clockGrid (or none needed): the
		// mixture's is too.
		clockable := true
		for i := range sets {
			if sets[i].pt.t != nil && sets[i].pt.gk == nil {
				clockable = false
			}
		}
		probit = func(t float64) float64 {
			z, _, _ := mix(t)
			return z
		}
		if math.IsInf(guessLo, 1) {
			// No setting reaches tabSetTail before the calendar limit.
			guessLo, guessHi = n.calendar*(1-1e-9), n.calendar
		}
		f := func(t float64) (float64, float64) { return probit(t), math.NaN() }
		lo, _ := probitEnd(f, guessLo, zLo, 0.05, false)
		hi := 0.0
		if !math.IsInf(n.calendar, 1) {
			if zc := probit(n.calendar); zc <= zHi {
				hi = n.calendar
			}
		}
		if hi == 0 {
			hi, _ = probitEnd(f, max(guessHi, lo), zHi, 0.05, true)
		}
		if !(lo < hi) {
			lo = max(0, hi*(1-1e-9))
		}
		if clockable && (hi-lo)/Month <= maxKinks {
			at := func(t float64) (gradKnot, float64) {
				z, _, dr, g := mixAt(t, true)
				return gradKnot{t: t, c: n.clocks(t), z: z, g: g}, dr
			}
			loK, _ := at(lo)
			hiK, _ := at(hi)
			tb.probitTable = n.clockGrid(sc, loK, hiK, tabMixTol, tabSetInitial, nil, at, nil, true)
			tb.evals += 2
		} else {
			tb.probitTable = hermiteGrid(mix, lo, hi, n.kinks(lo, hi), minWidth, tabZTol)
		}
	}
	if tb.t[len(tb.t)-1] >= tb.cal {
		tb.atom = l.survivalAtCalendar()
	}
	// The model's own error, measured at six of the table's times (see
	// profile).
	src := tb.profile(l, zOf, calParts)
	// A probit error δ moves a probability p by about φ(z)·δ <= 0.4·δ, and
	// the smaller tail p by about p·|z|·δ (Mills' ratio): |z| <= 7.7 down to
	// 1e-14.
	// The check is made on the interval before its last halving; the
	// cubic on the halves, with the midpoint as a knot, is closer still
	// (TestTabulatedAgainstDirect measures it). The settings' tables add
	// theirs (see errAt), and the settings left out their mass, relative
	// to the CDF and to the survival as well (tabDropAbs).
	tb.tabCDF = 0.4*(tb.worst+tb.setWorst) + tb.looseAbs + tb.setBeyond + tb.dropAbs
	tb.tabRel = 7.7*tb.worst + 1.01*(1+tb.setZ)*(tb.setWorst+tb.looseRel) + tb.setBeyond/tabTail + tb.dropSurv + tb.dropRel
	tb.acc = dist.Accuracy{
		CDFAbs:      src.CDFAbs + tb.tabCDF,
		SurvivalRel: src.SurvivalRel + tb.tabRel,
		TailFloor:   max(src.TailFloor, tabTail),
		Method:      tb.method(src.Method, len(n.settings), n.spread.Floor > 0),
	}
	tb.lz = &tabLazy{}
	return tb
}

// method returns the table's method text after the node law's (src),
// for a node of settings settings, floor whether it has a floor spread:
// composed on the stack and allocated once, at its length.
func (tb *tabulated) method(src string, settings int, floor bool) string {
	var stack [768]byte
	m := append(stack[:0], src...)
	m = append(m, "; tabulated on "...)
	m = strconv.AppendInt(m, int64(len(tb.t)), 10)
	if settings <= 1 {
		m = append(m, " times (probit interpolation, "...)
		m = strconv.AppendInt(m, int64(tb.kinks), 10)
		m = append(m, " month boundaries as knots)"...)
		return string(m)
	}
	m = append(m, " times (probit interpolation of the mixture of the "...)
	m = strconv.AppendInt(m, int64(settings), 10)
	m = append(m, " settings' own tables, "...)
	m = strconv.AppendInt(m, int64(tb.setPoints), 10)
	m = append(m, " times in all"...)
	if floor {
		m = append(m, ", from the model with a "...)
		m = strconv.AppendInt(m, tabGLNodes, 10)
		m = append(m, "-point floor rule"...)
	}
	m = append(m, "; month boundaries as knots)"...)
	if tb.dropped > 0 {
		m = append(m, "; "...)
		m = strconv.AppendInt(m, int64(tb.dropped), 10)
		m = fmt.Appendf(m, " settings that run out before the calendar limit with a chance of at most %.0e (times their weight) counted as lasting, their mass in the error", tabDropAbs)
	}
	return string(m)
}

// profile measures the node law's stated error (NodeLifetime.accuracyAt)
// at the table's ends, its middle and the times where its CDF is 1e-6,
// 1e-3 and 0.1, so that errAt can state the error where it is read, and
// returns the largest (with the largest relative survival error) as the
// law's stated error. zOf reads the settings' probits from their tables,
// so that settings far in a tail are not evaluated (accuracyAtZ). The
// error measured is that of the model the settings' tables are built
// from, with the tables' floor rule (accuracyAtZKnown with tab; see
// tabGLNodes).
//
// cal, when not nil, holds the model at the calendar limit where
// settingTables evaluated it (the same arguments as accuracyAtZ's there):
// the profile's time there reads it instead of evaluating it again.
func (tb *tabulated) profile(l NodeLifetime, zOf func(j int, t float64) float64, cal []calPart) dist.Accuracy {
	std := dist.MustNormal(0, 1)
	n := len(tb.t)
	ts := []float64{tb.t[0], tb.t[n/2], tb.t[n-1]}
	for _, p := range []float64{1e-6, 1e-3, 0.1} {
		if t := tb.invert(std.Quantile(p)); t > tb.t[0] && t < tb.t[n-1] {
			ts = append(ts, t)
		}
	}
	tb.profT = sortedUnique(ts)
	tb.profE = make([]float64, len(tb.profT))
	var acc dist.Accuracy
	for i, t := range tb.profT {
		a, _ := l.accuracyAtZKnown([]float64{t}, zOf, true, cal, true)
		tb.profE[i] = a.CDFAbs
		acc.CDFAbs = max(acc.CDFAbs, a.CDFAbs)
		acc.SurvivalRel = max(acc.SurvivalRel, a.SurvivalRel)
		acc.TailFloor, acc.Method = a.TailFloor, a.Method
	}
	return acc
}

// errAt returns the stated CDF error at t (s): the node law's, the larger
// of the two measured at the profile's times on either side (the end's
// beyond them), and the table's, φ(z)·δz for the largest probit error δz
// found, plus the settings' tables', at most
// δs·(1 + |zs|)·min(F, 1 − F)·1.01 for their largest probit error δs and
// largest end probit zs (the mixture's F read from the table, which is
// within a per cent of the law's), and their mass beyond their ends; the
// settings tabulated to a looser tolerance (tabLooseMax), at most
// looseAbs and at most looseRel·(1 + |zs|)·min(F, 1 − F)·1.02; the
// settings left out (tabDropAbs), at most their mass dropAbs and at most
// dropRel of the CDF read (1.02 of it, as above). Far
// in a tail all shrink with the tail: a first failure among n nodes reads
// the node law where F is about 1/n, and the bound n·CDFAbs would be far
// too loose there.
func (tb *tabulated) errAt(t float64) float64 {
	switch {
	case math.IsNaN(t) || tb.t == nil:
		return math.NaN()
	case t >= tb.cal || t <= 0:
		return 0
	}
	return tb.errAtZ(t, tb.zAt(t))
}

// errAtZ is errAt at t within (0, cal) whose probit z = zAt(t) is known
// (the site rule's probes have it): the same value.
func (tb *tabulated) errAtZ(t, z float64) float64 {
	i := searchTimes(tb.profT, t) // sort.SearchFloat64s's index
	var src float64
	switch {
	case i == 0:
		src = tb.profE[0]
	case i == len(tb.profT):
		src = tb.profE[i-1]
	default:
		src = max(tb.profE[i-1], tb.profE[i])
	}
	e := src + normPDF(z)*tb.worst
	if tb.setWorst > 0 {
		e += tb.setWorst * min(0.4, 1.02*(1+tb.setZ)*normSurv(math.Abs(z)))
	}
	if tb.looseRel > 0 {
		e += min(tb.looseAbs, 1.02*(1+tb.setZ)*tb.looseRel*normSurv(math.Abs(z)))
	}
	if tb.dropAbs > 0 {
		e += min(tb.dropAbs, 1.02*tb.dropRel*normSurv(-z))
	}
	return e + tb.setBeyond
}

// pchipIntervals returns, for each interval i of the grid t, the slopes
// d0[i] at t[i] and d1[i] at t[i+1] of a monotone piecewise cubic: PCHIP
// slopes (pchipSlopes) computed separately on each run of the grid between
// kinks, so that at a kink each side has its own one-sided slope.
func pchipIntervals(t, z []float64, kink []bool) (d0, d1 []float64) {
	n := len(t)
	if n < 2 {
		return []float64{0}, []float64{0}
	}
	d0, d1 = make([]float64, n-1), make([]float64, n-1)
	start := 0
	for i := 1; i < n; i++ {
		if i < n-1 && !kink[i] {
			continue
		}
		s := pchipSlopes(t[start:i+1], z[start:i+1])
		for j := start; j < i; j++ {
			d0[j], d1[j] = s[j-start], s[j-start+1]
		}
		start = i
	}
	return d0, d1
}

// pchipSlopes returns Fritsch–Carlson monotone slopes at the points of one
// smooth run, with the shape-preserving three-point end slopes of Moler
// ("Numerical Computing with MATLAB", SIAM 2004, §3.4); infinite values
// (probits of 0 or 1) get slope 0 beside them.
func pchipSlopes(t, z []float64) []float64 {
	n := len(t)
	d := make([]float64, n)
	if n < 2 {
		return d
	}
	del := make([]float64, n-1)
	for i := range del {
		del[i] = (z[i+1] - z[i]) / (t[i+1] - t[i])
		if math.IsNaN(del[i]) || math.IsInf(del[i], 0) {
			del[i] = 0
		}
	}
	if n == 2 {
		d[0], d[1] = del[0], del[0]
		return d
	}
	d[0] = pchipEnd(t[1]-t[0], t[2]-t[1], del[0], del[1])
	d[n-1] = pchipEnd(t[n-1]-t[n-2], t[n-2]-t[n-3], del[n-2], del[n-3])
	for i := 1; i < n-1; i++ {
		if del[i-1]*del[i] <= 0 {
			continue
		}
		h0, h1 := t[i]-t[i-1], t[i+1]-t[i]
		w1, w2 := 2*h1+h0, h1+2*h0
		d[i] = (w1 + w2) / (w1/del[i-1] + w2/del[i])
	}
	return d
}

// pchipEnd is the one-sided three-point slope at an end of a run, with h0
// and del0 the step and secant next to the end, h1 and del1 the next ones,
// limited so that the cubic keeps the data's monotonicity.
func pchipEnd(h0, h1, del0, del1 float64) float64 {
	d := ((2*h0+h1)*del0 - h0*del1) / (h0 + h1)
	switch {
	case math.IsNaN(d) || d*del0 <= 0:
		return 0
	case del0*del1 <= 0 && math.Abs(d) > 3*math.Abs(del0):
		return 3 * del0
	}
	return d
}

// hermite evaluates the cubic Hermite interpolant on [t0, t1] at x.
func hermite(t0, t1, z0, z1, d0, d1, x float64) float64 {
	if math.IsInf(z0, 0) || math.IsInf(z1, 0) {
		if x-t0 < t1-x {
			return z0
		}
		return z1
	}
	// hermiteD's value without its slope (whose division the callers of
	// hermite do not need), by the same expression: the same bits
	h := t1 - t0
	return hermiteAt(h, (x-t0)/h, z0, z1, d0, d1)
}

// hermiteAt is the cubic Hermite interpolant on an interval of width h at
// its fraction s from the left end, from the values z0, z1 and slopes d0,
// d1 at the ends (hermite's and hermiteD's value).
func hermiteAt(h, s, z0, z1, d0, d1 float64) float64 {
	h00 := (1 + 2*s) * (1 - s) * (1 - s)
	h10 := s * (1 - s) * (1 - s)
	h01 := s * s * (3 - 2*s)
	h11 := s * s * (s - 1)
	return h00*z0 + h10*h*d0 + h01*z1 + h11*h*d1
}

// zAt returns the interpolated probit at t; beyond the table (where the
// law is below 1e-14 or above 1 − 1e-14) the probit goes on along the end
// slopes, so the far tails decay like a normal's.
func (pt *probitTable) zAt(t float64) float64 {
	hint := 0 // no interval: a search
	return pt.zAtNear(t, &hint)
}

// searchTimes is sort.SearchFloat64s(ts, t) (len(ts) for NaN too) by
// searchFloats, without a call per step of the bisection.
func searchTimes(ts []float64, t float64) int {
	if math.IsNaN(t) {
		return len(ts)
	}
	return searchFloats(ts, t, false)
}

// zAtNear is zAt, looking first in the interval *hint (t[*hint−1] < t <=
// t[*hint]; none for 0) and leaving there the one it found: the same
// value, without a search when consecutive times fall in one interval.
func (pt *probitTable) zAtNear(t float64, hint *int) float64 {
	n := len(pt.t)
	i := *hint
	if !(i > 0 && i < n && pt.t[i-1] < t && t <= pt.t[i]) {
		i = searchTimes(pt.t, t)
		*hint = i
	}
	switch {
	case i == 0:
		return pt.z[0] - max(pt.d0[0], 0)*(pt.t[0]-t)
	case i >= n:
		return pt.z[n-1] + max(pt.d1[len(pt.d1)-1], 0)*(t-pt.t[n-1])
	}
	return hermite(pt.t[i-1], pt.t[i], pt.z[i-1], pt.z[i], pt.d0[i-1], pt.d1[i-1], t)
}

// zAtD is zAt with its slope right (or left) of t: at a point of the
// table each side has its own.
func (pt *probitTable) zAtD(t float64, right bool) (z, dz float64) {
	i := searchTimes(pt.t, t) // t[i-1] < t <= t[i]
	n := len(pt.t)
	switch {
	case i == 0 && !(right && t == pt.t[0]):
		d := max(pt.d0[0], 0)
		return pt.z[0] - d*(pt.t[0]-t), d
	case i >= n:
		d := max(pt.d1[len(pt.d1)-1], 0)
		return pt.z[n-1] + d*(t-pt.t[n-1]), d
	case t == pt.t[i] && (right || i == 0) && i < n-1:
		i++ // at a point, its right side: the interval beginning there
	case t == pt.t[i] && i == n-1 && right:
		d := max(pt.d1[len(pt.d1)-1], 0)
		return pt.z[n-1], d
	}
	if math.IsInf(pt.z[i-1], 0) || math.IsInf(pt.z[i], 0) {
		return hermite(pt.t[i-1], pt.t[i], pt.z[i-1], pt.z[i], 0, 0, t), 0
	}
	return hermiteD(pt.t[i-1], pt.t[i], pt.z[i-1], pt.z[i], pt.d0[i-1], pt.d1[i-1], t)
}

// zAtD2 is zAtD on both sides of t, with one search: they differ only at
// a point of the table.
func (pt *probitTable) zAtD2(t float64) (z, dl, dr float64) {
	hint := 0 // no interval: a search
	return pt.zAtD2Near(t, &hint)
}

// zAtD2Near is zAtD2, looking first in the interval *hint as zAtNear
// does: the same values.
func (pt *probitTable) zAtD2Near(t float64, hint *int) (z, dl, dr float64) {
	n := len(pt.t)
	i := *hint
	if !(i > 0 && i < n && pt.t[i-1] < t && t <= pt.t[i]) {
		i = searchTimes(pt.t, t) // t[i-1] < t <= t[i]
		*hint = i
	}
	switch {
	case i < n && t == pt.t[i]:
		z, dl = pt.zAtD(t, false)
		_, dr = pt.zAtD(t, true)
		return z, dl, dr
	case i == 0:
		d := max(pt.d0[0], 0)
		return pt.z[0] - d*(pt.t[0]-t), d, d
	case i >= n:
		d := max(pt.d1[len(pt.d1)-1], 0)
		return pt.z[n-1] + d*(t-pt.t[n-1]), d, d
	}
	if math.IsInf(pt.z[i-1], 0) || math.IsInf(pt.z[i], 0) {
		return hermite(pt.t[i-1], pt.t[i], pt.z[i-1], pt.z[i], 0, 0, t), 0, 0
	}
	z, d := hermiteD(pt.t[i-1], pt.t[i], pt.z[i-1], pt.z[i], pt.d0[i-1], pt.d1[i-1], t)
	return z, d, d
}

// hermiteGrid tabulates f, which returns a probit with its slopes left
// and right of t, on [lo, hi]: a first grid of tabInitial even steps and
// the kinks (month boundaries, where the slopes differ), then intervals
// are halved until the cubic Hermite interpolant with those slopes
// (limited as Fritsch and Carlson's, so that it stays monotone) is within
// tol of f at each midpoint, or the interval is no wider than minWidth.
func hermiteGrid(f func(float64) (z, dl, dr float64), lo, hi float64, kinks []float64, minWidth, tol float64) probitTable {
	type knot struct{ t, z, dl, dr float64 }
	ts, _ := firstGrid(lo, hi, kinks)
	ks := make([]knot, len(ts))
	for i, x := range ts {
		ks[i].t = x
		ks[i].z, ks[i].dl, ks[i].dr = f(x)
	}
	slopes := func(a, b *knot) (d0, d1 float64) {
		return monoSlopes(b.t-a.t, a.z, b.z, a.dr, b.dl)
	}
	ks, worst, evals := halveUntil(ks, &halveBufs[knot]{}, tol, nil, func(a, b *knot) bool {
		return b.t-a.t <= minWidth || (math.IsInf(a.z, 0) && a.z == b.z)
	}, func(_ int, a, b *knot) (knot, float64, float64) {
		m := knot{t: a.t + (b.t-a.t)/2}
		m.z, m.dl, m.dr = f(m.t)
		if math.IsInf(m.z, 0) || math.IsInf(a.z, 0) || math.IsInf(b.z, 0) {
			return m, math.Inf(1), math.Inf(1)
		}
		d0, d1 := slopes(a, b)
		e := math.Abs(hermite(a.t, b.t, a.z, b.z, d0, d1, m.t) - m.z)
		return m, e, e
	})
	pt := probitTable{kinks: len(kinks), worst: worst, evals: evals + len(ts)}
	pt.t, pt.z = make([]float64, len(ks)), make([]float64, len(ks))
	pt.d0, pt.d1 = make([]float64, len(ks)-1), make([]float64, len(ks)-1)
	for i := range ks {
		pt.t[i], pt.z[i] = ks[i].t, ks[i].z
		if i+1 < len(ks) {
			pt.d0[i], pt.d1[i] = slopes(&ks[i], &ks[i+1])
		}
	}
	return pt
}

// monoSlopes limits the end slopes d0, d1 of a cubic over a step h from
// z0 to z1 so that it is monotone (Fritsch and Carlson 1980): both of the
// secant's sign, and α² + β² <= 9 for α, β the slopes over the secant.
func monoSlopes(h, z0, z1, d0, d1 float64) (float64, float64) {
	del := (z1 - z0) / h
	if del == 0 || math.IsNaN(del) || math.IsInf(del, 0) {
		return 0, 0
	}
	a, b := d0/del, d1/del
	if !(a >= 0) {
		a = 0
	}
	if !(b >= 0) {
		b = 0
	}
	if r := a*a + b*b; r > 9 {
		tau := 3 / math.Sqrt(r)
		a, b = tau*a, tau*b
	}
	return a * del, b * del
}

// CDF returns P(lifetime <= t).
func (tb tabulated) CDF(t float64) float64 {
	switch {
	case math.IsNaN(t) || tb.t == nil:
		return math.NaN()
	case t >= tb.cal:
		return 1
	case t <= 0:
		return 0
	}
	return normSurv(-tb.zAt(t))
}

// Survival returns P(lifetime > t), directly.
func (tb tabulated) Survival(t float64) float64 {
	hint := 0 // no interval: a search
	return tb.survivalNear(t, &hint)
}

// survivalNear is Survival, reading the table by zAtNear.
func (tb *tabulated) survivalNear(t float64, hint *int) float64 {
	switch {
	case math.IsNaN(t) || tb.t == nil:
		return math.NaN()
	case t >= tb.cal:
		return 0
	case t <= 0:
		return 1
	}
	return normSurv(tb.zAtNear(t, hint))
}

// invert returns the t with interpolated probit zt (along the end slopes
// beyond the table).
func (tb *tabulated) invert(zt float64) float64 {
	n := len(tb.z)
	if zt <= tb.z[0] {
		if tb.d0[0] > 0 {
			return max(0, tb.t[0]-(tb.z[0]-zt)/tb.d0[0])
		}
		return tb.t[0]
	}
	if zt >= tb.z[n-1] {
		if d := tb.d1[len(tb.d1)-1]; d > 0 && !math.IsInf(zt, 1) {
			return min(tb.cal, tb.t[n-1]+(zt-tb.z[n-1])/d)
		}
		return tb.t[n-1]
	}
	i := sort.SearchFloat64s(tb.z, zt) // z[i-1] < zt <= z[i]
	if i == 0 {
		return tb.t[0]
	}
	a, b := tb.t[i-1], tb.t[i]
	for range 100 {
		m := 0.5 * (a + b)
		if m == a || m == b {
			break
		}
		if hermite(tb.t[i-1], tb.t[i], tb.z[i-1], tb.z[i], tb.d0[i-1], tb.d1[i-1], m) >= zt {
			b = m
		} else {
			a = m
		}
	}
	return b
}

// Quantile returns inf{t : CDF(t) >= p}.
func (tb tabulated) Quantile(p float64) float64 {
	switch {
	case tb.t == nil || !(p >= 0 && p <= 1):
		return math.NaN()
	case p == 0:
		return 0
	case p == 1:
		return tb.cal
	case p > 1-tb.atom:
		return tb.cal
	}
	return tb.invert(dist.MustNormal(0, 1).Quantile(p))
}

// UpperQuantile returns inf{t : Survival(t) <= q}.
func (tb tabulated) UpperQuantile(q float64) float64 {
	switch {
	case tb.t == nil || !(q >= 0 && q <= 1):
		return math.NaN()
	case q == 1:
		return 0
	case q == 0:
		return tb.cal
	case q < tb.atom:
		return tb.cal
	}
	return tb.invert(dist.MustNormal(0, 1).UpperQuantile(q))
}

func (tb tabulated) moments() {
	tb.lz.once.Do(func() {
		tb.lz.mean, tb.lz.vari, tb.lz.meanErr, tb.lz.varErr = tb.integrateMoments()
	})
}

// integrateMoments returns the table's mean (s) and variance (s²) with
// bounds on their absolute errors (s, s²).
//
// ∫_0^lo S = lo (within lo·F(lo), F(lo) = Φ(z_0) about 1e-14); ∫_lo^hi S
// and ∫_lo^hi 2t·S by the 4-point Gauss–Legendre rule on each interval of
// the table, where S = Φ̄(z) of a cubic z (probitTable), with the rule's
// error bounded on each interval from the cubic's derivatives
// (momentRuleBound); the atom at the calendar limit adds its mass times the
// limit. Beyond the table's end the survival is below 1e-14 (or 0 from the
// calendar limit on, where the table ends) and left out: along the end
// slope d it adds ∫_hi^∞ S = (φ(z) − z·Φ̄(z))/d and ∫_hi^∞ 2(t − hi)·S <=
// Φ̄(z)/d² (for z = z_n > 0: Φ̄(z) <= φ(z)/z, Mills' ratio), counted as
// error. (The 3–7 Gauss–Kronrod rule on each interval, before, took seven
// values of S an interval, three for the rule and four for its error
// estimate; the 3-point rule alone, with the same kind of bound, states
// about 1e-8 of the mean on the test sites' short lives, 500 times its
// true error. TestTabulatedMomentsAgainstFixedRule checks the bounds
// against gonum's 60-point rule on every interval.)
func (tb tabulated) integrateMoments() (mean, vari, meanErr, varErr float64) {
	lo, hi := tb.t[0], tb.t[len(tb.t)-1]
	scale := hi
	// The 4-point rule on [−1, 1] (glRule: gonum's nodes, as the floor
	// integral's).
	xs, ws := glRule(4)
	var v0, v1, b0, b1 float64 // ∫S, ∫2(t/scale)·S and their rules' error bounds
	for i := 0; i+1 < len(tb.t); i++ {
		t0, t1 := tb.t[i], tb.t[i+1]
		h := t1 - t0
		if !(h > 0) {
			continue
		}
		z0, z1, d0, d1 := tb.z[i], tb.z[i+1], tb.d0[i], tb.d1[i]
		var s0, s1 float64
		for q, u := range xs {
			w := ws[q]
			s := (1 + u) / 2 // the node's place in [0, 1]
			t := t0 + h*s
			sv := normSurv(hermiteAt(h, s, z0, z1, d0, d1))
			s0 += w * sv
			s1 += w * 2 * (t / scale) * sv
		}
		v0 += h / 2 * s0
		v1 += h / 2 * s1
		f7, f8 := momentRuleBound(h, z0, z1, d0, d1)
		// The 4-point rule's error, (n!)⁴/((2n + 1)·((2n)!)³)·h⁹·f⁽⁸⁾(ξ)
		// for n = 4 (Abramowitz and Stegun 25.4.30), and for 2(t/scale)·S
		// by Leibniz's rule, (2/scale)·(t·S⁽⁸⁾ + 8·S⁽⁷⁾) with t <= t1.
		const c4 = 331776.0 / (9 * 40320 * 40320 * 40320)
		h3 := h * h * h
		h9 := h3 * h3 * h3
		b0 += c4 * h9 * f8
		b1 += c4 * h9 * 2 / scale * (math.Abs(t1)*f8 + 8*f7)
	}
	mean = lo + v0
	second := lo*lo + v1*scale
	fLo := normSurv(-tb.z[0])
	e1, e2 := b0+lo*fLo, b1*scale+lo*lo*fLo
	if hi < tb.cal {
		z, d := tb.z[len(tb.z)-1], tb.d1[len(tb.d1)-1]
		if d > 0 && z > 0 {
			i0, i1 := (normPDF(z)-z*normSurv(z))/d, normSurv(z)/(d*d)
			e1 += i0
			e2 += 2*hi*i0 + i1
		} else {
			e1, e2 = math.Inf(1), math.Inf(1)
		}
	}
	// Rounding: a few units in the last place of each sum, and the
	// survival's own error (mills.UpperMaxRelErr) over the span.
	e1 += 4*0x1p-52*math.Abs(mean) + 1e-14*(hi-lo)
	e2 += 4*0x1p-52*math.Abs(second) + 2e-14*hi*(hi-lo)
	vari = max(0, second-mean*mean)
	return mean, vari, e1, e2 + 2*math.Abs(mean)*e1 + e1*e1
}

// momentMaxHe returns a bound on max_x |He_k(x)|·φ(x) for k = 0, …, 7
// (the probabilists' Hermite polynomials times the normal density: the
// (k+1)-th derivative of Φ̄ up to sign; the maxima 0.398942, 0.241971,
// 0.398942, 0.550588, 1.196827, 2.307106, 5.984134, 14.177977), each
// rounded up in its fourth digit; TestMomentMaxHe checks them on a dense
// grid.
func momentMaxHe(k int) float64 {
	switch k {
	case 0, 2:
		return 0.3990
	case 1:
		return 0.2420
	case 3:
		return 0.5506
	case 4:
		return 1.1969
	case 5:
		return 2.3072
	case 6:
		return 5.985
	}
	return 14.18
}

// momentRuleBound returns bounds on |S⁽⁷⁾| and |S⁽⁸⁾| over an interval of
// length h on which S(t) = Φ̄(z(t)) with z the cubic Hermite interpolant
// of (z0, d0) and (z1, d1): by Faà di Bruno's formula,
// S⁽ⁿ⁾ = Σ Φ̄⁽ᵏ⁾(z)·B_{n,k}(z′, z″, z‴), with |Φ̄⁽ᵏ⁾| <= momentMaxHe[k−1],
// the partial Bell polynomials' coefficients non-negative, and |z′|, |z″|,
// |z‴| at most their largest over the interval (z⁗ = 0).
func momentRuleBound(h, z0, z1, d0, d1 float64) (f7, f8 float64) {
	// z(t0 + s) = z0 + d0·s + c2·s² + c3·s³ on [0, h].
	del := (z1 - z0) / h
	c2 := (3*del - 2*d0 - d1) / h
	c3 := (d0 + d1 - 2*del) / (h * h)
	dz := func(s float64) float64 { return d0 + 2*c2*s + 3*c3*s*s }
	D1 := max(math.Abs(d0), math.Abs(dz(h)))
	if c3 != 0 {
		if s := -c2 / (3 * c3); s > 0 && s < h {
			D1 = max(D1, math.Abs(dz(s)))
		}
	}
	D2 := max(math.Abs(2*c2), math.Abs(2*c2+6*c3*h))
	D3 := math.Abs(6 * c3)
	return bellBounds78(D1, D2, D3)
}

// bellPowers returns the powers bellBound's terms take: D1^j (j <= 8),
// (D2/2)^j (j <= 4) and (D3/6)^j (j <= 2).
func bellPowers(D1, D2, D3 float64) (p1 [9]float64, p2 [5]float64, p3 [3]float64) {
	p1[0], p2[0], p3[0] = 1, 1, 1
	for j := 1; j < len(p1); j++ {
		p1[j] = p1[j-1] * D1
	}
	for j := 1; j < len(p2); j++ {
		p2[j] = p2[j-1] * D2 / 2
	}
	for j := 1; j < len(p3); j++ {
		p3[j] = p3[j-1] * D3 / 6
	}
	return p1, p2, p3
}

// bellTerm is one term of bellBound's sum: D1^j1·(D2/2)^j2·(D3/6)^j3
// times k, the integer n!/(j1!·j2!·j3!) times momentMaxHe(j1 + j2 + j3 − 1)
// (one rounding, as bellBound forms it).
type bellTerm struct {
	j1, j2, j3 int
	k          float64
}

// bellTerms lists bellBound's terms for n = 7 and n = 8, in its order:
// computed once, never written after.
var bellTerms = [2][]bellTerm{makeBellTerms(7), makeBellTerms(8)}

// makeBellTerms returns bellBound's terms for n in its order of summation.
func makeBellTerms(n int) []bellTerm {
	fact := [9]float64{1, 1, 2, 6, 24, 120, 720, 5040, 40320}
	var out []bellTerm
	for j3 := 0; 3*j3 <= n; j3++ {
		for j2 := 0; 3*j3+2*j2 <= n; j2++ {
			j1 := n - 3*j3 - 2*j2
			c := fact[n] / (fact[j1] * fact[j2] * fact[j3])
			out = append(out, bellTerm{j1: j1, j2: j2, j3: j3, k: c * momentMaxHe(j1+j2+j3-1)})
		}
	}
	return out
}

// bellBounds78 is bellBound(7, …) and bellBound(8, …), the same bits, from
// one set of powers and the terms' coefficients formed once (bellTerms):
// the tables' moment rule asks for both on every interval.
func bellBounds78(D1, D2, D3 float64) (f7, f8 float64) {
	p1, p2, p3 := bellPowers(D1, D2, D3)
	var sum [2]float64
	for i, terms := range bellTerms {
		for _, t := range terms {
			sum[i] += t.k * p1[t.j1] * p2[t.j2] * p3[t.j3]
		}
	}
	return sum[0], sum[1]
}

// bellBound returns Σ_k momentMaxHe(k−1)·B_{n,k}(D1, D2, D3, 0, …) for
// n <= 8: the sum over j1 + 2·j2 + 3·j3 = n of
// n!/(j1!·j2!·j3!·2^j2·6^j3)·D1^j1·D2^j2·D3^j3 times
// momentMaxHe(j1 + j2 + j3 − 1).
func bellBound(n int, D1, D2, D3 float64) float64 {
	fact := [9]float64{1, 1, 2, 6, 24, 120, 720, 5040, 40320}
	p1, p2, p3 := bellPowers(D1, D2, D3)
	sum := 0.0
	for j3 := 0; 3*j3 <= n; j3++ {
		for j2 := 0; 3*j3+2*j2 <= n; j2++ {
			j1 := n - 3*j3 - 2*j2
			c := fact[n] / (fact[j1] * fact[j2] * fact[j3])
			sum += c * momentMaxHe(j1+j2+j3-1) * p1[j1] * p2[j2] * p3[j3]
		}
	}
	return sum
}

// momentError returns the estimated absolute errors of Mean (s) and
// Variance (s²): the quadrature's estimate, the tails left out and
// rounding (integrateMoments).
func (tb tabulated) momentError() (mean, vari float64) {
	if tb.t == nil {
		return math.NaN(), math.NaN()
	}
	tb.moments()
	return tb.lz.meanErr, tb.lz.varErr
}

// Mean returns the mean lifetime (s), by quadrature of the table on first
// use.
func (tb tabulated) Mean() float64 {
	if tb.t == nil {
		return math.NaN()
	}
	tb.moments()
	return tb.lz.mean
}

// Variance returns the variance of the lifetime (s²), with Mean.
func (tb tabulated) Variance() float64 {
	if tb.t == nil {
		return math.NaN()
	}
	tb.moments()
	return tb.lz.vari
}

// Support returns that of the node law.
func (tb tabulated) Support() (lo, hi float64) { return tb.src.Support() }

// Atoms returns the atom at the calendar limit, if any.
func (tb tabulated) Atoms() []dist.Atom {
	if tb.atom > 0 {
		return []dist.Atom{{Value: tb.cal, Mass: tb.atom}}
	}
	return nil
}

// Rand draws by inverting a uniform.
func (tb tabulated) Rand(r *rand.Rand) float64 {
	u := r.Float64()
	if u < 0.5 {
		return tb.Quantile(u)
	}
	return tb.UpperQuantile(1 - u)
}

// Accuracy reports the node law's stated error plus the table's.
func (tb tabulated) Accuracy() dist.Accuracy { return tb.acc }

// String summarises the law in years.
func (tb tabulated) String() string {
	return fmt.Sprintf("NodeLifetime(median=%.4g y, 5–95%%=[%.4g, %.4g] y; %d-point table)",
		Years(tb.Quantile(0.5)), Years(tb.Quantile(0.05)), Years(tb.Quantile(0.95)), len(tb.t))
}
