package energy

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/dist"
)

// Caps and defaults of a DeviceModel.
const (
	// MaxEventKinds caps the event kinds (EventCost entries) of one
	// DeviceModel: a Tally keeps one count per kind in a fixed array.
	MaxEventKinds = 128
	// MaxReadings is the number of readings a Tally keeps: the newest
	// ones (older readings are dropped; see Tally).
	MaxReadings = 4
	// MaxPosteriorNodes caps DeviceOptions.Nodes.
	MaxPosteriorNodes = 1 << 16
	// MaxEventCount caps Event.Count.
	MaxEventCount = 1 << 40
	// DefaultPosteriorNodes is the number of posterior nodes when
	// DeviceOptions.Nodes is 0.
	DefaultPosteriorNodes = 256
	// MaxLateness is how far (s) an event may lie before the newest one
	// already in a Tally and still be counted (at the newest time): one
	// hour, for records that arrive out of order through several gateways.
	// An event earlier than that is an error.
	MaxLateness = Hour
)

// EventCost is one kind of event a back-end counts for a device (an uplink
// at one radio setting, a downlink in one window, a join, a report's own
// sensing work), and the energy one such event costs the node.
type EventCost struct {
	Name string // free text, used in messages
	// Energy is the law of one event's energy (J) at the node's rail above
	// the floor power it would draw anyway (the floor is charged for all
	// time separately). It may be negative for a correction (a downlink
	// that shortens a receive window). Its mean and variance must be
	// finite; only they are used.
	Energy dist.Law
}

// DeviceOptions tune a DeviceModel; the zero value gives the defaults.
type DeviceOptions struct {
	// Nodes is the number of posterior nodes (points in the space of the
	// per-node factors), 0 for DefaultPosteriorNodes, at most
	// MaxPosteriorNodes; it must be even (two interleaved halves give the
	// stated error).
	Nodes int
	// Memory is the time constant (s) of the exponentially weighted
	// recent activity from which a device's future energy rate is taken;
	// 0 means 30 days.
	Memory float64
	// PriorTime is the weight (s) of the planned energy rate against the
	// device's own: the future active power is
	//	(E_recent + P_plan·PriorTime) / (T_recent + PriorTime)
	// with P_plan the NodeSpec's settings' mean active power. 0 means one
	// day.
	PriorTime float64
	// ReadingLoad is the current (A) the cell delivers while the device
	// measures its voltage, >= 0 (0: at rest).
	ReadingLoad float64
}

// DeviceModel learns one device's remaining life from what a network
// back-end sees of it: counts of events whose energies are known laws
// (EventCost), the time since its cell was installed, and optional voltage
// readings. It is built from the NodeSpec of the device's group (cell,
// supply path, thermal response, voltage curve, per-node spreads, calendar
// life; the first setting's cycle gives the floor power and, with
// NodeSpec.Voltage, the usable fraction) in one Environment.
//
// # Model
//
// The node has a capacity factor c ~ N(1, σc), an active factor a ~
// N(1, σa) and a floor factor f = exp(σf·Z) (NodeSpec.Spread, the same
// tier as NewNodeLifetime's). At τ seconds after installation its depth
// of discharge (fraction of the rated energy N·b drawn) is
//
//	d(τ) = (a·A(τ) + f·Φ(τ) + P_q·τ)/(c·N·b) + s_store + s·D(τ)
//
// with A the active energy of the events counted so far (at the cell,
// through the supply's scale), Φ the floor energy of the median board
// (the floor power times its thermal factor, month by month), P_q the
// supply's quiescent power and D the self-discharge; the node is flat
// once d reaches its usable fraction (NodeLifetime's end of life). From
// the newest event on, A grows at the device's recent active power.
//
// # Posterior
//
// The prior of (c, a, f) is represented by a fixed low-discrepancy point
// set (the Kronecker sequence of Roberts 2018 with the plastic-number
// generalisation, through the normal quantile), the same for every
// device. A device's posterior re-weights these nodes by the likelihood of
// its readings and of being alive at its newest event. Where readings
// leave few nodes with weight (the knee of the voltage curve) or none of
// the nodes comes near explaining them, a ridge stage places the same
// number of points on the thin shell of factors that the readings pin
// (remain_ridge.go: two scores from the prior's points, the third solved
// from a voltage drawn from the readings' profile); where that too leaves
// few effective, importance stages move a larger point set (stageFactor =
// 4 times the nodes) onto a heavier-tailed proposal fitted to the
// posterior (see DeviceModel.Posterior). Laws of the
// posterior are mixtures over the nodes; their error is estimated from the
// disagreement of the two interleaved halves of the point set (each itself
// a Kronecker sequence) and reported (dist.Estimated). Readings that pull
// the posterior far from the prior leave few nodes with weight: the
// effective number of nodes (DevicePosterior.EffectiveNodes) and the
// stated error say so.
//
// A DeviceModel is an immutable value, safe for concurrent use. It keeps
// the readings' likelihood tables for all its devices (one per pulse drop,
// bin and noise, at most MaxCachedLattice points in all), filled as
// devices need them: a cache that never changes an answer (each value is
// a pure function of its key).
type DeviceModel struct{ d *deviceData }

