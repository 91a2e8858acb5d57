package energy

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/integrate/quad"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/fexp"
	"github.com/joulelaw/joulelaw/internal/mills"
)

// glNodes is the order of the fixed Gauss–Legendre rule on each piece of
// the floor factor's integral; no piece is longer than floorMaxPiece (in
// units of the floor's log-sd). The rule's probit differs from adaptive
// quadrature by at most 1.0e-9 on the test sites' settings from probit
// −8.5 to 8.5; pieces cut only where the integrand turns (before) erred by
// up to 0.011 at probit 4.7, where a wide turn left two pieces of nine
// units, and 12 nodes on pieces of 4 by 1.6e-7. Against gonum's
// 6000-point Legendre rule over [−12, 12] (TestFloorRuleAgainstGonum) it
// differs in probit from −8.9 to 8.9 by at most 3.8e-10 beyond what the
// cut at ±floorZMax moves (2.3e-8 in all, at |z| = 8.9; see floorZMax).
const glNodes = 16

// tabGLNodes is the order of the floor rule that the settings' tables are
// built from (settingTables; the node law's own evaluations take
// glNodes'): the tables interpolate the model to a probit tolerance of
// tabSetZTol, far above what either rule errs by, and the table's rule
// costs 10/16 of the node's at every knot. Against gonum's 12000-point
// Legendre rule over the cut interval (TestFloorRuleErrorAgainstGonum) it
// errs on the test sites' settings, from probit −8.9 to 8.9, by at most
// 3.5e-5 of the smaller side, 2.0e-8 absolute and 5.7e-6 in probit (the
// node's rule: 1.7e-8 of the side, 1.3e-10 in probit); its error is
// measured where a table's law is profiled (tabulated.profile, the rule
// on pieces halved, as the node's) and bounded between those times by
// tabRuleRel of the smaller side and tabRuleAbs absolute, about three and
// five times the largest measured. 8 nodes err by up to 1.1e-3 of the
// side (1.7e-4 in probit), 12 by 1.3e-6.
const tabGLNodes = 10

// The table rule's error between the times where it is measured, at most
// (see tabGLNodes): a share of the smaller side and an absolute bound.
const (
	tabRuleRel = 1e-4
	tabRuleAbs = 1e-7
)

// glRule returns the Gauss–Legendre rule of order m on [−1, 1], its nodes
// in exactly symmetric pairs (fixedPieces relies on it; the computed
// nodes differ from it by an ulp or two).
func glRule(m int) (x, w []float64) {
	x, w = make([]float64, m), make([]float64, m)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	for k := range m / 2 {
		v := (x[m-1-k] - x[k]) / 2
		x[k], x[m-1-k] = -v, v
	}
	return x, w
}

// MaxNodeSettings caps the radio settings (cycles) of one NodeSpec.
const MaxNodeSettings = 1024

// NodeSetting is one of the cycles a group's nodes run, with the share of
// nodes that run it (for example one per data rate and transmit power that
// adaptive data rate leaves nodes at). A node keeps its setting for life.
type NodeSetting struct {
	Weight float64 // share of the group's nodes, > 0; the weights must sum to 1
	Cycle  Cycle   // the cycle those nodes run; state currents at the supply's rail voltage
}

// NodeSpec describes the nodes of one group: their cycles, their cell, the
// supply path between them, how cell and board respond to temperature, the
// per-node spreads and the cell's calendar.
type NodeSpec struct {
	Name     string        // free text, used in messages
	Settings []NodeSetting // at least one, at most MaxNodeSettings
	Battery  Battery       // the cell; its SelfDischargePerYear is taken at Thermal.ReferenceTemperature

	// Supply is the path from the cell to the node's rail; the zero value
	// is DirectSupply (the node runs on the cell).
	Supply Supply
	// Thermal is how the cell and the board follow temperature; nil means
	// they do not (the climate is then ignored).
	Thermal *Thermal
	// Voltage, when given, sets the usable share of the capacity: the depth
	// of discharge at which the cell's voltage under the node's largest
	// current pulse falls to Brownout, at the coldest temperature of the
	// year (VoltageCurve.UsableFraction). It replaces
	// BatterySpec.UsableFraction. nil keeps BatterySpec.UsableFraction.
	Voltage  *VoltageCurve
	Brownout float64 // V: the node's brown-out (minimum supply) voltage; required with Voltage

	Spread NodeSpread // per-node spreads; the zero value means none

	// CalendarLife is the cell's rated service (calendar) life (s) counted
	// from manufacture; 0 means no limit. A node's life ends at the earlier
	// of its energy running out and CalendarLife − StorageTime.
	CalendarLife float64
	// StorageTime is the time (s) between the cell's manufacture and the
	// node's deployment, spent at the reference temperature: it takes
	// self-discharge from the capacity and from the calendar life.
	StorageTime float64
	// StartMonth is the calendar month of deployment, 0 (January) to 11.
	StartMonth int
}

// Environment is what a node's law is conditional on: the site's climate
// and one realisation of the shared factors.
type Environment struct {
	// Climate is the year of operating temperature; nil means the
	// reference temperature all year (used only with NodeSpec.Thermal).
	Climate *Climate
	Conditions
	// months, when not nil, is newMonthTable's table for the spec's
	// Thermal and StartMonth in this climate and offset, computed once
	// for many specs that share them (the design search's candidates).
	months *monthTable
	// rules, when not nil, are the Gauss–Legendre rules of the nodes of
	// one call, made once and only read (a Site's conditional laws).
	rules *glRules
	// settings, when not nil, are the settings of a node built from the
	// same spec, climate and temperature offset (its batch factor may
	// differ: the settings do not read it), only read: a Site's nodes at
	// one temperature offset share them.
	settings []nodeSetting
}

// glRules are a node's Gauss–Legendre rules on [−1, 1]: glNodes points
// (glx, glw) and the settings' tables' tabGLNodes (tgx, tgw).
type glRules struct {
	glx, glw, tgx, tgw []float64
}

// newGLRules returns the rules (glRule).
func newGLRules() *glRules {
	var r glRules
	r.glx, r.glw = glRule(glNodes)
	r.tgx, r.tgw = glRule(tabGLNodes)
	return &r
}

