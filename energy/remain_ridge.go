package energy

import (
	"math"
)

// The ridge stage of DeviceModel.Posterior.
//
// Readings in the knee of the voltage curve pin the depth of discharge at
// the newest reading, x = (a·A + f·Φ + P_q·τ)/(c·N) + s·D, to within a few
// thousandths, while they leave the factors free along the surface of
// constant x: the posterior is a thin curved shell in the space of the
// normal scores (curved because f = exp(σf·z₂) and x ∝ 1/c). A normal or
// Student-t proposal fitted to it misses the shell's curvature unless it
// is made so wide that most of its points are wasted; the adaptive stages
// then needed two to four sets of stageFactor·M points.
//
// The ridge stage places M points on the shell instead. Two of the three
// scores come from the prior's point set (normal quantiles of the
// Kronecker coordinates); the third coordinate gives the newest reading's
// loaded voltage V; V gives the depth x through the inverse of the loaded
// curve (strictly decreasing at the reading's drop, else no ridge stage),
// and x gives the third factor (the one whose prior moves x most at the
// median node, solved from the depth's formula). V's law is a defensive
// mixture: with weight 1 − ridgeDefensive the profile exp(h(V)), h the
// log of V's conditional density at the median other scores (the solved
// score's prior, the Jacobian and the exact likelihood), log-linear
// between the points of an even grid of ridgeGrid points over the bins'
// middle ± ridgeReach times their scale (gridded again where h is within
// ridgeDrop of its largest value on few cells), inverted cell by cell;
// with weight ridgeDefensive a Student-t law (ν = 4, closed-form
// quantile) at the profile's mean with ridgeWiden times its standard
// deviation, which bounds the weights where the profile is low. Where the
// readings lie deeper than the cell's end (the depth at which the median
// node, alive at its newest event, would be flat), being alive bounds the
// depth: the posterior sits at the voltage of the cell's end, above the
// readings, and the grid is stretched to reach ridgeReach scales above
// it (measured: devices 800 to 1600 days old reading 3.30 V had 1 to 64
// effective of 256 to 1024 nodes and stated 1; with the grid reaching
// the end, 153 to 215 effective of 256, stating 0.080 to 0.107 against
// measured 0.003 to 0.006 on 2^16 nodes). The point's weight is
//
//	p(z)·L(z)/q(z) = φ(z_s)·|dz_s/dV|·L(z)/q(V)
//
// (the other two scores' normal densities cancel), with L the exact
// likelihood (logLik): the approximations (the profile at the median other
// scores) only cost effective nodes, never bias the weights. A point whose
// voltage the curve does not reach, or whose solved factor is not
// positive, gets weight 0: the posterior there is 0 except beyond depth 1
// (flat: the alive term's weight there is below Φ̄(aliveSure)) and where x
// is below the self-discharge alone (no energy drawn).

// ridgeWiden is the ridge stage's factor on the fitted scale of the
// voltage proposal (the bins' normal shape and one voltage for readings
// days apart are approximations: a wider t keeps the weights bounded).
const ridgeWiden = 1.5

// ridgeGap and ridgeMargin (nats): the ridge stage is tried where the
// prior's best node's log-likelihood falls ridgeGap below the readings'
// best (each reading's term at its bin's middle: no node explains the
// readings); its estimate replaces the prior nodes' where its marginal
// likelihood is larger by more than ridgeMargin, or within it and more
// effective.
const (
	ridgeGap    = 8
	ridgeMargin = 2
)

// readingBest returns the sum over the kept readings of each one's
// log-likelihood at its bin's middle (at the nearest end of an open bin's
// finite end, half a noise inside): about the most a node can get from
// them.
func (e *evidence) readingBest() float64 {
	s := 0.0
	for i := range e.rsBuf[:e.nr] {
		tb := e.rsBuf[i].tab
		v := 0.5 * (tb.lo + tb.hi)
		switch {
		case math.IsInf(tb.lo, -1):
			v = tb.hi - tb.sigma/2
		case math.IsInf(tb.hi, 1):
			v = tb.lo + tb.sigma/2
		}
		s += logBin(v, tb.lo, tb.hi, tb.sigma)
	}
	return s
}

