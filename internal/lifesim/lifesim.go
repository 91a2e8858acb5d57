package lifesim

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/energy"
)

// ErrParam is wrapped by errors about bad arguments to this package.
var ErrParam = errors.New("lifesim: invalid parameter")

// Caps.
const (
	// MaxNodes caps the nodes of one fleet (the sum of the groups' Count).
	MaxNodes = 100000
	// MaxCycles caps the cycles of one node's life: a node still alive
	// after MaxCycles cycles is an error (give a calendar limit, a smaller
	// cell or a shorter life).
	MaxCycles = 10000000
	// maxGroups caps the groups of one fleet.
	maxGroups = 256
)

// Node is one played node.
type Node struct {
	Group   int // index into the SiteSpec's groups
	Setting int // index into its NodeSpec.Settings, drawn by weight

	// The node's factors, drawn once for its life (dimensionless).
	Capacity float64 // c: on the usable energy and the self-discharge
	Active   float64 // a: on the active energy above the floor
	Floor    float64 // f: on the floor power

	// Lifetime is the time (s from deployment) its life ended: when its
	// cell could not pay for the rest of a cycle (interpolated within
	// that cycle), or at the calendar limit.
	Lifetime float64
	// Calendar reports that the calendar limit ended its life with energy
	// left: Lifetime is then exactly CalendarLife − StorageTime.
	Calendar bool
	// Cycles is the number of cycles begun (the last one included).
	Cycles int
}

// Fleet is one played fleet: its shared draw and its nodes, group after
// group in the order of the SiteSpec.
type Fleet struct {
	// BatchFactor and TemperatureOffset are the fleet's shared draw: the
	// cell batch's capacity factor (dimensionless) and the offset (°C)
	// added to every month of the climate.
	BatchFactor, TemperatureOffset float64
	Nodes                          []Node
}

// FirstFailure returns the earliest Lifetime (s) among the fleet's nodes:
// the first end of a life, the calendar limit included (a replacement is
// due then too), as the fleet laws count it; +Inf for an empty fleet.
func (f Fleet) FirstFailure() float64 {
	first := math.Inf(1)
	for _, n := range f.Nodes {
		first = min(first, n.Lifetime)
	}
	return first
}

// FailedBy returns the number of nodes whose life had ended by t (s from
// deployment): Lifetime <= t, the calendar limit included.
func (f Fleet) FailedBy(t float64) int {
	k := 0
	for _, n := range f.Nodes {
		if n.Lifetime <= t {
			k++
		}
	}
	return k
}

// Player plays fleets of one energy.SiteSpec. It is an immutable value,
// safe for concurrent use (each goroutine with its own *rand.Rand).
type Player struct {
	maxCycles int // MaxCycles; lowered by this package's tests only
	climate   *energy.Climate
	shared    energy.SharedSpread
	groups    []group
}

// group is what a group's nodes share, precomputed.
type group struct {
	count     int
	node      energy.NodeSpec
	cum       []float64 // cumulative setting weights
	cycles    []energy.Cycle
	period    []float64 // s
	floorP    []float64 // W at the rail
	scale     float64   // cell J per rail J
	quiescent float64   // W at the cell
	nominal   float64   // J
	sdRate    float64   // fraction of the nominal energy per s at the reference temperature
	usableF   float64   // usable fraction (× TemperatureDerating without Thermal)
	calendar  float64   // s from deployment; +Inf for none
}

// env is one group's calendar in one shared draw.
type env struct {
	batch     float64
	floorRate [12]float64 // factor on the floor power, month i after deployment
	sdFactor  [12]float64 // factor on the self-discharge rate, same months
	usable    float64     // J at c = b = 1, before self-discharge
}

func paramErr(field string, value any, rule string) error {
	return fmt.Errorf("%w: %s = %v: %s", ErrParam, field, value, rule)
}

