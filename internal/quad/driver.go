package quad

import (
	"fmt"
	"math"
)

// Panel maps: a panel's coordinate t is x itself (mapIdentity) or, on an
// infinite end anchored at p, t ∈ (0, 1] with x = p + (1−t)/t (mapRight)
// or x = p − (1−t)/t (mapLeft).
const (
	mapIdentity = iota
	mapRight
	mapLeft
)

// panel is one piece of the interval, in its own coordinate t ∈ [a, b];
// 32 bytes.
type panel struct {
	a, b float64
	err  float64 // max over components of |K − G| plus rounding (apply)
	// heap is slot k of the driver's heap when this is pans[k] (k <
	// nheap): the index of a bisectable panel, not this one's. It fills
	// what would be padding (a panel is 32 bytes with it or without), so
	// the heap takes no memory of its own (it never holds more entries
	// than there are panels); it moves with the slot, never with the
	// panel.
	heap  int32
	kind  int8 // mapIdentity, mapRight, mapLeft (its anchor is the driver's)
	final bool // too narrow to bisect
}

// driver is the workspace of one integration; it lives for one call.
type driver struct {
	f     func(float64) float64
	fv    func(float64, []float64)
	dim   int
	pans  []panel
	vals  []float64 // dim values per panel
	nheap int       // entries in the heap (pans[:nheap].heap): indices of bisectable panels, largest err first
	// the finite ends the infinite pieces are mapped from: the first
	// piece's right end (mapLeft) and the last piece's left end
	// (mapRight); only the first piece may reach −Inf, the last +Inf
	leftAnchor, rightAnchor float64
	y                       []float64 // integrand output (vector)
	kacc                    []float64 // Kronrod accumulator
	gacc                    []float64 // Gauss accumulator
	absacc                  []float64 // Kronrod accumulator of |f|
	fvals                   []float64 // the rule's node values, left to right, dim each
	keep                    bool      // keep every panel's node values (Partition; dim 1)
	kept                    []float64 // 15 node values per panel when keep
	evals                   int
	badX                    float64
	badSet                  bool
	// the rule (gk15 or gk7): its positive half's nodes, largest first,
	// ending with the centre (the first m), their Kronrod weights and the
	// Gauss weights of the odd-indexed ones
	nodes, wk [8]float64
	wg        [4]float64
	m         int
}

// point returns x at t on a panel with the given map (the Jacobian of the
// infinite maps, 1/t², is applied by eval).
func (d *driver) point(kind int8, t float64) float64 {
	switch kind {
	case mapRight:
		return d.rightAnchor + (1-t)/t
	case mapLeft:
		return d.leftAnchor - (1-t)/t
	}
	return t
}

// eval fills d.y with f at t (times the Jacobian) and reports whether all
// values are finite.
func (d *driver) eval(kind int8, t float64) bool {
	x := d.point(kind, t)
	d.evals++
	ok := true
	if d.f != nil {
		v := d.f(x)
		if kind != mapIdentity {
			v = v / t / t // not v·jac: 0·Inf where t² underflows
		}
		d.y[0] = v
		ok = !math.IsNaN(v) && !math.IsInf(v, 0)
	} else {
		d.fv(x, d.y)
		for j, v := range d.y {
			if kind != mapIdentity {
				v = v / t / t
				d.y[j] = v
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				ok = false
			}
		}
	}
	if !ok && !d.badSet {
		d.badX, d.badSet = x, true
	}
	return ok
}