// ridgeSharpness: the ridge stage is tried for few effective prior nodes
// only where the readings pin the depth at the newest reading more
// sharply than ridgeSharpness times the prior's spread of it (on the flat
// part of the curve the posterior is no thin shell, and the adaptive
// stages serve).
const ridgeSharpness = 0.5

// ridgeSharp reports whether the readings pin the depth at the newest
// reading sharply against the prior (see ridgeSharpness): the bins'
// scale over the loaded curve's slope at their mean, against the median
// node's depth times the prior's relative spread of the spent energy
// (√(σc² + (σa·A/B)² + (σf·Φ/B)²), B the spent energy, A and Φ its active
// and floor parts).
func (e *evidence) ridgeSharp() bool {
	d := e.d
	if e.newest < 0 || d.curve == nil {
		return false
	}
	mu, s0, ok := e.readingsMean()
	if !ok {
		return false
	}
	nr := &e.rsBuf[e.newest]
	ds, vs := d.curve.DepthOfDischarge, nr.vs
	slope := math.Inf(1) // outside the curve's range: let the stage decide
	for j := 0; j+1 < len(vs); j++ {
		if (vs[j] >= mu && mu >= vs[j+1]) || (vs[j] <= mu && mu <= vs[j+1]) {
			slope = math.Abs(vs[j+1]-vs[j]) / (ds[j+1] - ds[j])
			break
		}
	}
	b := nr.active + nr.fe + nr.q
	if !(b > 0) {
		return false
	}
	sp := d.spread
	ra, rf := sp.Active*nr.active/b, sp.Floor*nr.fe/b
	prior := b / d.n.nominal * math.Sqrt(sp.Capacity*sp.Capacity+ra*ra+rf*rf)
	return s0/slope < ridgeSharpness*prior
}

// readingsMean returns where the closed bins put the voltage: the
// precision-weighted mean of their middles (each N(·, σ² + w²/12)) and the
// scale s₀ of that mean plus the middles' weighted spread; ok false
// without a closed bin.
func (e *evidence) readingsMean() (mu, s0 float64, ok bool) {
	sw, swm, swmm := 0.0, 0.0, 0.0
	for i := range e.rsBuf[:e.nr] {
		tb := e.rsBuf[i].tab
		if math.IsInf(tb.lo, 0) || math.IsInf(tb.hi, 0) {
			continue
		}
		w, mid := tb.hi-tb.lo, 0.5*(tb.lo+tb.hi)
		prec := 1 / (tb.sigma*tb.sigma + w*w/12)
		sw += prec
		swm += prec * mid
		swmm += prec * mid * mid
	}
	if !(sw > 0) {
		return 0, 0, false
	}
	mu = swm / sw
	spread := max(swmm-swm*mu, 0)
	return mu, math.Sqrt(1/sw + spread/sw), true
}

// ridgeDefensive is the share of the ridge stage's voltage proposal
// given to the Student-t component (the rest follows the profile): it
// bounds the weights where the profile is low.
const ridgeDefensive = 0.15

// ridgeGrid and ridgeReach: the points of the ridge stage's voltage
// profile and its half-width in units of the bins' scale.
const (
	ridgeGrid  = 48
	ridgeReach = 12
	// ridgeDrop: the profile is gridded again over the cells within
	// ridgeDrop of its largest log value when they are fewer than a
	// quarter of the grid.
	ridgeDrop = 30
)

