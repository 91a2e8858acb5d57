package ble

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/joulelaw/joulelaw/dist"
)

// Scan timing (Bluetooth Core Specification v5.3, Vol 6, Part B, §4.4.3;
// the ranges of the legacy scan parameters, Vol 4, Part E, §7.8.10, from
// memory).
const (
	// MinScanInterval is the least scanInterval and scanWindow, s (2.5 ms).
	MinScanInterval = 2.5e-3
	// MaxScanInterval is the largest scanInterval and scanWindow, s (10.24 s).
	MaxScanInterval = 10.24
	// MaxDiscoveryHorizon caps the horizon of a Discovery law, s.
	MaxDiscoveryHorizon = 300.0
	// MaxDiscoveryCells caps the cells of a Discovery law's time grid (and
	// of one scan cycle), so that a law holds at most 3·2^20 float64 values
	// (24 MiB).
	MaxDiscoveryCells = 1 << 20
)

// Scanner describes passive scanning: a scan window of Window seconds
// starts every Interval seconds, each window on the next primary channel in
// the order 37, 38, 39, 37, … (the specification asks for a different
// channel each window; this order is common practice, from memory).
type Scanner struct {
	// Window is scanWindow, s: 2.5 ms … 10.24 s in steps of 0.625 ms,
	// at most Interval.
	Window float64
	// Interval is scanInterval, s: 2.5 ms … 10.24 s in steps of 0.625 ms.
	Interval float64
}

func (s Scanner) validate(fn string) error {
	for _, p := range []struct {
		name string
		v    float64
	}{{"Scanner.Interval", s.Interval}, {"Scanner.Window", s.Window}} {
		_, ok := onGrid(p.v, AdvIntervalStep)
		if !finite(p.v) || !ok || p.v < MinScanInterval*(1-1e-12) || p.v > MaxScanInterval*(1+1e-12) {
			return paramErr(fn, p.name, p.v, "must be 2.5 ms … 10.24 s in steps of 0.625 ms (v5.3 Vol 4 Part E §7.8.10, from memory)")
		}
	}
	if s.Window > s.Interval*(1+1e-12) {
		return paramErr(fn, "Scanner.Window", s.Window, fmt.Sprintf("scanWindow must be <= scanInterval (%g s)", s.Interval))
	}
	return nil
}

// Discovery is the law of the time a passive scanner takes to hear an
// advertiser, censored at a horizon H: the law of min(T, H), s, where T is
// the end of the first advertising PDU the scanner receives (+Inf if none
// is ever received). CDF(t) for t < H is the probability of discovery
// within t; the atom at H is the probability of none by H.
//
// The model. The scanner starts its first window at time 0 on channel 37
// (see Scanner). The advertiser has been advertising for long: its first
// event starts at the forward recurrence time of its renewal process of
// intervals advInterval + advDelay (density 1/μ on [0, a], falling linearly
// to 0 on [a, a + 10 ms], μ = a + 5 ms). Event k sends its PDUs on the
// advertiser's channels in order, the j-th starting Spacing·j after the
// event's start (AdvTimeline.Spacing; scan requests, which would delay the
// later PDUs, are not modelled) and lasting PDU seconds. A PDU is received
// if it lies wholly inside a scan window on its own channel and escapes
// collision, which it does with probability success (for example
// PDUSuccess), independently of every other PDU.
//
// The computation. The event start times form a Markov chain on the time
// axis, killed at each event with the probability that the event is heard.
// The defective law of the start of the k-th event is carried on a grid of
// cells of width h (h divides 0.625 ms, so advInterval, advDelay's 10 ms and
// the scan cycle 3·scanInterval are whole numbers of cells): each event
// removes the mass heard (the exact share of each cell whose start times
// are heard, cell by cell, assuming the mass uniform within a cell) and
// moves the rest by advInterval plus a uniform advDelay (exactly, for mass
// uniform within cells: a discrete trapezoid kernel); mass so far from the
// mean that Hoeffding's inequality bounds it by 1e-18 is dropped and
// counted. The law is computed at h and at 2h; Accuracy().CDFAbs is twice
// their largest CDF difference (the scheme is first order in h) plus the
// mass dropped, an estimate (not a proof)
// that the tests check against an exact first-event computation and an
// event-level sampler. Rand samples the model itself (event by event), not
// the grid.
type Discovery struct {
	horizon float64
	h       float64
	off     [3]float64   // T − event start for the j-th PDU: j·Spacing + PDU
	mass    [3][]float64 // mass of first reception on the j-th PDU, by event-start cell
	pre     [3][]float64 // block prefix sums of mass, pre[b] = Σ cells < b·block
	suf     [3][]float64 // block suffix sums, suf[b] = Σ cells >= b·block
	beyond  float64      // mass of no reception among events starting before H
	lo      float64      // lower end of the support
	acc     dist.Accuracy
	m       model
}

