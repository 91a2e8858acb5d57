package energy

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"github.com/joulelaw/joulelaw/dist"
)

// Stage is a piece of a cycle: something the node does, whose energy and
// active time are random. The stages are
//
//   - a State (one operating mode, once);
//   - Nothing(), which takes no time and no energy;
//   - Sequence(stages...): the stages one after the other, independent; the
//     energies and active times add (a sum of laws);
//   - Choice(probs, stages): exactly one of the stages, stage i with
//     probability probs[i] (a mixture of laws);
//   - Repeat(count, stage): the stage a random number of times, each time
//     drawn afresh (a random sum of laws);
//   - Configured(config, build): a configuration value v drawn once from a
//     finite discrete law and the stage build(v), so that every part of
//     build(v) sees the same v (a mixture over the configuration).
//
// Stages nest freely. A Stage is immutable and safe for concurrent use; the
// only implementations are this package's. Its laws are computed when a
// Cycle is built from it (NewCycle), because the energy of each state is
// counted above the cycle's floor power.
type Stage interface {
	fmt.Stringer
	isStage()
	// sample draws the energy above the floor power floor (J) and the
	// active time (s) of one run, from the structure; rec, if not nil, is
	// told each state's energy above the floor.
	sample(r *rand.Rand, floor float64, rec recorder) (excess, active float64)
	// laws returns the laws of the energy above floor (J) and of the active
	// time (s) of one run.
	laws(floor float64) (excess, active dist.Law, err error)
	// moments returns the exact first and second moments and the per-state
	// parts.
	moments(floor float64) moments
	// visit calls f on every state the stage can run.
	visit(f func(State))
}

// recorder is told the energy above the floor (J) of each state run while
// sampling; tests use it to check the breakdown.
type recorder func(state string, excess float64)

// moments holds exact moments of a stage's energy above the floor X and
// active time T, and, per state name, the parts that make the breakdown.
type moments struct {
	meanX, varX float64 // J, J²
	meanT, varT float64 // s, s²
	parts       []part  // in order of first appearance
}

// part is one state's share of a stage: C is the state's energy above the
// floor summed over its runs in the stage, X the stage's total.
type part struct {
	name   string
	count  float64 // expected number of runs
	own    float64 // E[Σ P·t] (J)
	ownVar float64 // Var[P·t] of one run (J²), for the pulse and display
	excess float64 // E[C] (J)
	cov    float64 // Cov(C, X) (J²)
}

func (m moments) find(name string) int { return findPart(m.parts, name) }

// findPart returns the index of the part called name in ps, or -1.
func findPart(ps []part, name string) int {
	for i := range ps {
		if ps[i].name == name {
			return i
		}
	}
	return -1
}

// stageMoments returns s.moments(floor), but for a state its one part,
// and for a sequence of states its parts, in room (the caller's memory,
// used its first elements; inRoom) instead of in a list of their own:
// the moments of a sequence's or an alternative's stages are read once,
// their parts copied into the whole's (partsOf). A sequence of states
// with more parts than room holds, and any other stage, keeps its own
// list.
func stageMoments(s Stage, floor float64, room []part) (m moments, used int, inRoom bool) {
	switch st := s.(type) {
	case State:
		if len(room) > 0 {
			m, room[0] = st.momentsPart(floor)
			return m, 1, true
		}
	case sequence:
		if len(st.stages) <= len(room) && st.allStates() {
			m, used = st.statesMoments(floor, room)
			return m, used, true
		}
	}
	return s.moments(floor), 0, false
}

// allStates reports whether every stage of q is a state.
func (q sequence) allStates() bool {
	for _, s := range q.stages {
		if _, ok := s.(State); !ok {
			return false
		}
	}
	return true
}