// node is the precomputed model of one group's nodes in one environment.
type node struct {
	name      string
	settings  []nodeSetting
	spread    NodeSpread
	nominal   float64 // J nominal energy of the cell, times the batch factor
	batch     float64
	quiescent float64 // W drawn by the supply regardless of load
	sdRate    float64 // fraction of the nominal capacity per s at the reference temperature
	storage   float64 // fraction of the nominal capacity lost in storage
	calendar  float64 // s after deployment; +Inf for none
	// months holds, per month after deployment, the factors on the floor
	// power and the self-discharge rate and their integrals (floorCum,
	// sdCum): the month table of the node's Thermal, start month and
	// climate (shared by the nodes that have it; only read), or one of
	// factors 1.
	months   *monthTable
	warnings []string
	glx, glw []float64 // Gauss–Legendre nodes and weights on [−1, 1] (glNodes)
	tgx, tgw []float64 // the settings' tables' rule (tabGLNodes)
}

// nodeSetting is one setting's share of the model.
type nodeSetting struct {
	w       float64
	rate    float64 // cycles per s: 1/E[T]
	floorP  float64 // W at the cell, at the reference temperature (supply scale included)
	usable  float64 // J usable at batch and node factor 1, before self-discharge
	mu, k2  float64 // mean (J) and variance (J²) of one cycle's active energy at the cell
	l3, l4  float64 // its standardized third and fourth cumulants
	l5      float64 // and fifth
	excess  dist.Law
	sums    *dist.IIDSums // exact k-fold path when the node has no spread
	scale   float64       // supply energy scale
	usableF float64       // usable fraction of the nominal capacity
}

// newNode precomputes the model of spec in env.
func newNode(fn string, spec NodeSpec, env Environment) (*node, error) {
	return newNodeFor(fn, spec, env, nodeParts{})
}

// nodeParts says which of a node's precomputed parts newNodeFor leaves
// out (the zero value: none), for a caller that reads only the others
// (Site.VarianceShares, Site.UsableFraction). The rules, the k-fold sums
// and the moments depend on the spec alone, not on the environment: left
// out for a spec whose node was built in full before (a Site's group),
// the errors they could raise cannot arise.
type nodeParts struct {
	noRules         bool // glx, glw, tgx and tgw left nil
	noSums          bool // the settings' exact k-fold sums left nil
	noMoments       bool // the settings' mu, k2, l3, l4 and l5 left 0
	noSelfDischarge bool // the months' self-discharge factors left 1 (sdFactor, sdCum)
}

// newNodeFor is newNode with the parts that skip says left out.
func newNodeFor(fn string, spec NodeSpec, env Environment, skip nodeParts) (*node, error) {
	pre := "spec."
	if spec.Name != "" {
		pre = fmt.Sprintf("spec %q: ", spec.Name)
	}
	if err := env.Conditions.check(fn); err != nil {
		return nil, err
	}
	if err := spec.Spread.check(fn, pre); err != nil {
		return nil, err
	}
	b := spec.Battery
	if b.spec.NominalVoltage == 0 {
		return nil, paramErr(fn, pre+"Battery", "zero Battery", "must be built by NewBattery")
	}
	switch {
	case len(spec.Settings) == 0 || len(spec.Settings) > MaxNodeSettings:
		return nil, paramErr(fn, pre+"Settings", len(spec.Settings), fmt.Sprintf("must hold 1 to %d settings", MaxNodeSettings))
	case !(spec.CalendarLife >= 0) || math.IsInf(spec.CalendarLife, 0):
		return nil, paramErr(fn, pre+"CalendarLife", spec.CalendarLife, "must be finite and >= 0 (s; 0 for no limit)")
	case !(spec.StorageTime >= 0) || math.IsInf(spec.StorageTime, 0):
		return nil, paramErr(fn, pre+"StorageTime", spec.StorageTime, "must be finite and >= 0 (s)")
	case spec.CalendarLife > 0 && spec.StorageTime >= spec.CalendarLife:
		return nil, paramErr(fn, pre+"StorageTime", spec.StorageTime, fmt.Sprintf("must be below CalendarLife %g s: the cell is past its calendar life before deployment", spec.CalendarLife))
	case spec.StartMonth < 0 || spec.StartMonth > 11:
		return nil, paramErr(fn, pre+"StartMonth", spec.StartMonth, "must be in 0..11 (January is 0)")
	case spec.Voltage != nil && !(spec.Brownout > 0 && spec.Brownout < b.spec.NominalVoltage*2):
		return nil, paramErr(fn, pre+"Brownout", spec.Brownout, "must be > 0 V (the node's minimum supply voltage) when Voltage is given")
	}
	wsum := 0.0
	for i, s := range spec.Settings {
		if !(s.Weight > 0 && s.Weight <= 1) {
			return nil, paramErr(fn, fmt.Sprintf("%sSettings[%d].Weight", pre, i), s.Weight, "must be in (0, 1]")
		}
		if s.Cycle.energy == nil {
			return nil, paramErr(fn, fmt.Sprintf("%sSettings[%d].Cycle", pre, i), "zero Cycle", "must be built by NewCycle")
		}
		wsum += s.Weight
	}
	if math.Abs(wsum-1) > 1e-9 {
		return nil, paramErr(fn, pre+"Settings", wsum, "weights must sum to 1 (within 1e-9)")
	}

	n := &node{name: spec.Name, spread: spec.Spread, batch: env.batch(), calendar: math.Inf(1)}
	switch {
	case env.rules != nil:
		n.glx, n.glw, n.tgx, n.tgw = env.rules.glx, env.rules.glw, env.rules.tgx, env.rules.tgw
	case !skip.noRules:
		n.glx, n.glw = glRule(glNodes)
		n.tgx, n.tgw = glRule(tabGLNodes)
	}
	if spec.CalendarLife > 0 {
		n.calendar = spec.CalendarLife - spec.StorageTime
	}
	v := b.spec.NominalVoltage
	if err := spec.Supply.Check(v); err != nil {
		return nil, causeErr(fn, pre+"Supply", spec.Supply.String(), "cannot run from the cell's nominal voltage", err)
	}
	scale, quiescent := spec.Supply.EnergyScale(v), spec.Supply.QuiescentPower(v)
	n.quiescent = quiescent
	n.nominal = b.NominalEnergy() * n.batch
	n.sdRate = b.spec.SelfDischargePerYear / Year
	n.storage = n.sdRate * spec.StorageTime

	// The year month by month from deployment: floor factor, self-discharge
	// factor and capacity derating at each month's temperature.
	// Without a Thermal the battery's single derating factor holds; with one
	// its table replaces it.
	derate := b.spec.TemperatureDerating
	coldest := math.Inf(1)
	if spec.Thermal != nil {
		mt := env.months
		if mt == nil {
			var err error
			if mt, err = newMonthTableFor(fn, pre, spec, env, !skip.noSelfDischarge); err != nil {
				return nil, err
			}
		}
		n.warnings = append(n.warnings, mt.warnings...)
		n.months = mt
		derate, coldest = mt.derate, mt.coldest
	} else {
		n.months = &monthTable{}
		for i := range 12 {
			n.months.floorRate[i], n.months.sdFactor[i] = 1, 1
		}
		n.months.accumulate()
	}

	if env.settings != nil {
		n.settings = env.settings
		return n, nil
	}
	usableF := b.spec.UsableFraction
	n.settings = make([]nodeSetting, 0, len(spec.Settings))
	for i, s := range spec.Settings {
		c := s.Cycle
		st := nodeSetting{w: s.Weight, rate: 1 / c.period.Mean(), floorP: scale * c.floor, scale: scale, excess: c.excess}
		uf := usableF
		if spec.Voltage != nil {
			// States are given at the rail (the cell for a direct supply).
			rail := spec.Supply.RailVoltage()
			if rail == 0 {
				rail = v
			}
			peak := 0.0
			for _, state := range c.statesView() {
				peak = max(peak, state.peakCurrent(rail))
			}
			// Cell current under the peak: the node's power at the rail,
			// scaled through the supply, plus its own draw, at the cell's
			// voltage (a linear regulator passes the current through).
			ipk := (peak*rail*scale + quiescent) / v
			tc := 20.0
			if spec.Thermal != nil {
				tc = spec.Thermal.ReferenceTemperature
				if !math.IsInf(coldest, 0) {
					tc = coldest
				}
			}
			f, err := spec.Voltage.UsableFraction(ipk, tc, spec.Brownout)
			if err != nil {
				return nil, causeErr(fn, fmt.Sprintf("%sSettings[%d]", pre, i), ipk, "usable fraction under the largest pulse", err)
			}
			uf = f
		}
		st.usableF = uf
		st.usable = b.NominalEnergy() * uf * derate
		if skip.noMoments {
			n.settings = append(n.settings, st)
			continue
		}
		mom, err := centralMoments(c.excess)
		if err != nil {
			return nil, causeErr(fn, fmt.Sprintf("%sSettings[%d].Cycle", pre, i), c.String(), "moments of the active energy", err)
		}
		st.mu = scale * mom[0]
		k2 := mom[1]
		k3 := mom[2]
		k4 := mom[3] - 3*mom[1]*mom[1]
		k5 := mom[4] - 10*mom[2]*mom[1]
		st.k2 = scale * scale * k2
		if k2 > 0 {
			st.l3 = k3 / math.Pow(k2, 1.5)
			st.l4 = k4 / (k2 * k2)
			st.l5 = k5 / math.Pow(k2, 2.5)
		}
		if !skip.noSums && spec.Spread.Capacity == 0 && spec.Spread.Active == 0 && spec.Spread.Floor == 0 {
			sums, err := dist.NewIIDSums(c.excess)
			if err != nil {
				return nil, causeErr(fn, fmt.Sprintf("%sSettings[%d].Cycle", pre, i), c.String(), "k-fold sums of the active energy", err)
			}
			st.sums = &sums
		}
		n.settings = append(n.settings, st)
	}
	return n, nil
}

