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
// factors fixed), that is the model's assumption; a fleet whose shared
// factors are unknown needs a mixture over them. horizon must be finite
// and >= 0; 1 to MaxServiceDevices laws, none nil. Errors wrap ErrParam.
func PlanService(remaining []dist.Law, horizon float64) (ServicePlan, error) {
	const fn = "PlanService"
	switch {
	case len(remaining) == 0 || len(remaining) > MaxServiceDevices:
		return ServicePlan{}, paramErr(fn, "remaining", len(remaining), fmt.Sprintf("must hold 1 to MaxServiceDevices = %d laws", MaxServiceDevices))
	case !(horizon >= 0) || math.IsInf(horizon, 0):
		return ServicePlan{}, paramErr(fn, "horizon", horizon, "must be finite and >= 0 (s)")
	}
	plan := ServicePlan{Order: make([]ServiceItem, len(remaining))}
	terms := make([]dist.Law, len(remaining))
	for i, l := range remaining {
		if l == nil {
			return ServicePlan{}, paramErr(fn, fmt.Sprintf("remaining[%d]", i), nil, "must be a law")
		}
		p := l.CDF(horizon)
		if !(p >= 0 && p <= 1) {
			return ServicePlan{}, paramErr(fn, fmt.Sprintf("remaining[%d]", i), p, "gives no probability at the horizon")
		}
		plan.Order[i] = ServiceItem{Index: i, Risk: p}
		q, err := dist.NewDiscrete([]float64{0, 1}, []float64{1 - p, p})
		if err != nil {
			return ServicePlan{}, causeErr(fn, fmt.Sprintf("remaining[%d]", i), p, "two-point law of its risk", err)
		}
		terms[i] = q
	}
	slices.SortStableFunc(plan.Order, func(a, b ServiceItem) int {
		switch {
		case a.Risk > b.Risk:
			return -1
		case a.Risk < b.Risk:
			return 1
		}
		return a.Index - b.Index
	})
	flat, err := dist.Sum(terms...)
	if err != nil {
		return ServicePlan{}, causeErr(fn, "remaining", len(remaining), "law of the number flat", err)
	}
	plan.Flat = flat
	plan.Expected = flat.Mean()
	plan.Low, plan.High = flat.Quantile(0.05), flat.UpperQuantile(0.05)
	return plan, nil
}
