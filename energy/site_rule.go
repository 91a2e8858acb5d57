package energy

import (
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/fexp"
	"github.com/joulelaw/joulelaw/internal/mills"
	"github.com/joulelaw/joulelaw/internal/root"
	"github.com/joulelaw/joulelaw/orderstat"
)

// The rule over the shared factors, and its error.
//
// Each shared factor with spread (the batch factor u = (b − 1)/σb and the
// temperature offset v = ΔT/σT, in standard normal units) gets a rule of
// nodes and weights; a Site builds each group's conditional node law at
// every node of the product rule, and its laws are the mixtures over it.
// A factor whose conditional laws move smoothly gets a Gauss–Hermite rule.
// The temperature offset moves them through the cells' data-sheet tables,
// which are piecewise linear in temperature: where the coldest day crosses
// a temperature of the voltage curve's resistance table, the lifetime's
// slope against the offset jumps (by a factor 2.6 in the demo), and a
// Gauss rule over the whole line converges slowly. Those kinks split the
// line into pieces, each with a Gauss–Legendre rule in y = Φ(v/2) (so
// that each piece's nodes follow a normal law twice as wide as the
// factor's: its middle and its tail both get nodes); a factor needing more
// than sharedMaxHermite nodes takes that rule too.
//
// The rule's error is estimated against a reference: the conditional
// probits are interpolated from the nodes (local cubics within a piece,
// lines beyond its outermost nodes; barycentric form, Berrut and
// Trefethen, SIAM Review 46 (2004) 501–517) onto a fine grid (trapezoid
// weights times the normal density over ±4.5 standard deviations), and
// the law is mixed there. The stated error at a time is the rule's
// difference from the reference, plus the reference's own: the difference
// from the interpolant on the neighbouring stencil (see stencils; the
// interpolation), from the grid of every other point (the fine rule)
// and the normal mass beyond ±4.5 (6.8e-6 a factor). The fine grid's step
// follows the probits' slope against the factor (fitFine), down to 1/64
// sd. NewSite raises the rule's order in the factor whose part is the
// larger until the node laws' and first failures' estimates are below
// sharedTol, or a cap is reached.
const (
	sharedTol   = 1e-2 // target of the rule's estimated CDF error (the demo: 3 × 7 nodes)
	sharedFineZ = 4.5  // the fine grid's range (standard deviations)
	// sharedFineStep is the fine grid's widest step (sd): 21 points a
	// factor, where the probits move by less than sharedFineMove a step
	// (fitFine refines it where they are steeper).
	// TestSiteRuleErrorAgainstFinerReference: the rule errs by at most 0.84
	// of its estimate against a grid 4× finer, on a site at the widest
	// step and on steep sites where fitFine refines it. At 0.75 (13
	// points, tried) the demo took 0.94 of the instructions, but a site of
	// four groups of 8,000 nodes (BenchmarkSiteScaling) had its first
	// failures' estimates pass sharedTol and its rule refined: 2.2 times
	// the CPU of the same site with 80 nodes a group, where its cost must
	// be flat in nodes.
	sharedFineStep = 0.5
	// sharedFineMove is the most the groups' probits move from one fine
	// point to the next (fitFine). The grid's own error is estimated (every
	// other point) and stated; at 0.125 (before) the demo's temperature
	// grid took 53 points where 29 now give the same stated errors within
	// 3 % (the largest estimate 0.00621 against 0.00620), the rule's error
	// probes 0.89 of the demo's instructions; at 0.5 the estimates pass
	// sharedTol and the batch rule is raised to 5 nodes (1.9 times the
	// instructions).
	sharedFineMove = 0.25
	sharedMaxEnvs  = 400 // cap on the product rule's nodes
	sharedMinPiece = 0.02
	// sharedPieceMin is the fewest nodes of a piece of a factor's rule,
	// sharedSmallMin of a piece with less than sharedSmallPiece of the
	// factor's mass (the demo: 4 + 3 nodes over a kink at +0.5 sd, 0.69
	// and 0.31 of the mass; 4 + 4 before, 0.91 of the demo's CPU since).
	sharedPieceMin   = 4
	sharedSmallMin   = 3
	sharedSmallPiece = 0.4
	sharedStretch    = 2.0 // the width of the Legendre pieces' variable (see newSharedFactor)
	// sharedMaxHermite is the largest Gauss–Hermite rule used: beyond it
	// the outer nodes reach far into the tails (±7.9 sd with 11 nodes,
	// beyond the offsets a climate allows) with weights below 1e-9; larger
	// orders take the Legendre rule in Φ(v/2), whose 31 nodes stay within
	// ±6 sd (60 °C at the largest temperature sd, 10 °C).
	sharedMaxHermite = 7
)

// sharedOrders are the orders a factor's rule takes, in turn.
var sharedOrders = [...]int{3, 5, 7, 11, 15, 21, 31}

// sharedFactor is a rule over one shared factor, in standard units.
type sharedFactor struct {
	edges []float64 // piece boundaries: −Inf, kinks, +Inf
	z, w  []float64 // nodes (ascending) and weights (summing to 1)
	piece []int     // each node's piece
	// fine grid: points, weights (trapezoid × normal density, summing to
	// 1) and the weights of every other point.
	fz, fw, fwc []float64
	// interpolation rows: lag's row i the weights of the nodes at fine
	// point i; lagr's without one node of each piece.
	lag, lagr interpRows
	// same[i]: lagr's row i is lag's (the same nodes and weights), so
	// that the two interpolants agree at fine point i bit for bit.
	same []bool
}

// interpRows are interpolation rows kept to their nodes' span: row i
// weighs the nodes off[i], off[i] + 1, … by w[i][0], w[i][1], … (a
// stencil's nodes are neighbours: a piece's nodes are).
type interpRows struct {
	w   [][]float64
	off []int
}

// set keeps row (weights over all nodes) as row i, trimmed to its
// non-zero span.
func (r *interpRows) set(i int, row []float64) {
	lo, hi := 0, len(row)
	for lo < hi-1 && row[lo] == 0 {
		lo++
	}
	for hi > lo+1 && row[hi-1] == 0 {
		hi--
	}
	r.w[i], r.off[i] = row[lo:hi], lo
}

// newSharedFactor returns the rule of order m over a factor with spread
// (kinks in standard units), or the single node 0 without spread.
func newSharedFactor(spread bool, kinks []float64, m int) sharedFactor {
	if !spread {
		one := interpRows{w: [][]float64{{1}}, off: []int{0}}
		return sharedFactor{edges: []float64{math.Inf(-1), math.Inf(1)}, z: []float64{0}, w: []float64{1}, piece: []int{0},
			fz: []float64{0}, fw: []float64{1}, fwc: []float64{1}, lag: one, lagr: one, same: []bool{true}}
	}
	// Pieces: kinks that leave each piece at least sharedMinPiece of the
	// normal mass.
	edges := []float64{math.Inf(-1)}
	ks := sortedUnique(append([]float64(nil), kinks...))
	for _, k := range ks {
		if normCDFz(k)-normCDFz(edges[len(edges)-1]) >= sharedMinPiece && normSurv(k) >= sharedMinPiece {
			edges = append(edges, k)
		}
	}
	edges = append(edges, math.Inf(1))
	f := sharedFactor{edges: edges}
	std := dist.MustNormal(0, 1)
	if len(edges) == 2 && m <= sharedMaxHermite {
		f.z, f.w = hermiteNodes(1, m)
		f.piece = make([]int, m)
	} else {
		for p := 0; p+1 < len(edges); p++ {
			qa, qb := normCDFz(edges[p]), normCDFz(edges[p+1])
			// A piece's nodes follow its mass, at least sharedPieceMin
			// (local cubics), or sharedSmallMin (quadratics) in a piece
			// with less than sharedSmallPiece of the mass: its part of
			// the mixture, and so of the rule's error, is smaller
			// (TestSiteKinkedRuleAgainstFinerRule: a kink at +0.5 sd, 4 + 3
			// nodes, within 0.32 of the estimate against a 21-node rule).
			np := max(sharedPieceMin, int(math.Round(float64(m)*(qb-qa))))
			if qb-qa < sharedSmallPiece {
				np = max(sharedSmallMin, int(math.Round(float64(m)*(qb-qa))))
			}
			x := make([]float64, np)
			w := make([]float64, np)
			// Gauss–Legendre in y = Φ(v/sharedStretch): nodes follow a
			// normal law twice as wide as the factor's, so that a piece's
			// tail has nodes too (a first failure's lower tail is set by
			// the factor's tail) and its middle is not left bare.
			const sh = sharedStretch
			quad.Legendre{}.FixedLocations(x, w, normCDFz(edges[p]/sh), normCDFz(edges[p+1]/sh))
			for i := range x {
				z := sh * std.Quantile(x[i])
				f.z = append(f.z, z)
				f.w = append(f.w, w[i]*sh*normPDF(z)/normPDF(z/sh))
				f.piece = append(f.piece, p)
			}
		}
		// Nodes ascending (the Legendre rule lists them descending).
		ord := make([]int, len(f.z))
		for i := range ord {
			ord[i] = i
		}
		sort.Slice(ord, func(a, b int) bool { return f.z[ord[a]] < f.z[ord[b]] })
		z, w, pc := make([]float64, len(ord)), make([]float64, len(ord)), make([]int, len(ord))
		for i, o := range ord {
			z[i], w[i], pc[i] = f.z[o], f.w[o], f.piece[o]
		}
		f.z, f.w, f.piece = z, w, pc
		tot := 0.0
		for _, w := range f.w {
			tot += w
		}
		for i := range f.w {
			f.w[i] /= tot
		}
	}
	f.setFine(sharedFineStep)
	return f
}

