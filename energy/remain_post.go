package energy

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/internal/mills"
)

// DevicePosterior is one device's posterior at a time "now": the model's
// prior nodes of the per-node factors re-weighted by the likelihood of
// being alive at the device's newest event and of its kept readings, with
// the device's counted energy and recent active power. Its laws
// (Remaining, Spent, Capacity, FloorCurrent) are PosteriorLaws. It is an
// immutable value, safe for concurrent use.
type DevicePosterior struct{ p *postData }

type postData struct {
	d              *deviceData
	c, a, f        []float64 // the final stage's nodes (the prior's: the model's own slices, shared)
	w              []float64 // their normalised weights, 0 where at most 1e-300 of the largest
	tau0, tauNow   float64   // s after installation: newest event, now
	a0, va0, r, vr float64
	ess            float64
	nodes          int // the final stage's point set (M)
	stages         int
	unresolved     bool    // the final nodes leave fewer than minResolvedNodes (or a quarter of the prior's) effective
	logMarginal    float64 // log of the evidence's marginal likelihood (importance estimate)
}

// postDataW is a postData with room for the weights of up to
// DefaultPosteriorNodes nodes (the posterior and its prior's weights in
// one allocation: the final weights where the prior's nodes are the
// final ones).
type postDataW struct {
	postData
	w [DefaultPosteriorNodes]float64
}

// minResolvedNodes is the effective number of nodes below which a
// posterior is not resolved: its stated error is 1 (measured on the
// prior's point set: with 36 or fewer the laws were wholly wrong, with 91
// or more within their stated error; after importance stages, 3.9 to 18
// effective of about 1000 gave measured errors of 0.66 to 0.90 where the
// nodes' own estimate stated 0.33 to 0.82: TestPosteriorStatedError). It
// is also the fewest effective nodes an importance stage's proposal is
// fitted to without a refit.
const minResolvedNodes = 64

// aliveSure is the score beyond which being alive is certain to double
// precision: Φ̄(8.3) < 5.2e-17.
const aliveSure = 8.3

// logNormSurv returns log Φ̄(z), computed directly (mills.LogUpper: no
// underflow above, no log of 1 − Φ rounded below; within 1e-14 relative
// for z > −9).
func logNormSurv(z float64) float64 { return mills.LogUpper(z) }

// logBin returns log P(lo <= V + ε < hi) for ε ~ N(0, σ²).
func logBin(v, lo, hi, sigma float64) float64 {
	zl, zh := (lo-v)/sigma, (hi-v)/sigma
	var p float64
	switch {
	case zl > 0: // the bin lies above v
		p = normSurv(zl) - normSurv(zh)
		if !(p > 0) {
			return logNormSurv(zl)
		}
	case zh < 0: // below v
		p = normSurv(-zh) - normSurv(-zl)
		if !(p > 0) {
			return logNormSurv(-zh)
		}
	default:
		p = 1 - normSurv(zh) - normSurv(-zl)
	}
	return math.Log(p)
}

// checkUse applies the rules of Posterior and Outlier on the model, the
// tally and now.
func (m DeviceModel) checkUse(fn string, t Tally, now float64) error {
	switch {
	case m.d == nil:
		return paramErr(fn, "model", "zero DeviceModel", "must be built by NewDeviceModel")
	case !t.ok:
		return paramErr(fn, "tally", "zero Tally", "must be started by DeviceModel.NewTally")
	case t.external:
		return paramErr(fn, "tally", "external power", "the device reports external power (no battery life to estimate)")
	case !finite(now) || now < t.newest:
		return paramErr(fn, "now", now, fmt.Sprintf("must be finite and at or after the newest event at %.17g s", t.newest))
	}
	return nil
}

// Posterior returns the device's posterior at now (s on the back-end's
// clock, at or after the tally's newest event). It refuses, with an error
// wrapping ErrParam, a device flagged as on external power (no battery to
// run out), a zero model or tally, and a now before the newest event. A
// device with no events yet gets the prior, going forward at the planned
// active power.
func (m DeviceModel) Posterior(t Tally, now float64) (DevicePosterior, error) {
	return m.posterior("DeviceModel.Posterior", t, now, false)
}