// apply evaluates the rule (7–15 or 3–7) on p, writing its Kronrod values into
// val and setting p.err; it reports whether every value was finite.
//
// p.err is, for the worst component, the Gauss–Kronrod difference plus two
// rounding terms that bisection cannot reduce:
//
//	|K − G| + 2·ulp(max(|a|, |b|))·Σ_adjacent nodes |f_{i+1} − f_i| + 4ε·h·Σ w_i·|f_i|
//
// The second is the rounding of the abscissae (a node is computed to
// within one unit in the last place of the panel's ends, which moves the
// value by up to ulp·∫|f'|; the variation over the nodes estimates ∫|f'|,
// doubled for the pieces beyond the outer nodes): the Gauss and Kronrod
// values share their nodes, so their difference does not see it (for
// example a panel 1e-4 wide at x = 1e6 has nodes only to 1e-6 of its
// width). The third is the rounding of the weighted sum. A panel whose
// difference is below a quarter of its rounding terms is final: bisecting
// it would lower its error by a fifth at most.
func (d *driver) apply(i int32, val []float64) bool {
	p := &d.pans[i]
	c, h := p.a+(p.b-p.a)/2, (p.b-p.a)/2
	dim := d.dim
	kacc, gacc, absacc := d.kacc[:dim], d.gacc[:dim], d.absacc[:dim]
	for j := range kacc {
		kacc[j], gacc[j], absacc[j] = 0, 0, 0
	}
	ok := true
	m := d.m
	np := 2*m - 1 // nodes of the rule: 15 or 7
	y, fvals := d.y[:dim], d.fvals[:np*dim]
	// the nodes in the order of the sums (the same order, so the same
	// bits, whatever the path): each pair's left node then its right one,
	// outermost first, the centre last
	for k := 0; k < np; k++ {
		i, s, pos := k/2, -1.0, k/2 // the node's place from the left: 0 … np − 1
		if k%2 == 1 {
			s, pos = 1, np-1-k/2
		}
		x := c + s*h*d.nodes[i]
		if p.kind == mapIdentity && d.fv != nil {
			// the vector integrand on a finite piece: no map, no
			// Jacobian (eval's other cases)
			d.evals++
			d.fv(x, y)
			for _, v := range y {
				if v-v != 0 { // NaN or ±Inf
					if ok = false; !d.badSet {
						d.badX, d.badSet = x, true
					}
				}
			}
		} else if !d.eval(p.kind, x) {
			ok = false
		}
		wk := d.wk[i]
		fv := fvals[pos*dim : (pos+1)*dim]
		if i%2 == 1 {
			wg := d.wg[i/2]
			for j, v := range y {
				kacc[j] += wk * v
				absacc[j] += wk * math.Abs(v)
				gacc[j] += wg * v
				fv[j] = v
			}
		} else {
			for j, v := range y {
				kacc[j] += wk * v
				absacc[j] += wk * math.Abs(v)
				fv[j] = v
			}
		}
	}
	if d.keep {
		copy(d.kept[int(i)*15:int(i+1)*15], d.fvals) // dim is 1 when keeping
	}
	ulp := max(math.Abs(p.a), math.Abs(p.b))
	ulp = math.Nextafter(ulp, math.Inf(1)) - ulp
	e, round := 0.0, 0.0
	for j := range val {
		val[j] = kacc[j] * h
		tv := 0.0
		for pos := 0; pos+1 < np; pos++ {
			tv += math.Abs(fvals[(pos+1)*dim+j] - fvals[pos*dim+j])
		}
		r := 2*ulp*tv + 4*eps*h*absacc[j]
		if g := math.Abs(kacc[j]-gacc[j])*h + r; g > e {
			e, round = g, r
		}
	}
	p.err = e
	// bisectable only if the midpoint lies strictly inside and the
	// difference is above a quarter of the rounding (below it, bisecting
	// could lower the panel's error by a fifth at most)
	p.final = !(c > p.a && c < p.b) || e <= 1.25*round
	return ok
}

// eps is the unit roundoff of float64, 2^−52.
const eps = 0x1p-52

// heap operations on pans[:nheap].heap (max-heap on pans[i].err; ties by
// index, so the order, and so the result, is deterministic).
func (d *driver) less(i, j int32) bool {
	ei, ej := d.pans[i].err, d.pans[j].err
	if ei != ej {
		return ei > ej
	}
	return i < j
}

// push files panel i (nheap < len(pans): there is a slot for it).
func (d *driver) push(i int32) {
	h := d.pans
	k := d.nheap
	d.nheap++
	h[k].heap = i
	for k > 0 {
		p := (k - 1) / 2
		if !d.less(h[k].heap, h[p].heap) {
			break
		}
		h[k].heap, h[p].heap = h[p].heap, h[k].heap
		k = p
	}
}