// centralMoments returns the mean and the central moments of orders 2 to 5
// of l: exact sums for a finite discrete law, otherwise by quadrature of
// the quantile function, ∫_0^1 (Q(u) − μ)^r du.
func centralMoments(l dist.Law) ([5]float64, error) {
	var m [5]float64
	mu := l.Mean()
	m[0] = mu
	if a, ok := l.(dist.Atomic); ok {
		atoms := a.Atoms()
		tot := 0.0
		for _, at := range atoms {
			tot += at.Mass
		}
		if math.Abs(tot-1) < 1e-12 {
			for _, at := range atoms {
				d := at.Value - mu
				p := at.Mass
				m[1] += p * d * d
				m[2] += p * d * d * d
				m[3] += p * d * d * d * d
				m[4] += p * d * d * d * d * d
			}
			return m, nil
		}
	}
	m[1] = l.Variance()
	for r := 3; r <= 5; r++ {
		res, err := integrate(func(u float64) float64 {
			return math.Pow(l.Quantile(u)-mu, float64(r))
		}, 0, 1, 1e-13, 1e-8)
		if err != nil {
			return m, err
		}
		m[r-1] = res
	}
	return m, nil
}

// cum returns the integral over [0, t] (t in s after deployment) of the
// monthly factors tabulated as cumulative sums c.
func (n *node) cum(c *[13]float64, rate *[12]float64, t float64) float64 {
	y := math.Floor(t / Year)
	r := t - y*Year
	i := int(r / Month)
	if i > 11 {
		i = 11
	}
	return y*c[12] + c[i] + (r-float64(i)*Month)*rate[i]
}

// maxKinks caps the month boundaries kinks returns (about 170 years of
// them); a law spread wider than that is tabulated without them.
const maxKinks = 2048

// kinks returns the month boundaries m·Month (s after deployment) in
// (lo, hi) where a monthly factor (floor or self-discharge) changes: there
// the node's energy balance, and so its lifetime law, has a kink. None
// when there would be more than maxKinks.
func (n *node) kinks(lo, hi float64) []float64 {
	return n.appendKinks(nil, lo, hi)
}

// appendKinks appends kinks(lo, hi) to dst and returns the extended
// slice: a caller's buffer, reused from table to table (tableScratch).
func (n *node) appendKinks(dst []float64, lo, hi float64) []float64 {
	if !(hi > lo) || (hi-lo)/Month > maxKinks {
		return dst
	}
	// Whether the boundary m·Month is a kink depends on m mod 12 alone:
	// the months' factors compared once, not at each boundary.
	var kink [12]bool
	some := false
	for j := range kink {
		i := (j + 11) % 12
		kink[j] = n.months.floorRate[i] != n.months.floorRate[j] || n.months.sdFactor[i] != n.months.sdFactor[j]
		some = some || kink[j]
	}
	if !some {
		return dst
	}
	// Counted first, then written into room for that many (growing by
	// appends cost the tables about a tenth of their allocations).
	first := int(math.Floor(max(lo, 0)/Month)) + 1
	at := func(m int) (float64, bool) {
		x := float64(m) * Month
		return x, x > lo && kink[m%12]
	}
	count := 0
	for m := first; float64(m)*Month < hi; m++ {
		if _, ok := at(m); ok {
			count++
		}
	}
	if count == 0 {
		return dst
	}
	dst = slices.Grow(dst, count)
	for m := first; float64(m)*Month < hi; m++ {
		if x, ok := at(m); ok {
			dst = append(dst, x)
		}
	}
	return dst
}

