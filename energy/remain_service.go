package energy

import (
	"cmp"
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
	// prior weight (Gauss–Hermite, or the refined batch grid's trapezoid
	// weights times the prior density) and posterior weight given the
	// devices.
	Batch, Offset, Prior, Weight []float64
	// The batch factor's posterior mean and standard deviation: what the
	// group's devices say about their cells' batch.
	BatchMean, BatchSD float64
	// BatchGridErr and FlatGridErr are the stated errors of BatchMean and
	// of Expected (devices) from the refined batch grid (see
	// PlanSharedService); 0 when the batch has no spread.
	BatchGridErr, FlatGridErr float64
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
// The batch factor's Gauss–Hermite nodes only locate the posterior: where
// many devices pin the batch factor, its posterior is far narrower than
// their spacing (about 1.2 times shared.Batch near the centre), and a law
// on those nodes settles on the nearest one (0.965 for a true 0.94 in the
// validation, nodes 0.035 apart). So the batch dimension is then refined:
// an even grid of batch scores between the nodes that bracket the
// posterior's mass, trapezoid weights times the normal prior density, the
// step halved (9 to at most MaxSharedBatchGrid points) until the batch
// factor's posterior mean and the expected count flat agree with those of
// the grid of twice the step within 1e-4 and 0.05 devices; that last
// difference, plus the posterior mass the grid may leave out, is the
// stated error (BatchGridErr, FlatGridErr). Pool every device of the
// group, those gone silent (flat) too, with their tallies as they
// stopped: the devices still alive are selected for large cells, and
// pooling them alone biases the batch factor up (in the validation,
// 0.969 ± 0.007 for a true 0.94 from the 246 survivors of 300; 0.944 ±
// 0.006 from all 300). The devices' tallies must come from a model with
// the same costs. 1 to MaxServiceDevices tallies;
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
	var nodes []sharedNode
	// eval returns the node at batch score a and temperature node j with
	// log prior weight lp: every device's posterior there.
	eval := func(a float64, j int, lp float64) (sharedNode, error) {
		e := env
		e.Conditions.BatchFactor = env.Conditions.batch() * (1 + shared.Batch*a)
		e.Conditions.TemperatureOffset = env.TemperatureOffset + shared.Temperature*zt[j]
		nd := sharedNode{z: a, batch: e.Conditions.BatchFactor, offset: e.Conditions.TemperatureOffset, logW: lp + math.Log(wt[j]),
			prior: wt[j], row: make([]dist.Law, len(tallies))}
		m, err := NewDeviceModel(spec, e, costs, opt)
		if err != nil {
			return nd, err
		}
		for k, t := range tallies {
			if t.external {
				continue
			}
			p, err := m.posterior(fn, t, now, true)
			if err != nil {
				if t.ok && now >= t.newest && !t.external {
					nd.logW = math.Inf(-1) // a device no node of this batch explains
					continue
				}
				return nd, causeErr(fn, fmt.Sprintf("tallies[%d]", k), now, "posterior", err)
			}
			nd.logW += p.p.logMarginal
			nd.row[k] = p.Remaining()
			nd.expected += nd.row[k].CDF(horizon)
		}
		return nd, nil
	}
	for i, a := range zb {
		for j := range zt {
			nd, err := eval(a, j, math.Log(wb[i]))
			if err != nil {
				return SharedServicePlan{}, err
			}
			nd.prior = wb[i] * wt[j]
			nodes = append(nodes, nd)
		}
	}
	var sp SharedServicePlan
	if len(zb) > 1 {
		var err error
		if nodes, sp.BatchGridErr, sp.FlatGridErr, err = refineBatch(nodes, zb, len(zt), eval); err != nil {
			return SharedServicePlan{}, err
		}
	}
	logW := make([]float64, len(nodes))
	rems := make([][]dist.Law, len(nodes)) // [node][device]
	for j, nd := range nodes {
		sp.Batch = append(sp.Batch, nd.batch)
		sp.Offset = append(sp.Offset, nd.offset)
		sp.Prior = append(sp.Prior, nd.prior)
		logW[j], rems[j] = nd.logW, nd.row
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

// sharedNode is one node of PlanSharedService's shared tier: the batch
// factor's standard score z, the factors, the prior weight and the log of
// prior × the devices' marginal likelihoods, the devices' remaining-life
// laws and their expected number flat within the horizon there.
type sharedNode struct {
	z, batch, offset, prior, logW, expected float64
	row                                     []dist.Law
}

// Limits of PlanSharedService's batch grid.
const (
	// MaxSharedBatchGrid caps the points of the refined batch grid.
	MaxSharedBatchGrid = 65
	// sharedGridTolFlat and sharedGridTolBatch end the grid's halving:
	// the expected count (devices) and the batch factor's posterior mean
	// agree between the grid and its every other point within them.
	sharedGridTolFlat  = 0.05
	sharedGridTolBatch = 1e-4
)

// refineBatch replaces the Gauss–Hermite batch nodes by an even grid of
// batch scores between the nodes that bracket the posterior's mass (the
// nodes next to those carrying more than 1e-6 of it, or one spacing
// beyond the rule's extreme nodes), weighted by the trapezoid rule times
// the normal prior density, halving the step (from 8 intervals to at most
// MaxSharedBatchGrid − 1) until the posterior mean of the batch factor and
// the expected count flat within the horizon agree with the grid of twice
// the step within 1e-4 and 0.05 devices. It returns the grid's nodes and
// the stated errors: that last difference plus the posterior mass left
// outside the grid (the rule's weight beyond it and the weight of the
// grid's end points), times the grid's batch range or the devices.
func refineBatch(gh []sharedNode, zb []float64, nt int, eval func(a float64, j int, lp float64) (sharedNode, error)) ([]sharedNode, float64, float64, error) {
	nb := len(zb)
	// The posterior over the rule's batch nodes (temperature summed).
	lw := make([]float64, len(gh))
	for i, nd := range gh {
		lw[i] = nd.logW
	}
	best := maxOf(lw)
	if math.IsInf(best, -1) {
		return gh, math.NaN(), math.NaN(), nil // no node explains the devices: PlanSharedService refuses
	}
	mb, tot := make([]float64, nb), 0.0
	for i, nd := range gh {
		w := math.Exp(nd.logW - best)
		mb[i/nt] += w
		tot += w
	}
	first, last := nb, -1
	for i := range mb {
		mb[i] /= tot
		if mb[i] > 1e-6 {
			first, last = min(first, i), max(last, i)
		}
	}
	lo, hi := zb[0]-(zb[1]-zb[0]), zb[nb-1]+(zb[nb-1]-zb[nb-2])
	if first > 0 {
		lo = zb[first-1]
	}
	if last < nb-1 {
		hi = zb[last+1]
	}
	outside := 0.0
	for i := range mb {
		if zb[i] < lo || zb[i] > hi {
			outside += mb[i]
		}
	}
	// points[k] holds the nt temperature nodes at score lo + k·(hi−lo)/K.
	var points [][]sharedNode
	add := func(a float64) error {
		row := make([]sharedNode, nt)
		for j := range nt {
			nd, err := eval(a, j, -0.5*a*a)
			if err != nil {
				return err
			}
			row[j] = nd
		}
		points = append(points, row)
		return nil
	}
	K := 8
	for k := 0; k <= K; k++ {
		if err := add(lo + float64(k)*(hi-lo)/float64(K)); err != nil {
			return nil, 0, 0, err
		}
	}
	// summary returns the posterior mean of the batch factor, the expected
	// count, and the weight of the end points, over every step-th point.
	summary := func(pts [][]sharedNode, step int) (batch, flat, ends float64) {
		var lws []float64
		var nds []*sharedNode
		n := len(pts) - 1
		for k := 0; k <= n; k += step {
			tw := math.Log(float64(step))
			if k == 0 || k == n {
				tw = math.Log(0.5 * float64(step))
			}
			for j := range pts[k] {
				lws = append(lws, pts[k][j].logW+tw)
				nds = append(nds, &pts[k][j])
			}
		}
		b := maxOf(lws)
		if math.IsInf(b, -1) {
			return math.NaN(), math.NaN(), math.NaN()
		}
		s := 0.0
		for i, l := range lws {
			w := math.Exp(l - b)
			s += w
			batch += w * nds[i].batch
			flat += w * nds[i].expected
			if nds[i].z == pts[0][0].z || nds[i].z == pts[n][0].z {
				ends += w
			}
		}
		return batch / s, flat / s, ends / s
	}
	ordered := func() [][]sharedNode {
		out := append([][]sharedNode(nil), points...)
		slices.SortFunc(out, func(x, y []sharedNode) int { return cmp.Compare(x[0].z, y[0].z) })
		return out
	}
	var errB, errF float64
	for {
		pts := ordered()
		b1, f1, ends := summary(pts, 1)
		b2, f2, _ := summary(pts, 2)
		errB = math.Abs(b1-b2) + (outside+ends)*math.Abs(pts[len(pts)-1][0].batch-pts[0][0].batch)
		errF = math.Abs(f1-f2) + (outside+ends)*float64(len(pts[0][0].row))
		if (math.Abs(b1-b2) <= sharedGridTolBatch && math.Abs(f1-f2) <= sharedGridTolFlat) || 2*K+1 > MaxSharedBatchGrid {
			break
		}
		// Halve the step: the midpoints.
		for k := 0; k < K; k++ {
			if err := add(lo + (float64(k)+0.5)*(hi-lo)/float64(K)); err != nil {
				return nil, 0, 0, err
			}
		}
		K *= 2
	}
	pts := ordered()
	var out []sharedNode
	for k, row := range pts {
		tw := 1.0
		if k == 0 || k == len(pts)-1 {
			tw = 0.5
		}
		for j := range row {
			nd := row[j]
			nd.logW += math.Log(tw)
			nd.prior *= tw * math.Exp(-0.5*nd.z*nd.z) // relative; normalised below
			out = append(out, nd)
		}
	}
	s := 0.0
	for _, nd := range out {
		s += nd.prior
	}
	for i := range out {
		out[i].prior /= s
	}
	return out, errB, errF, nil
}