// statesMoments is moments for a sequence of states (allStates), its
// parts combined in dst (room for every stage's) instead of in a list of
// their own: the same sums in the same order. It returns how many.
func (q sequence) statesMoments(floor float64, dst []part) (moments, int) {
	var out moments
	k := 0
	for _, s := range q.stages {
		m, p := s.(State).momentsPart(floor)
		out.meanX += m.meanX
		out.varX += m.varX
		out.meanT += m.meanT
		out.varT += m.varT
		if i := findPart(dst[:k], p.name); i >= 0 {
			o := &dst[i]
			o.ownVar = max(o.ownVar, p.ownVar)
			o.count += p.count
			o.own += p.own
			o.excess += p.excess
			o.cov += p.cov
		} else {
			dst[k] = p
			k++
		}
	}
	return out, k
}

// stageSet is where the parts of a sequence's or an alternative's stages
// are (stageMoments): stage i's in room[span[i][0]:span[i][1]] where
// inRoom[i], else in its moments' own list.
type stageSet struct {
	room   []part
	used   int
	span   [][2]int
	inRoom []bool
}

// add records stage i's moments (stageMoments) into ms[i].
func (ss *stageSet) add(ms []moments, i int, s Stage, floor float64) {
	m, used, in := stageMoments(s, floor, ss.room[ss.used:])
	ms[i], ss.inRoom[i] = m, in
	ss.span[i] = [2]int{ss.used, ss.used + used}
	ss.used += used
}

// partsOf returns the parts of stage i, whose moments are ms[i].
func (ss *stageSet) partsOf(ms []moments, i int) []part {
	if ss.inRoom[i] {
		return ss.room[ss.span[i][0]:ss.span[i][1]]
	}
	return ms[i].parts
}

// stageBuf is the number of stages, roomBuf of their parts held for them
// (stageSet), and mergeBuf of the parts combined, whose moments a
// sequence or an alternative combines in its own stack memory; the parts
// combined are then copied once into a list of their own (ownParts).
const stageBuf, roomBuf, mergeBuf = 8, 32, 32

// nothing is the empty stage.
type nothing struct{}

// Nothing returns the stage that takes no time and draws no energy above the
// floor: the "nothing happens" branch of a Choice.
func Nothing() Stage { return nothing{} }

func (nothing) isStage()                                            {}
func (nothing) String() string                                      { return "nothing" }
func (nothing) sample(*rand.Rand, float64, recorder) (e, t float64) { return 0, 0 }
func (nothing) laws(float64) (excess, active dist.Law, err error) {
	z := dist.MustPointMass(0)
	return z, z, nil
}
func (nothing) moments(float64) moments { return moments{} }
func (nothing) visit(func(State))       {}

// sequence runs its stages one after the other.
type sequence struct{ stages []Stage }

// Sequence returns the stage that runs stages one after the other,
// independently: energies and active times add. It needs at least one
// stage, none nil.
func Sequence(stages ...Stage) (Stage, error) {
	const fn = "Sequence"
	if len(stages) == 0 {
		return nil, paramErr(fn, "stages", "[]", "must not be empty")
	}
	for i, s := range stages {
		if s == nil {
			return nil, paramErr(fn, fmt.Sprintf("stages[%d]", i), nil, "must not be nil")
		}
	}
	if len(stages) == 1 {
		return stages[0], nil
	}
	return sequence{stages: append([]Stage(nil), stages...)}, nil
}

// MustSequence is Sequence that panics on bad input; for examples and tests.
func MustSequence(stages ...Stage) Stage {
	s, err := Sequence(stages...)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return s
}

func (sequence) isStage() {}

func (q sequence) String() string {
	parts := make([]string, len(q.stages))
	for i, s := range q.stages {
		parts[i] = s.String()
	}
	return "sequence(" + strings.Join(parts, "; ") + ")"
}

func (q sequence) sample(r *rand.Rand, floor float64, rec recorder) (e, t float64) {
	for _, s := range q.stages {
		de, dt := s.sample(r, floor, rec)
		e += de
		t += dt
	}
	return e, t
}