const discBlock = 64

// model is the scanning model in plain numbers, for Rand and the grid.
type model struct {
	a, w        float64 // advInterval, advDelay's width (s)
	pdu, d      float64 // PDU airtime, spacing of PDU starts (s)
	win, period float64 // scanWindow, scanInterval (s)
	ch          []int   // the advertiser's channels, as 0, 1, 2
	success     float64
	horizon     float64
}

// DiscoveryTolerance is the stated CDF error NewDiscovery aims at (the
// error estimate of Discovery.Accuracy, CDFAbs).
const DiscoveryTolerance = 2.5e-4

// Grid cell widths of the discovery law, s: the first fine grid, and the
// finest NewDiscoveryWithin refines to (powers-of-two fractions of 0.625
// ms).
const (
	discoveryFirstCell  = AdvIntervalStep / 16  // 39.0625 µs
	discoveryFinestCell = AdvIntervalStep / 256 // 2.44 µs
)

// NewDiscovery returns the discovery-time law of the advertiser adv
// (validated as by Advertiser.Timeline) by the scanner scan, each PDU
// escaping collision with probability success (in (0, 1]), censored at
// horizon (s, > 0, at most MaxDiscoveryHorizon), computed to a stated CDF
// error of about DiscoveryTolerance: it refines the grid as
// NewDiscoveryWithin does with that tolerance, but where the finest grid
// allowed states more it returns that grid's law with its larger stated
// error (Accuracy) instead of failing. In the tests the stated error is
// 3.6e-5 to 2.3e-4 and the true error (against an exact first-event
// integral) at most 8.7e-5.
func NewDiscovery(adv Advertiser, scan Scanner, success, horizon float64) (Discovery, error) {
	return discover("NewDiscovery", adv, scan, success, horizon, DiscoveryTolerance, false)
}

// NewDiscoveryWithin is NewDiscovery computed until its stated CDF error
// (Accuracy().CDFAbs) is at most tol (in (0, 1)): the law is computed on
// grids of cell width h = 39.0625 µs (for long horizons the least
// power-of-two multiple of it that keeps the time grid and one scan cycle
// within MaxDiscoveryCells) and 2h, the error estimated from their
// difference, and h halved, down to 0.625 ms/256 and within
// MaxDiscoveryCells, until the estimate meets tol. It fails, wrapping
// ErrParam and naming tol, when the finest grid allowed does not, and, as
// NewDiscovery, when even 0.3125 ms cells exceed MaxDiscoveryCells. The
// cost doubles with each halving of h: tol 7e-5 takes about 5 times as long
// as DiscoveryTolerance for the 3 s horizon of the benchmarks.
func NewDiscoveryWithin(adv Advertiser, scan Scanner, success, horizon, tol float64) (Discovery, error) {
	const fn = "NewDiscoveryWithin"
	if !(tol > 0 && tol < 1) {
		return Discovery{}, paramErr(fn, "tol", tol, "must be in (0, 1)")
	}
	return discover(fn, adv, scan, success, horizon, tol, true)
}

