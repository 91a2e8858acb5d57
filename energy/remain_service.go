package energy

import (
	"fmt"
	"math"
	"slices"

	"github.com/joulelaw/joulelaw/dist"
)

// MaxServiceDevices caps the devices of one PlanService call (the law of
// the number flat is an exact sum of that many two-point laws, by dist.Sum).
const MaxServiceDevices = 1 << 14

// ServiceItem is one device on a service list.
type ServiceItem struct {
	Index int     // the device's index in the laws given to PlanService
	Risk  float64 // P(it is flat within the horizon)
}

// ServicePlan is the maintenance view of a group of devices for one
// horizon.
type ServicePlan struct {
	// Order lists the devices by their risk, highest first (ties by
	// index): service them in this order.
	Order []ServiceItem
	// Flat is the law of the number of devices flat within the horizon:
	// the exact sum of independent two-point laws of the risks.
	Flat dist.Law
	// Expected is Flat's mean; Low and High its 5 % and 95 % points (the
	// 90 % band).
	Expected, Low, High float64
}

// PlanService returns the service list and the number of devices flat
// within horizon (s from now) from each device's remaining-life law (for
// example DevicePosterior.Remaining at one "now"). The devices are taken
// as independent: given one Environment (the climate and the shared
// factors fixed), that is the model's assumption; for a group whose
// shared factors are unknown (one cell batch, one site), use
// PlanSharedService, which mixes over them. horizon must be finite
// and >= 0; 1 to MaxServiceDevices laws, none nil. Errors wrap ErrParam.
func PlanService(remaining []dist.Law, horizon float64) (ServicePlan, error) {
	const fn = "PlanService"
	switch {
	case len(remaining) == 0 || len(remaining) > MaxServiceDevices:
		return ServicePlan{}, paramErr(fn, "remaining", len(remaining), fmt.Sprintf("must hold 1 to MaxServiceDevices = %d laws", MaxServiceDevices))
	case !(horizon >= 0) || math.IsInf(horizon, 0):
		return ServicePlan{}, paramErr(fn, "horizon", horizon, "must be finite and >= 0 (s)")
	}
	risks := make([]float64, len(remaining))
	for i, l := range remaining {
		if l == nil {
			return ServicePlan{}, paramErr(fn, fmt.Sprintf("remaining[%d]", i), nil, "must be a law")
		}
		p := l.CDF(horizon)
		if !(p >= 0 && p <= 1) {
			return ServicePlan{}, paramErr(fn, fmt.Sprintf("remaining[%d]", i), p, "gives no probability at the horizon")
		}
		risks[i] = p
	}
	flat, err := flatCount(fn, risks)
	if err != nil {
		return ServicePlan{}, err
	}
	return newServicePlan(risks, flat), nil
}

// flatCount returns the exact law of the number of independent devices
// flat, each with its probability in risks (a dist.Sum of two-point
// laws).
func flatCount(fn string, risks []float64) (dist.Law, error) {
	terms := make([]dist.Law, len(risks))
	for i, p := range risks {
		q, err := dist.NewDiscrete([]float64{0, 1}, []float64{1 - p, p})
		if err != nil {
			return nil, causeErr(fn, fmt.Sprintf("remaining[%d]", i), p, "two-point law of its risk", err)
		}
		terms[i] = q
	}
	flat, err := dist.Sum(terms...)
	if err != nil {
		return nil, causeErr(fn, "remaining", len(risks), "law of the number flat", err)
	}
	return flat, nil
}

// newServicePlan orders the devices by risk (NaN risks, devices without
// a law, last) and summarises flat.
func newServicePlan(risks []float64, flat dist.Law) ServicePlan {
	plan := ServicePlan{Order: make([]ServiceItem, len(risks)), Flat: flat}
	for i, p := range risks {
		plan.Order[i] = ServiceItem{Index: i, Risk: p}
	}
	slices.SortStableFunc(plan.Order, func(a, b ServiceItem) int {
		an, bn := math.IsNaN(a.Risk), math.IsNaN(b.Risk)
		switch {
		case an != bn:
			if an {
				return 1
			}
			return -1
		case a.Risk > b.Risk:
			return -1
		case a.Risk < b.Risk:
			return 1
		}
		return a.Index - b.Index
	})
	plan.Expected = flat.Mean()
	plan.Low, plan.High = flat.Quantile(0.05), flat.UpperQuantile(0.05)
	return plan
}