// settingLife returns the lifetime of setting j's mean node from the mean
// energy rates at the reference temperature (s): a starting point for
// searches.
func (n *node) settingLife(j int) float64 {
	s := n.settings[j]
	load := s.rate*s.mu + s.floorP + n.quiescent + n.nominal*n.sdRate
	return (n.batch*s.usable - n.nominal*n.storage) / load
}

// settingAt returns P(a node of setting j still has energy at t) and
// P(it has run out), each computed directly, and an error estimate, for
// t in s after deployment (the calendar limit is not applied here).
//
// With c, a and f the node's capacity, active and floor factors, b the
// batch factor, A(t) the active energy of the t·rate cycles run by t (at
// the cell), Φ(t) the floor power's integral and D(t) the self-discharge
// taken so far (fraction of the nominal capacity), the node has energy
// left while
//
//	c·b·(U − N·D(t)) − a·A(t) − f·Φ(t) − P_q·t >= 0.
//
// Given A and f, c·b·(U − N·D) − a·A is normal; A is replaced by a normal
// of its exact mean and variance (its higher cumulants are tiny beside
// the node spreads; newNodeLifetime measures what they move with a
// three-node moment rule); the lognormal f is integrated by a fixed
// Gauss–Legendre rule on pieces (part).
func (n *node) settingAt(j int, t float64) (alive, dead, errEst float64) {
	s := &n.settings[j]
	capLeft := n.batch*s.usable - n.nominal*(n.storage+n.sdRate*n.cum(&n.months.sdCum, &n.months.sdFactor, t))
	if !(capLeft > 0) {
		return 0, 1, 0
	}
	k := t * s.rate
	floorE := s.floorP * n.cum(&n.months.floorCum, &n.months.floorRate, t)
	h := n.quiescent * t
	mean := k * s.mu
	if s.sums != nil {
		// No per-node spread: the exact k-fold law of the active energy
		// over the cycles begun by t.
		kk := math.Floor(k) + 1
		if kk > math.MaxInt32 {
			return math.NaN(), math.NaN(), math.NaN()
		}
		x := (capLeft - floorE - h) / s.scale
		// Hoeffding's inequality (Hoeffding 1963, J. Amer. Statist. Assoc.
		// 58:13–30, Thm 2) for a law on [lo, hi]: P(S_k − kμ >= d) <=
		// exp(−2d²/(k(hi − lo)²)), and the same below. Where it puts a tail
		// under 1e-300 the tail is 0, sparing an inversion far from the
		// setting's bulk (most settings, at most times).
		lo, hi := s.excess.Support()
		if w := hi - lo; w > 0 && !math.IsInf(w, 0) {
			d := x - kk*s.mu/s.scale
			if 2*d*d/(kk*w*w) > 300*math.Ln10 {
				if d > 0 {
					return 1, 0, 0
				}
				return 0, 1, 0
			}
		}
		// Both tails from one evaluation, each computed directly (as CDF
		// and Survival return them, each from an evaluation of its own).
		below, above := s.sums.Tails(int(kk), x)
		return below, above, 0
	}
	return n.normalPart(capLeft, mean, k*s.k2, floorE, h, 0)
}

// clocks returns the calendar model's three clocks at t (s after
// deployment): t itself, the self-discharge clock D(t) and the floor clock
// Φ(t), the integrals over [0, t] of the monthly self-discharge and floor
// factors (s).
func (n *node) clocks(t float64) [3]float64 {
	return [3]float64{t, n.cum(&n.months.sdCum, &n.months.sdFactor, t), n.cum(&n.months.floorCum, &n.months.floorRate, t)}
}

// clockRates returns the three clocks' rates (s per s) in the month of
// the calendar (counted from deployment) just right (after) or left
// (before) of t, so that at a month boundary each side has its own.
func (n *node) clockRates(t float64, right bool) [3]float64 {
	const eps = 1e-6 * Month
	if right {
		t += eps
	} else {
		t -= eps
	}
	r := t - math.Floor(t/Year)*Year
	i := min(max(int(r/Month), 0), 11)
	return [3]float64{1, n.months.sdFactor[i], n.months.floorRate[i]}
}

// settingProbit returns, for setting j of a node with a per-node spread,
// the probit z of P(run out by t) (from the smaller tail, as probitOf) at
// the clocks c (clocks) and its partial derivatives against the three
// clocks (per s): the node's energy balance depends on t through them
// alone, and is smooth in each, so its kinks at month boundaries are those
// of the clocks. ±Inf (with a zero gradient) where the law is 0 or 1.
func (n *node) settingProbit(j int, c [3]float64) (z float64, dz [3]float64) {
	z, dz, _, _ = n.settingProbitAt(j, c, false)
	return z, dz
}

// settingProbitAt is settingProbit with part's output at the clocks c
// (ok false, and p that of a node run out, where the capacity is spent
// and part is not evaluated): its probabilities are the same bits as
// settingAt's at the time c[0] (normalPart's, with the gradient or
// without), and p itself is what NodeLifetime.accuracyAtZ evaluates for
// setting j at that time (the same arguments). With tab the floor
// integral takes the tables' rule (tabGLNodes) instead of the node's.
func (n *node) settingProbitAt(j int, c [3]float64, tab bool) (z float64, dz [3]float64, p partOut, ok bool) {
	s := &n.settings[j]
	capLeft := n.batch*s.usable - n.nominal*(n.storage+n.sdRate*c[1])
	if !(capLeft > 0) {
		return math.Inf(1), dz, partOut{dead: 1, z: math.Inf(1)}, false
	}
	k := c[0] * s.rate
	p = n.partRule(capLeft, k*s.mu, k*s.k2, s.floorP*c[2], n.quiescent*c[0], 0, true, false, tab)
	if math.IsInf(p.z, 0) || math.IsNaN(p.z) {
		return p.z, dz, p, true
	}
	dz[0] = p.dz[dMean]*s.rate*s.mu + p.dz[dVar]*s.rate*s.k2 + p.dz[dQuiet]*n.quiescent
	dz[1] = -p.dz[dCap] * n.nominal * n.sdRate
	dz[2] = p.dz[dFloor] * s.floorP
	return p.z, dz, p, true
}