// NewPlayer validates spec and returns its player. Rules: 1 to 256 groups,
// each Count >= 1, at most MaxNodes nodes in all; spreads within
// energy.MaxRelativeSpread, energy.MaxLogSpread and energy.MaxTemperatureSD;
// each NodeSpec with 1 to energy.MaxNodeSettings settings of weight in
// (0, 1] summing to 1 (within 1e-9), each cycle built by energy.NewCycle
// with a fixed period (a point mass > 0); a battery built by
// energy.NewBattery; a supply that runs from the cell's nominal voltage;
// CalendarLife and StorageTime finite and >= 0 with StorageTime below a
// non-zero CalendarLife; StartMonth in 0..11; no Voltage (not played).
// Errors wrap ErrParam and name the field, its value and the rule.
func NewPlayer(spec energy.SiteSpec) (Player, error) {
	if len(spec.Groups) == 0 || len(spec.Groups) > maxGroups {
		return Player{}, paramErr("spec.Groups", len(spec.Groups), fmt.Sprintf("must hold 1 to %d groups", maxGroups))
	}
	sh := spec.Shared
	if !(sh.Batch >= 0 && sh.Batch <= energy.MaxRelativeSpread) {
		return Player{}, paramErr("spec.Shared.Batch", sh.Batch, fmt.Sprintf("must be in [0, %g]", energy.MaxRelativeSpread))
	}
	if !(sh.Temperature >= 0 && sh.Temperature <= energy.MaxTemperatureSD) {
		return Player{}, paramErr("spec.Shared.Temperature", sh.Temperature, fmt.Sprintf("must be in [0, %g] (°C)", energy.MaxTemperatureSD))
	}
	p := Player{maxCycles: MaxCycles, climate: spec.Climate, shared: sh}
	total := 0
	for i, g := range spec.Groups {
		pre := fmt.Sprintf("spec.Groups[%d].", i)
		if g.Count < 1 || g.Count > MaxNodes {
			return Player{}, paramErr(pre+"Count", g.Count, fmt.Sprintf("must be in [1, %d]", MaxNodes))
		}
		total += int(g.Count)
		if total > MaxNodes {
			return Player{}, paramErr("spec.Groups", total, fmt.Sprintf("the fleet must hold at most MaxNodes = %d nodes", MaxNodes))
		}
		gr, err := newGroup(pre+"Node.", g.Node)
		if err != nil {
			return Player{}, err
		}
		gr.count = int(g.Count)
		p.groups = append(p.groups, gr)
	}
	return p, nil
}

func newGroup(pre string, s energy.NodeSpec) (group, error) {
	sp := s.Spread
	switch {
	case !(sp.Capacity >= 0 && sp.Capacity <= energy.MaxRelativeSpread):
		return group{}, paramErr(pre+"Spread.Capacity", sp.Capacity, fmt.Sprintf("must be in [0, %g]", energy.MaxRelativeSpread))
	case !(sp.Active >= 0 && sp.Active <= energy.MaxRelativeSpread):
		return group{}, paramErr(pre+"Spread.Active", sp.Active, fmt.Sprintf("must be in [0, %g]", energy.MaxRelativeSpread))
	case !(sp.Floor >= 0 && sp.Floor <= energy.MaxLogSpread):
		return group{}, paramErr(pre+"Spread.Floor", sp.Floor, fmt.Sprintf("must be in [0, %g] (log-sd)", energy.MaxLogSpread))
	case len(s.Settings) == 0 || len(s.Settings) > energy.MaxNodeSettings:
		return group{}, paramErr(pre+"Settings", len(s.Settings), fmt.Sprintf("must hold 1 to %d settings", energy.MaxNodeSettings))
	case s.Voltage != nil:
		return group{}, paramErr(pre+"Voltage", "non-nil", "end of life by voltage is not played: leave it nil")
	case !(s.CalendarLife >= 0) || math.IsInf(s.CalendarLife, 0):
		return group{}, paramErr(pre+"CalendarLife", s.CalendarLife, "must be finite and >= 0 (s; 0 for no limit)")
	case !(s.StorageTime >= 0) || math.IsInf(s.StorageTime, 0):
		return group{}, paramErr(pre+"StorageTime", s.StorageTime, "must be finite and >= 0 (s)")
	case s.CalendarLife > 0 && s.StorageTime >= s.CalendarLife:
		return group{}, paramErr(pre+"StorageTime", s.StorageTime, "must be below CalendarLife")
	case s.StartMonth < 0 || s.StartMonth > 11:
		return group{}, paramErr(pre+"StartMonth", s.StartMonth, "must be in 0..11 (January is 0)")
	}
	b := s.Battery.Spec()
	if b.NominalVoltage == 0 {
		return group{}, paramErr(pre+"Battery", "zero Battery", "must be built by energy.NewBattery")
	}
	v := b.NominalVoltage
	if err := s.Supply.Check(v); err != nil {
		return group{}, fmt.Errorf("%w: %sSupply: %v", ErrParam, pre, err)
	}
	g := group{node: s, scale: s.Supply.EnergyScale(v), quiescent: s.Supply.QuiescentPower(v),
		nominal: s.Battery.NominalEnergy(), sdRate: b.SelfDischargePerYear / energy.Year,
		usableF: b.UsableFraction, calendar: math.Inf(1)}
	if s.Thermal == nil {
		// Without a Thermal the cell's own fixed derating applies
		// (BatterySpec.TemperatureDerating, as Battery.UsableEnergy says).
		g.usableF *= b.TemperatureDerating
	}
	if s.CalendarLife > 0 {
		g.calendar = s.CalendarLife - s.StorageTime
	}
	w := 0.0
	for j, st := range s.Settings {
		f := fmt.Sprintf("%sSettings[%d]", pre, j)
		if !(st.Weight > 0 && st.Weight <= 1) {
			return group{}, paramErr(f+".Weight", st.Weight, "must be in (0, 1]")
		}
		per := st.Cycle.Period()
		if per == nil {
			return group{}, paramErr(f+".Cycle", "zero Cycle", "must be built by energy.NewCycle")
		}
		lo, hi := per.Support()
		if !(lo == hi && lo > 0) || math.IsInf(lo, 0) {
			return group{}, paramErr(f+".Cycle.Period", per, "must be a fixed period (a point mass > 0 s)")
		}
		w += st.Weight
		g.cum = append(g.cum, w)
		g.cycles = append(g.cycles, st.Cycle)
		g.period = append(g.period, lo)
		g.floorP = append(g.floorP, st.Cycle.FloorPower())
	}
	if math.Abs(w-1) > 1e-9 {
		return group{}, paramErr(pre+"Settings", w, "weights must sum to 1 (within 1e-9)")
	}
	return g, nil
}

