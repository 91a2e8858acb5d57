package main

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"time"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// fleet holds every device's state as the log is read.
type fleet struct {
	groups  []*group
	byName  map[string]*group
	devs    map[string]*device
	order   []*device
	records int
	skipped int
	newest  float64
	source  string
}

type group struct {
	cfg     groupConfig
	obs     lora.Observer
	devices []*device
}

type device struct {
	name string
	g    *group
	d    lora.Device
}

func newFleet(groups []groupConfig) (*fleet, error) {
	f := &fleet{byName: map[string]*group{}, devs: map[string]*device{}, newest: math.Inf(-1)}
	for _, c := range groups {
		obs, err := lora.NewObserver(c.radio, c.spec, energy.Environment{}, lora.ObserverOptions{Level: c.level})
		if err != nil {
			return nil, fmt.Errorf("group %s: %w", c.name, err)
		}
		g := &group{cfg: c, obs: obs}
		f.groups = append(f.groups, g)
		f.byName[c.name] = g
	}
	return f, nil
}

// apply reads one well-formed record into its device's state; a record
// the device's state refuses is a recordError.
func (f *fleet) apply(line int, r Record) error {
	bad := func(field, value, rule string) error {
		return recordError{Line: line, Field: field, Value: value, Rule: rule}
	}
	t := *r.T
	dv := f.devs[r.Dev]
	if r.Kind == "install" {
		g := f.byName[r.Group]
		switch {
		case g == nil:
			names := make([]string, len(f.groups))
			for i, g := range f.groups {
				names[i] = g.cfg.name
			}
			return bad("group", quote(r.Group), "must be one of the program's groups: "+strings.Join(names, ", "))
		case dv != nil:
			return bad("dev", quote(r.Dev), "is installed already (a new cell is a \"swap\" record)")
		case len(f.devs) >= maxDevices:
			return bad("dev", quote(r.Dev), fmt.Sprintf("a log holds at most %d devices", maxDevices))
		}
		d, err := g.obs.NewDevice(t)
		if err != nil {
			return bad("t", fmt.Sprint(t), err.Error())
		}
		dv = &device{name: r.Dev, g: g, d: d}
		f.devs[r.Dev] = dv
		f.order = append(f.order, dv)
		g.devices = append(g.devices, dv)
	} else {
		if dv == nil {
			return bad("dev", quote(r.Dev), "has no \"install\" record before this one")
		}
		obs := dv.g.obs
		var d lora.Device
		var err error
		field, value := r.Kind, ""
		switch r.Kind {
		case "swap":
			d, err = obs.Swap(dv.d, t)
			field, value = "t", fmt.Sprint(t)
		case "up":
			d, err = obs.Uplink(dv.d, lora.Uplink{Time: t, FCnt: uint32(*r.FCnt), DR: *r.DR, TXPower: *r.TXP})
			field, value = "fcnt, dr, txp", fmt.Sprintf("%d, %d, %d", *r.FCnt, *r.DR, *r.TXP)
		case "down":
			d, err = obs.Downlink(dv.d, t, *r.Win)
			field, value = "win", fmt.Sprint(*r.Win)
		case "join":
			d, err = obs.Join(dv.d, t, *r.DR)
			field, value = "dr", fmt.Sprint(*r.DR)
		case "status":
			d, err = obs.Status(dv.d, t, *r.Bat)
			field, value = "bat", fmt.Sprint(*r.Bat)
		case "mv":
			d, err = obs.Voltage(dv.d, t, *r.MV)
			field, value = "mv", fmt.Sprint(*r.MV)
		}
		if err != nil {
			return bad(field, value, fmt.Sprintf("at t = %.0f: %v", t, err))
		}
		dv.d = d
	}
	f.records++
	f.newest = max(f.newest, t)
	return nil
}