// normalPart returns P(c·C − a·v − f·L >= h) and its complement, with c
// normal (1, σ_c), a normal (1, σ_a), v normal (mean, vv) and f lognormal
// (median 1, log-sd σ_f), all independent; and the quadrature's error
// estimate. extra is added to the variance.
func (n *node) normalPart(capLeft, mean, vv, floorE, h, extra float64) (alive, dead, errEst float64) {
	p := n.part(capLeft, mean, vv, floorE, h, extra, false)
	return p.alive, p.dead, 0
}

// partOut is what part returns: normalPart's two probabilities and, when
// asked for, the probit z of dead (from the smaller tail) with its partial
// derivatives dz against capLeft, mean, vv, floorE and h (per J, J², J, J).
type partOut struct {
	alive, dead float64
	z           float64
	dz          [5]float64
}

// Indices of part's partial derivatives.
const (
	dCap = iota
	dMean
	dVar
	dFloor
	dQuiet
)

// part is normalPart, with the probit and its gradient when grad is set:
// with m = capLeft − mean, sd² = σ_c²·capLeft² + σ_a²·(mean² + vv) + vv
// and g(u) = (L·e^{σ_f u} + h − m)/sd, dead = ∫ φ(u)·Φ(g(u)) du, so
// ∂dead/∂θ = ∫ φ(u)·φ(g(u))·∂g/∂θ du, from the same rule's nodes; and
// ∂z/∂θ = (∂dead/∂θ)/φ(z). Without the floor's spread z = (L + h − m)/sd,
// without the normal part z = ln(L/(m − h))/σ_f, in closed form.
func (n *node) part(capLeft, mean, vv, floorE, h, extra float64, grad bool) partOut {
	return n.partRule(capLeft, mean, vv, floorE, h, extra, grad, false, false)
}

// partRule is part, by the fixed rule on floorPieces' pieces or, when
// halve is set, on each of those pieces halved (floorRuleError); the
// node's rule (glNodes), or with tab the tables' (tabGLNodes).
func (n *node) partRule(capLeft, mean, vv, floorE, h, extra float64, grad, halve, tab bool) partOut {
	return n.partRuleShared(capLeft, mean, vv, floorE, h, extra, grad, halve, tab, nil)
}

// partRuleShared is partRule, by the rule on fs's pieces when fs is not
// nil and holds some for the rule tab, without halve (the floor integrals
// of other arguments on the same pieces share the factors that depend on
// the pieces alone: see floorShare).
func (n *node) partRuleShared(capLeft, mean, vv, floorE, h, extra float64, grad, halve, tab bool, fs *floorShare) partOut {
	sc, sa, sf := n.spread.Capacity, n.spread.Active, n.spread.Floor
	m := capLeft - mean
	// Var(a·v) = σ_a²·(mean² + vv) + vv for independent a and v.
	varY := sc*sc*capLeft*capLeft + sa*sa*(mean*mean+vv) + vv + extra
	sd := math.Sqrt(varY)
	alive, dead := partOut{alive: 1, z: math.Inf(-1)}, partOut{dead: 1, z: math.Inf(1)}
	// The derivatives of m, sd²/2 (over sd²), floorE and h against
	// capLeft, mean, vv, floorE and h.
	dm := [5]float64{1, -1, 0, 0, 0}
	dv := [5]float64{sc * sc * capLeft / varY, sa * sa * mean / varY, (sa*sa + 1) / (2 * varY), 0, 0}
	if sf == 0 || floorE == 0 {
		if sd == 0 {
			if m-floorE >= h {
				return alive
			}
			return dead
		}
		z := (floorE + h - m) / sd
		out := partOut{alive: normSurv(z), dead: normSurv(-z), z: z}
		if grad {
			for i := range out.dz {
				out.dz[i] = -dm[i]/sd - z*dv[i]
			}
			out.dz[dFloor] += 1 / sd
			out.dz[dQuiet] += 1 / sd
		}
		return out
	}
	if sd == 0 {
		// Only the floor varies: alive iff f <= (m − h)/floorE.
		if !(m > h) {
			return dead
		}
		z := math.Log((m-h)/floorE) / sf
		out := partOut{alive: normSurv(-z), dead: normSurv(z), z: -z}
		if grad {
			for i := range out.dz {
				out.dz[i] = -dm[i] / (sf * (m - h))
			}
			out.dz[dFloor] += 1 / (sf * floorE)
			out.dz[dQuiet] += 1 / (sf * (m - h))
		}
		return out
	}
	// ∫ φ(z)·Φ̄((L·e^{σ_f z} + h − m)/sd) dz over z in [−zMax, zMax].
	const zMax = floorZMax
	g := func(z float64) float64 { return (floorE*math.Exp(sf*z) + h - m) / sd }
	// g increases with z: where Φ̄(g) underflows to 0 (or 1) over the
	// whole range, every node of the rule below would give the same, so
	// the integral is 0 (or 1) as computed, without the work.
	const flat = 40 // Φ̄(40) underflows float64
	if g(-zMax) > flat {
		return dead
	}
	if g(zMax) < -flat {
		return alive
	}
	var ptsBuf [2*floorMaxPieces + 1]float64
	var pts []float64
	if fs != nil && fs.np > 0 && fs.tab == tab && !halve {
		pts = fs.buf[:fs.np]
	} else {
		fs = nil
		pts = floorPieces(ptsBuf[:0], floorE, m-h, sd, sf)
		if halve {
			pts = halvePieces(pts)
		}
	}
	// Integrate the smaller side only (the other is its complement, exact
	// to rounding): which side is smaller is read off the median floor.
	aliveSide := g(0) > 0
	fp := n.fixedPiecesShared(pts, floorE, h-m, sd, sf, aliveSide, grad, tab, fs)
	v := fp[0]
	if v > 0.5 {
		aliveSide = !aliveSide
		v = n.fixedPiecesShared(pts, floorE, h-m, sd, sf, aliveSide, false, tab, fs)[0]
	}
	var out partOut
	if aliveSide {
		out = partOut{alive: v, dead: 1 - v}
	} else {
		out = partOut{alive: 1 - v, dead: v}
	}
	if !grad {
		return out
	}
	out.z = probitOf(out.alive, out.dead)
	if phi := normPDF(out.z); phi > 0 {
		// ∂g/∂θ = (∂L·e^{σ_f u} + ∂h − ∂m)/sd − g·∂sd/sd.
		a, b, c := fp[1], fp[2], fp[3]
		for i := range out.dz {
			out.dz[i] = (-dm[i]*a/sd - dv[i]*c) / phi
		}
		out.dz[dFloor] += b / sd / phi
		out.dz[dQuiet] += a / sd / phi
	}
	return out
}