// discover computes the law on finer and finer grids until the stated
// error meets tol; strict makes a tolerance the finest grid cannot meet an
// error.
func discover(fn string, adv Advertiser, scan Scanner, success, horizon, tol float64, strict bool) (Discovery, error) {
	tl, err := adv.Timeline()
	if err != nil {
		return Discovery{}, err
	}
	if err := scan.validate(fn); err != nil {
		return Discovery{}, err
	}
	if !(success > 0 && success <= 1) {
		return Discovery{}, paramErr(fn, "success", success, "must be a probability in (0, 1]")
	}
	if !finite(horizon) || horizon <= 0 || horizon > MaxDiscoveryHorizon {
		return Discovery{}, paramErr(fn, "horizon", horizon, fmt.Sprintf("must be > 0 and <= MaxDiscoveryHorizon (%g s)", MaxDiscoveryHorizon))
	}
	m := newModel(tl, scan, adv.Interval, success, horizon)
	fits := func(h float64) bool {
		return math.Ceil(horizon/h) <= MaxDiscoveryCells && 3*scan.Interval/h <= MaxDiscoveryCells+0.5
	}
	h := discoveryFirstCell
	for !fits(h) {
		h *= 2
	}
	if h > AdvIntervalStep/2 {
		return Discovery{}, paramErr(fn, "horizon", horizon, fmt.Sprintf("needs more than %d cells of 0.3125 ms", MaxDiscoveryCells))
	}
	coarse, fine := m.grid(2*h), m.grid(h)
	for {
		stated := fine.acc.CDFAbs + 2*gridDiff(fine, coarse)
		if stated <= tol || h/2 < discoveryFinestCell*(1-1e-9) || !fits(h/2) {
			if strict && stated > tol {
				return Discovery{}, paramErr(fn, "tol", tol, fmt.Sprintf("cannot be met: the finest grid allowed (%.4g µs cells) states a CDF error of %.2g", h*1e6, stated))
			}
			fine.acc.CDFAbs = stated
			fine.acc.TailFloor = min(100*stated, 1)
			fine.acc.SurvivalRel = 0.01
			return fine, nil
		}
		h /= 2
		coarse, fine = fine, m.grid(h)
	}
}

// gridDiff returns the largest difference between the CDFs of the same
// model on a fine grid and on one twice as coarse. Both CDFs are piecewise
// linear with kinks at i·h + off_j (the coarse ones among them), so their
// largest difference below the horizon is reached at one of those points
// (or at the horizon's atom): it compares at all of them.
func gridDiff(fine, coarse Discovery) float64 {
	h, horizon := fine.h, fine.horizon
	diff := math.Abs(fine.Undiscovered() - coarse.Undiscovered())
	for j := range fine.m.ch {
		xs := make([]float64, 0, len(fine.mass[j])+1) // ascending
		for i := 0; i <= len(fine.mass[j]); i++ {
			if x := float64(i)*h + fine.off[j]; x < horizon {
				xs = append(xs, x)
			}
		}
		fc, cc := fine.cdfAt(xs), coarse.cdfAt(xs)
		for i := range xs {
			diff = max(diff, math.Abs(fc[i]-cc[i]))
		}
	}
	return diff
}

// newModel returns the scanning model of an advertiser's timeline tl and
// advInterval a (validated) and the scanner scan.
func newModel(tl AdvTimeline, scan Scanner, a, success, horizon float64) model {
	m := model{a: a, w: AdvDelayMax, pdu: tl.PDU, d: tl.Spacing, win: scan.Window, period: scan.Interval,
		success: success, horizon: horizon}
	for _, c := range tl.Channels {
		m.ch = append(m.ch, c-Channel37)
	}
	return m
}

// fits reports whether the PDU starting at time t (s) on channel index c
// lies wholly inside a scan window on that channel.
func (m model) fits(t float64, c int) bool {
	cyc := 3 * m.period
	ph := t - cyc*math.Floor(t/cyc)
	k := int(ph / m.period)
	if k > 2 {
		k = 2
	}
	return k == c && ph-float64(k)*m.period+m.pdu <= m.win
}