// finePoints returns the fine grid's points over ±sharedFineZ at about
// step apart: one more than a multiple of four, so that every other point
// (the coarse grid) is a grid of its own with both ends.
func finePoints(step float64) int {
	n := int(math.Round(2*sharedFineZ/step)) + 1
	if n%4 != 1 {
		n += 4 - (n-1)%4
	}
	return n
}

// setFine lays the fine grid of the reference at about step (standard
// deviations) over ±sharedFineZ (4k + 1 points, so that every other point
// is a grid of its own) with its interpolation rows.
func (f *sharedFactor) setFine(step float64) {
	// The fine grid.
	n := finePoints(step)
	h := 2 * sharedFineZ / float64(n-1)
	f.fz, f.fw, f.fwc = make([]float64, n), make([]float64, n), make([]float64, n)
	sw, sc := 0.0, 0.0
	for i := range n {
		f.fz[i] = -sharedFineZ + h*float64(i)
		d := normPDF(f.fz[i])
		if i == 0 || i == n-1 {
			d /= 2
		}
		f.fw[i] = d
		sw += d
		if i%2 == 0 {
			c := normPDF(f.fz[i])
			if i == 0 || i == n-1 {
				c /= 2
			}
			f.fwc[i] = c
			sc += c
		}
	}
	for i := range n {
		f.fw[i] /= sw
		f.fwc[i] /= sc
	}
	// Interpolation rows, piece by piece.
	f.lag = interpRows{w: make([][]float64, n), off: make([]int, n)}
	f.lagr = interpRows{w: make([][]float64, n), off: make([]int, n)}
	for i, x := range f.fz {
		p := sort.SearchFloat64s(f.edges, x) - 1
		p = max(0, min(p, len(f.edges)-2))
		var idx []int
		for j := range f.z {
			if f.piece[j] == p {
				idx = append(idx, j)
			}
		}
		main, alt := stencils(f.z, idx, x)
		f.lag.set(i, lagrangeRow(f.z, main, x))
		f.lagr.set(i, lagrangeRow(f.z, alt, x))
	}
	f.same = make([]bool, n)
	for i := range n {
		f.same[i] = f.lag.off[i] == f.lagr.off[i] && slices.Equal(f.lag.w[i], f.lagr.w[i])
	}
}

// stencils returns the nodes (indices into z, among idx, ascending in z)
// of the interpolant at x and of the alternative whose difference from it
// estimates its error: between a piece's nodes, the cubic through the two
// nodes on either side of x against the cubic shifted by one node (a
// quadratic against a line with three nodes in the piece); beyond its
// outermost node, the line through the two outermost against the
// quadratic through three (the probit is nearly linear in a factor far
// out, where the normal weight is small).
func stencils(z []float64, idx []int, x float64) (main, alt []int) {
	n := len(idx)
	if n == 1 {
		return idx, idx
	}
	switch {
	case x <= z[idx[0]]:
		return idx[:2], idx[:min(3, n)]
	case x >= z[idx[n-1]]:
		return idx[n-2:], idx[max(0, n-3):]
	}
	j := 0 // z[idx[j]] <= x < z[idx[j+1]]
	for j+2 < n && z[idx[j+1]] <= x {
		j++
	}
	win := func(lo, size int) []int {
		lo = max(0, min(lo, n-size))
		return idx[lo : lo+size]
	}
	if n < 4 {
		return win(j-1, n), win(j, 2)
	}
	main = win(j-1, 4)
	// The shift away from the nearer end of the piece.
	a, b := win(j-2, 4), win(j, 4)
	alt = a
	if a[0] == main[0] {
		alt = b
	}
	return main, alt
}

// lagrangeRow returns the weights over all nodes z (zero off idx) of the
// polynomial through the nodes idx, evaluated at x (barycentric form).
func lagrangeRow(z []float64, idx []int, x float64) []float64 {
	row := make([]float64, len(z))
	for _, j := range idx {
		if x == z[j] {
			row[j] = 1
			return row
		}
	}
	s := 0.0
	for _, j := range idx {
		b := 1.0
		for _, k := range idx {
			if k != j {
				b *= z[j] - z[k]
			}
		}
		row[j] = 1 / (b * (x - z[j]))
		s += row[j]
	}
	for _, j := range idx {
		row[j] /= s
	}
	return row
}

// normCDFz is Φ(z), with Φ(−∞) = 0 and Φ(∞) = 1.
func normCDFz(z float64) float64 { return normSurv(-z) }

// siteKinks returns the temperature offsets (°C) where a group's lifetime
// has a kink against the shared offset: where its coldest day (the
// coldest month's mean less half the daily swing) meets a temperature of
// its voltage curve's resistance table. The derating table's kinks enter
// through the year's mean derating, each with a twelfth of its weight,
// and are left to the rule (the estimate sees them).
func siteKinks(spec SiteSpec) []float64 {
	var ks []float64
	for _, g := range spec.Groups {
		th, vc := g.Node.Thermal, g.Node.Voltage
		if th == nil || vc == nil {
			continue
		}
		coldest := th.ReferenceTemperature
		if spec.Climate != nil {
			coldest = spec.Climate.Min()
		}
		for _, tc := range vc.ColdTemperatures {
			ks = append(ks, tc-coldest)
		}
	}
	return ks
}

// fitFine refines each factor's fine grid to the steepness of the laws:
// a first failure among many nodes rises over about a quarter of a unit of
// the groups' probit, so the grid's step is kept to sharedFineMove over
// the largest probit slope against the factor (measured between
// neighbouring nodes, at the times where the groups' central tables are
// at 1e-3, 0.1 and 0.5), down to 1/64 sd (1/32 with both factors spread);
// the grid's own error, from every other point, is part of the stated
// error.
func (s *Site) fitFine() {
	nv := len(s.fac[1].z)
	for d := range 2 {
		f := &s.fac[d]
		if len(f.z) < 2 {
			continue
		}
		o := &s.fac[1-d]
		mid := len(o.z) / 2
		env := func(i int) *siteEnv {
			if d == 0 {
				return &s.envs[i*nv+mid]
			}
			return &s.envs[mid*nv+i]
		}
		slope := 0.0
		for g := range s.names {
			c := env(len(f.z) / 2).laws[g]
			for _, p := range []float64{1e-3, 0.1, 0.5} {
				t := c.Quantile(p)
				if !(t > 0 && t < c.cal) {
					continue
				}
				for i := 0; i+1 < len(f.z); i++ {
					dz := math.Abs(env(i + 1).laws[g].zAt(t) - env(i).laws[g].zAt(t))
					slope = max(slope, dz/(f.z[i+1]-f.z[i]))
				}
			}
		}
		least := 1.0 / 64
		if len(o.z) > 1 {
			least = 1.0 / 32
		}
		if step := max(least, sharedFineMove/slope); step < sharedFineStep {
			f.setFine(step)
		}
	}
}

// Modes of a factor in a mixture evaluation.
const (
	modeNodes   = iota // the rule's nodes and weights (the law as computed)
	modeFine           // the fine grid, interpolated
	modeReduced        // the fine grid, interpolated without one node a piece
	modeCoarse         // every other point of the fine grid
)

// lawKind says which conditional law a mixture evaluation mixes.
type lawKind int

const (
	kindNode  lawKind = iota // a node of one group
	kindFirst                // the first failure among one group's nodes
	kindFleet                // the first failure among all nodes
	kindKth                  // the k-th failure among all nodes (P(count >= k))
	kindCount                // the count of failures (P(count <= k))
)

// condAt returns the conditional CDF of kind at the shared point whose
// groups' probits are zs (P(run out by t) = Φ(z)), with g the group and k
// the count of kinds that need them; dead marks groups past their calendar
// limit.
//
// The first failures' survivals are taken in the log domain directly
// (mills.LogUpper: log1p(−Φ(z)) for the probits below −0.66 that dominate,
// never the log of 1 − Φ(z) rounded; within 1e-14 relative for z > −9).
//
// rep, when not nil, names for each group the first whose probit is the
// group's (rowReps): a repeated group's function values are copied from
// it (probs holds them), the same bits in the same order of summation.
func (s *Site) condAt(kind lawKind, g int, k int64, zs []float64, probs []float64, rep []int) float64 {
	switch kind {
	case kindNode:
		return normSurv(-zs[g])
	case kindFirst:
		if zs[g] >= s.sure[g] {
			return 1 // what the formula gives there (firstSure)
		}
		return fexp.OneMinusExp(float64(s.counts[g]) * mills.LogUpper(zs[g]))
	case kindFleet:
		// One group's certain first failure makes the fleet's certain: its
		// term alone takes l below −56·ln 2 (every term is <= 0).
		for h, z := range zs {
			if z >= s.sure[h] {
				return 1
			}
		}
		l := 0.0
		for h, z := range zs {
			if rep != nil && rep[h] != h {
				probs[h] = probs[rep[h]]
			} else {
				probs[h] = mills.LogUpper(z)
			}
			l += float64(s.counts[h]) * probs[h]
		}
		return fexp.OneMinusExp(l)
	}
	for h, z := range zs {
		if rep != nil && rep[h] != h {
			probs[h] = probs[rep[h]]
		} else {
			probs[h] = normSurv(-z)
		}
	}
	c, err := orderstat.PoissonBinomial(probs, s.counts)
	if err != nil {
		return math.NaN()
	}
	if kind == kindKth {
		return c.Survival(float64(k) - 0.5)
	}
	return c.CDF(float64(k))
}