type deviceData struct {
	n        *node
	s        nodeSetting // the first setting
	costs    []eventCostData
	nodes    int
	memory   float64
	prior    float64 // PriorTime (s)
	planP    float64 // W active power at the cell, planned
	planV    float64 // J²/s variance rate, planned
	load     float64
	curve    *VoltageCurve
	temps    [12]float64  // °C in the i-th month after installation
	endDepth float64      // depth at which the node is flat
	c, a, f  []float64    // prior nodes
	z        [][3]float64 // their standard normal scores
	u        [][3]float64 // the same points in the unit cube
	tz       [][3]float64 // the same points as Student-t scores (proposalNu)
	tlogq    []float64    // Σ log t density of each tz
	spread   NodeSpread
	// ridgeRef: the spreads at which the ridge stage picks the factor it
	// solves (remain_ridge.go): the model's own, but the group's planned
	// ones in EstimateSpread's models (the same factor at every candidate).
	ridgeRef NodeSpread
	voltage  float64 // V nominal cell voltage
	// tables: the reading tables (remain_table.go), filled on use and
	// shared with the models WithSpread derives; nil without a curve.
	tables *readingCache
	// cells: where the search for a depth's segment of the curve starts
	// (depthIndex; zero without a curve).
	cells [depthCells + 1]uint16
	// monthsUp: the node's monthly floor and self-discharge factors are
	// none negative, so its cumulative tables never decrease (life's
	// month search relies on it)
	monthsUp bool
	// ridgeT: for each point and coordinate with u < ridgeDefensive, the
	// ridge stage's Student-t quantile studentT4Quantile(u/ridgeDefensive)
	// (0 elsewhere), taken once for the model instead of once a device
	ridgeT [][3]float64
}

type eventCostData struct {
	name      string
	mean, vr  float64 // J, J² at the cell
	hasEnergy bool
}