// floorZMax is where the floor integral is cut: the normal mass beyond
// ±floorZMax is 2·Φ̄(10.5) = 8.6e-26, which moves a probit z by at most
// that over φ(z): 1.1e-9 at |z| = 8.5, 3.4e-8 at 8.9, 8.4e-8 at 9, the
// settings' tables' farthest ends. The rule's error check
// (floorRuleError) shares the cut, so it must be negligible where the
// tables reach: at ±9.3 (before) it was 2·Φ̄(9.3) = 1.4e-20, a probit
// error of up to 1.5e-3 at |z| = 8.75 and 0.014 at 9, and the settings'
// tables, bent by it near their ends, took about 16 % more model
// evaluations.
const floorZMax = 10.5

// floorPieces returns (in dst's space, when it has room) the pieces of
// [−floorZMax, floorZMax] for the floor integral
// ∫ φ(u)·Φ̄((L·e^{σ u} + h − m)/sd) du (mh = m − h): the integrand turns
// from 1 to 0 around u* where L·e^{σ u*} = m − h, over a width
// sd/((m − h)·σ); the pieces are cut at u* and 4 widths either side, and
// split to at most floorMaxPiece.
func floorPieces(dst []float64, floorE, mh, sd, sf float64) []float64 {
	var cuts [5]float64
	pts := append(cuts[:0], -floorZMax)
	if mh > 0 {
		zs := math.Log(mh/floorE) / sf
		w := sd / (mh * sf) // width of the turn in z
		for _, x := range [3]float64{zs - 4*w, zs, zs + 4*w} {
			if x > -floorZMax && x < floorZMax {
				pts = append(pts, x)
			}
		}
	}
	pts = append(pts, floorZMax)
	// Pieces longer than floorMaxPiece are split evenly.
	out := dst[:0]
	for i := 0; i+1 < len(pts); i++ {
		k := math.Ceil((pts[i+1] - pts[i]) / floorMaxPiece)
		for q := 0.0; q < k; q++ {
			out = append(out, pts[i]+(pts[i+1]-pts[i])*q/k)
		}
	}
	return append(out, floorZMax)
}

// floorMaxPiece is the longest piece of the floor integral (see glNodes).
const floorMaxPiece = 4.0

// floorSkip is the share of the floor integral's sum so far below which
// fixedPieces leaves out the pieces left, by their bounds: it moves a
// probit z by at most floorSkip·min(p, 1 − p)/φ(z) <= 1.3e-12, a
// thousandth of the rule's stated agreement with adaptive quadrature
// (glNodes). The pieces it leaves out lie far in the normal's tails
// (their normal mass a few 1e-12 of the sum): at 1e-17 (before) the
// demo's floor integrals took 7 % more pieces, 2.9 % more instructions
// in all.
const floorSkip = 1e-12

// tabFloorSkip is floorSkip for the tables' rule (tabGLNodes), and the
// share of the sum so far below which that rule leaves out a node's term
// (1e-17 with the node's rule): together they move the tables' floor
// integral by at most 2·tabFloorSkip of the smaller side, 2e-9 of it and
// 1e-9 absolute (the side is at most 1/2), 2 % of tabRuleRel and 1 % of
// tabRuleAbs, the margins for the tables' rule's error between the times
// where it is measured, and far below the tables' probit tolerance
// tabSetZTol. floorRuleError counts it. Against floorSkip (1e-12 for both
// rules, before) the demo's floor integrals took about 15 % fewer
// instructions.
const tabFloorSkip = 1e-9

// floorMaxPieces bounds floorPieces' pieces: at most four runs between
// the cuts, of lengths summing to 2·floorZMax = 21, each split into
// ceil(length/floorMaxPiece) pieces, so fewer than 21/4 + 4 = 9.25.
const floorMaxPieces = 9

// halvePieces inserts, in place (pts must have room for len(pts) − 1 more
// points), the midpoint of each piece between consecutive points of pts,
// and returns the points of the halved pieces.
func halvePieces(pts []float64) []float64 {
	n := len(pts)
	out := pts[:2*n-1]
	for i := n - 1; i >= 0; i-- {
		out[2*i] = pts[i]
	}
	for i := 0; i+1 < n; i++ {
		out[2*i+1] = out[2*i] + (out[2*i+2]-out[2*i])/2
	}
	return out
}

// floorRuleError estimates the fixed rule's error in p, part's result for
// the same arguments (without extra): twice the difference D between the
// rule on floorPieces' pieces and on each piece halved, on the smaller
// side, plus the rounding of that side's sum (a few units in its last
// place). Where halving the pieces at least halves the rule's error E
// (far more where the integrand is smooth on a piece's scale: a
// Gauss–Legendre rule's error falls as the 2·glNodes-th power of the
// length, 2^−32 when halved), |E| <= |D| + |E|/2, so |E| <= 2·|D|; a piece
// too long for the integrand's turn shows as a large difference.
// TestFloorRuleErrorAgainstGonum measures the estimate against gonum's
// rule, with the node's rule (errors up to 1.7e-8 of the side, D within
// 1 % of them) and with a coarse 6-point rule (D within 25 %). The
// pieces both leave out (floorSkip) add at most floorSkip of each side's
// sum to its error and to D: 5·floorSkip of the side is added. With tab
// the pieces and terms left out add up to 2·tabFloorSkip of each side's
// sum, and 10·tabFloorSkip of the side is added. Where the floor has no
// spread part is in closed form and the estimate is 0.
//
// With tab the rule is the tables' (tabGLNodes), p its output.
func (n *node) floorRuleError(capLeft, mean, vv, floorE, h float64, p partOut, tab bool) float64 {
	sc, sa, sf := n.spread.Capacity, n.spread.Active, n.spread.Floor
	if sf == 0 || floorE == 0 {
		return 0
	}
	if varY := sc*sc*capLeft*capLeft + sa*sa*(mean*mean+vv) + vv; varY == 0 {
		return 0
	}
	q := n.partRule(capLeft, mean, vv, floorE, h, 0, false, true, tab)
	small := min(p.alive, p.dead)
	skip := floorSkip
	if tab {
		skip = 2 * tabFloorSkip
	}
	if p.alive <= p.dead {
		return 2*math.Abs(q.alive-p.alive) + (8*0x1p-52+5*skip)*small
	}
	return 2*math.Abs(q.dead-p.dead) + (8*0x1p-52+5*skip)*small
}