// sureLog is the log survival below which a first failure is certain to
// double precision: 1 − e^l is 1 for l <= −56·ln 2 ≈ −38.8 (e^l is then
// below half a unit in the last place of 1, 2^-54: fexp.OneMinusExp
// returns 1 exactly there, as −expm1(l) does), with 3 % to spare.
const sureLog = -40.0

// firstSure returns the probit z from which the first failure among n
// nodes whose probits are z is certain to double precision: n·log Φ̄(z)
// <= sureLog, z = Φ̄⁻¹(e^{sureLog/n}) (8.6 for one node, −1.6 for 1,000).
// From it on condAt's formula, 1 − e^{n·log Φ̄(z)} (fexp.OneMinusExp),
// gives 1 exactly (the quantile's and LogUpper's errors, under 1e-13
// relative, against the 3 % of sureLog to spare), and condAt returns 1
// without it: the same bits, TestFirstSure.
func firstSure(n int64) float64 {
	std := dist.MustNormal(0, 1)
	// From the smaller tail: Φ(z) = 1 − e^{sureLog/n} for large n.
	if p := -math.Expm1(sureLog / float64(n)); p <= 0.5 {
		return std.Quantile(p)
	}
	return std.UpperQuantile(math.Exp(sureLog / float64(n)))
}

// nodeZ returns the probits at t of the groups' conditional node laws at
// the rule's nodes, Z[g·E + e] for the environments e, for the groups with
// want[g] (every group when want is nil); the list ends with the last
// group wanted (the others are not read).
func (s *Site) nodeZ(t float64, want []bool) []float64 {
	return s.nodeZInto(nil, nil, t, want)
}

// nodeZInto is nodeZ into dst's array where it is large enough, each
// table looked up from its interval in hint (hint[g·E + e], kept for the
// next call: a root search's times close in on one point) where hint is
// not nil; the same values either way.
func (s *Site) nodeZInto(dst []float64, hint []int, t float64, want []bool) []float64 {
	E := len(s.envs)
	G := len(s.names)
	if want != nil {
		G = 0
		for g, w := range want {
			if w {
				G = g + 1
			}
		}
	}
	Z := grown(dst, G*E)
	for g := range G {
		if want != nil && !want[g] {
			continue
		}
		if j := s.sameAs(g); j != g && (want == nil || want[j]) {
			copy(Z[g*E:(g+1)*E], Z[j*E:(j+1)*E]) // the same tables
			continue
		}
		for e := range s.envs {
			if hint != nil {
				Z[g*E+e] = s.probitNear(&s.envs[e].laws[g], t, &hint[g*E+e])
			} else {
				Z[g*E+e] = s.probitAt(&s.envs[e].laws[g], t)
			}
		}
	}
	return Z
}

// sameAs returns the first group whose tables are g's (Site.same), or g.
func (s *Site) sameAs(g int) int {
	if g < len(s.same) {
		return s.same[g]
	}
	return g
}

// rowReps returns, for each group h in [g0, g1), the first group of that
// range whose probits in Z are h's bit for bit (the candidate is the
// first group with h's tables, sameAs), or h itself; nil when no group
// repeats another. Z may be a caller's own probits (a design's, a
// policy's), so the rows themselves are compared.
func (s *Site) rowReps(sc *ruleScratch, Z []float64, g0, g1 int) []int {
	E := len(s.envs)
	var rep []int
	for h := g0; h < g1; h++ {
		j := s.sameAs(h)
		if j == h || j < g0 {
			continue
		}
		a, b := Z[h*E:(h+1)*E], Z[j*E:(j+1)*E]
		same := true
		for e := range a {
			if math.Float64bits(a[e]) != math.Float64bits(b[e]) {
				same = false
				break
			}
		}
		if !same {
			continue
		}
		if rep == nil {
			if cap(sc.rep) < g1 {
				sc.rep = make([]int, g1)
			}
			rep = sc.rep[:g1]
			for i := range rep {
				rep[i] = i
			}
		}
		rep[h] = rep[j]
	}
	return rep
}

// interp returns Σ_j w_j·y[(off + j)·stride] over row i of rows, or y's
// common value where the values are infinite (past the calendar limit, or
// before time 0: the same at every node of a group).
func interp(rows *interpRows, i int, y []float64, stride int) float64 {
	if stride == 1 {
		return interp1(rows, i, y)
	}
	if math.IsInf(y[0], 0) {
		return y[0]
	}
	z := 0.0
	y = y[rows.off[i]*stride:]
	for j, l := range rows.w[i] {
		if l != 0 {
			z += l * y[j*stride]
		}
	}
	return z
}

// interpRow fills dst[j] with interp(rows, i, y[j:], stride) for each j
// in [0, len(dst)): one row of rows along a strided factor for each of
// the other factor's len(dst) nodes (the same sums, term by term).
func interpRow(dst []float64, rows *interpRows, i int, y []float64, stride int) {
	w, off := rows.w[i], rows.off[i]
	for j := range dst {
		if math.IsInf(y[j], 0) {
			dst[j] = y[j]
			continue
		}
		z := 0.0
		for k, l := range w {
			if l != 0 {
				z += l * y[(off+k)*stride+j]
			}
		}
		dst[j] = z
	}
}

// interp1 is interp for stride 1 (the same sum, term by term), the row's
// values sliced once: the fine grid's inner loops read it.
func interp1(rows *interpRows, i int, y []float64) float64 {
	if math.IsInf(y[0], 0) {
		return y[0]
	}
	return rowDot(rows.w[i], y[rows.off[i]:])
}

// rowDot returns Σ_j w_j·y_j over w's terms that are not 0, in order
// (interp1's sum, small enough to be inlined in the fine grid's loops).
func rowDot(w, y []float64) float64 {
	y = y[:len(w)]
	z := 0.0
	for j, l := range w {
		if l != 0 {
			z += l * y[j]
		}
	}
	return z
}

// ruleScratch holds the working arrays of the rule's error passes (mixZ,
// interpBound, nodeZ in a root search), reused from pass to pass by one
// caller at a time: a probe chain makes its own, so that a Site stays safe
// for concurrent use.
type ruleScratch struct {
	y, zs, probs []float64 // mixZ
	rep          []int     // rowReps
	y0, y1, bnd  []float64 // interpBound
	z            []float64 // nodeZ within probeTimes' root search
	z0           []float64 // fineBounds' probits at the fine points
	hint         []int     // and its tables' intervals (nodeZInto)
	want         []bool
	// fineBounds' weights at the fine points (pointWeights), for the
	// factors whose fine weights start at pwU and pwV.
	pwU, pwV *float64
	pwDs     [2]bool
	pw       [][maxModes]float64
}

// hints returns sc.hint with length n, made (no interval yet: 0) on the
// first call and kept from call to call.
func (sc *ruleScratch) hints(n int) []int {
	if len(sc.hint) != n {
		sc.hint = make([]int, n)
	}
	return sc.hint
}

// pointWeights returns the weights of fineBounds' modes at each fine
// point a·pv + b (the fine grid's, then every other point's in u and in v
// for the factors with ds; 0 below 1e-14, and for the modes left out),
// made on the first call for these factors and kept.
func (sc *ruleScratch) pointWeights(fu, fv *sharedFactor, ds [2]bool) [][maxModes]float64 {
	if sc.pwU == &fu.fw[0] && sc.pwV == &fv.fw[0] && sc.pwDs == ds {
		return sc.pw
	}
	wus := [maxModes][]float64{fu.fw}
	wvs := [maxModes][]float64{fv.fw}
	M := 1
	if ds[0] {
		wus[M], wvs[M] = fu.fwc, fv.fw
		M++
	}
	if ds[1] {
		wus[M], wvs[M] = fu.fw, fv.fwc
		M++
	}
	pu, pv := len(fu.fz), len(fv.fz)
	pw := make([][maxModes]float64, pu*pv)
	for a := range pu {
		for b := range pv {
			for i := range M {
				if wus[i][a] != 0 {
					if w := wus[i][a] * wvs[i][b]; w >= 1e-14 {
						pw[a*pv+b][i] = w
					}
				}
			}
		}
	}
	sc.pwU, sc.pwV, sc.pwDs, sc.pw = &fu.fw[0], &fv.fw[0], ds, pw
	return pw
}

// wants returns the groups kind reads for nodeZ: g alone (sc.want, kept
// from call to call) for a node law or a group's first failure, all (nil)
// otherwise.
func (sc *ruleScratch) wants(kind lawKind, g, groups int) []bool {
	if kind != kindNode && kind != kindFirst {
		return nil
	}
	sc.want = grown(sc.want, groups)
	sc.want[g] = true
	return sc.want
}

// grown returns b with length n, its values zeroed, reusing its array
// where it is large enough.
func grown[E any](b []E, n int) []E {
	if cap(b) < n {
		return make([]E, n)
	}
	b = b[:n]
	clear(b)
	return b
}

// maxModes is the most modes mixZ evaluates in one pass (the reference
// and the coarse grid in each of two factors).
const maxModes = 3

// mixZ returns the mixtures over the shared factors of kind's conditional
// CDF, one for each of modes (each factor in the given mode, at most
// maxModes), from the node probits Z (nodeZ). The modes must share their
// points and interpolation rows factor by factor (modeFine with
// modeCoarse, or the same mode): the conditional CDF is evaluated once a
// point and weighted for each.
func (s *Site) mixZ(Z []float64, kind lawKind, g int, k int64, modes ...[2]int) [maxModes]float64 {
	return s.mixZs(new(ruleScratch), Z, kind, g, k, modes...)
}