// SharedServicePlan is the maintenance view of a group whose devices
// share the shared tier (SharedSpread: the cell batch's capacity factor,
// the site's temperature offset) and the posterior of that tier given
// every device's evidence.
type SharedServicePlan struct {
	// ServicePlan orders the devices by their risk (mixed over the shared
	// tier's posterior; devices on external power last, with a NaN risk)
	// and gives the law of the number flat within the horizon: the mixture
	// over the shared nodes of the exact laws given each node (devices
	// are independent only given the shared factors).
	ServicePlan
	// Remaining is each tally's remaining-life law (s from now), the
	// mixture over the shared nodes of its conditional laws; nil for a
	// device on external power. Risk is its CDF at the horizon (NaN for
	// external power); StatedErr its stated CDF error (the largest of its
	// components').
	Remaining []dist.Law
	Risk      []float64
	StatedErr []float64
	// The shared tier's nodes: batch factor, temperature offset (°C),
	// prior weight (Gauss–Hermite) and posterior weight given the devices.
	Batch, Offset, Prior, Weight []float64
	// The batch factor's posterior mean and standard deviation: what the
	// group's devices say about their cells' batch.
	BatchMean, BatchSD float64
}

// Gauss–Hermite nodes of the shared tier in PlanSharedService.
const (
	SharedBatchNodes       = 7 // for SharedSpread.Batch
	SharedTemperatureNodes = 5 // for SharedSpread.Temperature
)