// posterior is Posterior; thorough completes a try on the whole stage
// set where its first M points are no better than the prior's nodes
// (Posterior abandons such a try): the marginal likelihood's estimate
// (EstimateSpread, PlanSharedService) then keeps a stage that only the
// whole set finds better than the prior's nodes.
func (m DeviceModel) posterior(fn string, t Tally, now float64, thorough bool) (DevicePosterior, error) {
	if err := m.checkUse(fn, t, now); err != nil {
		return DevicePosterior{}, err
	}
	d := m.d
	pv := postData{d: d, tau0: t.newest - t.install, tauNow: now - t.install, a0: t.active, va0: t.actVar}
	M := len(d.c)
	// the prior's weights exp(logw − max), for up to
	// DefaultPosteriorNodes nodes in the posterior's own allocation
	// (postDataW)
	var pd *postData
	var ws []float64
	if M <= DefaultPosteriorNodes {
		h := &postDataW{postData: pv}
		pd, ws = &h.postData, h.w[:M:M]
	} else {
		pd, ws = new(postData), make([]float64, M)
		*pd = pv
	}
	pd.r, pd.vr = d.activePower(&t, now)
	var ev evidence
	d.initEvidence(&ev, &t, pd.tau0)
	// the prior's log weights (on the stack for the usual sizes)
	var logw []float64
	switch {
	case M <= DefaultPosteriorNodes:
		var lbuf [DefaultPosteriorNodes]float64
		logw = lbuf[:M:M]
	case M <= stackNodes:
		var lbuf [stackNodes]float64
		logw = lbuf[:M:M]
	default:
		logw = make([]float64, M)
	}
	// Room on the stack for the usual sizes for the scores of the ridge
	// stage's points and then of each stage try's, where the ridge stage
	// is tried (zRoom; nil otherwise: a try's scores are then on the
	// heap): scores are read only by the next try's fit, before it places
	// its points, and a try that is not kept is followed by another only
	// while no stage has been kept (the scores are then the prior's), so
	// one room serves every try.
	var zRoom [][3]float64
	// Where the readings pin the depth sharply, the prior's nodes are
	// weighed on their first quarter first (the Kronecker sequence's first
	// M/4 points, for M >= 64): the ridge stage (below) may be decided
	// without the rest.
	sharp := ev.ridgeSharp()
	h := M
	if sharp && M >= 64 {
		h = M / 4
	}
	ev.logLik(d.c[:h], d.a[:h], d.f[:h], logw[:h])
	cs, as, fs := d.c, d.a, d.f
	ess, lme := essLME(logw[:h], ws[:h])
	pd.stages = 1
	// Adaptive importance stages: while the readings leave fewer than a
	// quarter of the nodes effective, place a point set stageFactor times
	// larger on a product of Student-t laws (proposalNu degrees of freedom)
	// fitted to the weighted nodes (their mean and widened covariance in the
	// normal scores) and weight by prior × likelihood / proposal. While no
	// stage has done better than the prior's nodes, a stage that does not
	// raise the effective number is tried again three times wider (such a
	// try is judged on the stage set's first M points, as many as the
	// prior's, before the rest are placed, and kept alone when those M
	// are a quarter effective); after one has, a stage that does not raise
	// the effective number ends the search, and a try's first M points
	// are kept alone too when they are a quarter effective and more than
	// the nodes so far (after the ridge stage, M points that are a quarter
	// effective instead of 4M: their laws state their larger error). A
	// stage kept with a proposal fitted to fewer than minResolvedNodes
	// effective nodes is fitted again to its own nodes (a refit: kept when
	// a quarter effective, more or less effective than before), since a
	// proposal fitted to few nodes can miss a tail that its own effective
	// number does not show (measured: a device 1600 days old reading
	// 3.62 V, fitted to 8.8 effective prior nodes, had 73 effective of 256
	// and its 95 % point at 343 days against 425 on 2^16 nodes; after the
	// refit 147 effective and 410 days). At most four tries. The ridge
	// stage (below) comes first.
	zs := d.z
	Ms := len(d.tz)
	widen := 1.0
	// The ridge stage (remain_ridge.go): M points on the shell the
	// readings pin, where the prior's nodes leave few effective and the
	// readings pin the depth sharply, or none of them comes near
	// explaining the readings (a mode the prior's nodes do not reach). Of
	// the two, the one whose estimate of the marginal likelihood is
	// larger by more than ridgeMargin wins (the other missed mass), else
	// the more effective one. Where the readings pin the depth sharply
	// and the first quarter of the prior's nodes leaves fewer than an
	// eighth of its points effective, the ridge stage is tried at once
	// and kept against the quarter alone when its estimate is larger by
	// more than ridgeMargin, or not smaller by more than ridgeMargin/2 and
	// it is more effective than 8 times the quarter plus M/16 (the rest
	// could not make the prior's nodes the more effective); otherwise the
	// rest are weighed and the choice made on all M, as where the ridge
	// stage was not tried early (where not sharp, all M are weighed
	// already). The
	// ridge's scores and log weights are on the stack for the usual sizes
	// (scratch: the final weights and factors are its ws, cs, as, fs).
	if sharp || maxOf(logw) < ev.readingBest()-ridgeGap {
		// Rooms of M slots (DefaultPosteriorNodes for the default point
		// set: a try grown to the whole stage set then has its scores on
		// the heap), stackNodes beyond, up to stackNodes.
		var rlRoom []float64
		switch {
		case M <= DefaultPosteriorNodes:
			var rzBuf [DefaultPosteriorNodes][3]float64
			var rlBuf [DefaultPosteriorNodes]float64
			zRoom, rlRoom = rzBuf[:], rlBuf[:]
		case M <= stackNodes:
			var rzBuf [stackNodes][3]float64
			var rlBuf [stackNodes]float64
			zRoom, rlRoom = rzBuf[:], rlBuf[:]
		}
		var (
			rz                 [][3]float64
			rl, rw, rc, ra, rf []float64
			re, rlme           float64
			ridgeOK, tried     bool
		)
		tryRidge := func() {
			tried = true
			rz, rl, rw, rc, ra, rf, ridgeOK = ev.ridgeStage(M, zRoom, rlRoom)
			if ridgeOK {
				re, rlme = essLME(rl, rw)
			}
		}
		keepRidge := func() {
			zs, logw, ws, cs, as, fs, ess = rz, rl, rw, rc, ra, rf, re
			pd.stages++
		}
		early := false
		if h < M && ess < float64(h)/8 {
			tryRidge()
			if dl := rlme - lme; ridgeOK && (dl > ridgeMargin || (dl >= -ridgeMargin/2 && re > 2*float64(M/h)*ess+float64(M)/16)) {
				keepRidge()
				early = true
			}
		}
		if !early {
			if h < M {
				ev.logLik(d.c[h:], d.a[h:], d.f[h:], logw[h:])
				ess, lme = essLME(logw, ws)
			}
			if (ess < float64(M)/4 && sharp) || maxOf(logw) < ev.readingBest()-ridgeGap {
				if !tried {
					tryRidge()
				}
				if dl := rlme - lme; ridgeOK && (dl > ridgeMargin || (dl >= -ridgeMargin && re > ess)) {
					keepRidge()
				}
			}
		}
	}
	fitFrom := float64(M) // the effective number of nodes the kept nodes' proposal was fitted to (the prior's or the ridge's: none)
	for stage := 0; (ess < float64(len(logw))/4 || fitFrom < minResolvedNodes) && stage < 4; stage++ {
		if math.IsInf(maxOf(logw), -1) {
			break
		}
		refit := !(ess < float64(len(logw))/4)
		mu, l, ok := fitProposal(zs, ws, pd.stages-1, widen)
		if !ok {
			break
		}
		from := ess
		// The try's points: the first M only, where the stage set is
		// larger, until the rest are placed (most tries stop there).
		n0 := Ms
		if M < Ms {
			n0 = M
		}
		nz, nl, nw, nc, na, nf := stagePoints(n0, zRoom)
		logDet := math.Log(l[0][0]) + math.Log(l[1][1]) + math.Log(l[2][2])
		log2Pi := math.Log(2 * math.Pi) // taken once a try, not once a point (the compiler does not fold it); the expression below is the same
		place := func(from, to int) {
			for k := from; k < to; k++ {
				zeta := &d.tz[k]
				// mu + l·zeta, l lower triangular (the sums in column
				// order, as a loop over the columns gives)
				z := [3]float64{
					mu[0] + l[0][0]*zeta[0],
					mu[1] + l[1][0]*zeta[0] + l[1][1]*zeta[1],
					mu[2] + l[2][0]*zeta[0] + l[2][1]*zeta[1] + l[2][2]*zeta[2],
				}
				nz[k] = z
				nc[k], na[k] = d.linearFactors(z)
				q := d.tlogq[k] - logDet
				pr := -0.5*(z[0]*z[0]+z[1]*z[1]+z[2]*z[2]) - 1.5*log2Pi // log prior density, normalised as q is
				nl[k] = pr - q
			}
			// the floor factors (d.factors' third) in a loop of their own:
			// the exponentials overlap in the processor
			for k := from; k < to; k++ {
				nf[k] = d.floorFactor(nz[k][2])
			}
			ev.logLik(nc[from:to], na[from:to], nf[from:to], nl[from:to])
		}
		if M < Ms {
			// A try is first placed on the stage set's first M points (a
			// Kronecker sequence itself, as many points as the prior's):
			// if they are a quarter effective and more than the nodes so
			// far, they are kept alone; while no stage has done better
			// than the prior's nodes, if they are no more effective than
			// those, the try has failed without the other Ms − M points
			// (unless thorough).
			place(0, M)
			em := essOf(nl[:M], nw[:M])
			if (em > ess || refit) && em >= float64(M)/4 {
				zs, logw, ws, cs, as, fs, ess, fitFrom = nz[:M], nl[:M], nw[:M], nc[:M], na[:M], nf[:M], em, from
				pd.stages++
				continue
			}
			if refit {
				break
			}
			if pd.stages == 1 && !(em > ess) && !thorough {
				widen *= 3
				continue
			}
			nz, nl, nw, nc, na, nf = growStage(nz, nl, nc, na, nf, Ms, zRoom)
			place(M, Ms)
		} else {
			place(0, Ms)
		}
		ne := essOf(nl, nw)
		if refit {
			if ne >= float64(len(nl))/4 {
				zs, logw, ws, cs, as, fs, ess, fitFrom = nz, nl, nw, nc, na, nf, ne, from
				pd.stages++
			}
			break
		}
		if !(ne > ess) {
			if pd.stages > 1 {
				break // a stage did better than the prior's nodes: keep it
			}
			// A proposal fitted to the prior's few effective nodes missed
			// the posterior: try again from them, three times wider.
			widen *= 3
			continue
		}
		zs, logw, ws, cs, as, fs, ess, fitFrom = nz, nl, nw, nc, na, nf, ne, from
		pd.stages++
		widen = 1
	}
	best := maxOf(logw)
	if math.IsInf(best, -1) {
		return DevicePosterior{}, paramErr(fn, "tally", fmt.Sprintf("%.6g J active energy by %.6g days", t.active, Days(pd.tau0)),
			"no node of the model's prior is still alive with this much spent: the counts or the model's cell are wrong")
	}
	s1, sAll := 0.0, 0.0
	M = len(logw)
	pd.nodes = M
	// The final stage's nodes are kept as they are (the prior's are the
	// model's own, never written); the weights are ws, exp(logw − best)
	// from the stage's effective number (this call's own), 0 for a node
	// whose weight is at most 1e-300 of the largest.
	pd.c, pd.a, pd.f, pd.w = cs, as, fs, ws
	for k, w := range ws {
		sAll += w
		if w > 1e-300 {
			s1 += w
		} else {
			w = 0
		}
		pd.w[k] = w
	}
	pd.logMarginal = best + math.Log(sAll/float64(M)) // log of the mean of exp(logw)
	for i := range pd.w {
		pd.w[i] /= s1
	}
	pd.ess = ess
	pd.unresolved = ess < min(float64(len(d.c))/4, minResolvedNodes)
	return DevicePosterior{p: pd}, nil
}