// mixZs is mixZ with the working arrays of sc.
func (s *Site) mixZs(sc *ruleScratch, Z []float64, kind lawKind, g int, k int64, modes ...[2]int) [maxModes]float64 {
	fu, fv := &s.fac[0], &s.fac[1]
	nv := len(fv.z)
	E := len(s.envs)
	G := len(s.names)
	pick := func(f *sharedFactor, m int) (pts int, w []float64, rows *interpRows) {
		switch m {
		case modeNodes:
			return len(f.z), f.w, nil
		case modeCoarse:
			return len(f.fz), f.fwc, &f.lag
		case modeReduced:
			return len(f.fz), f.fw, &f.lagr
		}
		return len(f.fz), f.fw, &f.lag
	}
	M := len(modes)
	var wus, wvs [maxModes][]float64
	var pu, pv int
	var ru, rv *interpRows
	for i, m := range modes {
		pu, wus[i], ru = pick(fu, m[0])
		pv, wvs[i], rv = pick(fv, m[1])
	}
	if M == 1 && (kind == kindNode || kind == kindFirst) {
		var sums [maxModes]float64
		sums[0] = s.mixOne(sc, Z, kind, g, pu, pv, wus[0], wvs[0], ru, rv)
		return sums
	}
	// The groups the conditional CDF reads: g alone, or all of them.
	one := kind == kindNode || kind == kindFirst
	g0, g1 := 0, G
	if one {
		g0, g1 = g, g+1
	}
	usedU := func(a int) bool {
		for i := range M {
			if wus[i][a] != 0 {
				return true
			}
		}
		return false
	}
	// Groups whose probits repeat an earlier group's are read from it.
	var rep []int
	if !one {
		rep = s.rowReps(sc, Z, g0, g1)
	}
	// Along u: Y[h − g0][a][j] for the u points a and the v nodes j
	// (environment e = iu·nv + iv).
	sc.y = grown(sc.y, (g1-g0)*pu*nv)
	Y := sc.y
	for h := g0; h < g1; h++ {
		if rep != nil && rep[h] != h {
			continue
		}
		zh := Z[h*E : (h+1)*E]
		for a := range pu {
			if !usedU(a) {
				continue
			}
			row := Y[((h-g0)*pu+a)*nv : ((h-g0)*pu+a+1)*nv]
			if ru == nil {
				copy(row, zh[a*nv:(a+1)*nv])
			} else {
				interpRow(row, ru, a, zh, nv)
			}
		}
	}
	sc.zs = grown(sc.zs, G)
	sc.probs = grown(sc.probs, G)
	zs, probs := sc.zs, sc.probs
	var sums, ws [maxModes]float64
	for a := range pu {
		if !usedU(a) {
			continue
		}
		for b := range pv {
			any := false
			for i := range M {
				ws[i] = 0
				if wus[i][a] != 0 {
					if w := wus[i][a] * wvs[i][b]; w >= 1e-14 {
						ws[i], any = w, true
					}
				}
			}
			if !any {
				continue
			}
			for h := g0; h < g1; h++ {
				if rep != nil && rep[h] != h {
					zs[h] = zs[rep[h]]
					continue
				}
				y := Y[((h-g0)*pu+a)*nv : ((h-g0)*pu+a+1)*nv]
				if rv == nil {
					zs[h] = y[b]
				} else {
					zs[h] = interp1(rv, b, y)
				}
			}
			addWeighted(&sums, &ws, M, s.condAt(kind, g, k, zs, probs, rep))
		}
	}
	return clampSums(sums, M)
}

// mixOne is mixZs in one mode (pu × pv points, weights wu and wv,
// interpolation rows ru and rv, nil at the nodes) for a law that reads one
// group g (a node law or its first failure): the same operations in the
// same order, without the groups' and the modes' loops.
func (s *Site) mixOne(sc *ruleScratch, Z []float64, kind lawKind, g, pu, pv int, wu, wv []float64, ru, rv *interpRows) float64 {
	nv := len(s.fac[1].z)
	E := len(s.envs)
	zh := Z[g*E : (g+1)*E]
	sc.y = grown(sc.y, pu*nv)
	Y := sc.y
	for a := range pu {
		if wu[a] == 0 {
			continue
		}
		row := Y[a*nv : (a+1)*nv]
		if ru == nil {
			copy(row, zh[a*nv:(a+1)*nv])
		} else {
			interpRow(row, ru, a, zh, nv)
		}
	}
	wv = wv[:pv]
	sum := 0.0
	for a := range pu {
		if wu[a] == 0 {
			continue
		}
		y := Y[a*nv : (a+1)*nv]
		inf := math.IsInf(y[0], 0)
		for b := range pv {
			w := wu[a] * wv[b]
			if !(w >= 1e-14) {
				continue
			}
			var z float64
			switch {
			case rv == nil:
				z = y[b]
			case inf:
				z = y[0] // interp1
			default:
				z = rowDot(rv.w[b], y[rv.off[b]:])
			}
			sum += w * s.condOne(kind, g, z)
		}
	}
	return min(1, max(0, sum))
}

// condOne is condAt for a node law or a group's first failure, from the
// group's probit z alone.
func (s *Site) condOne(kind lawKind, g int, z float64) float64 {
	switch {
	case kind == kindNode:
		return normSurv(-z)
	case z >= s.sure[g]:
		return 1 // what the formula gives there (firstSure)
	}
	return fexp.OneMinusExp(float64(s.counts[g]) * mills.LogUpper(z))
}

// probitAt is the probit of a conditional node law's CDF at t (+Inf from
// its calendar limit on).
func (s *Site) probitAt(tb *tabulated, t float64) float64 {
	hint := 0 // no interval: a search
	return s.probitNear(tb, t, &hint)
}

// probitNear is probitAt, the table looked up from the interval *hint
// first (probitTable.zAtNear): the same value.
func (s *Site) probitNear(tb *tabulated, t float64, hint *int) float64 {
	switch {
	case t >= tb.cal:
		return math.Inf(1)
	case t <= 0:
		return math.Inf(-1)
	}
	return tb.zAtNear(t, hint)
}

// probeError is the rule's estimated error for a law at one probe time:
// every term of the total but the interpolation's at once, the
// interpolation's (two more passes over the fine grid) bounded until it
// is computed; the parts by factor (what refining a factor would lower,
// read only to choose the factor to refine) with it.
type probeError struct {
	t, table float64
	Z        []float64    // the node probits at t (nodeZ)
	rule     float64      // the rule's mixture
	ref      float64      // the reference's
	base     float64      // |rule − reference| + the fine rule's own error + the truncation
	own      [2]float64   // per factor: the rule's difference from the fine rule in that factor alone (+Inf while !owned)
	interp   [2]float64   // per factor: the interpolation's error, or its bound while !exact
	exact    bool         // interp computed: total is the estimate
	owned    bool         // own computed too: parts are
	sc       *ruleScratch // the working arrays of the probe's chain
}

// parts returns the error parts by factor (what refining it would lower).
func (p probeError) parts() [2]float64 {
	return [2]float64{p.interp[0] + p.own[0], p.interp[1] + p.own[1]}
}

// total returns the rule's estimated error.
func (p probeError) total() float64 { return p.base + p.interp[0] + p.interp[1] }

// probeStart returns the rule's estimated error for kind at t with the
// interpolation terms bounded (interpBound), or computed where no bound
// applies (counts).
func (s *Site) probeStart(t float64, kind lawKind, g int, k int64) probeError {
	return s.probeStartWith(new(ruleScratch), t, kind, g, k)
}

// probeStartWith is probeStart with the working arrays of sc.
func (s *Site) probeStartWith(sc *ruleScratch, t float64, kind lawKind, g int, k int64) probeError {
	return s.probeZWith(sc, t, s.nodeZ(t, sc.wants(kind, g, len(s.names))), kind, g, k, false)
}

// probeZ is probeStart and probeFinish from the node probits Z at t
// (nodeZ's layout): the design search and the replacement policies probe
// their own laws, each to its computed terms.
func (s *Site) probeZ(t float64, Z []float64, kind lawKind, g int, k int64) probeError {
	return s.probeZWith(new(ruleScratch), t, Z, kind, g, k, true)
}

// probeZWith is probeStart from Z with the working arrays of sc, and
// probeFinish with finish (or a kind without a bound): the interpolation
// bounds are computed only for a probe left bounded (probeFinish replaces
// them: the same bits without them; 0.7 % of BenchmarkWhatItTakes's CPU
// in a profile), in the reference's own walk over the fine grid
// (fineBounds).
func (s *Site) probeZWith(sc *ruleScratch, t float64, Z []float64, kind lawKind, g int, k int64, finish bool) probeError {
	p := probeError{t: t, Z: Z, sc: sc}
	p.rule = s.mixZs(sc, p.Z, kind, g, k, [2]int{modeNodes, modeNodes})[0]
	// The reference and, from the same points, every other point of its
	// grid in each factor with spread (the fine rule's own error).
	modes := [maxModes][2]int{{modeFine, modeFine}}
	M := 1
	for d := range 2 {
		if len(s.fac[d].fz) > 1 {
			modes[M] = [2]int{modeFine, modeFine}
			modes[M][d] = modeCoarse
			M++
		}
	}
	spread := [2]bool{len(s.fac[0].fz) > 1, len(s.fac[1].fz) > 1}
	finish = finish || (kind != kindNode && kind != kindFirst && kind != kindFleet)
	var fine [maxModes]float64
	var bounds [2]float64
	if finish {
		fine = s.mixZs(sc, p.Z, kind, g, k, modes[:M]...)
	} else {
		fine, bounds = s.fineBounds(sc, p.Z, kind, g, k, spread)
	}
	p.ref = fine[0]
	p.base = math.Abs(p.rule - p.ref)
	next := 1
	for d := range 2 {
		if !spread[d] {
			continue
		}
		p.base += math.Abs(fine[next] - p.ref)
		next++
		p.own[d] = math.Inf(1)
		p.interp[d] = bounds[d]
	}
	p.base += s.trunc
	if finish {
		s.probeFinish(&p, kind, g, k)
	}
	return p
}