// Results is what the program prints (the JSON form; the report shows
// the same).
type Results struct {
	Source      string          `json:"source"`
	Invented    bool            `json:"invented_demo_data"`
	Records     int             `json:"records"`
	Skipped     int             `json:"skipped_records"`
	Today       string          `json:"today"`
	ServiceDate string          `json:"service_date"`
	Horizon     float64         `json:"horizon_days"`
	Risk        float64         `json:"risk"`
	Level       float64         `json:"outlier_level"`
	Groups      []GroupResult   `json:"groups"`
	Devices     []DeviceResult  `json:"devices"`
	Service     []ServiceResult `json:"service_list"`
	Flagged     []DeviceResult  `json:"flagged"`
	Caution     string          `json:"caution"`
}

// GroupResult is one group's summary.
type GroupResult struct {
	Name    string `json:"name"`
	Devices int    `json:"devices"`
	// The floor-current spread (log-sd) learned from the group's devices
	// by marginal likelihood, with its standard error, and the planned one.
	FloorLearned   bool    `json:"floor_spread_learned"` // false: the devices did not tell it (the planned one is used)
	FloorSpread    float64 `json:"floor_spread"`
	FloorSpreadErr float64 `json:"floor_spread_stderr"`
	FloorPlanned   float64 `json:"floor_spread_planned"`
	// The cell batch's capacity factor learned from the devices (the
	// shared tier: posterior mean and standard deviation).
	BatchFactor    float64 `json:"batch_factor"`
	BatchFactorSD  float64 `json:"batch_factor_sd"`
	MedianRemain   float64 `json:"median_of_median_remaining_days"`
	FlatExpected   float64 `json:"flat_by_service_date_expected"`
	FlatLow        float64 `json:"flat_by_service_date_5pc"`
	FlatHigh       float64 `json:"flat_by_service_date_95pc"`
	External       int     `json:"external_power"`
	SuspectedSwaps int     `json:"suspected_swaps"`
}

// DeviceResult is one device's laws.
type DeviceResult struct {
	Name      string  `json:"name"`
	Group     string  `json:"group"`
	AgeDays   float64 `json:"cell_age_days"`
	Frames    int64   `json:"frames_heard"`
	Unheard   int64   `json:"frames_unheard"`
	External  bool    `json:"external_power,omitempty"`
	Median    float64 `json:"remaining_median_days"`
	Low       float64 `json:"remaining_5pc_days"`
	High      float64 `json:"remaining_95pc_days"`
	StatedErr float64 `json:"remaining_cdf_error"`
	Risk      float64 `json:"p_flat_by_service_date"`
	Outlier   float64 `json:"outlier_p"`
	Activity  float64 `json:"outlier_p_activity"`
	Reading   float64 `json:"outlier_p_reading"`
	Z         float64 `json:"outlier_score"`
	Suspect   bool    `json:"suspected_swap,omitempty"`
	Note      string  `json:"note,omitempty"`
}

// ServiceResult is one entry of the service list.
type ServiceResult struct {
	Rank   int     `json:"rank"`
	Device string  `json:"device"`
	Risk   float64 `json:"p_flat_by_service_date"`
}