// stagePoints returns room for n points of a stage (scores, log weights,
// weights exp(l − max l), factors c, a, f), the scores in zBuf where it
// holds n (else on the heap), the float slices in one allocation.
func stagePoints(n int, zBuf [][3]float64) (z [][3]float64, l, ws, cs, as, fs []float64) {
	if len(zBuf) >= n {
		z = zBuf[:n:n]
	} else {
		z = make([][3]float64, n)
	}
	buf := make([]float64, 5*n)
	return z, buf[:n:n], buf[n : 2*n : 2*n], buf[2*n : 3*n : 3*n], buf[3*n : 4*n : 4*n], buf[4*n:]
}

// growStage returns the stage's points extended to length n, the first
// ones kept (their weights are not: the caller computes them), the
// scores in zBuf where it holds n (it may be the room z is in).
func growStage(z [][3]float64, l, cs, as, fs []float64, n int, zBuf [][3]float64) ([][3]float64, []float64, []float64, []float64, []float64, []float64) {
	nz, nl, nw, nc, na, nf := stagePoints(n, zBuf)
	copy(nz, z)
	copy(nl, l)
	copy(nc, cs)
	copy(na, as)
	copy(nf, fs)
	return nz, nl, nw, nc, na, nf
}

// loadedAt is LoadedVoltage with the pulse drop I·M(T) given (V/Ω), for
// depth in [0, 1].
func (v *VoltageCurve) loadedAt(depth, drop float64) float64 {
	ds := v.DepthOfDischarge
	i := searchAbove(ds, depth)
	if i == 0 {
		return v.OpenCircuit[0] - drop*v.Resistance[0]
	}
	if i >= len(ds) {
		n := len(ds) - 1
		return v.OpenCircuit[n] - drop*v.Resistance[n]
	}
	x0, x1 := ds[i-1], ds[i]
	u := (depth - x0) / (x1 - x0)
	ocv := v.OpenCircuit[i-1] + u*(v.OpenCircuit[i]-v.OpenCircuit[i-1])
	r := v.Resistance[i-1] + u*(v.Resistance[i]-v.Resistance[i-1])
	return ocv - drop*r
}