// probeFinish computes p's interpolation terms (probeExact) and its
// parts' other terms, the rule's difference from the rule fine in each
// factor with spread alone.
func (s *Site) probeFinish(p *probeError, kind lawKind, g int, k int64) {
	s.probeExact(p, kind, g, k)
	if p.owned {
		return
	}
	s.byFactor(p, kind, g, k, modeNodes, modeFine, p.rule, &p.own)
	p.owned = true
}

// byFactor sets dst[d], for each factor d with spread, to the difference
// from from of p's mixture with factor d in mode mine and the other in
// mode other.
func (s *Site) byFactor(p *probeError, kind lawKind, g int, k int64, other, mine int, from float64, dst *[2]float64) {
	for d := range 2 {
		if len(s.fac[d].fz) == 1 {
			continue
		}
		m := [2]int{other, other}
		m[d] = mine
		dst[d] = math.Abs(s.mixZs(p.sc, p.Z, kind, g, k, m)[0] - from)
	}
}

// probeExact computes p's interpolation terms, the reference's difference
// from the reference interpolated without one node a piece in each factor
// with spread: its total is then the estimate, its parts still +Inf (the
// parts' other terms are read only to choose a factor to refine:
// probeFinish).
func (s *Site) probeExact(p *probeError, kind lawKind, g int, k int64) {
	if p.exact {
		return
	}
	if p.sc == nil {
		p.sc = new(ruleScratch)
	}
	s.byFactor(p, kind, g, k, modeFine, modeReduced, p.ref, &p.interp)
	p.exact = true
}

// ruleError returns the estimated error of the rule for kind at t, split
// by factor (the part that refining the factor would lower), and the
// total with the reference's own error and the truncation.
func (s *Site) ruleError(t float64, kind lawKind, g int, k int64) (parts [2]float64, total float64) {
	p := s.probeStart(t, kind, g, k)
	s.probeFinish(&p, kind, g, k)
	return p.parts(), p.total()
}

// fineBounds is the reference's pass of probeZWith (mixZs at the fine
// points in both factors, and every other point in each factor with
// spread) together with interpBoundsWith(ds) for a node law, a group's
// first failure or the fleet's, in one walk over the fine grid: the
// reference's interpolants are the bounds' first ones (the same rows,
// the same bits), interpolated once. Each value is the same bits as
// from mixZs and interpBoundsWith.
func (s *Site) fineBounds(sc *ruleScratch, Z []float64, kind lawKind, g int, k int64, ds [2]bool) (sums [maxModes]float64, res [2]float64) {
	fu, fv := &s.fac[0], &s.fac[1]
	nv := len(fv.z)
	E := len(s.envs)
	G := len(s.names)
	pu, pv := len(fu.fz), len(fv.fz)
	// The modes as probeZWith lists them: the fine grid, then every other
	// point in u, then in v (each where the factor has spread).
	M := 1
	for d := range 2 {
		if ds[d] {
			M++
		}
	}
	g0, g1 := g, g+1
	if kind == kindFleet {
		g0, g1 = 0, G
	}
	var rep []int
	if kind == kindFleet {
		rep = s.rowReps(sc, Z, g0, g1)
	}
	// Y0 along u by the reference's rows (lag), Y1 by lagr where they
	// differ (factor 0's bound), for each group: Y0[((h − g0)·pu + a)·nv + j].
	sc.y0 = grown(sc.y0, (g1-g0)*pu*nv)
	Y0 := sc.y0
	if ds[0] {
		sc.y1 = grown(sc.y1, (g1-g0)*pu*nv)
	}
	Y1 := sc.y1
	for h := g0; h < g1; h++ {
		if rep != nil && rep[h] != h {
			continue
		}
		zh := Z[h*E : (h+1)*E]
		o := (h - g0) * pu * nv
		for a := range pu {
			interpRow(Y0[o+a*nv:o+(a+1)*nv], &fu.lag, a, zh, nv)
			if ds[0] && !fu.same[a] {
				interpRow(Y1[o+a*nv:o+(a+1)*nv], &fu.lagr, a, zh, nv)
			}
		}
	}
	if kind != kindFleet {
		return s.fineBoundsOne(sc, Y0, Y1, kind, g, M, ds)
	}
	// The fleet's: the points first (each group's probit kept, Z0[(h −
	// g0)·P + point]), then each group's bound terms point by point (the
	// groups in order at each point, as interpBoundsWith adds them), then
	// their sum with the fine weights.
	P := pu * pv
	pw := sc.pointWeights(fu, fv, ds)[:P]
	sc.zs = grown(sc.zs, G)
	sc.probs = grown(sc.probs, G)
	zs, probs := sc.zs, sc.probs
	sc.z0 = grown(sc.z0, (g1-g0)*P)
	Z0 := sc.z0
	lagW, lagOff := fv.lag.w[:pv], fv.lag.off[:pv]
	lagrW, lagrOff := fv.lagr.w[:pv], fv.lagr.off[:pv]
	for a := range pu {
		for b := range pv {
			pt := a*pv + b
			ws := &pw[pt]
			if ws[0] == 0 && ws[1] == 0 && ws[2] == 0 {
				continue // every weight below 1e-14
			}
			for h := g0; h < g1; h++ {
				if rep != nil && rep[h] != h {
					zs[h] = zs[rep[h]]
					continue
				}
				o := ((h-g0)*pu + a) * nv
				y0 := Y0[o : o+nv]
				if math.IsInf(y0[0], 0) {
					zs[h] = y0[0] // interp1
				} else {
					zs[h] = rowDot(lagW[b], y0[lagOff[b]:])
				}
				Z0[(h-g0)*P+pt] = zs[h]
			}
			addWeighted(&sums, ws, M, s.condAt(kind, g, k, zs, probs, rep))
		}
	}
	sums = clampSums(sums, M)
	if !(ds[0] || ds[1]) {
		return sums, res
	}
	// The bounds: Σ_h L_h·|Δz_h| at each point where the fine weight is
	// at least 1e-14.
	sc.bnd = grown(sc.bnd, 2*P)
	bound := [2][]float64{sc.bnd[:P], sc.bnd[P:]}
	vsame := fv.same[:pv]
	for h := g0; h < g1; h++ {
		if rep != nil && rep[h] != h {
			continue
		}
		L := &s.slope[h]
		// over is interpBoundsWith's slope bound between z0 and z1, with
		// those of the groups that repeat h, in the same order.
		over := func(z0, z1 float64) float64 {
			l := L.over(z0, z1)
			for m := h + 1; rep != nil && m < g1; m++ {
				if rep[m] == h {
					l += s.slope[m].over(z0, z1)
				}
			}
			return l
		}
		z0h := Z0[(h-g0)*P : (h-g0+1)*P]
		for a := range pu {
			o := ((h-g0)*pu + a) * nv
			y0 := Y0[o : o+nv]
			inf0 := math.IsInf(y0[0], 0)
			bu := ds[0] && !fu.same[a]
			var y1 []float64
			inf1 := false
			if bu {
				y1 = Y1[o : o+nv]
				inf1 = math.IsInf(y1[0], 0)
			}
			for b := range pv {
				pt := a*pv + b
				if pw[pt][0] == 0 {
					continue
				}
				z0 := z0h[pt]
				if bu {
					z1 := y1[0]
					if !inf1 {
						z1 = rowDot(lagW[b], y1[lagOff[b]:])
					}
					if z0 != z1 {
						bound[0][pt] += over(z0, z1) * math.Abs(z1-z0)
					}
				}
				if ds[1] && !vsame[b] {
					z1 := y0[0]
					if !inf0 {
						z1 = rowDot(lagrW[b], y0[lagrOff[b]:])
					}
					if z0 != z1 {
						bound[1][pt] += over(z0, z1) * math.Abs(z1-z0)
					}
				}
			}
		}
	}
	var bsum [2]float64
	pts := 0
	for pt := range P {
		if w := pw[pt][0]; w != 0 {
			bsum[0] += w * bound[0][pt]
			bsum[1] += w * bound[1][pt]
			pts++
		}
	}
	for d := range 2 {
		if ds[d] {
			res[d] = bsum[d]*(1+1e-12) + 2*float64(pts)*0x1p-52
		}
	}
	return sums, res
}