func (d *driver) pop() int32 {
	h := d.pans
	top := h[0].heap
	n := d.nheap - 1
	h[0].heap = h[n].heap
	d.nheap = n
	k := 0
	for {
		l, r, m := 2*k+1, 2*k+2, k
		if l < n && d.less(h[l].heap, h[m].heap) {
			m = l
		}
		if r < n && d.less(h[r].heap, h[m].heap) {
			m = r
		}
		if m == k {
			break
		}
		h[k].heap, h[m].heap = h[m].heap, h[k].heap
		k = m
	}
	return top
}

// add appends a panel, evaluates it and files it; it reports whether the
// integrand stayed finite.
func (d *driver) add(p panel) bool {
	d.pans = append(d.pans, p)
	for j := 0; j < d.dim; j++ {
		d.vals = append(d.vals, 0)
	}
	i := int32(len(d.pans) - 1)
	if d.keep {
		d.kept = append(d.kept, make([]float64, 15)...)
	}
	ok := d.apply(i, d.vals[int(i)*d.dim:int(i+1)*d.dim])
	if !d.pans[i].final {
		d.push(i)
	}
	return ok
}

// totals sums the panels' values into dst and returns the summed error,
// in panel order (deterministic).
func (d *driver) totals(dst []float64) float64 {
	for j := range dst {
		dst[j] = 0
	}
	e := 0.0
	for i := range d.pans {
		v := d.vals[i*d.dim : (i+1)*d.dim]
		for j := range dst {
			dst[j] += v[j]
		}
		e += d.pans[i].err
	}
	return e
}

func target(opt Options, dst []float64) float64 {
	m := 0.0
	for _, v := range dst {
		m = max(m, math.Abs(v))
	}
	return max(opt.AbsTol, opt.RelTol*m)
}