// ridgeStage returns the ridge stage's m points (normal scores, factors)
// and their log weights (log prior − log proposal + log-likelihood,
// normalised as the adaptive stages' are) with room ws for their weights;
// the scores and log weights in zBuf and lBuf where they hold m (the
// caller's scratch), else in a new allocation; or ok = false where it does not
// apply: no reading with a closed bin, no spread of the solved factor, or a
// loaded curve that is not strictly decreasing.
func (e *evidence) ridgeStage(m int, zBuf [][3]float64, lBuf []float64) (zs [][3]float64, logw, ws, cs, as, fs []float64, ok bool) {
	d := e.d
	if e.newest < 0 || d.curve == nil {
		return nil, nil, nil, nil, nil, nil, false
	}
	mu, s0, ok := e.readingsMean()
	if !ok {
		return nil, nil, nil, nil, nil, nil, false
	}
	// The newest reading's loaded curve, strictly decreasing.
	nr := &e.rsBuf[e.newest]
	cv := d.curve
	np := len(cv.DepthOfDischarge)
	vs, sl := nr.vs, nr.slope
	for i := 1; i < np; i++ {
		if !(vs[i] < vs[i-1]) {
			return nil, nil, nil, nil, nil, nil, false
		}
	}
	// The solved factor: the one whose prior moves the depth most, at the
	// median node (terms of the spent energy at the newest reading), at the
	// spreads d.ridgeRef (the model's own, but the group's planned ones in
	// EstimateSpread's models: a factor picked by each candidate spread
	// would switch between candidates, and the two ways' estimates of the
	// marginal likelihood differ by a few hundredths of a nat a device, a
	// step in the pooled profile), among the factors with a spread.
	sp := d.spread
	n := d.n
	ref := d.ridgeRef
	if (sp.Capacity > 0) != (ref.Capacity > 0) || (sp.Active > 0) != (ref.Active > 0) || (sp.Floor > 0) != (ref.Floor > 0) {
		ref = sp
	}
	termC := ref.Capacity * (nr.active + nr.fe + nr.q)
	termA := ref.Active * nr.active
	termF := ref.Floor * nr.fe
	solve := 0
	best := termC
	if termA > best {
		solve, best = 1, termA
	}
	if termF > best {
		solve, best = 2, termF
	}
	if !(best > 0) {
		return nil, nil, nil, nil, nil, nil, false
	}
	nom := n.nominal
	// Reciprocals taken once, so that a point's node costs one division:
	// the curve's segments' slopes, and the solved factor's constants.
	var invSl [voltageMaxPoints]float64
	for j := range np - 1 {
		invSl[j] = 1 / sl[j]
	}
	var kSolve float64 // dz_s/dV = kSolve·c/(net or f)/(−slope) (see node)
	switch solve {
	case 0:
		kSolve = 1 / sp.Capacity
	case 1:
		kSolve = nom / (nr.active * sp.Active)
	default:
		kSolve = nom / (nr.fe * sp.Floor)
	}
	invAct, invFe := 1/nr.active, 1/nr.fe
	invSc, invSa, invSf := 1/sp.Capacity, 1/sp.Active, 1/sp.Floor
	// node maps the newest reading's voltage v, the other two scores
	// (the entries of zz other than the solved one) and their factors (c,
	// a, f: the entry of the solved one is ignored) to the node: the
	// solved score, the factors and |dz_s/dV|; ok false where the curve
	// does not reach v or the solved factor is not positive.
	node := func(v float64, zz *[3]float64, c, a, f float64) (float64, float64, float64, float64, bool) {
		// j: the count of leading segments whose lower end is above v
		// (vs strictly decreasing: a bisection finds the first segment
		// that is not, the same j as a scan, NaN too)
		j, jh := 0, np-1
		for j < jh {
			h := int(uint(j+jh) >> 1)
			if vs[h+1] > v {
				j = h + 1
			} else {
				jh = h
			}
		}
		if j == np-1 || v > vs[0] {
			return 0, 0, 0, 0, false
		}
		x0 := cv.DepthOfDischarge[j]
		is := invSl[j] // 1/slope, slope = (vs[j+1] − vs[j])/(x1 − x0) < 0
		x := x0 + (v-vs[j])*is
		net := x - nr.sdd // the depth the spending pays for
		var jac float64   // |dz_s/dV| = |dz_s/dx|/|slope|
		switch solve {
		case 0:
			if !(net > 0) {
				return 0, 0, 0, 0, false
			}
			c = (a*nr.active + f*nr.fe + nr.q) / (nom * net)
			zz[0] = (c - 1) * invSc
			jac = -kSolve * c * is / net // c/(net·σc)/|slope|
		case 1:
			a = (c*nom*net - f*nr.fe - nr.q) * invAct
			zz[1] = (a - 1) * invSa
			jac = -kSolve * c * is // c·N/(A·σa)/|slope|
		default:
			f = (c*nom*net - a*nr.active - nr.q) * invFe
			if !(f > 0) {
				return 0, 0, 0, 0, false
			}
			zz[2] = math.Log(f) * invSf
			jac = -kSolve * c * is / f // c·N/(Φ·f·σf)/|slope|
		}
		return c, a, f, jac, true
	}
	// The proposal's location and scale: the mean and standard deviation
	// of the voltage's conditional density at the median other scores,
	// exp(h(V)), h = log φ(z_s) + log|dz_s/dV| + log-likelihood, on an even
	// grid of ridgeGrid points over mid ± ridgeReach·s₀ (s₀ the bins'
	// scale) within the curve's range.
	lo := max(vs[np-1], mu-ridgeReach*s0)
	hi := min(vs[0], mu+ridgeReach*s0)
	// Readings deeper than the end of the cell: the median node alive at
	// the newest event is at most at the depth xEnd at the newest reading
	// (its spent energy there, c·capU less what it spent after the
	// reading, over c·N), and its loaded voltage vEnd there bounds the
	// posterior's voltages from below (the alive term falls steeply
	// beyond): where vEnd is above the grid, the grid reaches ridgeReach·s₀
	// above it.
	xEnd := (e.capU-(e.act-nr.active)-(e.fe0-nr.fe)-(e.q0-nr.q))/nom + nr.sdd
	if xEnd > 0 && xEnd < 1 {
		j := searchAbove(cv.DepthOfDischarge, xEnd) - 1
		if vEnd := vs[j] + (xEnd-cv.DepthOfDischarge[j])*sl[j]; vEnd > hi {
			hi = min(vs[0], vEnd+ridgeReach*s0)
		}
	}
	if !(hi > lo) {
		return nil, nil, nil, nil, nil, nil, false
	}
	var gv, gh [ridgeGrid]float64
	var step, hmax float64
	// profile fills the grid over [lo, hi] and returns h's largest value.
	profile := func(lo, hi float64) float64 {
		var gc, ga, gf [ridgeGrid]float64
		step = (hi - lo) / (ridgeGrid - 1)
		for i := range gv {
			gv[i] = lo + float64(i)*step
			var zz [3]float64 // the median other scores: factors 1
			c, a, f, jac, ok := node(gv[i], &zz, 1, 1, 1)
			gh[i] = math.Inf(-1)
			if ok {
				gc[i], ga[i], gf[i] = c, a, f
				gh[i] = math.Log(jac) - 0.5*zz[solve]*zz[solve]
			}
		}
		e.logLik(gc[:], ga[:], gf[:], gh[:])
		return maxOf(gh[:])
	}
	if hmax = profile(lo, hi); math.IsInf(hmax, -1) {
		return nil, nil, nil, nil, nil, nil, false
	}
	// Where the profile's mass lies within a few cells (a sharp profile),
	// grid again over the cells where h > max − ridgeDrop, one more on
	// each side.
	i0, i1 := ridgeGrid-1, 0
	for i, h := range gh {
		if h > hmax-ridgeDrop {
			i0, i1 = min(i0, i), max(i1, i)
		}
	}
	i0, i1 = max(i0-1, 0), min(i1+1, ridgeGrid-1)
	if i1-i0 < ridgeGrid/4 {
		if hmax = profile(gv[i0], gv[i1]); math.IsInf(hmax, -1) {
			return nil, nil, nil, nil, nil, nil, false
		}
	}
	// The profile's values eh = exp(h − hmax) at the points; their
	// moments locate the defensive t component.
	var mass, eh [ridgeGrid]float64 // mass[i]: cells below i; mass[ridgeGrid-1] the total
	m0, m1, m2 := 0.0, 0.0, 0.0
	for i, h := range gh {
		w := math.Exp(h - hmax)
		eh[i] = w
		m0 += w
		m1 += w * gv[i]
		m2 += w * gv[i] * gv[i]
	}
	mu = m1 / m0
	scale := ridgeWiden * math.Sqrt(max(m2/m0-mu*mu, 0)+step*step)
	// The profile's own law: exp(h) log-linear between the grid points
	// (cell i from gv[i] to gv[i+1]; a cell with an end where h = −Inf has
	// no mass) and its cumulative masses.
	for i := 0; i < ridgeGrid-1; i++ {
		mass[i+1] = mass[i] + cellMassExp(gh[i]-hmax, gh[i+1]-hmax, eh[i], eh[i+1], step)
	}
	tot := mass[ridgeGrid-1]
	// The components' constants: the Student-t density's (ν = proposalNu
	// = 4), Γ(5/2)/(Γ(2)·√(4π)) = 3/8 over the scale, and the profile's,
	// 1/tot; each times its share.
	tConst := ridgeDefensive * 3 / (8 * scale)
	invScale, invStep := 1/scale, 1/step
	gConst := (1 - ridgeDefensive) / tot
	if len(zBuf) >= m && len(lBuf) >= m {
		buf := make([]float64, 4*m)
		zs, logw = zBuf[:m:m], lBuf[:m:m]
		ws, cs, as, fs = buf[:m:m], buf[m:2*m:2*m], buf[2*m:3*m:3*m], buf[3*m:]
	} else {
		zs, logw, ws, cs, as, fs = stagePoints(m, nil)
	}
	logPhi := -0.5 * math.Log(2*math.Pi)
	// In two passes (the voltages and the profile's densities there, in cs
	// and as until the second pass puts the factors in their place; then
	// the nodes and weights), each a shorter chain of dependent steps a
	// point, so the processor overlaps more points.
	for k := range m {
		u := d.u[k][solve]
		var v, qg float64 // the voltage and the profile's density there over exp(hmax)
		if u < ridgeDefensive {
			v = mu + scale*d.ridgeT[k][solve] // studentT4Quantile(u/ridgeDefensive)
			if v >= gv[0] && v < gv[ridgeGrid-1] {
				i := min(int((v-gv[0])*invStep), ridgeGrid-2)
				h0, h1 := gh[i]-hmax, gh[i+1]-hmax
				if !math.IsInf(h0, -1) && !math.IsInf(h1, -1) {
					qg = math.Exp(h0 + (h1-h0)*(v-gv[i])*invStep)
				}
			}
		} else {
			// invert the profile's cumulative mass: the cell by bisection,
			// then within it in closed form (cellPoint, which gives the
			// profile's value there without another exponential)
			r := (u - ridgeDefensive) / (1 - ridgeDefensive) * tot
			i, j := 0, ridgeGrid-2 // the first cell i with mass[i+1] > r, at most the last
			for i < j {
				h := int(uint(i+j) >> 1)
				if mass[h+1] <= r {
					i = h + 1
				} else {
					j = h
				}
			}
			var t float64
			t, qg = cellPoint(gh[i]-hmax, gh[i+1]-hmax, eh[i], eh[i+1], step, r-mass[i], mass[i+1]-mass[i])
			v = gv[i] + t
		}
		cs[k], as[k] = v, qg
	}
	for k := range m {
		v, qg := cs[k], as[k]
		// the mixture's density at v: the t component's, (1 + t²/4)^(−5/2)
		// times its constant, plus the profile's (0 where it underflows:
		// the t component's is then far larger)
		tv := (v - mu) * invScale
		x := 1 + tv*tv/4
		q := tConst/(x*x*math.Sqrt(x)) + gConst*qg
		zz := d.z[k]
		c, a, f, jac, ok := node(v, &zz, d.c[k], d.a[k], d.f[k])
		zs[k] = zz
		if !ok {
			cs[k], as[k] = 0, 0 // (as the allocation left them)
			logw[k] = math.Inf(-1)
			continue
		}
		cs[k], as[k], fs[k] = c, a, f
		logw[k] = logPhi - 0.5*zz[solve]*zz[solve] + math.Log(jac/q)
	}
	e.logLik(cs, as, fs, logw)
	return zs, logw, ws, cs, as, fs, true
}