// NewDeviceModel returns the model of a group's devices described by spec
// in env, counting the events of costs. Errors wrap ErrParam and name the
// parameter, its value and the rule.
func NewDeviceModel(spec NodeSpec, env Environment, costs []EventCost, opt DeviceOptions) (DeviceModel, error) {
	const fn = "NewDeviceModel"
	n, err := newNode(fn, spec, env)
	if err != nil {
		return DeviceModel{}, err
	}
	switch {
	case len(costs) == 0 || len(costs) > MaxEventKinds:
		return DeviceModel{}, paramErr(fn, "costs", len(costs), fmt.Sprintf("must hold 1 to MaxEventKinds = %d event kinds", MaxEventKinds))
	case opt.Nodes < 0 || opt.Nodes > MaxPosteriorNodes || opt.Nodes%2 != 0:
		return DeviceModel{}, paramErr(fn, "opt.Nodes", opt.Nodes, fmt.Sprintf("must be even and in [0, MaxPosteriorNodes = %d] (0 for %d)", MaxPosteriorNodes, DefaultPosteriorNodes))
	case !(opt.Memory >= 0) || math.IsInf(opt.Memory, 0):
		return DeviceModel{}, paramErr(fn, "opt.Memory", opt.Memory, "must be finite and >= 0 s (0 for 30 days)")
	case !(opt.PriorTime >= 0) || math.IsInf(opt.PriorTime, 0):
		return DeviceModel{}, paramErr(fn, "opt.PriorTime", opt.PriorTime, "must be finite and >= 0 s (0 for one day)")
	case !(opt.ReadingLoad >= 0 && opt.ReadingLoad <= voltageMaxCurrent):
		return DeviceModel{}, paramErr(fn, "opt.ReadingLoad", opt.ReadingLoad, "must be in [0, 10] A")
	}
	d := &deviceData{n: n, s: n.settings[0], nodes: opt.Nodes, memory: opt.Memory, prior: opt.PriorTime, load: opt.ReadingLoad}
	d.monthsUp = true
	for i := range 12 {
		if !(n.months.floorRate[i] >= 0 && n.months.sdFactor[i] >= 0) {
			d.monthsUp = false
		}
	}
	if d.nodes == 0 {
		d.nodes = DefaultPosteriorNodes
	}
	if d.memory == 0 {
		d.memory = 30 * Day
	}
	if d.prior == 0 {
		d.prior = Day
	}
	for _, st := range n.settings {
		d.planP += st.w * st.rate * st.mu
		d.planV += st.w * st.rate * st.k2
	}
	for i, c := range costs {
		if c.Energy == nil {
			return DeviceModel{}, paramErr(fn, fmt.Sprintf("costs[%d].Energy", i), nil, "must be a law")
		}
		m, v := c.Energy.Mean(), c.Energy.Variance()
		if !finite(m) || !finite(v) || v < 0 || math.Abs(m) > MaxBatteryEnergy {
			return DeviceModel{}, paramErr(fn, fmt.Sprintf("costs[%d] %q", i, c.Name), fmt.Sprintf("mean %g J, variance %g J²", m, v), "must have a finite mean (|mean| <= MaxBatteryEnergy) and a finite variance")
		}
		sc := d.s.scale
		d.costs = append(d.costs, eventCostData{name: c.Name, mean: sc * m, vr: sc * sc * v, hasEnergy: true})
	}
	d.voltage = spec.Battery.spec.NominalVoltage
	d.endDepth = d.s.usable / spec.Battery.NominalEnergy()
	if spec.Voltage != nil {
		v := *spec.Voltage
		d.curve = &v
		d.tables = &readingCache{}
		d.cells = depthIndex(v.DepthOfDischarge)
	}
	ref := 20.0
	if spec.Voltage != nil {
		ref = spec.Voltage.ReferenceTemperature
	}
	for i := range 12 {
		d.temps[i] = ref
	}
	if th := spec.Thermal; th != nil {
		sh, err := shiftedClimate(fn, th, env)
		if err != nil {
			return DeviceModel{}, err
		}
		for i := range 12 {
			d.temps[i] = sh.Month((spec.StartMonth + i) % 12)
		}
	}
	d.spread = spec.Spread
	d.ridgeRef = spec.Spread
	d.z = kroneckerScores(d.nodes)
	d.u, _ = kroneckerMapped(d.nodes, func(u float64) float64 { return u }, nil)
	d.ridgeT = make([][3]float64, d.nodes)
	for k, u := range d.u {
		for i, ui := range u {
			if ui < ridgeDefensive {
				d.ridgeT[k][i] = studentT4Quantile(ui / ridgeDefensive)
			}
		}
	}
	d.tz, d.tlogq = kroneckerTScores(min(stageFactor*d.nodes, MaxPosteriorNodes))
	d.c, d.a, d.f = make([]float64, d.nodes), make([]float64, d.nodes), make([]float64, d.nodes)
	for k, z := range d.z {
		d.c[k], d.a[k], d.f[k] = d.factors(z)
	}
	return DeviceModel{d: d}, nil
}

// plastic3 is the real root of x⁴ = x + 1, the generator of the
// three-dimensional Kronecker sequence of Roberts (2018, "The unreasonable
// effectiveness of quasirandom sequences").
const plastic3 = 1.2207440846057594