// searchAbove returns the first index i with xs[i] > x (xs ascending,
// short: a linear scan).
func searchAbove(xs []float64, x float64) int {
	for i, v := range xs {
		if v > x {
			return i
		}
	}
	return len(xs)
}

// quality returns what the laws' stated error needs of the posterior.
func (pd *postData) quality() nodeQuality {
	q := nodeQuality{ess: pd.ess, kappa: 1, unresolved: pd.unresolved}
	if pd.stages > 1 {
		q.kappa = 3
	}
	return q
}

// EffectiveNodes returns the effective number of posterior nodes,
// (Σw)²/Σw²: the model's Nodes with no informative reading, fewer as the
// readings concentrate the posterior.
func (p DevicePosterior) EffectiveNodes() float64 {
	if p.p == nil {
		return math.NaN()
	}
	return p.p.ess
}

// ActivePower returns the device's future active power (W at the cell)
// used going forward: its recent power blended with the planned one.
func (p DevicePosterior) ActivePower() float64 {
	if p.p == nil {
		return math.NaN()
	}
	return p.p.r
}

// law returns the law of the posterior's nodes with weight, each node k
// mapped by node to its kernel's centre and standard deviation (the
// factors given), clamped to [lo, hi] (see newPostLaw).
func (p DevicePosterior) law(node func(c, a, f float64) (m, s float64), lo, hi float64, name, unit string, scale float64) PosteriorLaw {
	pd := p.p
	return newPostLaw(pd.w, func(k int) (float64, float64) { return node(pd.c[k], pd.a[k], pd.f[k]) }, pd.quality(), lo, hi, name, unit, scale)
}