// results computes every law at the newest record's time.
func (f *fleet) results(o options) (*Results, error) {
	if len(f.order) == 0 {
		return nil, fmt.Errorf("the log holds no device (an \"install\" record starts one)")
	}
	now := f.newest
	horizon := o.horizon * energy.Day
	res := &Results{Source: f.source, Invented: strings.HasPrefix(f.source, "the built-in demo"), Records: f.records, Skipped: f.skipped,
		Today: stamp(now), ServiceDate: stamp(now + horizon), Horizon: o.horizon, Risk: o.risk, Level: o.level,
		Caution: "planning figures for service visits, not a guarantee; handle, replace and dispose of lithium cells as their maker instructs and local rules require"}
	type ranked struct {
		dev  DeviceResult
		risk float64
	}
	var all []ranked
	for _, g := range f.groups {
		gr := GroupResult{Name: g.cfg.name, Devices: len(g.devices), FloorPlanned: g.cfg.spec.Spread.Floor}
		var tallies []energy.Tally
		var live []*device
		for _, dv := range g.devices {
			if dv.d.SuspectSwap {
				gr.SuspectedSwaps++
			}
			if dv.d.Tally.External() {
				gr.External++
				// No law: the figures stay 0 and the note says why.
				all = append(all, ranked{DeviceResult{Name: dv.name, Group: g.cfg.name, External: true, Note: "external power: no battery life to estimate",
					AgeDays: (now - dv.d.Tally.Install()) / energy.Day, Frames: dv.d.Frames, Unheard: dv.d.Unheard, Outlier: 1, Activity: 1, Reading: 1}, -1})
				continue
			}
			tallies = append(tallies, dv.d.Tally)
			live = append(live, dv)
		}
		if len(tallies) == 0 {
			res.Groups = append(res.Groups, gr)
			continue
		}
		costs, opt := g.obs.Costs(), g.obs.Options()
		spec := g.cfg.spec
		est, err := energy.EstimateSpread(energy.FloorSpread, spec, energy.Environment{}, costs, opt, tallies, now,
			[]float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.8, 1.0})
		if err != nil {
			return nil, fmt.Errorf("group %s: %w", g.cfg.name, err)
		}
		gr.FloorSpread = spec.Spread.Floor
		if !math.IsInf(est.StdErr, 1) {
			spec.Spread.Floor = est.Value // the group's learned prior
			gr.FloorSpread, gr.FloorSpreadErr, gr.FloorLearned = est.Value, est.StdErr, true
		}
		plan, err := energy.PlanSharedService(spec, energy.Environment{}, g.cfg.shared, costs, opt, tallies, now, horizon)
		if err != nil {
			return nil, fmt.Errorf("group %s: %w", g.cfg.name, err)
		}
		gr.BatchFactor, gr.BatchFactorSD = plan.BatchMean, plan.BatchSD
		gr.FlatExpected, gr.FlatLow, gr.FlatHigh = plan.Expected, plan.Low, plan.High
		model, err := g.obs.Model().WithSpread(spec.Spread)
		if err != nil {
			return nil, err
		}
		var medians []float64
		for i, dv := range live {
			rem := plan.Remaining[i]
			dr := DeviceResult{Name: dv.name, Group: g.cfg.name, AgeDays: (now - dv.d.Tally.Install()) / energy.Day,
				Frames: dv.d.Frames, Unheard: dv.d.Unheard, Suspect: dv.d.SuspectSwap,
				Median: rem.Quantile(0.5) / energy.Day, Low: rem.Quantile(0.05) / energy.Day, High: rem.Quantile(0.95) / energy.Day,
				StatedErr: plan.StatedErr[i], Risk: plan.Risk[i]}
			medians = append(medians, dr.Median)
			ot, err := model.Outlier(dv.d.Tally, now)
			if err != nil {
				dr.Note = "no outlier test: " + err.Error()
				dr.Outlier, dr.Activity, dr.Reading = 1, 1, 1
			} else {
				dr.Outlier, dr.Activity, dr.Reading, dr.Z = ot.P, ot.Activity, ot.Reading, ot.Z
				if math.IsInf(dr.Z, 1) {
					dr.Z, dr.Note = 38.5, "outlier p-value below the smallest float (score shown as 38.5)"
				}
				if ot.Flag(o.level) {
					res.Flagged = append(res.Flagged, dr)
				}
			}
			all = append(all, ranked{dr, dr.Risk})
		}
		slices.Sort(medians)
		gr.MedianRemain = medians[len(medians)/2]
		res.Groups = append(res.Groups, gr)
	}
	slices.SortStableFunc(all, func(a, b ranked) int {
		switch {
		case a.risk > b.risk:
			return -1
		case a.risk < b.risk:
			return 1
		}
		return strings.Compare(a.dev.Name, b.dev.Name)
	})
	for _, a := range all {
		res.Devices = append(res.Devices, a.dev)
		if a.risk >= o.risk && a.risk >= 0 {
			res.Service = append(res.Service, ServiceResult{Rank: len(res.Service) + 1, Device: a.dev.Name, Risk: a.risk})
		}
	}
	slices.SortStableFunc(res.Flagged, func(a, b DeviceResult) int {
		switch {
		case a.Outlier < b.Outlier:
			return -1
		case a.Outlier > b.Outlier:
			return 1
		}
		return strings.Compare(a.Name, b.Name)
	})
	return res, nil
}

