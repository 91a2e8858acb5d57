// Package fleet computes the plan that the fleetplan program prints and its
// figures program draws: the site model's laws (package radio/lora/scenario)
// summarised per group and across the fleet, the optional "what it takes"
// design section, and the plain-text report. It is internal to those two
// programs, which share it so that the figures come from the very plan the
// report prints; the figures live in their own program so that the main
// job's binary carries no plotting code.
package fleet

import (
	"fmt"
	"math"
	"runtime"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// Plan is everything the report, the JSON output and the figures show. Field
// names carry their units (_j joules, _s seconds, _years Julian years, _a
// amperes); shares and probabilities are in [0, 1].
type Plan struct {
	Site         string      `json:"site"`
	Source       string      `json:"scenario_source"`
	Region       string      `json:"region"`
	RegionTables string      `json:"region_tables"`
	Nodes        int         `json:"nodes"`
	Gateways     []string    `json:"gateways"`
	Cells        []CellPlan  `json:"cells"`
	Climate      string      `json:"climate"`
	Shared       SharedPlan  `json:"shared"`
	Groups       []GroupPlan `json:"groups"`
	Fleet        FleetPlan   `json:"fleet"`
	// GatewayBudgets is each gateway's downlink airtime per sub-band
	// against its duty-cycle limit (scenario.Model.GatewayBudgets).
	GatewayBudgets []BudgetPlan `json:"gateway_budgets"`
	Warnings       []string     `json:"warnings"`
	Cautions       []string     `json:"cautions"`
	Design         *DesignPlan  `json:"what_it_takes,omitempty"` // the scenario's design section, with -what-it-takes (design.go)

	// Laws are the laws the figures draw (not in the JSON).
	Laws PlanLaws `json:"-"`
}

// CellPlan summarises a cell the groups carry.
type CellPlan struct {
	Name              string  `json:"name"`
	Chemistry         string  `json:"chemistry"`
	NominalEnergyJ    float64 `json:"nominal_energy_j"`
	UsableEnergyJ     float64 `json:"usable_energy_j"` // at the rated usable fraction, before derating and voltage
	SelfDischargeW    float64 `json:"self_discharge_w"`
	PulseCurrentA     float64 `json:"pulse_current_a"`
	NominalVoltageV   float64 `json:"nominal_voltage_v"`
	CapacitySD        float64 `json:"capacity_sd"`
	CalendarLifeYears float64 `json:"calendar_life_years"` // 0: none given
	VoltageCurve      bool    `json:"voltage_curve"`
}

// SharedPlan is what the whole fleet shares.
type SharedPlan struct {
	BatchCapacitySD      float64 `json:"batch_capacity_sd"`
	TemperatureOffsetSDC float64 `json:"temperature_offset_sd_c"`
}

// SpreadPlan is where a group's lifetime spread comes from: the shares of
// the first-order variance (see energy.VarianceShares), summing to 1.
type SpreadPlan struct {
	PerCycle    float64 `json:"per_cycle"`
	Setting     float64 `json:"radio_setting"`
	Capacity    float64 `json:"cell_capacity"`
	Floor       float64 `json:"sleep_current"`
	Active      float64 `json:"active_energy"`
	Batch       float64 `json:"cell_batch"`
	Temperature float64 `json:"site_temperature"`
}

// Summary is a law's mean, standard deviation, median and central 90 % and
// 99 % intervals (equal-tailed), in the unit of the field holding it, with
// its support, how it was computed and its stated error: the one-line
// summary the report prints under "Laws".
type Summary struct {
	Mean   float64    `json:"mean"`
	SD     float64    `json:"sd"`
	Median float64    `json:"median"`
	In90   [2]float64 `json:"interval_90"`
	In99   [2]float64 `json:"interval_99"`
	// Support is the law's support (an end may be infinite: not in the
	// JSON, which cannot hold it).
	Support [2]float64 `json:"-"`
	// Method says how the law was computed; CDFError is its stated bound on
	// the error of its distribution function (0 for an exact law).
	Method   string  `json:"method"`
	CDFError float64 `json:"cdf_error_bound"`
}

// GroupPlan is the plan of one group.
type GroupPlan struct {
	Name            string  `json:"name"`
	Nodes           int     `json:"nodes"`
	Gateway         string  `json:"gateway"`
	InnerRadiusM    float64 `json:"inner_radius_m"`
	OuterRadiusM    float64 `json:"outer_radius_m"`
	PayloadBytes    int     `json:"payload_bytes"`
	IntervalS       float64 `json:"report_interval_s"`
	JitterS         float64 `json:"interval_jitter_s"`
	Confirmed       bool    `json:"confirmed"`
	MaxTransmission int     `json:"max_transmissions"`

	EnergyPerCycle Summary `json:"energy_per_cycle_j"`
	EnergyPerDay   float64 `json:"mean_energy_per_day_j"`
	// OutlierJ is the energy the group's largest cycle exceeds in
	// OutlierLevel of cycles (the fleet's own threshold is set by its
	// heaviest group and says little about the others).
	OutlierJ   float64     `json:"outlier_threshold_j"`
	Current    CurrentPlan `json:"average_current_a"`
	Breakdown  []StatePlan `json:"breakdown"`
	DataRates  []DRPlan    `json:"data_rates"`
	OutOfReach float64     `json:"out_of_reach_share"`
	// OutOfReachPlanned is the share planned at the ADR back-off setting
	// (scenario.GroupModel.Unheard): OutOfReach, or 0 below
	// scenario.UnheardFloor, or 1 when the in-reach share is below it.
	OutOfReachPlanned  float64  `json:"out_of_reach_planned_share"`
	OutOfReachCurrentA float64  `json:"out_of_reach_average_current_a"` // 0 when none is planned
	OutOfReachHeaviest bool     `json:"out_of_reach_drain_first"`       // their setting draws the group's largest average current, within 1 %
	DutyCycle          DutyPlan `json:"duty_cycle"`
	PulseWarnings      []string `json:"pulse_warnings"`

	Cell           string     `json:"cell"`
	Node           string     `json:"node"`
	Supply         string     `json:"supply"`
	UsableFraction [2]float64 `json:"usable_fraction_range"` // over the group's settings, from the voltage curve or the cell's rating
	Lifetime       Summary    `json:"lifetime_years"`
	Lifetime1      float64    `json:"lifetime_1_percent_years"`
	CalendarLimit  float64    `json:"calendar_limit_years"` // 0: none
	EnergyBinds    float64    `json:"share_ended_by_energy"`
	Spread         SpreadPlan `json:"lifetime_variance_shares"`
	FirstFailure   Summary    `json:"first_failure_years"`
	ReplaceByRisk  float64    `json:"replace_by_for_risk_years"`
}

// CurrentPlan is the long-run average current of a node of the group: its
// mean over the group and the range of the nodes' own averages (which differ
// with the data rate and power each node settled on).
type CurrentPlan struct {
	Mean float64    `json:"mean"`
	In90 [2]float64 `json:"nodes_90"`
}

// StatePlan is one row of the per-state breakdown.
type StatePlan struct {
	State         string   `json:"state"`
	RunsPerCycle  float64  `json:"runs_per_cycle"`
	MeanEnergyJ   float64  `json:"mean_energy_j"`
	ShareMean     float64  `json:"share_of_mean"`
	ShareVariance *float64 `json:"share_of_variance"` // null when the energy per cycle does not vary
}

// DRPlan is the data-rate mix and what happens to uplinks at one data rate.
// Share is the share of all the group's nodes. The row with OutOfReach set
// holds the nodes out of reach at the ADR back-off setting: its uplinks are
// all lost (UplinkSuccess 0), it receives no downlink, and it sends
// MaxTransmissions frames per report; its Load is 0 (its frames are not
// counted in the collision loads, see scenario.Build).
type DRPlan struct {
	DR            int     `json:"dr"`
	Name          string  `json:"name"`
	OutOfReach    bool    `json:"out_of_reach"`
	Share         float64 `json:"share"`
	AirtimeS      float64 `json:"airtime_s"`
	Load          float64 `json:"offered_load"`
	UplinkSuccess float64 `json:"uplink_success"`
	Frames        float64 `json:"transmissions_per_report"`
	DownlinkRX1   float64 `json:"downlink_rx1"`
	DownlinkRX2   float64 `json:"downlink_rx2"`
}

// DutyPlan is the duty-cycle verdict for the group's reporting interval.
// In a region without duty-cycle sub-bands (US902-928) SubBand is "", the
// rows check each uplink against the region's dwell time (DwellTimeS, 0
// when it sets none) and their MinIntervalS is 0.
type DutyPlan struct {
	SubBand    string    `json:"sub_band"`
	DwellTimeS float64   `json:"dwell_time_s"`
	Attempts   int       `json:"attempts_checked"`
	Rows       []DutyRow `json:"rows"`
	Feasible   bool      `json:"feasible_at_every_used_dr"`
}

// DutyRow is the verdict at one data rate.
type DutyRow struct {
	DR           int     `json:"dr"`
	Used         bool    `json:"used"`
	Feasible     bool    `json:"feasible"`
	MinIntervalS float64 `json:"min_interval_s"`
	Warning      string  `json:"warning,omitempty"`
}

// BudgetPlan is one gateway's downlink airtime in one sub-band: shares of
// time, against the sub-band's duty-cycle limit (SubBand "transmitter" and
// limit 1 where the region has no sub-bands), by receive window. RX2 counts
// the answers refused in RX1 and booked in RX2 instead; FallbackUsed is the
// airtime of those sent. LostShare is the share of the answers booked first
// in this sub-band that are sent in neither window.
type BudgetPlan struct {
	Gateway      string  `json:"gateway"`
	SubBand      string  `json:"sub_band"`
	Limit        float64 `json:"duty_cycle_limit"`
	OfferedRX1   float64 `json:"rx1_airtime_needed"`
	OfferedRX2   float64 `json:"rx2_airtime_needed"`
	UsedRX1      float64 `json:"rx1_airtime_used"`
	UsedRX2      float64 `json:"rx2_airtime_used"`
	FallbackUsed float64 `json:"rx1_fallback_airtime_used_in_rx2"`
	Over         bool    `json:"over_limit"`
	LostShare    float64 `json:"answers_lost_share"`
}

// FleetPlan is the fleet-wide part.
type FleetPlan struct {
	EnergyPerCycle   Summary     `json:"energy_per_cycle_j"`
	MaxPerCycle      Summary     `json:"max_energy_per_cycle_j"`
	MinPerCycle      Summary     `json:"min_energy_per_cycle_j"`
	OutlierLevel     float64     `json:"outlier_level"`
	OutlierJ         float64     `json:"outlier_threshold_j"`
	FirstFailure     Summary     `json:"first_failure_years"`
	FlatBy           []FlatBy    `json:"flat_by"`
	Replacement      Replacement `json:"planned_replacement"`
	Risk             float64     `json:"acceptable_risk"`
	ReplaceByRisk    float64     `json:"replace_by_for_risk_years"`
	LifetimeAccuracy float64     `json:"lifetime_cdf_error_bound"`
}

// FlatBy is the date by which a fraction of the fleet's batteries are flat.
type FlatBy struct {
	Fraction float64    `json:"fraction"`
	Count    int64      `json:"count"`
	Median   float64    `json:"median_years"`
	In90     [2]float64 `json:"interval_90_years"`
}

// Replacement is what happens by the planned replacement date.
type Replacement struct {
	AfterYears       float64    `json:"after_years"`
	ExpectedFailures float64    `json:"expected_failures"`
	Failures90       [2]int64   `json:"failures_90"`
	NoFailure        float64    `json:"probability_no_failure"`
	PerGroupExpected []float64  `json:"expected_failures_per_group"`
	In90Fraction     [2]float64 `json:"failed_fraction_90"`
}

// PlanLaws keeps the laws the figures draw: the site model's, each group's
// node lifetime and the planned replacement.
type PlanLaws struct {
	scenario.Laws
	// GroupLife is the lifetime law of a node of each group, s.
	GroupLife []dist.Law
	// ReplaceAfter is the planned replacement, s after deployment.
	ReplaceAfter float64
}

// Progress reports slow steps on stderr.
type Progress func(format string, args ...any)

func summarise(l dist.Law, scale float64) (Summary, error) {
	s := Summary{Mean: l.Mean() / scale, SD: math.Sqrt(l.Variance()) / scale, Median: l.Quantile(0.5) / scale}
	lo, hi, err := dist.EqualTailed(l, 0.90)
	if err != nil {
		return s, err
	}
	s.In90 = [2]float64{lo / scale, hi / scale}
	lo, hi, err = dist.EqualTailed(l, 0.99)
	if err != nil {
		return s, err
	}
	s.In99 = [2]float64{lo / scale, hi / scale}
	lo, hi = l.Support()
	s.Support = [2]float64{lo / scale, hi / scale}
	s.Method, s.CDFError = method(l)
	for _, x := range []float64{s.Mean, s.SD, s.Median, s.In90[0], s.In90[1], s.In99[0], s.In99[1]} {
		if math.IsNaN(x) {
			return s, fmt.Errorf("law %v: a summary value is NaN", l)
		}
	}
	return s, nil
}

// method says how l was computed and its stated bound on the error of its
// distribution function: the law's own Accuracy (dist.Estimated), or exact
// for a finite discrete law (dist.Atomic without a continuous part) and for
// a closed form.
func method(l dist.Law) (string, float64) {
	if e, ok := l.(dist.Estimated); ok {
		a := e.Accuracy()
		return a.Method, a.CDFAbs
	}
	if a, ok := l.(dist.Atomic); ok {
		if _, dens := l.(dist.Densitied); !dens {
			return fmt.Sprintf("exact: finite discrete, %d atoms", len(a.Atoms())), 0
		}
	}
	return "closed form", 0
}

// Build computes the plan of a checked scenario: the site model's laws
// (scenario.Compute), summarised for the report, the JSON and the figures.
func Build(s scenario.Scenario, source string, say Progress) (*Plan, error) {
	say("assembling the model: ADR settlement, collisions, retransmissions")
	m, err := scenario.Build(s, nil)
	if err != nil {
		return nil, err
	}
	laws, err := m.Laws(runtime.GOMAXPROCS(0), func(step string) { say("%s", step) })
	if err != nil {
		return nil, err
	}
	cycles, st := laws.Cycles, laws.Site

	p := &Plan{
		Site: s.Site, Source: source, Region: s.Region.Name(), RegionTables: s.Region.Version(),
		Nodes: s.TotalNodes(), Shared: SharedPlan{BatchCapacitySD: s.Shared.Batch, TemperatureOffsetSDC: s.Shared.Temperature},
		Climate: climateText(s),
	}
	for _, gw := range s.Gateways {
		p.Gateways = append(p.Gateways, gw.Name)
	}
	for _, c := range s.Cells {
		b, err := energy.NewBattery(c.Spec)
		if err != nil {
			return nil, fmt.Errorf("cell %q: %w", c.Spec.Name, err)
		}
		p.Cells = append(p.Cells, CellPlan{Name: c.Spec.Name, Chemistry: c.Spec.Chemistry, NominalEnergyJ: b.NominalEnergy(), UsableEnergyJ: b.UsableEnergy(),
			SelfDischargeW: b.SelfDischargePower(), PulseCurrentA: c.Spec.PulseCurrent, NominalVoltageV: c.Spec.NominalVoltage,
			CapacitySD: c.CapacitySD, CalendarLifeYears: c.CalendarLife / energy.Year, VoltageCurve: c.Voltage != nil})
	}
	p.Laws.Laws = laws
	p.Laws.ReplaceAfter = s.Plan.ReplaceAfter

	say("summarising the groups")
	lifeAcc := st.Accuracy().CDFAbs
	for gi, g := range m.Groups {
		say("  group %q: energy and lifetime laws, intervals, first failure", g.Group.Name)
		gp, lLaw, err := groupPlan(s, g, cycles[gi], laws, gi)
		if err != nil {
			return nil, fmt.Errorf("group %q: %w", g.Group.Name, err)
		}
		p.Groups = append(p.Groups, gp)
		p.Laws.GroupLife = append(p.Laws.GroupLife, lLaw)
	}
	// The site model decides the warnings (scenario.Laws.Warnings).
	ws, err := laws.Warnings()
	if err != nil {
		return nil, err
	}
	for _, w := range ws {
		p.Warnings = append(p.Warnings, w.Text)
	}
	p.Fleet.LifetimeAccuracy = lifeAcc
	for _, b := range m.GatewayBudgets() {
		p.GatewayBudgets = append(p.GatewayBudgets, BudgetPlan{Gateway: s.Gateways[b.Gateway].Name, SubBand: b.Band, Limit: b.DutyCycle,
			OfferedRX1: b.OfferedRX1, OfferedRX2: b.OfferedRX2, UsedRX1: b.UsedRX1, UsedRX2: b.UsedRX2, FallbackUsed: b.UsedFallback,
			Over: b.Over(), LostShare: b.Lost})
	}

	say("fleet extremes of the per-cycle energy")
	if err := fleetEnergy(p, laws); err != nil {
		return nil, err
	}
	say("fleet lifetimes: first failure, flat dates, replacement")
	if err := fleetLife(p, s); err != nil {
		return nil, err
	}
	p.Cautions = cautions(s.Region)
	return p, nil
}

// climateText describes the site's climate in one line.
func climateText(s scenario.Scenario) string {
	if s.Climate == nil {
		return "not given: the cells' reference temperature all year"
	}
	c := s.Climate
	return fmt.Sprintf("monthly means %.1f to %.1f °C (year %.1f °C), daily swing %.0f °C; deployment in %s",
		c.Min()+c.DailySwing()/2, c.Max()-c.DailySwing()/2, c.Mean(), c.DailySwing(), monthNames[s.StartMonth])
}

var monthNames = [12]string{"January", "February", "March", "April", "May", "June", "July", "August", "September", "October", "November", "December"}

func groupPlan(s scenario.Scenario, g scenario.GroupModel, cycles []energy.Cycle, laws scenario.Laws, gi int) (GroupPlan, dist.Law, error) {
	st, spec := laws.Site, laws.SiteSpec.Groups[gi].Node
	gr := g.Group
	gp := GroupPlan{Name: gr.Name, Nodes: gr.Nodes, Gateway: s.Gateways[gr.Gateway].Name, InnerRadiusM: gr.InnerRadius, OuterRadiusM: gr.OuterRadius,
		PayloadBytes: gr.Payload, IntervalS: gr.Interval, JitterS: gr.Jitter, Confirmed: gr.Confirmed, MaxTransmission: gr.MaxTransmissions,
		OutOfReach: g.OutOfReach, Cell: g.Cell.Spec.Name, Node: g.Node.Name, Supply: g.Node.Supply.String()}
	b := g.Battery
	w := g.AllWeights()
	drain, err := laws.Drain(gi)
	if err != nil {
		return gp, nil, err
	}
	currents := drain.Settings
	gp.OutOfReachCurrentA = drain.Unheard
	gp.OutOfReachPlanned = g.Unheard.Prob
	gp.OutOfReachHeaviest = drain.Heaviest
	eLaw := laws.GroupEnergy[gi]
	if gp.EnergyPerCycle, err = summarise(eLaw, 1); err != nil {
		return gp, nil, err
	}
	gp.EnergyPerDay = eLaw.Mean() / g.Period.Mean() * energy.Day
	gp.OutlierJ = laws.GroupMax[gi].UpperQuantile(OutlierLevel)

	cur, err := dist.NewDiscrete(currents, w)
	if err != nil {
		return gp, nil, err
	}
	lo, hi, err := dist.EqualTailed(cur, 0.9)
	if err != nil {
		return gp, nil, err
	}
	gp.Current = CurrentPlan{Mean: cur.Mean(), In90: [2]float64{lo, hi}}

	for _, r := range scenario.MixBreakdown(w, cycles) {
		name := r.Name
		if r.Floor {
			name = "sleep (floor)"
		}
		var vs *float64
		if !math.IsNaN(r.VarianceShare) {
			v := r.VarianceShare
			vs = &v
		}
		gp.Breakdown = append(gp.Breakdown, StatePlan{State: name, RunsPerCycle: r.Runs, MeanEnergyJ: r.MeanAboveFloor, ShareMean: r.MeanShare, ShareVariance: vs})
	}

	for _, d := range g.PerDR {
		dr, err := s.Region.DataRate(d.DR)
		if err != nil {
			return gp, nil, err
		}
		gp.DataRates = append(gp.DataRates, DRPlan{DR: d.DR, Name: dr.String(), Share: d.Share * g.Heard(), AirtimeS: d.Airtime, Load: d.Load,
			UplinkSuccess: d.UplinkSuccess, Frames: d.Frames, DownlinkRX1: d.Windows.RX1, DownlinkRX2: d.Windows.RX2})
	}
	if u := g.Unheard; u.Prob > 0 {
		dr, err := s.Region.DataRate(u.DR)
		if err != nil {
			return gp, nil, err
		}
		air, err := s.Region.UplinkAirtime(u.DR, gr.Payload, 0)
		if err != nil {
			return gp, nil, err
		}
		gp.DataRates = append(gp.DataRates, DRPlan{DR: u.DR, Name: dr.String(), OutOfReach: true, Share: u.Prob, AirtimeS: air,
			Frames: float64(gr.MaxTransmissions)})
	}

	if gp.DutyCycle, err = dutyPlan(s, g); err != nil {
		return gp, nil, err
	}

	seen := map[string]bool{}
	for _, c := range cycles {
		for _, pw := range b.PulseCheck(c) {
			if txt := pw.String(); !seen[txt] {
				seen[txt] = true
				gp.PulseWarnings = append(gp.PulseWarnings, txt)
			}
		}
	}

	lLaw, err := st.NodeLifetime(gi)
	if err != nil {
		return gp, nil, err
	}
	if gp.Lifetime, err = summarise(lLaw, energy.Year); err != nil {
		return gp, nil, err
	}
	gp.Lifetime1 = lLaw.Quantile(0.01) / energy.Year
	gp.EnergyBinds = st.EnergyBinds(gi)
	if lim := spec.CalendarLife; lim > 0 {
		gp.CalendarLimit = (lim - spec.StorageTime) / energy.Year
	}
	if gp.UsableFraction[0], gp.UsableFraction[1], err = st.UsableFraction(gi); err != nil {
		return gp, nil, err
	}
	vs, err := st.VarianceShares(gi)
	if err != nil {
		return gp, nil, err
	}
	gp.Spread = SpreadPlan{PerCycle: vs.PerCycle, Setting: vs.Setting, Capacity: vs.Capacity, Floor: vs.Floor, Active: vs.Active, Batch: vs.Batch, Temperature: vs.Temperature}
	first, err := st.GroupFirstFailure(gi)
	if err != nil {
		return gp, nil, err
	}
	if gp.FirstFailure, err = summarise(first, energy.Year); err != nil {
		return gp, nil, err
	}
	gp.ReplaceByRisk = first.Quantile(s.Plan.AcceptableRisk) / energy.Year
	return gp, lLaw, nil
}

// dutyPlan is the group's duty-cycle (or dwell-time) verdict
// (scenario.GroupModel.DutyCheck) in the plan's units.
func dutyPlan(s scenario.Scenario, g scenario.GroupModel) (DutyPlan, error) {
	dc, err := g.DutyCheck(s)
	if err != nil {
		return DutyPlan{}, err
	}
	dp := DutyPlan{SubBand: dc.SubBand, DwellTimeS: dc.DwellTime, Attempts: dc.Attempts, Feasible: dc.Feasible}
	for _, r := range dc.Rows {
		dp.Rows = append(dp.Rows, DutyRow{DR: r.DR, Used: r.Used, Feasible: r.Feasible, MinIntervalS: r.MinInterval, Warning: r.Warning})
	}
	return dp, nil
}

// OutlierLevel is the probability that the fleet's largest per-cycle energy
// exceeds the outlier threshold in a cycle.
const OutlierLevel = 0.01

func fleetEnergy(p *Plan, laws scenario.Laws) error {
	var err error
	if p.Fleet.EnergyPerCycle, err = summarise(laws.FleetEnergy, 1); err != nil {
		return err
	}
	if p.Fleet.MaxPerCycle, err = summarise(laws.FleetMax, 1); err != nil {
		return err
	}
	if p.Fleet.MinPerCycle, err = summarise(laws.FleetMin, 1); err != nil {
		return err
	}
	p.Fleet.OutlierLevel = OutlierLevel
	p.Fleet.OutlierJ = laws.FleetMax.UpperQuantile(OutlierLevel)
	return nil
}

func fleetLife(p *Plan, s scenario.Scenario) error {
	st := p.Laws.Site
	first, err := st.FirstFailure()
	if err != nil {
		return err
	}
	if p.Fleet.FirstFailure, err = summarise(first, energy.Year); err != nil {
		return err
	}
	p.Fleet.Risk = s.Plan.AcceptableRisk
	p.Fleet.ReplaceByRisk = first.Quantile(s.Plan.AcceptableRisk) / energy.Year
	n := int64(p.Nodes)
	for _, f := range []float64{0.01, 0.10, 0.50} {
		k := max(1, int64(math.Ceil(f*float64(n))))
		kth, err := st.FractionFailed(f)
		if err != nil {
			return err
		}
		lo, hi, err := dist.EqualTailed(kth, 0.9)
		if err != nil {
			return err
		}
		p.Fleet.FlatBy = append(p.Fleet.FlatBy, FlatBy{Fraction: f, Count: k, Median: kth.Quantile(0.5) / energy.Year,
			In90: [2]float64{lo / energy.Year, hi / energy.Year}})
	}
	t := s.Plan.ReplaceAfter
	r := Replacement{AfterYears: t / energy.Year, NoFailure: st.NoFailureBefore(t)}
	for i, g := range s.Groups {
		e := float64(g.Nodes) * p.Laws.GroupLife[i].CDF(t)
		r.PerGroupExpected = append(r.PerGroupExpected, e)
		r.ExpectedFailures += e
	}
	lo, hi, err := failedBand(st, t, 0.9)
	if err != nil {
		return err
	}
	r.Failures90 = [2]int64{int64(lo), int64(hi)}
	r.In90Fraction = [2]float64{float64(lo) / float64(n), float64(hi) / float64(n)}
	p.Fleet.Replacement = r
	return nil
}

// failedBand returns the equal-tailed interval of probability level of the
// number of nodes whose battery is flat by t (s): a mixture over the shared
// factors of Poisson-binomial counts (energy.Site.FailedBy).
func failedBand(st energy.Site, t, level float64) (lo, hi float64, err error) {
	c, err := st.FailedBy(t)
	if err != nil {
		return 0, 0, err
	}
	return dist.EqualTailed(c, level)
}

func cautions(r lora.Region) []string {
	out := []string{
		"Battery handling: primary lithium cells (lithium-thionyl chloride, lithium-manganese dioxide) must not be charged, short-circuited, crushed, opened or heated beyond their rating; follow the cell maker's handling, storage, transport and disposal instructions and the rules for lithium batteries that apply where you work.",
		"Radio regulation: the regional tables and duty-cycle limits used here are for planning, not certification. Local regulations (in Europe ETSI EN 300 220 and the national implementation of ERC Recommendation 70-03; in the United States FCC Part 15) and the current LoRaWAN Regional Parameters govern.",
		"Planning figures are not guarantees: they hold only as far as the scenario's currents, cell data, radio environment and traffic hold. Real cells also fail from passivation, temperature, ageing and manufacturing spread; gateways fail and interference changes. A sensor whose failure can hurt someone needs its own margin and the maintenance and inspection rules that apply locally.",
		"Model limits: collisions are pure ALOHA per gateway, data rate and channel with no capture and no interference between spreading factors or from other networks; out-of-reach nodes are planned at the slowest data rate and full power with every uplink lost, but their frames are not counted in the others' collisions; each gateway sends answers within its sub-bands' duty cycles and with one transmitter, an answer refused in RX1 is tried in RX2 (the network server's fallback) and one refused there too is lost and the node retransmits, and a gateway's deafness while it transmits is not modelled.",
	}
	most := 0
	for _, dr := range r.ADRDataRates() {
		most = max(most, scenario.Channels(r, dr))
	}
	if most > 8 {
		out = append(out, fmt.Sprintf("%s: the gateway is taken to hear all %d uplink channels of a data rate; a gateway that listens on one sub-band of 8 channels (plus one 500 kHz channel), as many networks configure, meets collision loads up to %d times higher on its 125 kHz channels. TXPower 0 is taken at the region's maximum EIRP (%g dBm): a node that cannot reach it has less link budget than planned.",
			r.Name(), most, most/8, r.MaxEIRP()))
	}
	return out

}