// Groups returns the number of groups.
func (p Player) Groups() int { return len(p.groups) }

// Shared draws one realisation of the shared tier from r: the batch
// factor 1 + σb·Z1, then the temperature offset σT·Z2 (°C), Z1 and Z2 by
// r.NormFloat64 (drawn even when the spread is 0). A nil r gives NaN
// conditions, which Node refuses (it used to panic; issue 13).
func (p Player) Shared(r *rand.Rand) energy.Conditions {
	if r == nil {
		return energy.Conditions{BatchFactor: math.NaN(), TemperatureOffset: math.NaN()}
	}
	b := 1 + p.shared.Batch*r.NormFloat64()
	dt := p.shared.Temperature * r.NormFloat64()
	return energy.Conditions{BatchFactor: b, TemperatureOffset: dt}
}

// environment computes group g's months and usable energy given the shared
// draw.
func (p Player) environment(g *group, batch, dt float64) (env, error) {
	e := env{batch: batch}
	derate := 1.0
	for i := range 12 {
		e.floorRate[i], e.sdFactor[i] = 1, 1
	}
	if th := g.node.Thermal; th != nil {
		months, swing := [12]float64{}, 0.0
		for m := range months {
			months[m] = th.ReferenceTemperature
		}
		if p.climate != nil {
			copy(months[:], p.climate.Months())
			swing = p.climate.DailySwing()
		}
		sum := 0.0
		for i := range 12 {
			t := months[(g.node.StartMonth+i)%12] + dt
			e.floorRate[i] = th.FloorFactor(t, swing)
			e.sdFactor[i] = th.SelfDischargeFactor(t, swing)
			d, err := th.CapacityFactor(t)
			if err != nil {
				return env{}, fmt.Errorf("%w: capacity derating at %g °C: %v", ErrParam, t, err)
			}
			if math.IsNaN(e.floorRate[i]) || math.IsNaN(e.sdFactor[i]) {
				return env{}, paramErr("temperature", t, "the thermal factors are not defined there")
			}
			sum += d
		}
		derate = sum / 12
	}
	e.usable = g.nominal * g.usableF * derate
	return e, nil
}

// monthly returns ∫ rate over [t0, t1] (s from deployment), rate[i] being
// the factor of the i-th month after deployment (months of energy.Month
// seconds, repeating every year).
func monthly(rate *[12]float64, t0, t1 float64) float64 {
	s := 0.0
	m := int(t0 / energy.Month)
	for t0 < t1 {
		end := min(t1, float64(m+1)*energy.Month)
		if end > t0 {
			s += (end - t0) * rate[m%12]
			t0 = end
		}
		m++
	}
	return s
}