func stamp(t float64) string {
	return time.Unix(int64(math.Round(t)), 0).UTC().Format("2006-01-02 15:04 UTC")
}

// write prints the report.
func (r *Results) write(w io.Writer, o options) {
	p := func(format string, a ...any) { fmt.Fprintf(w, format, a...) }
	p("Remaining life of each device from what the network sees\n")
	if r.Invented {
		p("Source: %s.\n", r.Source)
	} else {
		p("Source: %s.\n", r.Source)
	}
	p("%d records read, %d skipped; today = the newest record, %s; service date %s (%g days on).\n\n",
		r.Records, r.Skipped, r.Today, r.ServiceDate, r.Horizon)
	p("Groups (floor spread: log-sd of the sleep current learned from the group's devices; batch: the cell batch's capacity factor learned from them)\n")
	p("  %-14s %7s  %-18s %-13s %12s  %s\n", "group", "devices", "floor spread", "batch", "median life", "flat by the service date")
	for _, g := range r.Groups {
		p("  %-14s %7d  %.2f ± %.2f (%.2f)  %.3f ± %.3f %10.0f d  %.1f expected, 90 %% in [%g, %g]\n",
			g.Name, g.Devices, g.FloorSpread, g.FloorSpreadErr, g.FloorPlanned, g.BatchFactor, g.BatchFactorSD, g.MedianRemain,
			g.FlatExpected, g.FlatLow, g.FlatHigh)
		if g.External > 0 || g.SuspectedSwaps > 0 {
			p("  %-14s %d on external power, %d with a suspected cell swap (confirm from the maintenance record)\n", "", g.External, g.SuspectedSwaps)
		}
	}
	p("\nDevices, highest risk first (%d of %d; -devices n for more)\n", min(o.devicesOut, len(r.Devices)), len(r.Devices))
	p("  %-18s %7s %21s %20s %9s\n", "device", "age d", "remaining: median d", "90 % interval d", "P(flat)")
	for i, d := range r.Devices {
		if i >= o.devicesOut {
			break
		}
		if d.External {
			p("  %-18s %7.0f  %s\n", d.Name, d.AgeDays, d.Note)
			continue
		}
		p("  %-18s %7.0f %21.0f %9.0f – %-8.0f %9.3f\n", d.Name, d.AgeDays, d.Median, d.Low, d.High, d.Risk)
	}
	p("\nService list: %d devices flat by %s with probability >= %g\n", len(r.Service), r.ServiceDate, r.Risk)
	for i, s := range r.Service {
		if i >= 25 {
			p("  … %d more (-json lists them all)\n", len(r.Service)-25)
			break
		}
		p("  %3d. %-18s %.3f\n", s.Rank, s.Device, s.Risk)
	}
	p("\nFlagged: %d devices whose observations are improbable under their group's model at level %g\n", len(r.Flagged), r.Level)
	p("(the level is the false-alarm rate per device: about %.1f of %d ordinary devices would be flagged by chance)\n",
		r.Level*float64(len(r.Devices)), len(r.Devices))
	for _, d := range r.Flagged {
		why := "its newest battery level lies off what its counted energy and its group allow (a board drawing too much, a weak cell)"
		if d.Activity <= d.Reading {
			why = "lately it sends much more than it used to (a retransmission loop, a slower data rate)"
		}
		if d.Outlier < 1e-300 {
			p("  %-18s p < 1e-300: %s\n", d.Name, why)
			continue
		}
		p("  %-18s p = %.2g (%.1f σ): %s\n", d.Name, d.Outlier, d.Z, why)
	}
	p("\nCaution: %s.\n", r.Caution)
}
