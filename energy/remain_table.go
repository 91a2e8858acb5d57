package energy

import (
	"math"
	"sync"
	"sync/atomic"
)

// The reading tables of a DeviceModel.
//
// A reading's log-likelihood term depends on the node only through its
// loaded voltage, so its table (see evidence.logLik) depends on the model's
// voltage curve, the pulse drop at the reading's time and the reading's bin
// and noise alone: readings on a quantised scale (a battery level, a
// voltage in steps of 10 mV) repeat the same few keys across a fleet. The
// model keeps one table per key, shared by every device and goroutine, so
// each lattice value is computed once per model instead of once per device
// and reading.

// maxReadingLattice caps a reading table's lattice (points).
const maxReadingLattice = 4096

// MaxCachedLattice caps the words (8 bytes each: lattice values, their
// cells' cubic coefficients, 4 a cell, and loaded-curve points) of the
// reading tables one DeviceModel keeps for all its devices (16 MiB): a reading
// whose table would pass it gets a table of its own for that Posterior
// call (the same values, so the same bits; only slower).
const MaxCachedLattice = 1 << 21

// readingKey is a reading table's key: the pulse drop (V/Ω) at which the
// curve is loaded, the bin (V) and the noise (V).
type readingKey struct{ drop, lo, hi, sigma float64 }

// readingCache holds a model's reading tables by key. It is shared by the
// models that WithSpread derives (the tables do not depend on the
// spreads). Safe for concurrent use: the map is a sync.Map, and a table's
// values are filled by atomic stores of a pure function of the key and
// the index (goroutines that fill the same value at once store the same
// bits).
type readingCache struct {
	tables sync.Map     // readingKey → *readingTable
	points atomic.Int64 // words held (lattice values, cell coefficients, loaded-curve points)
}

// readingTable returns the table of a reading with bin [lo, hi) and noise
// sigma at pulse drop drop: the model's shared one, made on first use
// while the cache holds fewer than MaxCachedLattice points, else one of
// the caller's own.
func (d *deviceData) readingTable(drop, lo, hi, sigma float64) *readingTable {
	k := readingKey{drop, lo, hi, sigma}
	c := d.tables
	if v, ok := c.tables.Load(k); ok {
		return v.(*readingTable)
	}
	t := newLoadedTable(d.curve, drop, lo, hi, sigma)
	n := int64(len(t.g) + len(t.cf) + len(t.vs) + len(t.slope))
	if c.points.Add(n) > MaxCachedLattice {
		c.points.Add(-n)
		return t
	}
	v, loaded := c.tables.LoadOrStore(k, t)
	if loaded {
		c.points.Add(-n)
	}
	return v.(*readingTable)
}

// readingTable is a reading's log-likelihood term g(V) = log P(lo <=
// V + ε < hi), ε ~ N(0, σ²), interpolated on a lazily filled lattice
// (see evidence.logLik), with the loaded curve it covers.
type readingTable struct {
	lo, hi, sigma float64
	vs            []float64 // the loaded voltage at the curve's depths at the table's drop
	slope         []float64 // slope[i]: vs's slope (V per unit depth) from depth i to i+1
	v0, h, invH   float64   // lattice point j is at v0 + (j−1)·h; invH = 1/h
	steps         int       // intervals covering the voltages; 0: evaluate directly
	// g holds the lattice values' bits, len steps+3; unsetBits where
	// not yet computed.
	g []atomic.Uint64
	// cf holds each cell's cubic coefficients' bits (cubicCoef of the
	// cell's four lattice values: cell j's at cf[4j:4j+4], len 4·steps),
	// unsetBits where not yet computed: the likelihood loop evaluates
	// the cubic from them (the same operations as cubic4, so the same
	// bits) without forming it from the values again.
	cf []atomic.Uint64
}

// unsetBits marks a lattice value not yet computed: the bits of a NaN
// (math.NaN's), never a value of the term.
const unsetBits uint64 = 0x7ff8000000000001