// firstStart draws the start of the advertiser's first event after time 0:
// the forward recurrence time of intervals a + Uniform(0, w).
func (m model) firstStart(r *rand.Rand) float64 {
	mu := m.a + m.w/2
	if r.Float64()*mu < m.a {
		return m.a * r.Float64()
	}
	return m.a + m.w*(1-math.Sqrt(1-r.Float64()))
}

// sample draws min(T, H) by running the events one by one.
func (m model) sample(r *rand.Rand) float64 {
	for t := m.firstStart(r); t < m.horizon; t += m.a + m.w*r.Float64() {
		for j, c := range m.ch {
			s := t + float64(j)*m.d
			if m.fits(s, c) && (m.success == 1 || r.Float64() < m.success) {
				return min(s+m.pdu, m.horizon)
			}
		}
	}
	return m.horizon
}

// heard returns, for every cell of one scan cycle (3·scanInterval, cells of
// width h), the share of event starts in the cell whose j-th PDU is the
// first received, for each j, assuming starts uniform within the cell.
func (m model) heard(h float64, cells int) [3][]float64 {
	var first [3][]float64
	n := len(m.ch)
	for j := 0; j < n; j++ {
		first[j] = make([]float64, cells)
	}
	cyc := 3 * m.period
	fitLen := m.win - m.pdu
	if fitLen <= 0 {
		return first
	}
	// The start times whose j-th PDU fits form one interval per cycle:
	// [c_j·I − j·d, c_j·I − j·d + fitLen] modulo the cycle.
	type span struct{ lo, hi float64 }
	sets := make([][]span, n)
	for j, c := range m.ch {
		s := float64(c)*m.period - float64(j)*m.d
		s -= cyc * math.Floor(s/cyc)
		sets[j] = []span{{s - cyc, s - cyc + fitLen}, {s, s + fitLen}, {s + cyc, s + cyc + fitLen}}
	}
	in := func(j int, x float64) bool {
		for _, sp := range sets[j] {
			if x >= sp.lo && x <= sp.hi {
				return true
			}
		}
		return false
	}
	cuts := make([]float64, 0, 16)
	for i := 0; i < cells; i++ {
		x0, x1 := float64(i)*h, float64(i+1)*h
		cuts = append(cuts[:0], x0, x1)
		for j := range sets {
			for _, sp := range sets[j] {
				for _, e := range []float64{sp.lo, sp.hi} {
					if e > x0 && e < x1 {
						cuts = append(cuts, e)
					}
				}
			}
		}
		slices.Sort(cuts)
		for k := 0; k+1 < len(cuts); k++ {
			if cuts[k+1] <= cuts[k] {
				continue
			}
			mid := (cuts[k] + cuts[k+1]) / 2
			share := (cuts[k+1] - cuts[k]) / h
			missed := 1.0 // P(no earlier fitting PDU received)
			for j := 0; j < n; j++ {
				if in(j, mid) {
					first[j][i] += share * missed * m.success
					missed *= 1 - m.success
				}
			}
		}
	}
	return first
}