func (q sequence) laws(floor float64) (excess, active dist.Law, err error) {
	es := make([]dist.Law, len(q.stages))
	ts := make([]dist.Law, len(q.stages))
	for i, s := range q.stages {
		if es[i], ts[i], err = s.laws(floor); err != nil {
			return nil, nil, err
		}
	}
	if excess, err = sum(es...); err != nil {
		return nil, nil, causeErr("NewCycle", "sequence", q.String(), "energy law", err)
	}
	if active, err = sum(ts...); err != nil {
		return nil, nil, causeErr("NewCycle", "sequence", q.String(), "active-time law", err)
	}
	return excess, active, nil
}

func (q sequence) moments(floor float64) moments {
	var out moments
	// The stages' moments first, so that the parts are sized once.
	var buf [stageBuf]moments
	var room [roomBuf]part
	var span [stageBuf][2]int
	var in [stageBuf]bool
	ms, ss := buf[:], stageSet{room: room[:], span: span[:], inRoom: in[:]}
	if k := len(q.stages); k > len(buf) {
		ms, ss = make([]moments, k), stageSet{room: make([]part, k), span: make([][2]int, k), inRoom: make([]bool, k)}
	}
	n := 0
	for i, s := range q.stages {
		ss.add(ms, i, s, floor)
		n += len(ss.partsOf(ms, i))
	}
	var mbuf [mergeBuf]part
	parts := mbuf[:0]
	if n > len(mbuf) {
		parts = make([]part, 0, n)
	}
	for i := range q.stages {
		m := &ms[i]
		out.meanX += m.meanX
		out.varX += m.varX
		out.meanT += m.meanT
		out.varT += m.varT
		for _, p := range ss.partsOf(ms, i) {
			if i := findPart(parts, p.name); i >= 0 {
				o := &parts[i]
				o.ownVar = max(o.ownVar, p.ownVar)
				o.count += p.count
				o.own += p.own
				o.excess += p.excess
				o.cov += p.cov // stages are independent: Cov(C_j, X_k) = 0 for j != k
			} else {
				parts = append(parts, p)
			}
		}
	}
	out.parts = ownParts(parts, ms[:len(q.stages)], ss.inRoom)
	return out
}

// ownParts returns a list of their own of the parts combined in ps (the
// caller's memory): the memory of one of the stages' own lists in ms (not
// of those in a stageSet's room: inRoom) with the room, since those lists
// are their stages' own (every stage's moments returns a new list) and
// read no more, or else a new list of their length; nil for none.
func ownParts(ps []part, ms []moments, inRoom []bool) []part {
	if len(ps) == 0 {
		return nil
	}
	for j := range ms {
		if !inRoom[j] && cap(ms[j].parts) >= len(ps) {
			return append(ms[j].parts[:0], ps...)
		}
	}
	return append([]part(nil), ps...)
}

func (q sequence) visit(f func(State)) {
	for _, s := range q.stages {
		s.visit(f)
	}
}

// choice runs exactly one of its stages.
type choice struct {
	probs  []float64
	stages []Stage
}

// Choice returns the stage that runs stages[i] with probability probs[i]
// (exactly one of them). The slices must have the same, non-zero length; the
// probabilities must be in [0, 1] and sum to 1 within 1e-9; no stage may be
// nil. Use Nothing() for a branch in which nothing happens.
func Choice(probs []float64, stages []Stage) (Stage, error) {
	const fn = "Choice"
	if len(stages) == 0 {
		return nil, paramErr(fn, "stages", "[]", "must not be empty")
	}
	if len(probs) != len(stages) {
		return nil, paramErr(fn, "probs", fmt.Sprintf("len %d", len(probs)), fmt.Sprintf("must have the length of stages (%d)", len(stages)))
	}
	ps, err := checkProbs(fn, "probs", probs)
	if err != nil {
		return nil, err
	}
	c := choice{probs: make([]float64, 0, len(stages)), stages: make([]Stage, 0, len(stages))}
	for i, s := range stages {
		if s == nil {
			return nil, paramErr(fn, fmt.Sprintf("stages[%d]", i), nil, "must not be nil")
		}
		if ps[i] > 0 {
			c.probs = append(c.probs, ps[i])
			c.stages = append(c.stages, s)
		}
	}
	if len(c.stages) == 1 {
		return c.stages[0], nil
	}
	return c, nil
}