// fixedPieces integrates φ(u)·Φ̄(±g(u)), g(u) = (L·e^{σ u} + c)/sd, over
// the pieces between pts with the node's fixed Gauss–Legendre rule on each
// piece (the pieces are cut where the integrand turns, so each is smooth
// on its own scale; accuracyAt estimates the rule's error against the
// rule on the pieces halved, floorRuleError). With grad it also returns ∫ φ(u)·φ(g(u))·k(u)
// du for k = 1, e^{σ u} and g(u). Φ̄ is not evaluated where it is 1 to
// double precision (±g below −8.5: Φ̄(8.5) = 9.5e-18).
//
// A piece [a, b] adds at most its normal mass times the largest Φ̄(±g) on
// it (at an end: g increases with u), each bounded by Gordon's inequality
// (below); the pieces are summed from the largest such bound down, and a
// piece is left out when its bound times the pieces left is below
// floorSkip of the sum so far. Within a piece the nodes are taken from the
// smallest ±g up, and a node's Φ̄(±g) (an erfc) is not evaluated where
// Gordon's inequality Φ̄(x) < φ(x)/x for x > 0 (Gordon 1941, Ann. Math.
// Statist. 12:364–366) puts its term, with the terms so left out before
// it, below 1e-17 of the sum so far. The result therefore moves by less
// than floorSkip + 1e-17 of itself (sums are of positive terms, so the
// sum so far is below the result). With tab both shares are tabFloorSkip,
// and the result moves by less than 2·tabFloorSkip of itself.
//
// The nodes of a piece [mid − h, mid + h] come in pairs mid ± h·x_k, so
// e^{σ u} and φ(u) are products of a piece's factors (e^{σ·mid}, φ(mid),
// e^{∓mid·h·x_k}) and factors that depend on h alone (e^{±σ h x_k},
// e^{−h²x_k²/2}), computed once for the pieces of one length. Every
// exponential is fexp.Exp's, or fexp.Exps' (the same bits) by batches of
// a piece's factors, a length's and the nodes' φ(g) (within 2^-52
// relative, the bound the standard library documents for math.Exp): a
// node's e^{σ u} and φ(u), products
// of three factors, are within a few units of 2^-53 of their values, far
// inside floorRuleError's allowance for rounding (8·2^-52 of the side).
//
// With tab the rule is the tables' (tabGLNodes) instead of the node's.
func (n *node) fixedPieces(pts []float64, floorE, c, sd, sf float64, alive, grad, tab bool) [4]float64 {
	return n.fixedPiecesShared(pts, floorE, c, sd, sf, alive, grad, tab, nil)
}

// floorShare holds what fixedPieces computes from the pieces alone, for
// floor integrals of several arguments of one node on the same pieces by
// the same rule (accuracyAtZKnown's law and its moment rule's nodes):
// e^{σ·pts[i]} at the pieces' ends and e^{σ u}, φ(u) at each piece's
// nodes, each computed on first use by the same expressions as without it
// (so an evaluation on its own pieces is the same bits with it or
// without). It is used by one goroutine at a time.
type floorShare struct {
	np        int  // the pieces' points, buf[:np] (0: none, each evaluation cuts its own)
	tab       bool // the rule: the tables' (tabGLNodes) or the node's
	buf       [floorMaxPieces + 1]float64
	endDone   uint32 // bit i: ends[i] is computed
	pieceDone uint32 // bit i: eu[i], phiU[i] are computed
	ends      [floorMaxPieces + 1]float64
	eu, phiU  [floorMaxPieces][glNodes]float64
}

// shareFloor sets fs to the pieces part cuts for the floor integral of
// its arguments (capLeft, mean, vv, floorE, h; without extra) and to the
// rule tab (the evaluations by the other rule cut their own pieces),
// forgetting what fs held: no pieces where part does not integrate over
// pieces.
func (n *node) shareFloor(fs *floorShare, capLeft, mean, vv, floorE, h float64, tab bool) {
	sc, sa, sf := n.spread.Capacity, n.spread.Active, n.spread.Floor
	fs.np, fs.tab, fs.endDone, fs.pieceDone = 0, tab, 0, 0
	varY := sc*sc*capLeft*capLeft + sa*sa*(mean*mean+vv) + vv
	if sf == 0 || floorE == 0 || varY == 0 {
		return
	}
	// floorPieces makes at most floorMaxPieces pieces: buf holds them.
	if pts := floorPieces(fs.buf[:0], floorE, capLeft-mean-h, math.Sqrt(varY), sf); len(pts) <= len(fs.buf) {
		fs.np = len(pts)
	}
}