// grid computes the law on cells of width h (h divides 0.625 ms).
func (m model) grid(h float64) Discovery {
	dsc := Discovery{horizon: m.horizon, h: h, m: m}
	for j := range m.ch {
		dsc.off[j] = float64(j)*m.d + m.pdu
	}
	n := int(math.Ceil(m.horizon/h - 1e-9))
	na := int(math.Round(m.a / h))
	nw := int(math.Round(m.w / h))
	nc := int(math.Round(3 * m.period / h))
	first := m.heard(h, nc)
	for j := range m.ch {
		dsc.mass[j] = make([]float64, n)
	}
	g := make([]float64, n)
	next := make([]float64, n)
	pre := make([]float64, n+1)
	// The first event's start: the forward recurrence density, exact cell masses.
	mu := m.a + m.w/2
	lo, hi := 0, 0
	for i := 0; i < na+nw; i++ {
		var p float64
		if i < na {
			p = h / mu
		} else {
			mid := (float64(i) + 0.5) * h
			p = h * (m.a + m.w - mid) / (m.w * mu)
		}
		if i < n {
			g[i] = p
			hi = i + 1
		} else {
			dsc.beyond += p
		}
	}
	dropped := 0.0
	for k := 0; lo < hi; k++ {
		// Remove the mass heard at this event.
		left := 0.0
		for i := lo; i < hi; i++ {
			p := g[i]
			if p == 0 {
				continue
			}
			c := i % nc
			taken := 0.0
			for j := range m.ch {
				q := p * first[j][c]
				dsc.mass[j][i] += q
				taken += q
			}
			g[i] = p - taken
			left += g[i]
		}
		if left < 1e-18 {
			dropped += left
			dsc.beyond += left
			break
		}
		// Move by advInterval + Uniform(0, advDelay max): new mass of cell
		// i is Σ_{t=i−na−nw}^{i−na} g[t] − (g[i−na] + g[i−na−nw])/2, over nw.
		pre[lo] = 0
		for i := lo; i < hi; i++ {
			pre[i+1] = pre[i] + g[i]
		}
		sum := func(a, b int) float64 { // Σ g[a..b], clamped to [lo, hi)
			a, b = max(a, lo), min(b, hi-1)
			if a > b {
				return 0
			}
			return pre[b+1] - pre[a]
		}
		at := func(t int) float64 {
			if t < lo || t >= hi {
				return 0
			}
			return g[t]
		}
		nlo, nhi := lo+na, hi+na+nw
		// Hoeffding: the (k+1)-th event's start lies within x of the mean
		// offset except for mass 2·exp(−2x²/((k+1)w²)) <= 1e-18.
		kk := float64(k + 1)
		x := m.w * math.Sqrt(kk*math.Log(2e18)/2)
		centre := kk * (m.a + m.w/2)
		tlo := int(math.Floor((centre-x)/h)) - (k + 2)
		thi := int(math.Ceil((centre+x+m.a+m.w)/h)) + (k + 2)
		nlo, nhi = max(nlo, tlo), min(nhi, thi)
		outside := left
		for i := nlo; i < nhi; i++ {
			p := (sum(i-na-nw, i-na) - (at(i-na)+at(i-na-nw))/2) / float64(nw)
			if p < 0 {
				p = 0
			}
			outside -= p
			if i < n {
				next[i] = p
			} else {
				dsc.beyond += p
			}
		}
		// What fell outside the trimmed range (Hoeffding), beyond rounding.
		if outside > 0 {
			dsc.beyond += outside
			dropped += outside
		}
		for i := lo; i < hi; i++ {
			g[i] = 0
		}
		lo, hi = nlo, min(nhi, n)
		if lo >= hi {
			break
		}
		copy(g[lo:hi], next[lo:hi])
		for i := lo; i < hi; i++ {
			next[i] = 0
		}
	}
	// Rounding in the moves leaves the total a few 1e-15 off 1: rescale so
	// that CDF + Survival = 1.
	total := dsc.beyond
	for j := range m.ch {
		for _, p := range dsc.mass[j] {
			total += p
		}
	}
	for j := range m.ch {
		for i := range dsc.mass[j] {
			dsc.mass[j][i] /= total
		}
	}
	dsc.beyond /= total
	dropped += math.Abs(total - 1)
	dsc.finish()
	dsc.acc = dist.Accuracy{CDFAbs: dropped + 1e-14, Method: fmt.Sprintf("event-start chain on a %.4g µs grid, Richardson check at twice the step", h*1e6)}
	return dsc
}