// Remaining returns the law of the device's remaining life (s from now):
// for each node, the time its depth reaches the end depth with the active
// energy growing at ActivePower from the newest event and the floor and
// self-discharge month by month (solved exactly on the monthly pieces),
// with a normal kernel of the per-event noise (the active energy's
// standard deviation over the drain rate there); clamped to 0 (flat
// already: the device may have died since its newest event) and to the
// calendar limit (CalendarLife − StorageTime from installation).
func (p DevicePosterior) Remaining() PosteriorLaw {
	if p.p == nil {
		return PosteriorLaw{}
	}
	pd := p.p
	d := pd.d
	hi := d.n.calendar - pd.tauNow
	if hi < 0 {
		hi = 0
	}
	// Each node's time and drain rate first, in a loop of its own (the
	// nodes' solutions overlap in the processor), on the stack for the
	// usual sizes (see stackNodes); then the kernels from them.
	n := len(pd.w)
	var taus, slopes []float64
	switch {
	case n <= DefaultPosteriorNodes:
		var tBuf, sBuf [DefaultPosteriorNodes]float64
		taus, slopes = tBuf[:n:n], sBuf[:n:n]
	case n <= stackNodes:
		var tBuf, sBuf [stackNodes]float64
		taus, slopes = tBuf[:n:n], sBuf[:n:n]
	default:
		buf := make([]float64, 2*n)
		taus, slopes = buf[:n:n], buf[n:]
	}
	for k, w := range pd.w {
		if w > 0 {
			taus[k], slopes[k] = d.life(pd.c[k], pd.a[k], pd.f[k], pd.a0, pd.r, pd.tau0)
		}
	}
	return newPostLaw(pd.w, func(k int) (float64, float64) {
		tau, slope, a := taus[k], slopes[k], pd.a[k]
		if math.IsInf(tau, 1) || tau-pd.tauNow >= hi {
			return hi, 0
		}
		v := a * a * (pd.va0 + pd.vr*max(0, tau-pd.tau0))
		s := 0.0
		if slope > 0 {
			s = math.Sqrt(v) / slope
		}
		return tau - pd.tauNow, s
	}, pd.quality(), 0, hi, "RemainingLife", "y", Year)
}

// Spent returns the law of the energy (J, at the cell) the device has
// drawn by now: the active energy a·(A0 + P·(now − newest)) with the
// per-event noise as kernel, plus the floor f·Φ(now) and the supply's
// quiescent draw (self-discharge not included).
func (p DevicePosterior) Spent() PosteriorLaw {
	if p.p == nil {
		return PosteriorLaw{}
	}
	pd := p.p
	d := pd.d
	dt := pd.tauNow - pd.tau0
	act := pd.a0 + pd.r*dt
	va := pd.va0 + pd.vr*dt
	fe, q := d.floorE(pd.tauNow), d.n.quiescent*pd.tauNow
	return p.law(func(c, a, f float64) (float64, float64) {
		return a*act + f*fe + q, a * math.Sqrt(va)
	}, 0, math.Inf(1), "SpentEnergy", "J", 1)
}

