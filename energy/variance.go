package energy

import (
	"fmt"
	"math"
)

// VarianceShares splits a node's lifetime variance by where it comes from:
// each field is the share (in [0, 1], summing to 1) of the first-order
// variance that one source contributes, the others held at their nominal
// values. It tells a planner at a glance which spread dominates.
type VarianceShares struct {
	PerCycle    float64 // the cycles' own randomness (averages out over a life)
	Setting     float64 // per node: the radio setting (data rate, power) a node keeps
	Capacity    float64 // per node: the cell's capacity spread
	Floor       float64 // per node: the sleep current's board-to-board spread
	Active      float64 // per node: the active energy's board-to-board spread
	Batch       float64 // shared: the cell batch's capacity factor
	Temperature float64 // shared: the site's temperature offset
	// SD is the first-order standard deviation (s) these shares split;
	// beside the law's own (exact) standard deviation it shows how far the
	// linearisation goes.
	SD float64
}

// VarianceShares returns the split of group i's node lifetime variance. It
// linearises, setting by setting, the condition that ends a node's life,
//
//	G(t) = c·b·(U − N·D(t)) − a·A(t) − f·Φ(t) − P_q·t = 0,
//
// around the nominal node (every factor at its median, no temperature
// offset): a source moving G by δ moves the lifetime by δ/G'(L). Settings
// add the variance of their nominal lifetimes about the group's mean. A
// setting whose nominal node outlives the calendar limit contributes
// nothing but its share of the settings' spread (the limit, not its
// factors, ends it). The split is first order: exact for the capacity and
// batch factors of a node whose other terms are linear in time, an
// approximation elsewhere.
func (s Site) VarianceShares(i int) (VarianceShares, error) {
	const fn = "Site.VarianceShares"
	if i < 0 || i >= len(s.names) {
		return VarianceShares{}, paramErr(fn, "i", i, fmt.Sprintf("must be in [0, %d)", len(s.names)))
	}
	spec := s.spec.Groups[i].Node
	env := Environment{Climate: s.spec.Climate}
	// The rules and the k-fold sums are not read (nodeParts).
	skip := nodeParts{noRules: true, noSums: true}
	n, err := newNodeFor(fn, spec, env, skip)
	if err != nil {
		return VarianceShares{}, err
	}
	var warm, cold *node
	if spec.Thermal != nil && s.spec.Shared.Temperature > 0 {
		env.TemperatureOffset = 1
		if warm, err = newNodeFor(fn, spec, env, skip); err != nil {
			return VarianceShares{}, err
		}
		env.TemperatureOffset = -1
		if cold, err = newNodeFor(fn, spec, env, skip); err != nil {
			return VarianceShares{}, err
		}
	}
	sp, sh := spec.Spread, s.spec.Shared
	var v [7]float64 // per cycle, setting, capacity, floor, active, batch, temperature
	lives := make([]float64, len(n.settings))
	mean := 0.0
	for j := range n.settings {
		st := &n.settings[j]
		L := n.nominalRoot(j)
		lives[j] = L
		mean += st.w * L
		if !(L < n.calendar) {
			continue
		}
		h := L * 1e-6
		slope := (n.margin(j, L+h) - n.margin(j, L-h)) / (2 * h)
		if !(slope < 0) {
			continue
		}
		capLeft := n.batch*st.usable - n.nominal*(n.storage+n.sdRate*n.cum(&n.months.sdCum, &n.months.sdFactor, L))
		k := L * st.rate
		floorE := st.floorP * n.cum(&n.months.floorCum, &n.months.floorRate, L)
		add := func(idx int, dG float64) { v[idx] += st.w * dG * dG / (slope * slope) }
		add(0, math.Sqrt(k*st.k2))
		add(2, sp.Capacity*capLeft)
		add(3, sp.Floor*floorE)
		add(4, sp.Active*k*st.mu)
		add(5, sh.Batch*capLeft)
		if warm != nil {
			add(6, sh.Temperature*(warm.margin(j, L)-cold.margin(j, L))/2)
		}
	}
	for j := range n.settings {
		d := lives[j] - mean
		v[1] += n.settings[j].w * d * d
	}
	tot := 0.0
	for _, x := range v {
		tot += x
	}
	out := VarianceShares{SD: math.Sqrt(tot)}
	if tot > 0 {
		out.PerCycle, out.Setting, out.Capacity, out.Floor = v[0]/tot, v[1]/tot, v[2]/tot, v[3]/tot
		out.Active, out.Batch, out.Temperature = v[4]/tot, v[5]/tot, v[6]/tot
	}
	return out, nil
}

// margin returns G(t) of setting j for the nominal node: the energy (J)
// left at t with every per-node factor at 1.
func (n *node) margin(j int, t float64) float64 {
	st := &n.settings[j]
	capLeft := n.batch*st.usable - n.nominal*(n.storage+n.sdRate*n.cum(&n.months.sdCum, &n.months.sdFactor, t))
	return capLeft - t*st.rate*st.mu - st.floorP*n.cum(&n.months.floorCum, &n.months.floorRate, t) - n.quiescent*t
}

// nominalRoot returns the nominal node's lifetime (s) at setting j, capped
// at the calendar limit: the root of margin by bisection.
func (n *node) nominalRoot(j int) float64 {
	lo, hi := 0.0, Year
	for n.margin(j, hi) > 0 {
		lo, hi = hi, 2*hi
		if hi > 1e4*Year {
			return min(hi, n.calendar)
		}
	}
	for range 200 {
		if hi-lo <= 1e-12*hi {
			break
		}
		m := (lo + hi) / 2
		if n.margin(j, m) > 0 {
			lo = m
		} else {
			hi = m
		}
	}
	return min(hi, n.calendar)
}

// UsableFraction returns the smallest and largest usable share of group
// i's cell capacity over its settings, in the nominal environment (no
// temperature offset): from the voltage curve under each setting's largest
// pulse at the year's coldest temperature, or the cell's rated
// UsableFraction; the capacity derating by temperature is not included.
func (s Site) UsableFraction(i int) (lo, hi float64, err error) {
	const fn = "Site.UsableFraction"
	if i < 0 || i >= len(s.names) {
		return 0, 0, paramErr(fn, "i", i, fmt.Sprintf("must be in [0, %d)", len(s.names)))
	}
	// The usable fractions alone are read (nodeParts).
	skip := nodeParts{noRules: true, noSums: true, noMoments: true, noSelfDischarge: true}
	n, err := newNodeFor(fn, s.spec.Groups[i].Node, Environment{Climate: s.spec.Climate}, skip)
	if err != nil {
		return 0, 0, err
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, st := range n.settings {
		lo, hi = min(lo, st.usableF), max(hi, st.usableF)
	}
	return lo, hi, nil
}