// finish builds the block sums and the support's lower end.
func (d *Discovery) finish() {
	d.lo = d.horizon
	for j := range d.mass {
		ms := d.mass[j]
		if ms == nil {
			continue
		}
		nb := (len(ms) + discBlock - 1) / discBlock
		d.pre[j] = make([]float64, nb+1)
		d.suf[j] = make([]float64, nb+1)
		for b := 0; b < nb; b++ {
			s := 0.0
			for _, v := range ms[b*discBlock : min((b+1)*discBlock, len(ms))] {
				s += v
			}
			d.pre[j][b+1] = d.pre[j][b] + s
		}
		for b := nb - 1; b >= 0; b-- {
			s := 0.0
			for _, v := range ms[b*discBlock : min((b+1)*discBlock, len(ms))] {
				s += v
			}
			d.suf[j][b] = d.suf[j][b+1] + s
		}
		for i, v := range ms {
			if v > 0 {
				d.lo = min(d.lo, float64(i)*d.h+d.off[j])
				break
			}
		}
	}
	d.lo = min(d.lo, d.horizon)
}

// cdfAt returns CDF(x) for the ascending points xs below the horizon,
// sweeping each component once.
func (d Discovery) cdfAt(xs []float64) []float64 {
	out := make([]float64, len(xs))
	for j, ms := range d.mass {
		i, run := 0, 0.0 // cell and Σ mass of the cells below it
		for k, x := range xs {
			y := (x - d.off[j]) / d.h
			if y <= 0 {
				continue
			}
			for i < len(ms) && float64(i+1) <= y {
				run += ms[i]
				i++
			}
			if i < len(ms) {
				out[k] += run + ms[i]*(y-float64(i))
			} else {
				out[k] += run
			}
		}
	}
	return out
}

// below returns the mass of component j with T <= x (T uniform within each
// shifted cell), for x below the horizon.
func (d Discovery) below(j int, x float64) float64 {
	ms := d.mass[j]
	y := (x - d.off[j]) / d.h
	if y <= 0 {
		return 0
	}
	i := int(y)
	if i >= len(ms) {
		return d.pre[j][len(d.pre[j])-1]
	}
	b := i / discBlock
	s := d.pre[j][b]
	for t := b * discBlock; t < i; t++ {
		s += ms[t]
	}
	return s + ms[i]*(y-float64(i))
}

// above returns the mass of component j with T > x, summed from the top.
func (d Discovery) above(j int, x float64) float64 {
	ms := d.mass[j]
	y := (x - d.off[j]) / d.h
	if y <= 0 {
		return d.suf[j][0]
	}
	i := int(y)
	if i >= len(ms) {
		return 0
	}
	b := i/discBlock + 1
	s := d.suf[j][min(b, len(d.suf[j])-1)]
	for t := min(b*discBlock, len(ms)) - 1; t > i; t-- {
		s += ms[t]
	}
	return s + ms[i]*(float64(i+1)-y)
}

// CDF returns P(min(T, H) <= x): for x < H the probability that the scanner
// has heard the advertiser by time x (s); 1 for x >= H. NaN gives NaN.
func (d Discovery) CDF(x float64) float64 {
	switch {
	case math.IsNaN(x) || d.mass[0] == nil:
		return math.NaN()
	case x >= d.horizon:
		return 1
	case x < d.lo:
		return 0
	}
	s := 0.0
	for j := range d.mass {
		if d.mass[j] != nil {
			s += d.below(j, x)
		}
	}
	return min(s, 1)
}

// Survival returns P(min(T, H) > x), summed directly: the receptions after
// x plus the mass of none by H. NaN gives NaN.
func (d Discovery) Survival(x float64) float64 {
	switch {
	case math.IsNaN(x) || d.mass[0] == nil:
		return math.NaN()
	case x >= d.horizon:
		return 0
	case x < d.lo:
		return 1
	}
	s := d.beyond
	for j := range d.mass {
		if d.mass[j] != nil {
			s += d.above(j, x)
		}
	}
	return min(s, 1)
}

// Undiscovered returns the probability that the scanner has not heard the
// advertiser by the horizon: the atom at H.
func (d Discovery) Undiscovered() float64 {
	if d.mass[0] == nil {
		return math.NaN()
	}
	return d.Survival(math.Nextafter(d.horizon, 0))
}