// Capacity returns the posterior law of the cell's usable energy (J): the
// capacity factor times the batch factor times the usable energy.
func (p DevicePosterior) Capacity() PosteriorLaw {
	if p.p == nil {
		return PosteriorLaw{}
	}
	d := p.p.d
	return p.law(func(c, a, f float64) (float64, float64) {
		return c * d.n.batch * d.s.usable, 0
	}, math.Inf(-1), math.Inf(1), "UsableEnergy", "J", 1)
}

// FloorCurrent returns the posterior law of the node's floor current (A at
// the cell's nominal voltage, at the reference temperature): the floor
// factor times the first setting's floor power over the voltage.
func (p DevicePosterior) FloorCurrent() PosteriorLaw {
	if p.p == nil {
		return PosteriorLaw{}
	}
	d := p.p.d
	return p.law(func(c, a, f float64) (float64, float64) {
		return f * d.s.floorP / d.voltage, 0
	}, math.Inf(-1), math.Inf(1), "FloorCurrent", "µA", MicroAmp)
}

// evidence is a device's evidence at its newest event τ0 (alive there,
// its kept readings), ready to be weighed at nodes (see logLik). It
// belongs to one Posterior call (its reading tables are the model's,
// shared: see readingCache).
type evidence struct {
	d             *deviceData
	capU, fe0, q0 float64
	sd0, act      float64
	nr            int // the kept readings are rsBuf[:nr]
	newest        int // index in rsBuf of the newest reading, -1 for none
	rsBuf         [MaxReadings]readTerm
}

// readTerm is one kept reading: the counted active energy (J), the floor
// energy of the median board (J), the quiescent energy (J) and the
// self-discharge depth by its time, the pulse drop (V/Ω) and its table
// (with the loaded curve at that drop: vs and slope are the table's).
type readTerm struct {
	active, fe, q, sdd, drop float64
	vs                       []float64     // the loaded voltage at the curve's depths at this drop
	slope                    []float64     // slope[i]: vs's slope (V per unit depth) from depth i to i+1
	tab                      *readingTable // the model's (shared) or this call's own
}

// initEvidence sets e to the tally's evidence at τ0 (s after
// installation): the caller's own (Posterior's is on its stack).
func (d *deviceData) initEvidence(e *evidence, t *Tally, tau0 float64) {
	n := d.n
	*e = evidence{d: d, capU: n.batch*d.s.usable - n.nominal*d.selfD(tau0), fe0: d.floorE(tau0), q0: n.quiescent * tau0,
		sd0: math.Sqrt(t.actVar), act: t.active, newest: -1}
	e.nr = t.nRead
	newestTau := math.Inf(-1)
	for i := range e.rsBuf[:e.nr] {
		r := t.reads[i]
		drop := d.load * d.curve.ResistanceMultiplier(d.temp(r.tau))
		rt := &e.rsBuf[i]
		*rt = readTerm{active: r.active, fe: d.floorE(r.tau), q: n.quiescent * r.tau, sdd: d.selfD(r.tau), drop: drop}
		rt.tab = nil
		for j := range i {
			if o := &e.rsBuf[j]; o.drop == drop && o.tab.lo == r.lo && o.tab.hi == r.hi && o.tab.sigma == r.noise {
				rt.tab = o.tab
				break
			}
		}
		if rt.tab == nil {
			rt.tab = d.readingTable(drop, r.lo, r.hi, r.noise)
		}
		rt.vs, rt.slope = rt.tab.vs, rt.tab.slope
		if r.tau > newestTau {
			newestTau, e.newest = r.tau, i
		}
	}
}

// logLik adds to out[k] the log-likelihood of the evidence at the node
// factors (c[k], a[k], f[k]): alive at the newest event τ0 (the per-event
// noise of the counted active energy normal) and each kept reading's bin.
// A node with c <= 0 or a <= 0 gets −Inf.
//
// A reading's term g(V) = log P(bin | V) is a function of the node's
// loaded voltage V alone. It is interpolated by the cubic through the
// four nearest points of a lattice of step h <= readingStep·σ over the
// loaded voltages the curve can give (depth 0 to 1 at the reading's
// load), each lattice value computed the first time a node of any device
// of the model needs it (the model's tables are shared: readingCache; a
// value is a pure function of its table's key and index, so the result
// does not depend on the order or on other devices), unless the lattice
// would exceed maxReadingLattice points (then g is evaluated at each
// node). g is −V²/(2σ²) plus the cumulant generating
// function of the noise law restricted to the bin, so its fourth
// derivative is κ₄/σ⁸ with κ₄ the fourth cumulant of N(V, σ²) truncated
// to the bin; |κ₄| <= 0.382·σ⁴ over all bins (the worst, 0.3810·σ⁴, a
// symmetric bin 4.12σ wide; TestReadingTable scans them), and the cubic
// errs by at most (9/16)/24·h⁴·|g⁗| <= 0.0234·0.4⁴·0.382 = 2.3e-4 in a log-weight
// (TestReadingTable checks it against g evaluated directly).
func (e *evidence) logLik(c, a, f, out []float64) {
	for from := 0; from < len(out); from += logLikChunk {
		to := min(from+logLikChunk, len(out))
		e.logLikChunk(c[from:to], a[from:to], f[from:to], out[from:to])
	}
}