// fixedPiecesShared is fixedPieces, reading and keeping the factors that
// depend on pts alone in fs when it is not nil (pts must then be fs's).
func (n *node) fixedPiecesShared(pts []float64, floorE, c, sd, sf float64, alive, grad, tab bool, fs *floorShare) [4]float64 {
	var sum [4]float64
	sign := 1.0
	if !alive {
		sign = -1
	}
	np := len(pts) - 1
	// floorPieces makes at most floorMaxPieces pieces, halved twice as many.
	var boundArr [2 * floorMaxPieces]float64
	var orderArr [2 * floorMaxPieces]int
	bound, order := boundArr[:], orderArr[:]
	if np > len(bound) {
		bound, order = make([]float64, np), make([]int, np)
	}
	for i := range np {
		a, b := pts[i], pts[i+1]
		end := a
		if !alive {
			end = b
		}
		// The piece's normal mass is at most Φ̄(x), x = a for a >= 0 and
		// −b for b <= 0 (1 otherwise), and Φ̄(±g) at most Φ̄(y), y = ±g at
		// the end; Φ̄(x) <= min(1/2, φ(x)/x) for x > 0 (Gordon), so the
		// bound takes one exponential.
		x := max(a, -b)
		ie := i
		if !alive {
			ie = i + 1
		}
		var ex float64
		switch {
		case fs == nil:
			ex = fexp.Exp(sf * end)
		case fs.endDone&(1<<ie) != 0:
			ex = fs.ends[ie]
		default:
			ex = fexp.Exp(sf * end)
			fs.ends[ie], fs.endDone = ex, fs.endDone|1<<ie
		}
		y := sign * (floorE*ex + c) / sd
		q, e2 := 1.0, 0.0 // the bound is q·e^{−e2/2}
		if x > 0 {
			if x > 0.8 { // φ(x)/x < 1/2
				q, e2 = q/(math.Sqrt(2*math.Pi)*x), x*x
			} else {
				q *= 0.5
			}
		}
		if y > 0 {
			if y > 0.8 {
				q, e2 = q/(math.Sqrt(2*math.Pi)*y), e2+y*y
			} else {
				q *= 0.5
			}
		}
		if e2 > 0 {
			q *= fexp.Exp(-e2 / 2)
		}
		bound[i] = q
		order[i] = i
		for j := i; j > 0 && bound[order[j]] > bound[order[j-1]]; j-- {
			order[j], order[j-1] = order[j-1], order[j]
		}
	}
	// The rule's nodes: glNodes of them, or tabGLNodes with tab (a test
	// gives fewer, an even number, to check that floorRuleError sees a
	// coarse rule).
	glx, glw := n.glx, n.glw
	if tab {
		glx, glw = n.tgx, n.tgw
	}
	nn := len(glx)
	half := nn / 2
	// Factors that depend on a piece's half-length h alone, for up to
	// len(lens) lengths (floorPieces makes at most three: the pieces
	// either side of the turn and the turn's).
	type lenFactors struct {
		h     float64
		q, cc [glNodes]float64 // e^{σ h x_k}, e^{−h² x_k²/2}
	}
	var lens [4]lenFactors
	nl := 0
	factors := func(h float64) *lenFactors {
		for i := range nl {
			if lens[i].h == h {
				return &lens[i]
			}
		}
		f := &lens[nl%len(lens)]
		nl = min(nl+1, len(lens))
		f.h = h
		var ex [glNodes]float64 // e^{σ h x_k}, then e^{−h² x_k²/2}
		for k := range half {
			x := glx[k]
			ex[k], ex[half+k] = sf*h*x, -0.5*h*h*x*x
		}
		fexp.Exps(ex[:2*half])
		for k := range half {
			q, cc := ex[k], ex[half+k]
			f.q[k], f.q[nn-1-k] = q, 1/q
			f.cc[k], f.cc[nn-1-k] = cc, cc
		}
		return f
	}
	invSqrt2Pi := 1 / math.Sqrt(2*math.Pi)
	left := 0.0 // the bound on the terms left out so far
	// The shares of the sum so far below which pieces and nodes' terms
	// are left out: floorSkip and 1e-17, tabFloorSkip for both with the
	// tables' rule.
	skip, nodeSkip := floorSkip, 1e-17
	if tab {
		skip, nodeSkip = tabFloorSkip, tabFloorSkip
	}
	for r, i := range order[:np] {
		if sum[0] > 0 && bound[i]*float64(np-r) < skip*sum[0] {
			break
		}
		a, b := pts[i], pts[i+1]
		h, mid := (b-a)/2, (a+b)/2
		var eu, phiU [glNodes]float64
		if fs != nil && fs.pieceDone&(1<<i) != 0 {
			eu = fs.eu[i]
			phiU = fs.phiU[i]
		} else {
			f := factors(h)
			// e^{σ·mid}, e^{−mid²/2} and e^{−mid·h·x_k}, in one batch.
			var ex [2 + glNodes/2]float64
			ex[0], ex[1] = sf*mid, -0.5*mid*mid
			for k := range half {
				ex[2+k] = -mid * h * glx[k]
			}
			fexp.Exps(ex[:2+half])
			em, pm := ex[0], ex[1]*invSqrt2Pi
			for k := range half {
				d := ex[2+k]
				kk := nn - 1 - k
				eu[k], eu[kk] = em*f.q[k], em*f.q[kk]
				phiU[k], phiU[kk] = pm*f.cc[k]*d, pm*f.cc[k]/d
			}
			if fs != nil {
				fs.eu[i] = eu
				fs.phiU[i] = phiU
				fs.pieceDone |= 1 << i
			}
		}
		// g and φ(u)·φ(g) at every node first, free of the branches
		// below (so that the nodes' exponentials overlap), then the terms.
		// gauss[k] is φ(u)·φ(g), where |g| < 40 (0 where it underflows),
		// where a term below reads it (0 elsewhere).
		var gs, gauss [glNodes]float64
		var need [glNodes]bool
		for k := range nn {
			g := (floorE*eu[k] + c) / sd
			gs[k] = g
			sg, ag := sign*g, math.Abs(g)
			need[k] = ag < 40 && (grad || sg > 5 || (sg >= -8.5 && ag >= mills.SmallX))
			if need[k] {
				gauss[k] = -0.5 * g * g
			}
		}
		fexp.Exps(gauss[:nn])
		for k := range nn {
			if need[k] {
				gauss[k] = phiU[k] * gauss[k] * invSqrt2Pi
			} else {
				gauss[k] = 0
			}
		}
		var part [4]float64
		for q := range nn {
			k := q // from the smallest ±g up: g increases with u
			if !alive {
				k = nn - 1 - q
			}
			g, gk := gs[k], gauss[k]
			w := glw[k]
			sg := sign * g
			wp := w * phiU[k]
			ag := math.Abs(g)
			switch {
			case sg < -8.5:
				part[0] += wp
			case sg >= mills.SmallX && gk > 0 && left+h*w*gk/sg <= nodeSkip*(sum[0]+h*part[0]):
				// Left out: the term is below w·φ(u)·φ(g)/g (Gordon).
				// Only from SmallX up, where φ(g) is computed with or
				// without grad: the sum (the probabilities) is then the
				// same bits either way, so that an evaluation with the
				// gradient serves one without (settingTables).
				left += h * w * gk / sg
			case gk > 0 && ag >= mills.SmallX:
				// φ(u)·Φ̄(|g|) = φ(u)·φ(g)·R(|g|), Mills' ratio R, from
				// the density already at hand: no erfc.
				if sg > 0 {
					part[0] += w * gk * mills.Ratio(ag)
				} else {
					part[0] += wp - w*gk*mills.Ratio(ag)
				}
			default:
				part[0] += wp * normSurv(sg)
			}
			if grad && gk > 0 {
				pp := w * gk
				part[1] += pp
				part[2] += pp * eu[k]
				part[3] += pp * g
			}
		}
		for j := range sum {
			sum[j] += h * part[j]
		}
	}
	return sum
}

// normSurv is the standard normal survival Φ̄(z), accurate in the upper
// tail: mills.Upper (φ·Mills' ratio for 0.66 <= |z| < 9, erfc(z/√2)/2
// elsewhere; within 8e-15 relative, erfc's own error beyond).
func normSurv(z float64) float64 { return mills.Upper(z) }

// normPDF is the standard normal density, e^{−z²/2}/√(2π) with fexp.Exp
// (within 2^-52 relative of the exponential of the rounded −z²/2).
func normPDF(z float64) float64 { return fexp.Exp(-0.5*z*z) / math.Sqrt(2*math.Pi) }