// MustChoice is Choice that panics on bad input; for examples and tests.
func MustChoice(probs []float64, stages []Stage) Stage {
	s, err := Choice(probs, stages)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return s
}

// checkProbs checks probabilities in [0, 1] summing to 1 within 1e-9 and
// returns them renormalised.
func checkProbs(fn, param string, probs []float64) ([]float64, error) {
	sum := 0.0
	for i, p := range probs {
		if !(p >= 0 && p <= 1) {
			return nil, paramErr(fn, fmt.Sprintf("%s[%d]", param, i), p, "must be a probability in [0, 1]")
		}
		sum += p
	}
	if math.Abs(sum-1) > 1e-9 {
		return nil, paramErr(fn, param, fmt.Sprintf("sum %.17g", sum), "must sum to 1 within 1e-9")
	}
	out := make([]float64, len(probs))
	for i, p := range probs {
		out[i] = p / sum
	}
	return out, nil
}

func (choice) isStage() {}

func (c choice) String() string {
	parts := make([]string, len(c.stages))
	for i, s := range c.stages {
		parts[i] = fmt.Sprintf("%.4g: %v", c.probs[i], s)
	}
	return "choice(" + strings.Join(parts, " | ") + ")"
}

func (c choice) pick(r *rand.Rand) int {
	u := r.Float64()
	acc := 0.0
	for i, p := range c.probs {
		acc += p
		if u < acc {
			return i
		}
	}
	return len(c.probs) - 1
}

func (c choice) sample(r *rand.Rand, floor float64, rec recorder) (e, t float64) {
	return c.stages[c.pick(r)].sample(r, floor, rec)
}

func (c choice) laws(floor float64) (excess, active dist.Law, err error) {
	return mixLaws("choice", c, c.probs, c.stages, floor)
}

// mixLaws returns the mixtures of the stages' laws; self describes the
// stage in an error (formatted only then).
func mixLaws(what string, self fmt.Stringer, probs []float64, stages []Stage, floor float64) (excess, active dist.Law, err error) {
	es := make([]dist.Law, len(stages))
	ts := make([]dist.Law, len(stages))
	for i, s := range stages {
		if es[i], ts[i], err = s.laws(floor); err != nil {
			return nil, nil, err
		}
	}
	if excess, err = dist.Mixture(probs, es); err != nil {
		return nil, nil, causeErr("NewCycle", what, self.String(), "energy law", err)
	}
	if active, err = dist.Mixture(probs, ts); err != nil {
		return nil, nil, causeErr("NewCycle", what, self.String(), "active-time law", err)
	}
	return excess, active, nil
}

func (c choice) moments(floor float64) moments {
	return mixMoments(c.probs, c.stages, floor)
}

// mixMoments combines the moments of alternatives taken with probabilities
// probs: E[Y] = Σ p_j E[Y_j], E[Y Z] = Σ p_j E[Y_j Z_j].
func mixMoments(probs []float64, stages []Stage, floor float64) moments {
	var out moments
	var buf [stageBuf]moments
	var room [roomBuf]part
	var span [stageBuf][2]int
	var in [stageBuf]bool
	ms, ss := buf[:], stageSet{room: room[:], span: span[:], inRoom: in[:]}
	if k := len(stages); k > len(buf) {
		ms, ss = make([]moments, k), stageSet{room: make([]part, k), span: make([][2]int, k), inRoom: make([]bool, k)}
	}
	n := 0
	var x2, t2 float64
	for j, s := range stages {
		ss.add(ms, j, s, floor)
		m := &ms[j]
		n += len(ss.partsOf(ms, j))
		p := probs[j]
		out.meanX += p * m.meanX
		out.meanT += p * m.meanT
		x2 += p * (m.varX + m.meanX*m.meanX)
		t2 += p * (m.varT + m.meanT*m.meanT)
	}
	var mbuf [mergeBuf]part
	parts := mbuf[:0]
	if n > len(mbuf) {
		parts = make([]part, 0, n)
	}
	for j := range stages {
		for _, q := range ss.partsOf(ms, j) {
			if findPart(parts, q.name) < 0 {
				parts = append(parts, part{name: q.name})
			}
		}
	}
	out.varX = max(0, x2-out.meanX*out.meanX)
	out.varT = max(0, t2-out.meanT*out.meanT)
	for i := range parts {
		o := &parts[i]
		cx := 0.0 // E[C X]
		for j := range stages {
			m := &ms[j]
			qs := ss.partsOf(ms, j)
			k := findPart(qs, o.name)
			if k < 0 {
				continue
			}
			q := qs[k]
			p := probs[j]
			o.count += p * q.count
			o.own += p * q.own
			o.excess += p * q.excess
			o.ownVar = max(o.ownVar, q.ownVar)
			cx += p * (q.cov + q.excess*m.meanX)
		}
		o.cov = cx - o.excess*out.meanX
	}
	out.parts = ownParts(parts, ms[:len(stages)], ss.inRoom)
	return out
}