// logLikChunk is logLik on at most logLikChunk nodes: the alive term and
// 1/(c·N) node by node first, then each reading's term over the nodes
// (each node's sum in the same order as node by node, so the same bits),
// the depth's segment of the curve found from the model's depth cells
// (deviceData.cells).
func (e *evidence) logLikChunk(c, a, f, out []float64) {
	d := e.d
	e.aliveTerm(c, a, f, out)
	if e.nr == 0 || d.curve == nil {
		return
	}
	// 1/(c·N) by node (used where the node is still possible)
	var invBuf [logLikChunk]float64
	inv := invBuf[:len(out):len(out)]
	nom := d.n.nominal
	for k, ck := range c[:len(out)] {
		inv[k] = 1 / (ck * nom)
	}
	a, f = a[:len(out):len(out)], f[:len(out):len(out)]
	ds := d.curve.DepthOfDischarge
	np := len(ds)
	cells := &d.cells
	// the nodes whose lattice values are not all set yet (or a table
	// without lattice), and their voltages: weighed after the loop, which
	// then makes no call
	var pendK [logLikChunk]uint16
	var pendV [logLikChunk]float64
	// the nodes' loaded voltages at one reading (first pass), read by the
	// second pass (two short loops instead of one keep their values in
	// registers)
	var vBuf [logLikChunk]float64
	vb := vBuf[:len(out):len(out)]
	for i := range e.rsBuf[:e.nr] {
		r := &e.rsBuf[i]
		act, fe, q, sdd := r.active, r.fe, r.q, r.sdd
		vs, sl := r.vs[:np:np], r.slope[:np-1:np-1]
		for k, s := range out {
			if s < -math.MaxFloat64 {
				continue // dead or impossible (−Inf): stays so
			}
			dep := (a[k]*act+f[k]*fe+q)*inv[k] + sdd
			if dep < 0 {
				dep = 0
			} else if !(dep <= 1) {
				dep = 1 // (NaN too: the curve's end, as a scan from the top gives)
			}
			// the first curve point deeper than dep, from its cell's first
			j := int(cells[int(dep*depthCells)])
			for j < np && ds[j] <= dep {
				j++
			}
			var v float64
			switch {
			case j == 0:
				v = vs[0]
			case j >= np:
				v = vs[np-1]
			default:
				v = vs[j-1] + (dep-ds[j-1])*sl[j-1]
			}
			vb[k] = v
		}
		tb := r.tab
		v0, invH, steps := tb.v0, tb.invH, tb.steps
		cf := tb.cf
		pend := 0
		for k, s := range out {
			if s < -math.MaxFloat64 {
				continue
			}
			v := vb[k]
			// readingTable.at, written out for the common case (a cell
			// whose cubic coefficients are set: the same operations, so
			// the same bits); an unset coefficient (unsetBits, a NaN) makes
			// the cubic NaN, and a NaN sends the node to at, which sets
			// the values and coefficients and gives the same cubic (NaN
			// again only where a value is)
			if steps > 0 {
				u := (v - v0) * invH
				j := min(max(int(u), 0), steps-1)
				g := cf[4*j : 4*j+4 : 4*j+4]
				c := [4]float64{math.Float64frombits(g[0].Load()), math.Float64frombits(g[1].Load()),
					math.Float64frombits(g[2].Load()), math.Float64frombits(g[3].Load())}
				if y := cubicAt(&c, u-float64(j)); y == y {
					out[k] = s + y
					continue
				}
			}
			pendK[pend], pendV[pend] = uint16(k), v
			pend++
		}
		for p, k := range pendK[:pend] {
			out[k] += tb.at(pendV[p])
		}
	}
}

// aliveTerm adds to out[k] the log-likelihood of being alive at τ0 (−Inf
// for a node with c <= 0 or a <= 0, or dead without per-event noise).
func (e *evidence) aliveTerm(c, a, f, out []float64) {
	c, a, f = c[:len(out):len(out)], a[:len(out):len(out)], f[:len(out):len(out)]
	for k := range out {
		ck, ak, fk := c[k], a[k], f[k]
		if !(ck > 0 && ak > 0) {
			out[k] = math.Inf(-1)
			continue
		}
		g := ck*e.capU - ak*e.act - fk*e.fe0 - e.q0
		switch {
		case e.sd0 > 0:
			// log Φ̄(z) for z < −aliveSure is −Φ̄(−z) above −5.2e-17:
			// left out (a relative change of a weight below 1e-16).
			if z := -g / (ak * e.sd0); z >= -aliveSure {
				out[k] += logNormSurv(z)
			}
		case g < 0:
			out[k] = math.Inf(-1)
			continue
		}
	}
}