// run integrates over the pieces between pts into dst (len(dst) = dim).
func (d *driver) run(fn string, dst []float64, pts []float64, opt Options) (VecResult, error) {
	res := VecResult{Value: dst}
	switch {
	case math.IsNaN(opt.AbsTol) || opt.AbsTol < 0 || math.IsInf(opt.AbsTol, 0):
		return res, paramErr(fn, "AbsTol", opt.AbsTol, "must be finite and >= 0")
	case math.IsNaN(opt.RelTol) || opt.RelTol < 0 || math.IsInf(opt.RelTol, 0):
		return res, paramErr(fn, "RelTol", opt.RelTol, "must be finite and >= 0")
	case opt.MaxEvals < 0 || opt.MaxEvals > MaxEvalsCap:
		return res, paramErr(fn, "MaxEvals", opt.MaxEvals, fmt.Sprintf("must be in [0, %d]", MaxEvalsCap))
	case len(dst) < 1 || len(dst) > MaxDim:
		return res, paramErr(fn, "len(dst)", len(dst), fmt.Sprintf("must be in [1, %d]", MaxDim))
	case len(pts) < 2 || len(pts) > MaxBreaks:
		return res, paramErr(fn, "len(pts)", len(pts), fmt.Sprintf("must be in [2, %d]", MaxBreaks))
	case d.f == nil && d.fv == nil:
		return res, paramErr(fn, "f", nil, "must not be nil")
	case opt.Rule != GK15 && opt.Rule != GK7:
		return res, paramErr(fn, "Rule", opt.Rule, "must be GK15 or GK7")
	}
	for i, p := range pts {
		switch {
		case math.IsNaN(p):
			return res, paramErr(fn, fmt.Sprintf("pts[%d]", i), p, "must not be NaN")
		case math.IsInf(p, -1) && i != 0, math.IsInf(p, 1) && i != len(pts)-1:
			return res, paramErr(fn, fmt.Sprintf("pts[%d]", i), p, "only the first point may be −Inf and the last +Inf")
		case i > 0 && p < pts[i-1]:
			return res, paramErr(fn, fmt.Sprintf("pts[%d]", i), p, fmt.Sprintf("must be >= pts[%d] = %v (sorted)", i-1, pts[i-1]))
		}
	}
	if opt.AbsTol == 0 && opt.RelTol == 0 {
		opt.RelTol = DefaultRelTol
	}
	if opt.MaxEvals == 0 {
		opt.MaxEvals = DefaultMaxEvals
	}
	d.dim = len(dst)
	d.nodes, d.wk, d.wg, d.m = ruleOf(opt.Rule)
	np := 2*d.m - 1 // evaluations a panel
	// Room for the first pass's panels, an eighth more and two (most
	// calls bisect a few panels, if any: the fleet demo's 276 Adaptive
	// calls end with two or three panels, its BreaksVec calls on one or
	// two pieces with 4 to 74), grown by doubling beyond. The scratch and
	// the panels' values share one allocation (the values move out of it
	// when they outgrow it).
	n := len(pts) - 1 + (len(pts)-1)/8 + 2
	if c := opt.MaxEvals/np + len(pts); c < n {
		n = c
	}
	d.pans = make([]panel, 0, n)
	ns := (4 + np) * d.dim
	floats := make([]float64, ns, ns+n*d.dim)
	scratch := floats[:ns:ns]
	d.vals = floats[ns:ns]
	d.y, d.kacc, d.gacc, d.absacc = scratch[:d.dim], scratch[d.dim:2*d.dim], scratch[2*d.dim:3*d.dim], scratch[3*d.dim:4*d.dim]
	d.fvals = scratch[4*d.dim:]

	finite := true
	for i := 0; i+1 < len(pts); i++ {
		a, b := pts[i], pts[i+1]
		if !(b > a) {
			continue
		}
		var p panel
		switch {
		case math.IsInf(a, -1) && math.IsInf(b, 1):
			// only from a two-point call; Infinite splits at 0
			if !d.add(panel{a: 0, b: 1, kind: mapLeft}) || !d.add(panel{a: 0, b: 1, kind: mapRight}) {
				finite = false
			}
			continue
		case math.IsInf(a, -1):
			d.leftAnchor = b
			p = panel{a: 0, b: 1, kind: mapLeft}
		case math.IsInf(b, 1):
			d.rightAnchor = a
			p = panel{a: 0, b: 1, kind: mapRight}
		default:
			p = panel{a: a, b: b}
		}
		if !d.add(p) {
			finite = false
		}
	}
	total := d.totals(dst)
	errSum := total
	for finite {
		if errSum <= target(opt, dst) {
			// recompute exactly: the running sums drift
			if errSum = d.totals(dst); errSum <= target(opt, dst) {
				break
			}
		}
		if d.nheap == 0 {
			errSum = d.totals(dst)
			res.Error, res.Evals = errSum, d.evals
			return res, fmt.Errorf("quad.%s: error %.3g above the target %.3g: %w", fn, errSum, target(opt, dst), ErrResolution)
		}
		if d.evals+2*np > opt.MaxEvals {
			errSum = d.totals(dst)
			res.Error, res.Evals = errSum, d.evals
			return res, fmt.Errorf("quad.%s: %d evaluations, error %.3g above the target %.3g: %w", fn, d.evals, errSum, target(opt, dst), ErrBudget)
		}
		i := d.pop()
		p := d.pans[i]
		m := p.a + (p.b-p.a)/2
		old := d.vals[int(i)*d.dim : int(i+1)*d.dim]
		for j := range dst {
			dst[j] -= old[j]
		}
		errSum -= p.err
		// the left half replaces the panel in place (keeping the heap
		// slot the place holds), the right is appended
		left := panel{a: p.a, b: m, kind: p.kind, heap: p.heap}
		d.pans[i] = left
		if !d.apply(i, old) {
			finite = false
		}
		if !d.pans[i].final {
			d.push(i)
		}
		if !d.add(panel{a: m, b: p.b, kind: p.kind}) {
			finite = false
		}
		k := len(d.pans) - 1
		nv := d.vals[k*d.dim : (k+1)*d.dim]
		old = d.vals[int(i)*d.dim : int(i+1)*d.dim] // vals may have moved
		for j := range dst {
			dst[j] += old[j] + nv[j]
		}
		errSum += d.pans[i].err + d.pans[k].err
	}
	errSum = d.totals(dst)
	res.Error, res.Evals = errSum, d.evals
	if !finite {
		for j := range dst {
			dst[j] = math.NaN()
		}
		res.Error = math.NaN()
		return res, paramErr(fn, "f(x)", d.badX, "the integrand must be finite (x is the first point where it was not)")
	}
	return res, nil
}