// Horizon returns the horizon H, s.
func (d Discovery) Horizon() float64 { return d.horizon }

// Atoms returns the atom at the horizon, if it has mass.
func (d Discovery) Atoms() []dist.Atom {
	if p := d.Undiscovered(); p > 0 {
		return []dist.Atom{{Value: d.horizon, Mass: p}}
	}
	return nil
}

// Quantile returns inf{x : CDF(x) >= p}, by bisection; NaN outside [0, 1].
func (d Discovery) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) || d.mass[0] == nil {
		return math.NaN()
	}
	if p == 0 {
		return d.lo
	}
	if d.CDF(math.Nextafter(d.horizon, 0)) < p {
		return d.horizon
	}
	return bisect(d.lo, d.horizon, func(x float64) bool { return d.CDF(x) >= p })
}

// UpperQuantile returns inf{x : Survival(x) <= q}, by bisection; NaN
// outside [0, 1].
func (d Discovery) UpperQuantile(q float64) float64 {
	if !(q >= 0 && q <= 1) || d.mass[0] == nil {
		return math.NaN()
	}
	if q == 1 {
		return d.lo
	}
	if d.Survival(math.Nextafter(d.horizon, 0)) > q {
		return d.horizon
	}
	return bisect(d.lo, d.horizon, func(x float64) bool { return d.Survival(x) <= q })
}

// bisect returns the least x in [lo, hi] with ok(x), for ok monotone and
// ok(hi) true, to the last float64.
func bisect(lo, hi float64, ok func(float64) bool) float64 {
	if ok(lo) {
		return lo
	}
	for {
		mid := lo + (hi-lo)/2
		if mid <= lo || mid >= hi {
			return hi
		}
		if ok(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
}

// Mean returns E[min(T, H)], s, from the cells (uniform within each).
func (d Discovery) Mean() float64 {
	m1, _ := d.moments()
	return m1
}

// Variance returns Var[min(T, H)], s².
func (d Discovery) Variance() float64 {
	m1, m2 := d.moments()
	return max(m2-m1*m1, 0)
}

func (d Discovery) moments() (m1, m2 float64) {
	if d.mass[0] == nil {
		return math.NaN(), math.NaN()
	}
	hz := d.horizon
	for j, ms := range d.mass {
		for i, p := range ms {
			if p == 0 {
				continue
			}
			a, b := float64(i)*d.h+d.off[j], float64(i+1)*d.h+d.off[j]
			if a >= hz {
				m1 += p * hz
				m2 += p * hz * hz
				continue
			}
			if b > hz { // the part beyond H sits at H
				f := (hz - a) / (b - a)
				m1 += p * (1 - f) * hz
				m2 += p * (1 - f) * hz * hz
				p, b = p*f, hz
			}
			c := (a + b) / 2
			m1 += p * c
			m2 += p * (c*c + (b-a)*(b-a)/12)
		}
	}
	m1 += d.beyond * hz
	m2 += d.beyond * hz * hz
	return m1, m2
}

// Support returns [lo, H]: lo the earliest possible reception.
func (d Discovery) Support() (lo, hi float64) {
	if d.mass[0] == nil {
		return math.NaN(), math.NaN()
	}
	return d.lo, d.horizon
}

// Rand draws min(T, H) by running the model event by event (not from the
// grid), with the caller's source.
func (d Discovery) Rand(r *rand.Rand) float64 {
	if d.mass[0] == nil {
		return math.NaN()
	}
	return d.m.sample(r)
}

// Accuracy reports the estimated CDF error (see Discovery).
func (d Discovery) Accuracy() dist.Accuracy { return d.acc }

// String describes the law compactly.
func (d Discovery) String() string {
	return fmt.Sprintf("Discovery(H=%g s: median %.4g s, 90%% %.4g s, none by H %.3g)", d.horizon, d.Quantile(0.5), d.Quantile(0.9), d.Undiscovered())
}