// newLoadedTable returns the table of a reading over the curve loaded at
// the pulse drop.
func newLoadedTable(cv *VoltageCurve, drop, lo, hi, sigma float64) *readingTable {
	ds := cv.DepthOfDischarge
	np := len(ds)
	buf := make([]float64, 2*np-1)
	vs, sl := buf[:np:np], buf[np:]
	for j := range vs {
		vs[j] = cv.OpenCircuit[j] - drop*cv.Resistance[j]
	}
	for j := range sl {
		sl[j] = (vs[j+1] - vs[j]) / (ds[j+1] - ds[j])
	}
	t := newReadingTable(vs, lo, hi, sigma)
	t.slope = sl
	return t
}

// newReadingTable returns the table of the reading's term over the
// voltages vs of the loaded curve (at the reading's pulse drop).
func newReadingTable(vs []float64, lo, hi, sigma float64) *readingTable {
	t := &readingTable{lo: lo, hi: hi, sigma: sigma, vs: vs}
	vmin, vmax := math.Inf(1), math.Inf(-1)
	for _, x := range vs {
		vmin, vmax = min(vmin, x), max(vmax, x)
	}
	span := vmax - vmin
	steps := max(int(math.Ceil(span/(readingStep*sigma))), 1)
	if !(span > 0) || steps+3 > maxReadingLattice {
		return t
	}
	t.v0, t.h, t.steps = vmin, span/float64(steps), steps
	t.invH = 1 / t.h
	w := make([]atomic.Uint64, 5*steps+3)
	t.g, t.cf = w[:steps+3:steps+3], w[steps+3:]
	for j := range w {
		w[j].Store(unsetBits)
	}
	return t
}

// at returns g(x) for x in the curve's voltage range.
func (t *readingTable) at(x float64) float64 {
	if t.steps == 0 {
		return logBin(x, t.lo, t.hi, t.sigma)
	}
	u := (x - t.v0) * t.invH
	j := min(max(int(u), 0), t.steps-1)
	g := t.g[j : j+4 : j+4]
	var y [4]float64
	for i := range y {
		b := g[i].Load()
		if b == unsetBits {
			v := logBin(t.v0+float64(j+i-1)*t.h, t.lo, t.hi, t.sigma)
			g[i].Store(math.Float64bits(v))
			b = math.Float64bits(v)
		}
		y[i] = math.Float64frombits(b)
	}
	c := cubicCoef(&y)
	cf := t.cf[4*j : 4*j+4 : 4*j+4]
	for i, v := range c {
		cf[i].Store(math.Float64bits(v))
	}
	return cubicAt(&c, u-float64(j))
}

// readingStep is the reading table's largest step in units of the
// reading's noise σ (see evidence.logLik).
const readingStep = 0.4

// cubic4 returns the cubic through (−1, y[0]), (0, y[1]), (1, y[2]),
// (2, y[3]) at t, in Horner's form about 0: y[1] + t·(c1 + t·(c2 + t·c3))
// with c2 = (y[0] + y[2])/2 − y[1], c3 = (y[3] − y[0])/6 + (y[1] −
// y[2])/2 and c1 = y[2] − y[1] − c2 − c3 (the same cubic as Lagrange's
// form, in fewer operations and without a division).
func cubic4(y *[4]float64, t float64) float64 {
	c := cubicCoef(y)
	return cubicAt(&c, t)
}

// cubicCoef returns cubic4's coefficients (y[1], c1, c2, c3).
func cubicCoef(y *[4]float64) [4]float64 {
	c2 := 0.5*(y[0]+y[2]) - y[1]
	c3 := (y[3]-y[0])*(1.0/6) + 0.5*(y[1]-y[2])
	return [4]float64{y[1], y[2] - y[1] - c2 - c3, c2, c3}
}

// cubicAt returns the cubic with coefficients c (cubicCoef's) at t, in
// Horner's form.
func cubicAt(c *[4]float64, t float64) float64 {
	return c[0] + t*(c[1]+t*(c[2]+t*c[3]))
}