// fineBoundsOne is fineBounds' walk for a law that reads one group g (a
// node law or its first failure) from its interpolants along u, Y0 (and
// Y1 for factor 0's bound): condAt's value and interpBoundsWith's terms
// at each point by the same operations in the same order.
func (s *Site) fineBoundsOne(sc *ruleScratch, Y0, Y1 []float64, kind lawKind, g, M int, ds [2]bool) (sums [maxModes]float64, res [2]float64) {
	fu, fv := &s.fac[0], &s.fac[1]
	nv := len(fv.z)
	pu, pv := len(fu.fz), len(fv.fz)
	pw := sc.pointWeights(fu, fv, ds)[:pu*pv]
	L := &s.slope1
	if kind != kindNode {
		L = &s.slope[g]
	}
	over := L.over
	n, sure := float64(s.counts[g]), s.sure[g]
	lagW, lagOff := fv.lag.w[:pv], fv.lag.off[:pv]
	lagrW, lagrOff := fv.lagr.w[:pv], fv.lagr.off[:pv]
	vsame := fv.same[:pv]
	var bsum [2]float64
	var pts int
	for a := range pu {
		y0 := Y0[a*nv : (a+1)*nv]
		inf0 := math.IsInf(y0[0], 0)
		bu := ds[0] && !fu.same[a]
		var y1 []float64
		inf1 := false
		if bu {
			y1 = Y1[a*nv : (a+1)*nv]
			inf1 = math.IsInf(y1[0], 0)
		}
		ws := pw[a*pv : (a+1)*pv]
		for b := range pv {
			w := &ws[b]
			if w[0] == 0 && w[1] == 0 && w[2] == 0 {
				continue // every weight below 1e-14
			}
			z0 := y0[0] // interp1
			if !inf0 {
				z0 = rowDot(lagW[b], y0[lagOff[b]:])
			}
			var c float64 // condOne, inlined
			switch {
			case kind == kindNode:
				c = normSurv(-z0)
			case z0 >= sure:
				c = 1
			default:
				c = fexp.OneMinusExp(n * mills.LogUpper(z0))
			}
			addWeighted(&sums, w, M, c)
			if w[0] == 0 || !(ds[0] || ds[1]) {
				continue
			}
			var bnd [2]float64
			if bu {
				z1 := y1[0]
				if !inf1 {
					z1 = rowDot(lagW[b], y1[lagOff[b]:])
				}
				if z0 != z1 {
					bnd[0] += over(z0, z1) * math.Abs(z1-z0)
				}
			}
			if ds[1] && !vsame[b] {
				z1 := y0[0]
				if !inf0 {
					z1 = rowDot(lagrW[b], y0[lagrOff[b]:])
				}
				if z0 != z1 {
					bnd[1] += over(z0, z1) * math.Abs(z1-z0)
				}
			}
			bsum[0] += w[0] * bnd[0]
			bsum[1] += w[0] * bnd[1]
			pts++
		}
	}
	for d := range 2 {
		if ds[d] {
			res[d] = bsum[d]*(1+1e-12) + 2*float64(pts)*0x1p-52
		}
	}
	return clampSums(sums, M), res
}

// addWeighted adds ws[i]·c to sums[i] for each of the first M modes with
// a weight (mixZs' sums).
func addWeighted(sums, ws *[maxModes]float64, M int, c float64) {
	for i := range M {
		if ws[i] != 0 {
			sums[i] += ws[i] * c
		}
	}
}

// clampSums returns sums with each of the first M within [0, 1].
func clampSums(sums [maxModes]float64, M int) [maxModes]float64 {
	for i := range M {
		sums[i] = min(1, max(0, sums[i]))
	}
	return sums
}

// minSlope returns an upper bound on the largest slope of the CDF of the
// first failure among n nodes against their common probit z,
// max_z n·Φ(−z)^(n−1)·φ(z) (1/√(2π) for n = 1): the largest of
// newSlopeBound's cells and of its bound beyond them. About 3 % above the
// true maximum for n = 1000 to 10^6 (TestMinSlope).
func minSlope(n int64) float64 { return newSlopeBound(n).most }

// Cells of a slopeBound: width slopeH on [slopeLo, slopeHi].
const slopeLo, slopeHi, slopeH = -12.0, 9.0, 0.01

// slopeBound bounds the slope of the CDF of the first failure among n
// nodes against their common probit z, F'(z) = n·Φ(−z)^(n−1)·φ(z), cell by
// cell: on a cell [a, b] of width slopeH in [slopeLo, slopeHi], Φ(−z) is
// at most Φ(−a) and φ at most its largest on the cell (slopeCell); below
// the cells F' <= n·φ(z) <= n·φ(slopeLo), and from the last cell's left
// end c on F' <= n·φ(c). The site rule's interpolation bound (interpBound)
// reads the cells between the two probits it compares instead of the
// largest slope anywhere. Only the widened cells are kept: beyond, the
// rare reading that reaches past the cells, computes its cells again
// (the same bits).
type slopeBound struct {
	wide         []float64 // wide[i]: the largest of cells i − 1, i and i + 1
	n            float64   // the count
	outLo, outHi float64   // the bounds below the cells and from the last cell's left end on
	top          float64   // the last cell's left end, slopeLo + slopeH·(len(wide) − 1)
	most         float64   // the largest of all, times 1 + 1e-12 (minSlope)
}

// slopeCell returns slopeBound's bound on its cell i among nf nodes,
// nf·Φ(−a)^(nf−1)·max φ on [a, a + slopeH], a = slopeLo + slopeH·i.
func slopeCell(nf float64, i int) float64 {
	a := slopeLo + slopeH*float64(i)
	c := a + slopeH
	phi := normPDF(0)
	switch {
	case c <= 0:
		phi = normPDF(c)
	case a >= 0:
		phi = normPDF(a)
	}
	return nf * math.Pow(normSurv(a), nf-1) * phi
}

func newSlopeBound(n int64) slopeBound {
	nf := float64(n)
	m := int((slopeHi - slopeLo) / slopeH)
	b := slopeBound{wide: make([]float64, m), n: nf}
	best := nf * max(normPDF(slopeLo), normPDF(slopeHi))
	// The cells in turn, three at a time: cell i − 1 (i itself at the
	// first), i and i + 1 (i itself at the last).
	cur := slopeCell(nf, 0)
	best = max(best, cur)
	prev := cur
	for i := range m {
		next := cur
		if i+1 < m {
			next = slopeCell(nf, i+1)
			best = max(best, next)
		}
		b.wide[i] = max(prev, cur, next)
		prev, cur = cur, next
	}
	b.outLo = nf * normPDF(slopeLo)
	b.outHi = nf * normPDF(slopeLo+slopeH*float64(m-1))
	b.top = slopeLo + slopeH*float64(m-1)
	b.most = best * (1 + 1e-12)
	return b
}

// over returns an upper bound on F' between the probits z0 and z1 (most
// where either is not finite): the largest of the cells that meet the
// interval, one more on either side against rounding in the cell's index,
// and of the bounds beyond the cells where it reaches them.
func (b *slopeBound) over(z0, z1 float64) float64 {
	lo, hi := z0, z1
	if hi < lo {
		lo, hi = hi, lo
	}
	if L, ok := b.inCells(lo, hi); ok {
		return L
	}
	return b.beyond(lo, hi)
}

// inCells is over on [lo, hi] (lo <= hi) where both ends are within the
// cells (the usual case: ok; small enough to be inlined in the fine
// grid's loop): the largest of the widened cells from lo's to hi's, the
// index by one product (the widening covers its rounding).
func (b *slopeBound) inCells(lo, hi float64) (float64, bool) {
	if !(lo >= slopeLo && hi < b.top) {
		return 0, false
	}
	i0, i1 := int((lo-slopeLo)*(1/slopeH)), min(len(b.wide)-1, int((hi-slopeLo)*(1/slopeH)))
	w := b.wide[i0 : i1+1]
	L := w[0]
	for _, x := range w[1:] {
		if x > L {
			L = x
		}
	}
	return L * (1 + 1e-12), true
}

// beyond is over on [lo, hi] (lo <= hi) reaching beyond the cells.
func (b *slopeBound) beyond(lo, hi float64) float64 {
	m := len(b.wide)
	if !finite(lo) || !finite(hi) {
		return b.most
	}
	L := 0.0
	if lo < slopeLo {
		L = b.outLo
	}
	if hi >= b.top {
		L = max(L, b.outHi)
	}
	i0 := max(0, int(math.Floor((lo-slopeLo)/slopeH))-1)
	i1 := min(m-1, int(math.Floor((hi-slopeLo)/slopeH))+1)
	for i := i0; i <= i1; i++ {
		L = max(L, slopeCell(b.n, i))
	}
	return L * (1 + 1e-12)
}

// sharedProbeLevels are the CDF levels of a law at which its stated error
// is measured.
var sharedProbeLevels = [...]float64{1e-6, 1e-4, 1e-3, 0.01, 0.05, 0.15, 0.3, 0.5, 0.7, 0.85, 0.95, 0.99, 0.999}

// probeTimes returns the times (s) where the rule's mixture of kind's law
// reaches sharedProbeLevels (internal/root on the probit of the rule's
// CDF), without repeats.
func (s *Site) probeTimes(kind lawKind, g int, k int64) []float64 {
	return s.probeTimesWith(new(ruleScratch), kind, g, k)
}