// PlanSharedService is PlanService for the devices of one group that
// share the shared tier: their cells come from one batch (capacity factor
// N(1, shared.Batch), times env's BatchFactor) and they live through one
// site's years (temperature offset N(0, shared.Temperature) °C added to
// env's). PlanService takes the devices as independent, which they are
// only given those factors: a group's count of flat devices is a mixture
// over them, wider than a binomial. Here the shared factors take
// Gauss–Hermite nodes (SharedBatchNodes × SharedTemperatureNodes, one
// node for a zero spread); at each, the model of spec in that environment
// gives every device's posterior and the marginal likelihood of its
// evidence. The nodes' posterior weights are the prior weights times the
// product of the devices' marginal likelihoods (the fleet learns its
// batch from its readings: a device alone says little, a hundred in the
// knee say much); each device's law and the count of flat devices are
// mixtures over the nodes with those weights.
//
// The posterior over the shared tier is a discrete law on the quadrature
// nodes: where many devices pin the batch factor, it settles on one node
// near the truth, an error of up to the nodes' spacing (about 1.2 times
// shared.Batch near the centre; in the validation, 0.965 for a true 0.94
// with nodes 0.035 apart, and the count of flat devices inside its band
// where the independent plan at factor 1 was not). The devices' tallies must come
// from a model with the same costs. 1 to MaxServiceDevices tallies;
// horizon finite and >= 0 (s from now); now at or after each tally's
// newest event. Errors wrap ErrParam.
func PlanSharedService(spec NodeSpec, env Environment, shared SharedSpread, costs []EventCost, opt DeviceOptions, tallies []Tally, now, horizon float64) (SharedServicePlan, error) {
	const fn = "PlanSharedService"
	switch {
	case len(tallies) == 0 || len(tallies) > MaxServiceDevices:
		return SharedServicePlan{}, paramErr(fn, "tallies", len(tallies), fmt.Sprintf("must hold 1 to MaxServiceDevices = %d tallies", MaxServiceDevices))
	case !(horizon >= 0) || math.IsInf(horizon, 0):
		return SharedServicePlan{}, paramErr(fn, "horizon", horizon, "must be finite and >= 0 (s)")
	}
	if err := shared.check(fn); err != nil {
		return SharedServicePlan{}, err
	}
	if err := env.Conditions.check(fn); err != nil {
		return SharedServicePlan{}, err
	}
	zb, wb := hermiteNodes(shared.Batch, SharedBatchNodes)
	zt, wt := hermiteNodes(shared.Temperature, SharedTemperatureNodes)
	var sp SharedServicePlan
	var rems [][]dist.Law // [node][device]
	var logW []float64
	for i, a := range zb {
		for j, b := range zt {
			e := env
			e.Conditions.BatchFactor = env.Conditions.batch() * (1 + shared.Batch*a)
			e.Conditions.TemperatureOffset = env.TemperatureOffset + shared.Temperature*b
			m, err := NewDeviceModel(spec, e, costs, opt)
			if err != nil {
				return SharedServicePlan{}, err
			}
			lw := math.Log(wb[i] * wt[j])
			row := make([]dist.Law, len(tallies))
			for k, t := range tallies {
				if t.external {
					continue
				}
				p, err := m.Posterior(t, now)
				if err != nil {
					if t.ok && now >= t.newest && !t.external {
						lw = math.Inf(-1) // a device no node of this batch explains
						continue
					}
					return SharedServicePlan{}, causeErr(fn, fmt.Sprintf("tallies[%d]", k), now, "posterior", err)
				}
				lw += p.p.logMarginal
				row[k] = p.Remaining()
			}
			sp.Batch = append(sp.Batch, e.Conditions.BatchFactor)
			sp.Offset = append(sp.Offset, e.Conditions.TemperatureOffset)
			sp.Prior = append(sp.Prior, wb[i]*wt[j])
			logW = append(logW, lw)
			rems = append(rems, row)
		}
	}
	best := maxOf(logW)
	if math.IsInf(best, -1) {
		return SharedServicePlan{}, paramErr(fn, "tallies", len(tallies), "no node of the shared tier explains every device: the counts or the model's cell are wrong")
	}
	tot := 0.0
	sp.Weight = make([]float64, len(logW))
	for j, l := range logW {
		sp.Weight[j] = math.Exp(l - best)
		tot += sp.Weight[j]
	}
	for j := range sp.Weight {
		sp.Weight[j] /= tot
		sp.BatchMean += sp.Weight[j] * sp.Batch[j]
	}
	for j := range sp.Weight {
		d := sp.Batch[j] - sp.BatchMean
		sp.BatchSD += sp.Weight[j] * d * d
	}
	sp.BatchSD = math.Sqrt(sp.BatchSD)
	// The nodes that carry weight (the rest below 1e-15 of the total).
	var keep []int
	var kw []float64
	for j, w := range sp.Weight {
		if w > 1e-15 {
			keep = append(keep, j)
			kw = append(kw, w)
		}
	}
	sp.Remaining = make([]dist.Law, len(tallies))
	sp.Risk = make([]float64, len(tallies))
	sp.StatedErr = make([]float64, len(tallies))
	nodeRisk := make([][]float64, len(keep))
	for k := range tallies {
		if tallies[k].external {
			sp.Risk[k], sp.StatedErr[k] = math.NaN(), math.NaN()
			continue
		}
		laws := make([]dist.Law, len(keep))
		for i, j := range keep {
			laws[i] = rems[j][k]
		}
		var l dist.Law = laws[0]
		if len(laws) > 1 {
			l = newSharedMixture("RemainingLife", kw, laws)
		}
		sp.Remaining[k] = l
		sp.Risk[k] = l.CDF(horizon)
		if e, ok := l.(dist.Estimated); ok {
			sp.StatedErr[k] = e.Accuracy().CDFAbs
		}
		for i := range keep {
			nodeRisk[i] = append(nodeRisk[i], laws[i].CDF(horizon))
		}
	}
	if len(nodeRisk[0]) == 0 {
		return SharedServicePlan{}, paramErr(fn, "tallies", len(tallies), "every device is on external power: no battery to plan for")
	}
	counts := make([]dist.Law, len(keep))
	for i := range keep {
		c, err := flatCount(fn, nodeRisk[i])
		if err != nil {
			return SharedServicePlan{}, err
		}
		counts[i] = c
	}
	flat := counts[0]
	if len(counts) > 1 {
		var err error
		if flat, err = dist.Mixture(kw, counts); err != nil {
			return SharedServicePlan{}, causeErr(fn, "tallies", len(tallies), "mixture of the counts over the shared nodes", err)
		}
	}
	sp.ServicePlan = newServicePlan(sp.Risk, flat)
	return sp, nil
}
