package ieee802154

import (
	"cmp"
	"fmt"
	"slices"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"gonum.org/v1/gonum/floats"
)

// DefaultPathTolerance is the probability below which a frame's path is
// pruned when its setting has more than MaxFramePaths distinct paths and
// Node.PathTolerance is 0: 1e-12 (a probability, dimensionless).
const DefaultPathTolerance = 1e-12

// MaxPathTolerance caps Node.PathTolerance: 1e-3 (a probability). A larger
// tolerance would state an error too coarse for a planning law.
const MaxPathTolerance = 1e-3

// pathAtom is one distinct path of a frame, by its counts of each state:
// CCAs c, backoff periods b, wakes w, transmissions t (each with its
// turnaround), acknowledgement waits l and acknowledgement receptions d;
// p is its probability.
type pathAtom struct {
	c, b, w, t, l, d int
	p                float64
}

// prunedPaths is the outcome of a pruned enumeration: the paths kept, in a
// fixed order, the worst-case path (every count at its largest) that
// carries the pruned mass, and the pruned mass itself.
type prunedPaths struct {
	kept   []pathAtom
	worst  pathAtom
	pruned float64 // the mass moved to worst, summed with compensation
}

// compensated collects terms for gonum's compensated sum
// (floats.SumCompensated, Kahan–Babuška–Neumaier), folding every 2^16
// terms into one so that its memory stays small; each fold adds at most
// one rounding of the running total.
type compensated struct{ terms []float64 }

func (s *compensated) add(x float64) {
	s.terms = append(s.terms, x)
	if len(s.terms) == 1<<16 {
		s.terms = append(s.terms[:0], floats.SumCompensated(s.terms))
	}
}

func (s compensated) value() float64 { return floats.SumCompensated(s.terms) }

// runPart is what one CSMA-CA run adds: backoff periods b, wakes w, with
// probability p (its CCAs are the run's length).
type runPart struct {
	b, w int
	p    float64
}

// runParts returns, for k = 1 … m+1 (index k−1), the joint law of the
// backoff periods and wakes of a run of k backoffs, each entry's
// probability multiplied by the probability mult[k−1] of that run.
func (n Node) runParts(mult []float64) [][]runPart {
	c := n.CSMA
	wakes := n.Backoff == BackoffSleep && n.Wake > 0
	out := make([][]runPart, len(mult))
	// cur[w][b]: probability of b periods and w wakes after the backoffs so far.
	cur := [][]float64{{1}}
	for k := 1; k <= len(mult); k++ {
		size := 1 << c.BE(k-1)
		width := len(cur[0]) + size - 1
		next := make([][]float64, k+1)
		for w := range next {
			next[w] = make([]float64, width)
		}
		for w, row := range cur {
			for b, p := range row {
				if p == 0 {
					continue
				}
				for u := range size {
					w2 := w
					if wakes && u > 0 {
						w2++
					}
					next[w2][b+u] += p / float64(size)
				}
			}
		}
		cur = next
		if mult[k-1] == 0 {
			continue
		}
		for w, row := range cur {
			for b, p := range row {
				if p*mult[k-1] > 0 {
					out[k-1] = append(out[k-1], runPart{b, w, p * mult[k-1]})
				}
			}
		}
	}
	return out
}