// probeTimesWith is probeTimes with the working arrays of sc.
func (s *Site) probeTimesWith(sc *ruleScratch, kind lawKind, g int, k int64) []float64 {
	var want []bool
	if kind == kindNode || kind == kindFirst {
		want = make([]bool, len(s.names))
		want[g] = true
	}
	cdf := func(t float64) float64 {
		sc.z = s.nodeZInto(sc.z, sc.hints(len(s.names)*len(s.envs)), t, want)
		return s.mixZs(sc, sc.z, kind, g, k, [2]int{modeNodes, modeNodes})[0]
	}
	// The level's time by the library's root finder on the probit of the
	// rule's CDF (nearly linear in t), to 1e-9 of the tables' span, in the
	// narrowest bracket that the probits already computed for the lower
	// levels give (one function whatever the level: the levels share its
	// values).
	std := dist.MustNormal(0, 1)
	type point struct{ t, z float64 }
	// Ascending in t; room for the ends and about ten evaluations a
	// level (grown beyond).
	seen := make([]point, 2, 2+10*len(sharedProbeLevels))
	seen[0], seen[1] = point{0, std.Quantile(cdf(0))}, point{s.tHi, std.Quantile(cdf(s.tHi))}
	probit := func(t float64) float64 {
		z := std.Quantile(cdf(t))
		i := sort.Search(len(seen), func(i int) bool { return seen[i].t >= t })
		if i == len(seen) || seen[i].t != t {
			seen = slices.Insert(seen, i, point{t, z})
		}
		return z
	}
	var ts []float64
	for _, p := range sharedProbeLevels {
		if seen[len(seen)-1].z < std.Quantile(p) {
			continue
		}
		target := std.Quantile(p)
		if seen[0].z >= target {
			ts = append(ts, 0)
			continue
		}
		// The last point below the target and the next one: the probit
		// rises with t.
		j := 0
		for j+1 < len(seen) && seen[j+1].z < target {
			j++
		}
		a, b := seen[j], seen[j+1]
		g := func(t float64) float64 { return probit(t) - target }
		ts = append(ts, root.Illinois(g, a.t, b.t, a.z-target, b.z-target, 1e-9*s.tHi))
	}
	// Where the rule is too coarse its CDF is a staircase with a steep
	// rise at each node's conditional law: the error is largest at the
	// rise's edges, so the nodes' conditional 5, 25, 50, 75 and 95 %
	// points are probed too (at most sharedMaxMidProbes of them, a twelfth
	// with both factors spread, evenly chosen).
	edgesT := make([]float64, 0, 5*len(s.envs))
	at := func(env *siteEnv, h int, p float64) float64 {
		if kind == kindNode {
			return env.laws[h].Quantile(p)
		}
		return env.laws[h].Quantile(-math.Expm1(math.Log1p(-p) / float64(s.counts[h])))
	}
	for e := range s.envs {
		env := &s.envs[e]
		if env.w < 1e-4 {
			continue
		}
		for _, p := range []float64{0.05, 0.25, 0.5, 0.75, 0.95} {
			switch kind {
			case kindNode, kindFirst:
				edgesT = append(edgesT, at(env, g, p))
			case kindFleet:
				m := math.Inf(1)
				for h := range s.names {
					m = min(m, at(env, h, p))
				}
				edgesT = append(edgesT, m)
			}
		}
	}
	edgesT = sortedUnique(edgesT)
	most := sharedMaxMidProbes
	if len(s.fac[0].z) > 1 && len(s.fac[1].z) > 1 {
		most /= 12 // the fine grid is a product: each probe costs more
	}
	if len(edgesT) > most {
		pick := make([]float64, most)
		for i := range pick {
			pick[i] = edgesT[i*(len(edgesT)-1)/(most-1)]
		}
		edgesT = pick
	}
	return sortedUnique(append(ts, edgesT...))
}

// seedFor returns the seed of the quantile searches on kind's mixture
// (sharedMixture.seed): where a cheap approximation of the mixture's
// probit reaches the target (internal/root between the tables' earliest
// start and latest end, to 1e-13 relative), with its slope there by a
// central difference (+Inf at a jump). The approximation of a node law, a first failure or
// the fleet's is the rule's own mixture of the conditional laws' tables
// (mixZ at the nodes: the same law but for the tables' rounding); of the
// k-th failure, the normal approximation of each shared point's
// Poisson-binomial count (continuity-corrected). A seed only starts the
// search: every step is checked on the mixture itself. A node law's or a
// group first failure's search starts between the conditional laws'
// answers (condSpan) where they bracket it.
func (s Site) seedFor(kind lawKind, g int, k int64) func(target float64) (t0, slope float64, ok bool) {
	if len(s.envs) < 2 || !(s.tHi > s.tLo) {
		return nil
	}
	var want []bool
	if kind == kindNode || kind == kindFirst {
		want = make([]bool, len(s.names))
		want[g] = true
	}
	return func(target float64) (float64, float64, bool) {
		std := dist.MustNormal(0, 1)
		sc := new(ruleScratch)
		probit := func(t float64) float64 {
			if kind == kindKth {
				cdf, sf := s.kthNormal(t, k)
				if cdf <= 0.5 {
					return std.Quantile(cdf)
				}
				return std.UpperQuantile(sf)
			}
			sc.z = s.nodeZInto(sc.z, sc.hints(len(s.names)*len(s.envs)), t, want)
			return std.Quantile(s.mixZs(sc, sc.z, kind, g, k, [2]int{modeNodes, modeNodes})[0])
		}
		f := func(t float64) float64 { return probit(t) - target }
		lo, hi := s.tLo, s.tHi
		var flo, fhi float64
		narrow := false
		if a, b := s.condSpan(kind, g, target); a > 0 && b >= a && finite(b) {
			// The conditional laws' answers bracket the mixture's: a
			// narrower start, checked (widened by 1e-9 against the
			// tables' rounding).
			a, b = a*(1-1e-9), b*(1+1e-9)
			if fa, fb := f(a), f(b); fa < 0 && fb >= 0 {
				lo, hi, flo, fhi, narrow = a, b, fa, fb, true
			}
		}
		if !narrow {
			flo, fhi = f(lo), f(hi)
		}
		if !(flo < 0 && fhi >= 0) {
			return 0, 0, false
		}
		t0 := root.Illinois(f, lo, hi, flo, fhi, 1e-13*hi)
		h := 1e-6 * t0
		slope := (probit(t0+h) - probit(t0-h)) / (2 * h)
		if math.IsNaN(slope) {
			slope = math.Inf(1) // a jump (the calendar limit's atom) on both sides
		}
		return t0, slope, true
	}
}

// quickFor returns the quick pieces of the moment quadratures of kind's
// mixture's components (sharedMixture.quick) for a group's first failure
// and the fleet's: each component's survival from the conditional
// tables, Π_h S_h(t)^(n_h) as exp(Σ_h n_h·log S_h(t)) (logSurvival; the
// exponential fexp.Exp's, which adds at most 2^-52 relative, the standard
// library's bound for math.Exp, to the sum's rounding moved through it,
// about |Σ|·2^-53), and for a group's first failure among n its 1e-15,
// 1/2 and 1 − 1e-15 points from the table's own inverse (S(t)^n = 1 − p
// where S(t) = (1 − p)^(1/n)); nil for the other kinds.
func (s Site) quickFor(kind lawKind, g int) func(i int) (surv func(float64) float64, lo, med, hi float64) {
	if kind != kindFirst && kind != kindFleet {
		return nil
	}
	return func(i int) (func(float64) float64, float64, float64, float64) {
		env := &s.envs[i]
		if kind == kindFirst {
			tb, n := &env.laws[g], float64(s.counts[g])
			hint := 0
			surv := func(t float64) float64 { return fexp.Exp(n * tb.logSurvival(t, &hint)) }
			lo := tb.Quantile(-math.Expm1(math.Log1p(-1e-15) / n))
			med := tb.Quantile(-math.Expm1(math.Log(0.5) / n))
			hi := tb.UpperQuantile(math.Exp(math.Log(1e-15) / n))
			return surv, lo, med, hi
		}
		hints := make([]int, len(s.names))
		surv := func(t float64) float64 {
			l := 0.0
			for h := range s.names {
				l += float64(s.counts[h]) * env.laws[h].logSurvival(t, &hints[h])
			}
			return fexp.Exp(l)
		}
		nan := math.NaN()
		return surv, nan, nan, nan
	}
}

// logSurvival returns log S(t) of a conditional table (−Inf from its
// calendar limit on, 0 from time 0 back): log Φ̄ of its probit directly
// (mills.LogUpper: log1p of −F where the probit is below −0.66, the
// tail's logarithm without its exponential above 0.66; within 1e-14
// relative of log Φ̄ for probits above −9).
func (tb *tabulated) logSurvival(t float64, hint *int) float64 {
	switch {
	case math.IsNaN(t):
		return t
	case t >= tb.cal:
		return math.Inf(-1)
	case t <= 0:
		return 0
	}
	return mills.LogUpper(tb.zAtNear(t, hint))
}

