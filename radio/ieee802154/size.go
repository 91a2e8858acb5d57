package ieee802154

import (
	"fmt"
	"math"
	"slices"
)

// MaxFramePaths caps the size of the laws that Node.FrameEnergy,
// Node.FrameStage, Node.Stage and Node.Cycle lead to. A frame with at most
// this many distinct paths (by their attempts and outcome, CCAs, backoff
// periods and wakes, counted from the structure in about a millisecond)
// gets its exact law. A frame with more is enumerated path by path with
// the paths of probability below Node.PathTolerance pruned and their mass
// moved to the worst-case path (Node.PathError states it); if even that
// keeps more than MaxFramePaths − 1 paths, the call is refused with an
// error wrapping ErrParam that names the cap and the tolerance, instead of
// running for seconds or minutes into package dist's caps on exact sums
// (dist.MaxSumAtoms). The count bounds the atoms of both laws package
// energy builds from the frame: of the energy and of the active time. The
// standard's default attributes count 18 689 paths for an acknowledged
// frame at any busy and loss probability strictly between 0 and 1
// (without a wake time); macMaxBE 6 counts 27 521 and takes about 2.7
// times as long to build (BENCHMARKS.md). Pruned, for example:
// macMaxFrameRetries 7 with the other attributes at their defaults
// (116 321 paths; at 30 % busy CCAs and 20 % unacknowledged transmissions
// 26 192 kept at DefaultPathTolerance, stated error 3.0e-9), macMaxBE 8
// with 7 retries (229 217 paths; 49 154 kept at 1e-12 there, so refused,
// but 26 505 at PathTolerance 1e-10, stated error 5.5e-7; at 10 % busy
// and 5 % unacknowledged it builds at the default, stated error 1.6e-9).
const MaxFramePaths = 1 << 15

// frameAtoms returns, for a validated node, an upper bound on the number of
// atoms of its frame-energy law (forCycle false: Node.FrameEnergy) or of
// the frame's part of its cycle law (forCycle true: Node.Cycle, whose
// energies count above the sleep floor, so that backoffs spent asleep add
// nothing), from the structure alone; framePaths is the count with every
// backoff period counted, a bound on the atoms of the active-time law too.
//
// The count. A frame's energy is fixed by its path class (the number of
// attempts, and whether it ends delivered, in a channel-access failure or
// at the retry limit), its total number of CCAs c, its total backoff in
// unit periods B, and with BackoffSleep and a wake time its number of
// wakes w: E = e_B·B + e_C·c + e_W·w + g(class). Given the class and c, B
// takes every integer from 0 to the largest sum of backoff windows over the
// ways of splitting c among the attempts (a max-plus recursion over the
// attempts), and w at most c + 1 values. The bound adds these counts over
// the classes and the values of c that have positive probability. It is
// exact when no two paths have equal energies (atoms are merged within
// dist.AtomMergeTolerance), as for generic currents; the tests compare it
// with the atoms built.
func (n Node) frameAtoms(forCycle bool) float64 {
	return n.countPaths(n.backoffEnergy(forCycle) > 0)
}

// framePaths is the number of distinct frame paths by class, CCAs, backoff
// periods and wakes (frameAtoms with every backoff period counted).
func (n Node) framePaths() float64 { return n.countPaths(true) }

// backoffEnergy returns the energy of one unit backoff period (J), above
// the sleep floor when forCycle.
func (n Node) backoffEnergy(forCycle bool) float64 {
	i := n.Currents.Idle
	if n.Backoff == BackoffSleep {
		i = n.Currents.Sleep
	}
	if forCycle {
		i -= n.Currents.Sleep
	}
	return i * n.Currents.Voltage * n.PHY.UnitBackoffPeriod()
}