// kroneckerScores returns m points u_k = frac(1/2 + k·(g⁻¹, g⁻², g⁻³))
// of the three-dimensional Kronecker sequence, mapped through the standard
// normal quantile.
func kroneckerScores(m int) [][3]float64 {
	std := dist.MustNormal(0, 1)
	out, _ := kroneckerMapped(m, std.Quantile, nil)
	return out
}

// stageFactor is how many times more nodes the importance stages use
// than the prior's point set: a proposal fitted to a posterior that the
// prior's nodes barely reach needs more points to resolve its tails.
const stageFactor = 4

// proposalNu is the degrees of freedom of the importance stages'
// proposal: a product of Student-t laws, heavier-tailed than the
// posterior so that a proposal fitted to few weighted nodes still reaches
// the posterior's tails.
const proposalNu = 4

// kroneckerTScores returns the points of kroneckerScores mapped through
// the Student-t quantile (proposalNu degrees of freedom) instead of the
// normal one, and the log of their product density.
func kroneckerTScores(m int) ([][3]float64, []float64) {
	st := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: proposalNu}
	return kroneckerMapped(m, st.Quantile, st.LogProb)
}

// kroneckerMapped returns the m Kronecker points mapped coordinate-wise
// by quantile, and, with logProb, the sum of logProb over each point's
// coordinates.
func kroneckerMapped(m int, quantile, logProb func(float64) float64) ([][3]float64, []float64) {
	out := make([][3]float64, m)
	var lq []float64
	if logProb != nil {
		lq = make([]float64, m)
	}
	al := [3]float64{1 / plastic3, 1 / (plastic3 * plastic3), 1 / (plastic3 * plastic3 * plastic3)}
	for k := range m {
		for j := range 3 {
			u := 0.5 + float64(k)*al[j]
			u -= math.Floor(u)
			out[k][j] = quantile(u)
			if lq != nil {
				lq[k] += logProb(out[k][j])
			}
		}
	}
	return out, lq
}

// factors returns the per-node factors (c, a, f) at the standard normal
// scores z: c = 1 + σc·z₀, a = 1 + σa·z₁, f = exp(σf·z₂).
func (d *deviceData) factors(z [3]float64) (c, a, f float64) {
	c, a = d.linearFactors(z)
	return c, a, d.floorFactor(z[2])
}

// linearFactors returns factors' capacity and active factors.
func (d *deviceData) linearFactors(z [3]float64) (c, a float64) {
	sp := d.spread
	return 1 + sp.Capacity*z[0], 1 + sp.Active*z[1]
}

// floorFactor returns factors' floor factor from the floor's score z2.
func (d *deviceData) floorFactor(z2 float64) float64 {
	return math.Exp(d.spread.Floor * z2)
}

// WithSpread returns the model with the per-node spreads sp instead of
// its NodeSpec's (the same cell, costs and point set: a Tally of one is a
// Tally of the other), for example a group's spreads learned by
// EstimateSpread. Errors wrap ErrParam.
func (m DeviceModel) WithSpread(sp NodeSpread) (DeviceModel, error) {
	const fn = "DeviceModel.WithSpread"
	if m.d == nil {
		return DeviceModel{}, paramErr(fn, "model", "zero DeviceModel", "must be built by NewDeviceModel")
	}
	if err := sp.check(fn, "sp."); err != nil {
		return DeviceModel{}, err
	}
	d := *m.d
	d.spread, d.ridgeRef = sp, sp
	d.c, d.a, d.f = make([]float64, d.nodes), make([]float64, d.nodes), make([]float64, d.nodes)
	for k, z := range d.z {
		d.c[k], d.a[k], d.f[k] = d.factors(z)
	}
	return DeviceModel{d: &d}, nil
}

// Spread returns the model's per-node spreads.
func (m DeviceModel) Spread() NodeSpread {
	if m.d == nil {
		return NodeSpread{}
	}
	return m.d.spread
}

// Costs returns the names of the model's event kinds, in the order of the
// costs given to NewDeviceModel (an Event's Kind indexes it).
func (m DeviceModel) Costs() []string {
	if m.d == nil {
		return nil
	}
	out := make([]string, len(m.d.costs))
	for i, c := range m.d.costs {
		out[i] = c.name
	}
	return out
}