// condSpan returns the smallest and the largest over the rule's nodes of
// the conditional laws' times (s) whose probit is target, for a node law
// or a group's first failure (from the tables' inverses: the first
// failure among n reaches CDF p where the node's survival is (1 − p)^(1/n),
// each side from its smaller tail), or NaN for the other kinds: the
// mixture's answer lies between them.
func (s *Site) condSpan(kind lawKind, g int, target float64) (lo, hi float64) {
	if kind != kindNode && kind != kindFirst {
		return math.NaN(), math.NaN()
	}
	p, q := normCDFz(target), normSurv(target)
	n := 1.0
	if kind == kindFirst {
		n = float64(s.counts[g])
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for e := range s.envs {
		tb := s.envs[e].laws[g]
		var t float64
		if target <= 0 {
			t = tb.Quantile(-math.Expm1(math.Log1p(-p) / n))
		} else {
			t = tb.UpperQuantile(math.Exp(math.Log(q) / n))
		}
		lo, hi = min(lo, t), max(hi, t)
	}
	return lo, hi
}

// kthNormal returns the normal approximation of the mixture over the
// rule's nodes of P(count >= k) at t (s), the count of flat nodes being
// each node's Poisson-binomial with mean μ = Σ n_h·p_h and variance
// σ² = Σ n_h·p_h·(1 − p_h): Φ̄((k − 1/2 − μ)/σ), and its complement, each
// summed directly.
func (s *Site) kthNormal(t float64, k int64) (cdf, sf float64) {
	for e := range s.envs {
		env := &s.envs[e]
		mu, v := 0.0, 0.0
		for h := range s.names {
			z := s.probitAt(&env.laws[h], t)
			p, q := normCDFz(z), normSurv(z)
			n := float64(s.counts[h])
			mu += n * p
			v += n * p * q
		}
		x := float64(k) - 0.5 - mu
		var c, d float64
		switch {
		case v > 0:
			c, d = normSurv(x/math.Sqrt(v)), normCDFz(x/math.Sqrt(v))
		case x < 0:
			c = 1
		default:
			d = 1
		}
		cdf += env.w * c
		sf += env.w * d
	}
	return min(1, cdf), min(1, sf)
}

// sharedMaxMidProbes caps the probes between the nodes' conditional
// medians (probeTimes).
const sharedMaxMidProbes = 160

// tableError returns the error at t of the rule's mixture for kind that
// the conditional node laws' stated errors (tabulated.errAt) can cause:
// with δ the node law's error and F its CDF where it is read, a node law
// moves by δ, a first failure among n by n·(1 − F⁻)^(n−1)·δ with F⁻ =
// max(0, F − δ) (the mean value theorem on 1 − (1 − F)^n), the fleet's by
// the sum over groups of such terms times the other groups' survivals
// (plus their errors), a count or a k-th failure by Σ n_g·δ_g.
func (s *Site) tableError(t float64, kind lawKind, g int) float64 {
	var want []bool
	if kind == kindNode || kind == kindFirst {
		want = make([]bool, len(s.names))
		want[g] = true
	}
	return s.tableErrorZ(t, s.nodeZ(t, want), kind, g)
}

// tableErrorZ is tableError from the node probits Z at t (nodeZ's layout,
// the groups kind reads filled): each table's error, CDF and survival
// from its probit there, the same values as from the table at t.
func (s *Site) tableErrorZ(t float64, Z []float64, kind lawKind, g int) float64 {
	E := len(s.envs)
	// The table's values at t from its probit z there (0 < t < cal: what
	// the table reads; elsewhere its own ends).
	inside := func(tb *tabulated) bool { return tb.t != nil && t > 0 && t < tb.cal }
	errAt := func(tb *tabulated, z float64) float64 {
		if !inside(tb) {
			return tb.errAt(t)
		}
		return tb.errAtZ(t, z)
	}
	cdf := func(tb *tabulated, z float64) float64 {
		if !inside(tb) {
			return tb.CDF(t)
		}
		return normSurv(-z)
	}
	surv := func(tb *tabulated, z float64) float64 {
		if !inside(tb) {
			return tb.Survival(t)
		}
		return normSurv(z)
	}
	var ds, ss, pows []float64
	if kind == kindFleet {
		ds, ss, pows = make([]float64, len(s.names)), make([]float64, len(s.names)), make([]float64, len(s.names))
	}
	sum := 0.0
	for e := range s.envs {
		env := &s.envs[e]
		var err float64
		switch kind {
		case kindNode:
			err = errAt(&env.laws[g], Z[g*E+e])
		case kindFirst:
			tb, z := &env.laws[g], Z[g*E+e]
			d := errAt(tb, z)
			f := max(0, cdf(tb, z)-d)
			err = float64(s.counts[g]) * powSurv(1-min(f, 1), s.counts[g]-1) * d
		case kindFleet:
			for h := range s.names {
				if j := s.sameAs(h); j != h {
					ds[h], ss[h] = ds[j], ss[j] // the same table
					continue
				}
				tb, z := &env.laws[h], Z[h*E+e]
				ds[h] = errAt(tb, z)
				ss[h] = min(1, surv(tb, z)+ds[h])
			}
			// Each group's survival to its count, once (the same value
			// in every term that reads it), where a term is read.
			if slices.ContainsFunc(ds, func(d float64) bool { return d != 0 }) {
				for k := range s.names {
					pows[k] = powSurv(ss[k], s.counts[k])
				}
			}
			for h := range s.names {
				if ds[h] == 0 {
					continue
				}
				term := float64(s.counts[h]) * ds[h] * powSurv(ss[h], s.counts[h]-1)
				for k := range s.names {
					if k != h {
						term *= pows[k]
					}
				}
				err += term
			}
		default:
			for h := range s.names {
				err += float64(s.counts[h]) * errAt(&env.laws[h], Z[h*E+e])
			}
		}
		sum += env.w * min(1, err)
	}
	return min(1, sum)
}

// powSurv returns x^k for x in [0, 1] and k >= 0 (1 for k = 0).
func powSurv(x float64, k int64) float64 {
	if k == 0 {
		return 1
	}
	return math.Pow(x, float64(k))
}

// lawProbes returns the probes of kind's law (probeTimes) with their
// table errors, the interpolation terms computed where their bounds could
// raise the stated error or the rule's total, the largest bounded first:
// a probe whose bounded values do not exceed the maxima of the computed
// ones cannot change them, so these maxima are those of computing every
// probe. The error parts are +Inf where they are not computed.
func (s *Site) lawProbes(kind lawKind, g int, k int64) []probeError {
	return s.lawProbesWith(new(ruleScratch), kind, g, k)
}

// lawProbesWith is lawProbes with the working arrays of sc, which the
// probes keep (probeError.sc) for their later terms: one caller's chain
// of probes, one law after another (probeRule), reuses them; what they
// hold never changes a value (the same bits as with fresh arrays).
func (s *Site) lawProbesWith(sc *ruleScratch, kind lawKind, g int, k int64) []probeError {
	ts := s.probeTimesWith(sc, kind, g, k)
	ps := make([]probeError, len(ts))
	for i, t := range ts {
		ps[i] = s.probeStartWith(sc, t, kind, g, k)
		ps[i].table = s.tableErrorZ(t, ps[i].Z, kind, g)
	}
	order := make([]int, len(ps))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool {
		return ps[order[a]].total()+ps[order[a]].table > ps[order[b]].total()+ps[order[b]].table
	})
	rule, stated := 0.0, 0.0
	for _, i := range order {
		p := &ps[i]
		if !p.exact && (p.total()+p.table > stated || p.total() > rule) {
			s.probeExact(p, kind, g, k)
		}
		if p.exact {
			rule = max(rule, p.total())
			stated = max(stated, p.total()+p.table)
		}
	}
	return ps
}

// probeMaxima returns the largest error parts (+Inf where a probe's
// terms are not computed), the largest rule's total and the
// stated CDF error (the largest table error plus rule's total, at most 1)
// over the probes.
func probeMaxima(ps []probeError) (parts [2]float64, rule, stated float64) {
	for _, p := range ps {
		pp := p.parts()
		parts[0], parts[1] = max(parts[0], pp[0]), max(parts[1], pp[1])
		rule = max(rule, p.total())
		stated = max(stated, p.total()+p.table)
	}
	return parts, rule, min(1, stated)
}

// lawError returns the rule's estimated error parts (the largest at the
// probe times) and the stated CDF error of kind's law: the largest at the
// probe times of the table error and the rule's total.
func (s *Site) lawError(kind lawKind, g int, k int64) (parts [2]float64, rule, stated float64) {
	ps := s.lawProbes(kind, g, k)
	for i := range ps {
		s.probeFinish(&ps[i], kind, g, k)
	}
	return probeMaxima(ps)
}

// probeRule computes the stated errors of the groups' node laws and first
// failures and of the fleet's first failure, and returns the largest of
// the rule's estimated totals (worst) and, where it exceeds tol (the rule
// is then refined in the factor whose part is the larger), of its error
// parts; otherwise the parts are not computed (+Inf where a factor has
// spread).
func (s *Site) probeRule(tol float64) (parts [2]float64, worst float64) {
	G := len(s.names)
	s.nodeAcc = make([]float64, G)
	s.firstAcc = make([]float64, G)
	type law struct {
		kind lawKind
		g    int
		ps   []probeError
	}
	// The fleet's first: it reads every group, so the working arrays
	// made for it serve the groups' laws after it.
	laws := make([]law, 1, 1+2*G)
	laws[0] = law{kind: kindFleet}
	for g := range G {
		if s.twin[g] != g {
			continue // the same laws as its twin's, probed there
		}
		laws = append(laws, law{kind: kindNode, g: g}, law{kind: kindFirst, g: g})
	}
	// One chain of working arrays for every law in turn (the factors and
	// tables do not change within the call: the fine points' weights and
	// the tables' interval hints serve them all).
	sc := new(ruleScratch)
	for i := range laws {
		l := &laws[i]
		l.ps = s.lawProbesWith(sc, l.kind, l.g, 0)
		_, rule, st := probeMaxima(l.ps)
		worst = max(worst, rule)
		switch l.kind {
		case kindNode:
			s.nodeAcc[l.g] = st
		case kindFirst:
			s.firstAcc[l.g] = st
		default:
			s.fleetAcc = st
		}
	}
	for _, l := range laws {
		if worst > tol {
			for i := range l.ps {
				s.probeFinish(&l.ps[i], l.kind, l.g, 0)
			}
		}
		p, _, _ := probeMaxima(l.ps)
		parts[0], parts[1] = max(parts[0], p[0]), max(parts[1], p[1])
	}
	for g := range G {
		s.nodeAcc[g], s.firstAcc[g] = s.nodeAcc[s.twin[g]], s.firstAcc[s.twin[g]]
	}
	return parts, worst
}