// logLikChunk is how many nodes logLik weighs at a time (its scratch on
// the stack).
const logLikChunk = 256

// depthCells is the number of even cells of [0, 1] in a model's depth
// index (deviceData.cells): cells[i] is the first curve point deeper than
// i/depthCells, where the search for a depth in cell i starts.
const depthCells = 64

// depthIndex returns the depth cells of a curve's depths ds (ascending,
// from 0 to 1, at most 256 points): entry i is the first index with
// ds[index] > i/depthCells (searchAbove's).
func depthIndex(ds []float64) (cells [depthCells + 1]uint16) {
	for i := range cells {
		cells[i] = uint16(searchAbove(ds, float64(i)/depthCells))
	}
	return cells
}

// maxOf returns the largest of x (−Inf for none; NaN entries are
// skipped: a log-weight is never NaN).
func maxOf(x []float64) float64 {
	b := math.Inf(-1)
	for _, v := range x {
		if v > b {
			b = v
		}
	}
	return b
}

// essLME returns essOf(logw, ws) and log of the mean of exp(logw), from
// one pass (the same bits as each).
func essLME(logw, ws []float64) (ess, lme float64) {
	b := maxOf(logw)
	if math.IsInf(b, -1) || math.IsNaN(b) {
		return 0, b
	}
	s1, s2 := 0.0, 0.0
	for k, l := range logw {
		w := math.Exp(l - b)
		ws[k] = w
		s1 += w
		s2 += w * w
	}
	return s1 * s1 / s2, b + math.Log(s1/float64(len(logw)))
}

// essOf returns the effective number (Σw)²/Σw² of the weights exp(logw),
// and writes them into ws as exp(logw − max logw) (untouched where the
// largest is −Inf or NaN: no weights).
func essOf(logw, ws []float64) float64 {
	b := maxOf(logw)
	if math.IsInf(b, -1) || math.IsNaN(b) {
		return 0
	}
	s1, s2 := 0.0, 0.0
	for k, l := range logw {
		w := math.Exp(l - b)
		ws[k] = w
		s1 += w
		s2 += w * w
	}
	return s1 * s1 / s2
}

// fitProposal fits a location and scale to the scores weighted by ws
// (exp(logw − max), as essOf writes them): the
// weighted mean and covariance, widened (×2 and 0.1² on the diagonal at
// the first stage, ×1.5 and 0.01² later, times widen, so that a proposal
// from few nodes still covers the posterior), and its lower Cholesky
// factor.
func fitProposal(zs [][3]float64, ws []float64, stage int, widen float64) (mu [3]float64, l [3][3]float64, ok bool) {
	// (the sums written out, in the loops' order: the same bits)
	zs = zs[:len(ws):len(ws)]
	tot, m0, m1, m2 := 0.0, 0.0, 0.0, 0.0
	for k, w := range ws {
		z := &zs[k]
		tot += w
		m0 += w * z[0]
		m1 += w * z[1]
		m2 += w * z[2]
	}
	mu = [3]float64{m0 / tot, m1 / tot, m2 / tot}
	var c00, c10, c11, c20, c21, c22 float64
	for k, wk := range ws {
		w := wk / tot
		z := &zs[k]
		d0, d1, d2 := z[0]-mu[0], z[1]-mu[1], z[2]-mu[2]
		c00 += w * d0 * d0
		c10 += w * d1 * d0
		c11 += w * d1 * d1
		c20 += w * d2 * d0
		c21 += w * d2 * d1
		c22 += w * d2 * d2
	}
	cov := [3][3]float64{{c00}, {c10, c11}, {c20, c21, c22}}
	grow, floor := 2.0, 0.1
	if stage > 0 {
		grow, floor = 1.5, 0.01
	}
	grow *= widen
	for r := range 3 {
		for c := 0; c <= r; c++ {
			cov[r][c] *= grow
		}
		cov[r][r] += floor * floor
	}
	// Cholesky of the 3×3 symmetric matrix (lower triangle given).
	for r := range 3 {
		for c := 0; c <= r; c++ {
			s := cov[r][c]
			for k := range c {
				s -= l[r][k] * l[c][k]
			}
			if r == c {
				if !(s > 0) {
					return mu, l, false
				}
				l[r][r] = math.Sqrt(s)
			} else {
				l[r][c] = s / l[c][c]
			}
		}
	}
	return mu, l, true
}