// CostMean returns the mean energy (J, at the cell) of one event of kind k,
// NaN for a kind out of range.
func (m DeviceModel) CostMean(k int) float64 {
	if m.d == nil || k < 0 || k >= len(m.d.costs) {
		return math.NaN()
	}
	return m.d.costs[k].mean
}

// EndDepth returns the depth of discharge (fraction of the rated energy)
// at which the model's node is flat: the usable fraction times the
// year's mean derating.
func (m DeviceModel) EndDepth() float64 {
	if m.d == nil {
		return math.NaN()
	}
	return m.d.endDepth
}

// floorE returns the floor energy (J) of the median board over [0, τ].
func (d *deviceData) floorE(tau float64) float64 {
	return d.s.floorP * d.n.cum(&d.n.months.floorCum, &d.n.months.floorRate, tau)
}

// selfD returns the fraction of the rated energy lost to self-discharge
// by τ, storage included.
func (d *deviceData) selfD(tau float64) float64 {
	return d.n.storage + d.n.sdRate*d.n.cum(&d.n.months.sdCum, &d.n.months.sdFactor, tau)
}

// temp returns the month's temperature (°C) at τ after installation.
func (d *deviceData) temp(tau float64) float64 {
	r := math.Mod(tau, Year)
	i := int(r / Month)
	if i > 11 {
		i = 11
	}
	if i < 0 {
		i = 0
	}
	return d.temps[i]
}

// life solves for node k the time τ* (s after installation, > τ0) at which
// its depth reaches the end depth, the active energy growing from A0 at τ0
// at the rate r (W at the cell): the root of
//
//	K − H(τ) = 0,  K = c·(b·U − N·s_store) − a·(A0 − r·τ0),
//	H(τ) = c·N·s·D(τ) + (a·r + P_q)·τ + f·Φ(τ),
//
// H increasing and piecewise linear month by month, with H(y·Year + x) =
// y·H(Year) + H(x). It returns τ* and H's slope there (W); +Inf when
// nothing drains the cell.
func (d *deviceData) life(c, a, f, a0, r, tau0 float64) (tau, slope float64) {
	n := d.n
	nom := n.nominal
	k := c*(n.batch*d.s.usable-nom*n.storage) - a*(a0-r*tau0)
	cs := c * nom * n.sdRate
	lin := a*r + n.quiescent
	fp := f * d.s.floorP
	hy := cs*n.months.sdCum[12] + lin*Year + fp*n.months.floorCum[12]
	if !(hy > 0) {
		return math.Inf(1), 0
	}
	if k <= 0 {
		return 0, hy / Year
	}
	y := math.Floor(k / hy)
	rem := k - y*hy
	i, prev := d.month(rem, hy, cs, lin, fp)
	sl := cs*n.months.sdFactor[i] + lin + fp*n.months.floorRate[i]
	x := 0.0
	if sl > 0 {
		x = min(Month, (rem-prev)/sl)
	}
	return y*Year + float64(i)*Month + x, sl
}

// month returns the month of the year (from 0) in which life's remainder
// rem falls, given H over the year hy and H's parts (self-discharge
// cs, the linear lin and the floor fp): the first i with rem < H(end of
// month i), the last at most, and H at the month's start (0 for the
// first). Where H cannot decrease (its factors and the node's monthly
// factors not negative), a guess from rem's share of the year, moved down
// while the month before qualifies too and up while this one does not,
// finds the same month as a scan from the first, with two or three values
// of H instead of up to twelve.
func (d *deviceData) month(rem, hy, cs, lin, fp float64) (i int, prev float64) {
	n := d.n
	next := func(i int) float64 {
		return cs*n.months.sdCum[i+1] + lin*Month*float64(i+1) + fp*n.months.floorCum[i+1]
	}
	if d.monthsUp && cs >= 0 && lin >= 0 && fp >= 0 {
		if g := rem / hy * 12; g > 0 {
			i = min(int(g), 11)
		}
		for i > 0 && rem < next(i-1) {
			i--
		}
	}
	for i < 11 && !(rem < next(i)) {
		i++
	}
	if i > 0 {
		prev = next(i - 1)
	}
	return i, prev
}