func (c choice) visit(f func(State)) {
	for _, s := range c.stages {
		s.visit(f)
	}
}

// repeat runs its stage a random number of times.
type repeat struct {
	count dist.Law // integer values >= 0
	stage Stage
}

// Repeat returns the stage that runs stage N times, where N has the law
// count, each run drawn independently of the others and of N (a random sum:
// retransmissions, retries). count must be a purely atomic law
// (dist.Atomic whose atoms carry all the mass, such as a dist.Discrete) on
// the integers >= 0. A configuration that the runs share must be drawn
// outside: Configured(config, func(v) { return Repeat(count, build(v)) }).
func Repeat(count dist.Law, stage Stage) (Stage, error) {
	const fn = "Repeat"
	if stage == nil {
		return nil, paramErr(fn, "stage", nil, "must not be nil")
	}
	if count == nil {
		return nil, paramErr(fn, "count", nil, "must not be nil")
	}
	a, ok := count.(dist.Atomic)
	if !ok {
		return nil, paramErr(fn, "count", count, "must be a discrete law (dist.Atomic) on the integers >= 0")
	}
	mass := 0.0
	for _, at := range a.Atoms() {
		if at.Value < 0 || at.Value != math.Trunc(at.Value) || at.Value > 1<<31 {
			return nil, paramErr(fn, "count", count, fmt.Sprintf("has the value %g: counts must be integers in [0, 2^31]", at.Value))
		}
		mass += at.Mass
	}
	if math.Abs(mass-1) > 1e-9 {
		return nil, paramErr(fn, "count", count, fmt.Sprintf("atoms carry mass %g: the law must be purely discrete", mass))
	}
	if !finite(count.Variance()) {
		return nil, paramErr(fn, "count", count, "must have a finite mean and variance")
	}
	return repeat{count: count, stage: stage}, nil
}

// MustRepeat is Repeat that panics on bad input; for examples and tests.
func MustRepeat(count dist.Law, stage Stage) Stage {
	s, err := Repeat(count, stage)
	if err != nil {
		panic(err) // panic-ok: Must form, documented
	}
	return s
}

func (repeat) isStage() {}

func (p repeat) String() string { return fmt.Sprintf("repeat(%v × %v)", p.count, p.stage) }

func (p repeat) sample(r *rand.Rand, floor float64, rec recorder) (e, t float64) {
	n := int(math.Round(p.count.Rand(r)))
	for range n {
		de, dt := p.stage.sample(r, floor, rec)
		e += de
		t += dt
	}
	return e, t
}

func (p repeat) laws(floor float64) (excess, active dist.Law, err error) {
	e, t, err := p.stage.laws(floor)
	if err != nil {
		return nil, nil, err
	}
	if excess, err = randomSum(p.count, e); err != nil {
		return nil, nil, causeErr("NewCycle", "repeat", p.String(), "energy law", err)
	}
	if active, err = randomSum(p.count, t); err != nil {
		return nil, nil, causeErr("NewCycle", "repeat", p.String(), "active-time law", err)
	}
	return excess, active, nil
}