// Node plays one node of group g under the shared draw cond (a
// BatchFactor of 0 means 1). From r, in order: the setting (one
// r.Float64 against the cumulative weights), then c, a and the floor
// factor's normal (three r.NormFloat64), then each cycle's Cycle.Rand.
// Errors wrap ErrParam: a nil r, g out of range, cond not finite
// (BatchFactor >= 0, |TemperatureOffset| <= 60 °C), a month outside the
// derating table, or more than MaxCycles cycles.
func (p Player) Node(g int, cond energy.Conditions, r *rand.Rand) (Node, error) {
	if r == nil {
		return Node{}, paramErr("r", "nil", "a random source is required")
	}
	if g < 0 || g >= len(p.groups) {
		return Node{}, paramErr("g", g, fmt.Sprintf("must be in [0, %d)", len(p.groups)))
	}
	b := cond.BatchFactor
	switch {
	case !(b >= 0) || math.IsInf(b, 0):
		return Node{}, paramErr("cond.BatchFactor", b, "must be finite and >= 0 (0 means 1)")
	case !(math.Abs(cond.TemperatureOffset) <= 60):
		return Node{}, paramErr("cond.TemperatureOffset", cond.TemperatureOffset, "must be in [-60, 60] (°C)")
	}
	if b == 0 {
		b = 1
	}
	gr := &p.groups[g]
	e, err := p.environment(gr, b, cond.TemperatureOffset)
	if err != nil {
		return Node{}, err
	}
	return p.play(g, gr, &e, r)
}

// Fleet plays one fleet: the shared draw (as Shared), then every node of
// every group in order (as Node). A nil r is an error wrapping ErrParam.
func (p Player) Fleet(r *rand.Rand) (Fleet, error) {
	if len(p.groups) == 0 {
		return Fleet{}, paramErr("p", "zero Player", "must be built by NewPlayer")
	}
	if r == nil {
		return Fleet{}, paramErr("r", "nil", "a random source is required")
	}
	c := p.Shared(r)
	f := Fleet{BatchFactor: c.BatchFactor, TemperatureOffset: c.TemperatureOffset}
	for g := range p.groups {
		gr := &p.groups[g]
		// A batch factor at or below 0 (probability below 1e-11 within
		// the spread caps) leaves every cell empty: nodes die at once.
		e, err := p.environment(gr, c.BatchFactor, c.TemperatureOffset)
		if err != nil {
			return Fleet{}, err
		}
		for range gr.count {
			n, err := p.play(g, gr, &e, r)
			if err != nil {
				return Fleet{}, err
			}
			f.Nodes = append(f.Nodes, n)
		}
	}
	return f, nil
}

// play draws a node's setting and factors and spends its cell cycle by
// cycle.
func (p Player) play(g int, gr *group, e *env, r *rand.Rand) (Node, error) {
	sp := gr.node.Spread
	u := r.Float64()
	j := 0
	for j < len(gr.cum)-1 && u >= gr.cum[j] {
		j++
	}
	n := Node{Group: g, Setting: j}
	n.Capacity = 1 + sp.Capacity*r.NormFloat64()
	n.Active = 1 + sp.Active*r.NormFloat64()
	n.Floor = math.Exp(sp.Floor * r.NormFloat64())

	cb := n.Capacity * e.batch
	cell := cb * (e.usable - gr.nominal*gr.sdRate*gr.node.StorageTime) // J at deployment
	if !(cell > 0) {
		n.Lifetime = 0
		return n, nil
	}
	cyc := gr.cycles[j]
	period, floorP := gr.period[j], gr.floorP[j]
	floorE := floorP * period
	leak := cb * gr.nominal * gr.sdRate // J per s of self-discharge at factor 1
	used := 0.0
	for k := 0; ; k++ {
		if k == p.maxCycles {
			return Node{}, paramErr("cycles of one life", k, fmt.Sprintf("exceed MaxCycles = %d: give a calendar limit or a shorter life", p.maxCycles))
		}
		t0 := float64(k) * period
		if t0 >= gr.calendar {
			n.Lifetime, n.Calendar, n.Cycles = gr.calendar, true, k
			return n, nil
		}
		t1 := float64(k+1) * period
		spent := gr.scale*n.Active*(cyc.Rand(r)-floorE) +
			gr.scale*n.Floor*floorP*monthly(&e.floorRate, t0, t1) +
			gr.quiescent*period +
			leak*monthly(&e.sdFactor, t0, t1)
		if used+spent >= cell && spent > 0 {
			// The cell runs out inside this cycle, its energy taken as
			// spent evenly over the period.
			td := t0 + period*(cell-used)/spent
			if td >= gr.calendar {
				n.Lifetime, n.Calendar = gr.calendar, true
			} else {
				n.Lifetime = td
			}
			n.Cycles = k + 1
			return n, nil
		}
		used += spent
		if t1 >= gr.calendar {
			n.Lifetime, n.Calendar, n.Cycles = gr.calendar, true, k+1
			return n, nil
		}
	}
}

// Group returns the fleet's nodes of group g (a new Fleet sharing the
// draw).
func (f Fleet) Group(g int) Fleet {
	out := Fleet{BatchFactor: f.BatchFactor, TemperatureOffset: f.TemperatureOffset}
	for _, n := range f.Nodes {
		if n.Group == g {
			out.Nodes = append(out.Nodes, n)
		}
	}
	return out
}