// prunePaths enumerates the frame's paths attempt by attempt, dropping
// every partial or complete path whose probability is below tol and adding
// its mass (the sum of all its continuations, since the continuations of a
// partial path have probabilities summing to 1) to the worst-case path. It
// stops with ok false as soon as more than limit paths are kept.
func (n Node) prunePaths(tl Timeline, tol float64, limit int) (pp prunedPaths, ok bool) {
	c := n.CSMA
	m1 := c.stages()
	probs, f, _ := c.ccaProbs(n.Busy)
	okMult := make([]float64, m1)
	copy(okMult, probs[:m1-1])
	okMult[m1-1] = probs[m1-1] * (1 - n.Busy)
	failMult := make([]float64, m1)
	failMult[m1-1] = f
	okParts := n.runParts(okMult)
	failParts := n.runParts(failMult)

	attempts, a, deliveredAck := 1, 0.0, 0
	if n.AckRequest {
		attempts, a, deliveredAck = c.MaxFrameRetries+1, n.AckLoss, 1
	}
	pp.worst = n.worstPath(tl)

	var pruned compensated
	// Partial and complete paths accumulate in a dense table indexed by
	// (CCAs, wakes, backoff periods), scanned in index order: the result
	// does not depend on any map's order.
	nc, nw, nb := pp.worst.c+1, pp.worst.w+1, pp.worst.b+1
	acc := make([]float64, nc*nw*nb)
	level := []pathAtom{{p: 1}} // partial paths after j unacknowledged attempts
	// extend adds one more run (of any length in parts) to every partial
	// path, into acc.
	extend := func(parts [][]runPart) {
		for _, s := range level {
			for k, run := range parts {
				base := ((s.c+k+1)*nw+s.w)*nb + s.b
				for _, e := range run {
					acc[base+e.w*nb+e.b] += s.p * e.p
				}
			}
		}
	}
	// drain empties acc, scaled by weight, pruning the paths below tol and
	// returning the others with the counts t, l, d.
	drain := func(weight float64, t, l, d int, clear bool) []pathAtom {
		var out []pathAtom
		for i, p := range acc {
			if p == 0 {
				continue
			}
			if clear {
				acc[i] = 0
			}
			p *= weight
			if p == 0 {
				continue
			}
			if p < tol {
				pruned.add(p)
				continue
			}
			b := i % nb
			w := (i / nb) % nw
			out = append(out, pathAtom{c: i / (nb * nw), b: b, w: w, t: t, l: l, d: d, p: p})
		}
		return out
	}
	for j := 0; j < attempts && len(level) > 0; j++ {
		extend(failParts) // channel-access failure at attempt j+1
		pp.kept = append(pp.kept, drain(1, j, j, 0, true)...)
		extend(okParts)
		if a < 1 { // delivered at attempt j+1
			pp.kept = append(pp.kept, drain(1-a, j+1, j, deliveredAck, a == 0)...)
		}
		switch { // transmitted, unacknowledged
		case a == 0:
			level = nil
		case j+1 == attempts: // the retry limit
			pp.kept = append(pp.kept, drain(a, attempts, attempts, 0, true)...)
			level = nil
		default:
			level = drain(a, 0, 0, 0, true)
		}
		if len(pp.kept)+len(level) > limit {
			return pp, false
		}
	}
	pp.pruned = pruned.value()
	slices.SortStableFunc(pp.kept, func(x, y pathAtom) int {
		return cmp.Or(cmp.Compare(x.t, y.t), cmp.Compare(x.l, y.l), cmp.Compare(x.d, y.d),
			cmp.Compare(x.c, y.c), cmp.Compare(x.w, y.w), cmp.Compare(x.b, y.b))
	})
	return pp, true
}

// worstPath returns the path of largest energy and active time of the
// setting: every attempt made, each run with all its CCAs and the longest
// backoff in every window (and a wake after each non-empty window with
// BackoffSleep and a wake time), every transmission answered by the longer
// of a full acknowledgement wait and a reception. Its counts bound every
// path's, state by state, so its energy bounds every path's energy (and
// every energy above a floor no state draws less than):
//
//	E_max = A·(m+1)·E_CCA + A·Σ_i (2^BE(i) − 1)·E_unit + A·W·E_wake + A·(E_turn + E_tx) + ack
//
// with A = macMaxFrameRetries + 1 attempts (1 without an acknowledgement
// request), ack = A·E_wait (E_wait >= E_receive) or (A−1)·E_wait +
// E_receive, and W the non-empty windows of a run.
func (n Node) worstPath(tl Timeline) pathAtom {
	c := n.CSMA
	m1 := c.stages()
	perRunB, perRunW := 0, 0
	for i := range m1 {
		perRunB += 1<<c.BE(i) - 1
		if n.Backoff == BackoffSleep && n.Wake > 0 && c.BE(i) > 0 {
			perRunW++
		}
	}
	attempts := 1
	if n.AckRequest {
		attempts = c.MaxFrameRetries + 1
	}
	w := pathAtom{c: attempts * m1, b: attempts * perRunB, w: attempts * perRunW, t: attempts}
	if n.AckRequest {
		if tl.AckWait >= tl.AckReceive {
			w.l = attempts
		} else {
			w.l, w.d = attempts-1, 1
		}
	}
	return w
}