// moments of a random sum X = Σ_{k<=N} Y_k: E X = E N·E Y,
// Var X = E N·Var Y + Var N·(E Y)², and for a part C of Y,
// Cov(ΣC_k, ΣY_k) = E N·Cov(C, Y) + Var N·E C·E Y.
func (p repeat) moments(floor float64) moments {
	m := p.stage.moments(floor)
	n1, nv := p.count.Mean(), p.count.Variance()
	out := moments{
		meanX: n1 * m.meanX, varX: n1*m.varX + nv*m.meanX*m.meanX,
		meanT: n1 * m.meanT, varT: n1*m.varT + nv*m.meanT*m.meanT,
	}
	// The stage's parts are its own (every stage's moments returns a new
	// list): scaled in place.
	for i, q := range m.parts {
		m.parts[i] = part{
			name: q.name, count: n1 * q.count, own: n1 * q.own, ownVar: q.ownVar,
			excess: n1 * q.excess, cov: n1*q.cov + nv*q.excess*m.meanX,
		}
	}
	out.parts = m.parts
	return out
}

func (p repeat) visit(f func(State)) { p.stage.visit(f) }

// configured draws a configuration once and runs the stage built for it.
type configured struct {
	config dist.Discrete
	values []float64
	probs  []float64
	stages []Stage
}

// Configured returns the stage that draws a configuration value v from the
// finite discrete law config once per run and then runs build(v). Every
// state inside build(v) sees the same v: for example the spreading factor
// that sets the uplink airtime, the first receive window's downlink airtime
// and both windows' timeouts. build is called once per atom of config, here;
// an error from it is returned wrapped with the value. The law of the stage
// is the mixture over the configuration of the laws of build(v).
func Configured(config dist.Discrete, build func(value float64) (Stage, error)) (Stage, error) {
	const fn = "Configured"
	if config.Len() == 0 {
		return nil, paramErr(fn, "config", "empty law", "must have at least one atom (use dist.NewDiscrete)")
	}
	if build == nil {
		return nil, paramErr(fn, "build", nil, "must not be nil")
	}
	atoms := config.Atoms()
	c := configured{config: config, values: make([]float64, 0, len(atoms)), probs: make([]float64, 0, len(atoms)), stages: make([]Stage, 0, len(atoms))}
	for _, a := range atoms {
		s, err := build(a.Value)
		if err != nil {
			return nil, causeErr(fn, "build", a.Value, "failed for this configuration value", err)
		}
		if s == nil {
			return nil, paramErr(fn, "build", a.Value, "returned a nil stage for this configuration value")
		}
		c.values = append(c.values, a.Value)
		c.probs = append(c.probs, a.Mass)
		c.stages = append(c.stages, s)
	}
	if len(c.stages) == 1 {
		return c.stages[0], nil
	}
	return c, nil
}

func (configured) isStage() {}

func (c configured) String() string {
	parts := make([]string, len(c.stages))
	for i, s := range c.stages {
		parts[i] = fmt.Sprintf("%.6g (p=%.4g): %v", c.values[i], c.probs[i], s)
	}
	return "configured(" + strings.Join(parts, " | ") + ")"
}

func (c configured) sample(r *rand.Rand, floor float64, rec recorder) (e, t float64) {
	u := r.Float64()
	acc := 0.0
	for i, p := range c.probs {
		acc += p
		if u < acc {
			return c.stages[i].sample(r, floor, rec)
		}
	}
	return c.stages[len(c.stages)-1].sample(r, floor, rec)
}

func (c configured) laws(floor float64) (excess, active dist.Law, err error) {
	return mixLaws("configured", c, c.probs, c.stages, floor)
}

func (c configured) moments(floor float64) moments { return mixMoments(c.probs, c.stages, floor) }

func (c configured) visit(f func(State)) {
	for _, s := range c.stages {
		s.visit(f)
	}
}