// countPaths counts the frame's distinct paths as frameAtoms describes,
// telling backoffs apart by their periods when backoffCounts.
func (n Node) countPaths(backoffCounts bool) float64 {
	c := n.CSMA
	m1 := c.stages()
	wakes := n.Backoff == BackoffSleep && n.Wake > 0
	// opts[k]: what a run of k backoffs can add, as (wakes, least and most
	// backoff periods); without wakes one option, 0 … the sum of the
	// windows; with them, w wakes take the w largest windows at most and
	// one period each at least.
	opts := make([][]span, m1+1)
	for k := 1; k <= m1; k++ {
		var widths []int
		sum := 0
		for i := range k {
			w := 1<<c.BE(i) - 1
			sum += w
			if w > 0 {
				widths = append(widths, w)
			}
		}
		if !wakes {
			opts[k] = []span{{0, 0, sum}}
			continue
		}
		slices.Sort(widths)
		slices.Reverse(widths)
		top := 0
		opts[k] = append(opts[k], span{0, 0, 0})
		for w, width := range widths {
			top += width
			opts[k] = append(opts[k], span{w + 1, w + 1, top})
		}
	}
	b := n.Busy
	var okLen []int // run lengths that can end in an idle CCA
	switch {
	case b == 0:
		okLen = []int{1}
	case b < 1:
		for k := 1; k <= m1; k++ {
			okLen = append(okLen, k)
		}
	}
	attempts := 1
	if n.AckRequest {
		attempts = c.MaxFrameRetries + 1
	}
	size := attempts*m1 + 1 // CCAs (and wakes) 0 … attempts·m1
	// reach[j][c·size + w]: the backoff periods of j successful runs with c
	// CCAs and w wakes in all.
	reach := make([][]bounds, attempts+1)
	for j := range reach {
		reach[j] = make([]bounds, size*size)
	}
	reach[0][0] = bounds{ok: true}
	grow := func(from []bounds, k int, to []bounds) {
		for i, r := range from {
			if !r.ok {
				continue
			}
			cc, w := i/size, i%size
			for _, o := range opts[k] {
				if cc+k >= size || w+o.wakes >= size {
					continue
				}
				to[(cc+k)*size+w+o.wakes].add(r.lo+o.lo, r.hi+o.hi)
			}
		}
	}
	for j := 1; j <= attempts; j++ {
		for _, k := range okLen {
			grow(reach[j-1], k, reach[j])
		}
	}
	count := func(rs []bounds) float64 {
		total := 0.0
		for _, r := range rs {
			switch {
			case !r.ok:
			case backoffCounts:
				total += float64(r.hi - r.lo + 1)
			default:
				total++
			}
		}
		return total
	}
	// class of j successful runs then, with fail, one failed run.
	class := func(j int, withFail bool) float64 {
		if !withFail {
			return count(reach[j])
		}
		end := make([]bounds, size*size)
		grow(reach[j], m1, end)
		return count(end)
	}
	_, f, ok := c.ccaProbs(b)
	a := n.AckLoss
	if !n.AckRequest {
		a = 0
	}
	lost, _ := attemptProbs(f, ok, a)
	total := 0.0
	last := 0 // most unacknowledged attempts before the last
	if n.AckRequest && lost > 0 {
		last = attempts - 1
	}
	for j := 0; j <= last; j++ {
		if ok > 0 && a < 1 {
			total += class(j+1, false) // delivered at attempt j+1
		}
		if b > 0 {
			total += class(j, true) // access failure at attempt j+1
		}
	}
	if n.AckRequest && lost > 0 && math.Pow(lost, float64(attempts)) > 0 {
		total += class(attempts, false) // the retry limit
	}
	return total
}

// span is what one run can add: wakes, and least and most backoff periods.
type span struct{ wakes, lo, hi int }

// bounds are the least and most backoff periods of a set of paths.
type bounds struct {
	lo, hi int
	ok     bool // some path reaches here
}

func (r *bounds) add(lo, hi int) {
	if !r.ok {
		*r = bounds{lo, hi, true}
		return
	}
	r.lo, r.hi = min(r.lo, lo), max(r.hi, hi)
}

// sizeErr returns the error naming MaxFramePaths for a frame of paths
// distinct paths that keeps more than the cap even with paths below tol
// pruned.
func (n Node) sizeErr(fn string, paths, tol float64) error {
	return paramErr(fn, "CSMA", fmt.Sprintf("{macMinBE %d, macMaxBE %d, macMaxCSMABackoffs %d, macMaxFrameRetries %d}",
		n.CSMA.MinBE, n.CSMA.MaxBE, n.CSMA.MaxCSMABackoffs, n.CSMA.MaxFrameRetries),
		fmt.Sprintf("gives the frame %.0f distinct paths, more than MaxFramePaths (%d) even with the paths below PathTolerance (%g) pruned: raise PathTolerance or lower macMaxBE, macMaxCSMABackoffs or macMaxFrameRetries", paths, MaxFramePaths, tol))
}