// prunedStage builds the frame's stage from pruned paths: a configuration
// drawn once (the path), each path a sequence of constant states; the
// pruned mass runs the worst-case path.
func (n Node) prunedStage(tl Timeline, pp prunedPaths) (energy.Stage, error) {
	cur := n.Currents
	b := &assembly{volt: cur.Voltage}
	atoms := pp.kept
	if pp.pruned > 0 {
		w := pp.worst
		w.p = pp.pruned
		atoms = append(slices.Clone(atoms), w)
	}
	vals := make([]float64, len(atoms))
	probs := make([]float64, len(atoms))
	for i, at := range atoms {
		vals[i], probs[i] = float64(i), at.p
	}
	config, err := dist.NewDiscrete(vals, probs)
	if err != nil {
		return nil, err
	}
	boCurrent := cur.Idle
	if n.Backoff == BackoffSleep {
		boCurrent = cur.Sleep
	}
	build := func(v float64) (energy.Stage, error) {
		at := atoms[int(v)]
		var parts []energy.Stage
		add := func(name string, current, t float64, count int) {
			if count > 0 && t > 0 {
				parts = append(parts, b.state(name, current, float64(count)*t))
			}
		}
		add("backoff", boCurrent, tl.UnitBackoff, at.b)
		add("wake", cur.Idle, tl.Wake, at.w)
		add("CCA", cur.RX, tl.CCA, at.c)
		add("turnaround", cur.Turnaround, tl.Turnaround, at.t)
		add("transmit", cur.TX, tl.Frame, at.t)
		add("ack wait", cur.RX, tl.AckWait, at.l)
		add("ack receive", cur.RX, tl.AckReceive, at.d)
		st := b.then(parts...)
		return st, b.err
	}
	return energy.Configured(config, build)
}

// checkTolerance validates Node.PathTolerance and returns the tolerance in
// force.
func (n Node) pathTolerance(fn string) (float64, error) {
	tol := n.PathTolerance
	if tol == 0 {
		return DefaultPathTolerance, nil
	}
	if !(tol > 0 && tol <= MaxPathTolerance) {
		return 0, paramErr(fn, "PathTolerance", tol, fmt.Sprintf("must be 0 (DefaultPathTolerance, %g) or in (0, MaxPathTolerance = %g], a probability", DefaultPathTolerance, MaxPathTolerance))
	}
	return tol, nil
}

// prunedLaw is a frame-energy law built from pruned paths: the law, with
// the pruned mass reported as its accuracy (dist.Estimated).
type prunedLaw struct {
	dist.Law
	pruned float64
}

// withPathError wraps l with its stated error when pruning was used.
func withPathError(l dist.Law, pruned float64, used bool) dist.Law {
	if !used {
		return l
	}
	return prunedLaw{l, pruned}
}

// Atoms lists the law's atoms (dist.Atomic).
func (l prunedLaw) Atoms() []dist.Atom {
	if a, ok := l.Law.(dist.Atomic); ok {
		return a.Atoms()
	}
	return nil
}

// Accuracy reports the pruned mass ε as the bound on the absolute error of
// the CDF and of the survival (the law is within total-variation distance
// ε of the exact one and dominates it stochastically); the survival's
// relative error is at most 1e-3 where the exact survival is at least
// 1000·ε.
func (l prunedLaw) Accuracy() dist.Accuracy {
	return dist.Accuracy{CDFAbs: l.pruned, SurvivalRel: 1e-3, TailFloor: 1000 * l.pruned,
		Method: "exact over the paths of probability >= PathTolerance; the pruned mass at the worst-case path"}
}

// String describes the law and its stated error.
func (l prunedLaw) String() string {
	return fmt.Sprintf("%v (paths pruned: ε = %.3g)", l.Law, l.pruned)
}