// cellMass returns ∫₀ʰ exp(h0 + (h1 − h0)·t/h) dt for a cell of width h,
// h0, h1 <= 0 (0 when an end is −Inf).
func cellMass(h0, h1, h float64) float64 {
	return cellMassExp(h0, h1, math.Exp(h0), math.Exp(h1), h)
}

// cellMassExp is cellMass with e0 = exp(h0) and e1 = exp(h1) given.
func cellMassExp(h0, h1, e0, e1, h float64) float64 {
	if math.IsInf(h0, -1) || math.IsInf(h1, -1) {
		return 0
	}
	b := h1 - h0
	if math.Abs(b) < 1e-9 {
		return h * e0 * (1 + b/2)
	}
	return h * (e1 - e0) / b
}

// cellPoint returns t in [0, h] with ∫₀ᵗ exp(h0 + (h1 − h0)·s/h) ds = r
// for a cell of width h, h0, h1 <= 0 finite, e0 = exp(h0), e1 = exp(h1),
// r at most the cell's mass cm (cellMass), and the density there,
// exp(h0 + (h1 − h0)·t/h), without another exponential: with b = (h1 −
// h0)/h, e^(b·t) = 1 + b·r/e0 and the density is e0 + b·r; from the
// upper end where e1 > e0 (e0 may underflow), with r' = cm − r, the
// density is e1 − b·r' and h − t = −log1p(−b·r'/e1)/b.
func cellPoint(h0, h1, e0, e1, h, r, cm float64) (t, dens float64) {
	b := (h1 - h0) / h
	switch {
	case math.Abs(b*h) < 1e-9:
		t, dens = r/e0, e0+b*r
	case e0 >= e1:
		// 1 + b·r/e0 >= e1/e0 >= 0 but for rounding (then the cell's top)
		t, dens = math.Log1p(max(b*r/e0, -1))/b, e0+b*r
	default:
		rest := max(cm-r, 0)
		t, dens = h+math.Log1p(max(-b*rest/e1, -1))/b, e1-b*rest
	}
	if !(t >= 0) {
		t = 0
	}
	return min(t, h), min(max(dens, min(e0, e1)), max(e0, e1))
}

// studentT4Quantile returns the p-quantile of Student's t law with 4
// degrees of freedom in closed form (Shaw 2006, "Sampling Student's T
// distribution: use of the inverse cumulative distribution function",
// J. Comput. Finance 9(4), ν = 4): with α = 4p(1 − p),
// t = sign(p − ½)·2·√(cos(arccos(√α)/3)/√α − 1).
func studentT4Quantile(p float64) float64 {
	if p == 0.5 {
		return 0
	}
	al := 4 * p * (1 - p)
	q := math.Cos(math.Acos(math.Sqrt(al))/3) / math.Sqrt(al)
	t := 2 * math.Sqrt(max(q-1, 0))
	if p < 0.5 {
		return -t
	}
	return t
}
