package fleet

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// joules formats an energy in J, mJ or µJ.
func joules(x float64) string {
	a := math.Abs(x)
	switch {
	case a >= 1e4:
		return fmt.Sprintf("%.3g kJ", x/1e3)
	case a >= 1:
		return fmt.Sprintf("%.3g J", x)
	case a >= 1e-3:
		return fmt.Sprintf("%.3g mJ", x*1e3)
	default:
		return fmt.Sprintf("%.3g µJ", x*1e6)
	}
}

// energyUnit is a unit of energy for a line or a column of figures: the
// largest of J, mJ and µJ in which ref (J) is at least 1, so that every
// figure sharing it reads in one unit.
type energyUnit struct {
	name   string
	factor float64 // figures in this unit per joule
}

func unitFor(ref float64) energyUnit {
	switch a := math.Abs(ref); {
	case a >= 1:
		return energyUnit{"J", 1}
	case a >= 1e-3:
		return energyUnit{"mJ", 1e3}
	default:
		return energyUnit{"µJ", 1e6}
	}
}

// num prints x (J) in the unit with three significant digits and no
// exponent, without the unit's name.
func (u energyUnit) num(x float64) string { return sig3(x * u.factor) }

// with prints x (J) in the unit, with its name.
func (u energyUnit) with(x float64) string { return u.num(x) + " " + u.name }

// pair prints an interval (J) in the unit: "[a, b] mJ".
func (u energyUnit) pair(v [2]float64) string {
	return fmt.Sprintf("[%s, %s] %s", u.num(v[0]), u.num(v[1]), u.name)
}

// sig3 prints x with three significant digits in plain decimals (1010,
// 22.2, 0.0163), never in exponent form.
func sig3(x float64) string {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return fmt.Sprintf("%g", x)
	}
	r, err := strconv.ParseFloat(fmt.Sprintf("%.3g", x), 64)
	if err != nil {
		r = x
	}
	decimals := max(0, 2-int(math.Floor(math.Log10(math.Abs(r)))))
	t := strconv.FormatFloat(r, 'f', decimals, 64)
	if strings.Contains(t, ".") {
		t = strings.TrimRight(strings.TrimRight(t, "0"), ".")
	}
	return t
}

// amps formats a current in mA or µA.
func amps(x float64) string {
	if math.Abs(x) >= 1 {
		return fmt.Sprintf("%.3g A", x)
	}
	if math.Abs(x) >= 1e-3 {
		return fmt.Sprintf("%.3g mA", x*1e3)
	}
	return fmt.Sprintf("%.3g µA", x*1e6)
}

// Years formats a duration given in years: "never" for +Inf, whole days
// under a year, otherwise years to two decimals.
func Years(y float64) string {
	if math.IsInf(y, 1) {
		return "never"
	}
	if y < 1 {
		return fmt.Sprintf("%.0f days", y*365.25)
	}
	return fmt.Sprintf("%.2f years", y)
}

func yearPair(v [2]float64) string {
	if v[0] < 1 {
		return fmt.Sprintf("[%.0f, %.0f] days", v[0]*365.25, v[1]*365.25)
	}
	return fmt.Sprintf("[%.2f, %.2f] years", v[0], v[1])
}

// Percent formats a share in [0, 1] as a percentage: one decimal, two
// significant digits under 0.1 %, "0.0 %" under 5e-7 and "–" for NaN.
func Percent(x float64) string {
	switch {
	case math.IsNaN(x):
		return "–"
	case math.Abs(x) < 5e-7:
		return "0.0 %"
	case math.Abs(x) < 0.001:
		return fmt.Sprintf("%.2g %%", 100*x)
	}
	return fmt.Sprintf("%.1f %%", 100*x)
}

func seconds(x float64) string {
	if x < 1 {
		return fmt.Sprintf("%.1f ms", x*1e3)
	}
	return fmt.Sprintf("%.3g s", x)
}

// esc prints a name or text from the scenario file bare, with its control
// and other non-printing characters escaped (scenario.Escape), so that it
// cannot forge a report line or send a terminal command.
func esc(s string) string { return scenario.Escape(s) }

// errWriter passes writes on until the first fails, and keeps that error.
type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) Write(b []byte) (int, error) {
	if e.err != nil {
		return 0, e.err
	}
	n, err := e.w.Write(b)
	if err == nil && n < len(b) {
		err = io.ErrShortWrite
	}
	e.err = err
	return n, err
}

// WriteReport prints the plan in the program's plain layout and returns the
// first write error (a full disk, a closed pipe), if any.
func WriteReport(out io.Writer, p *Plan) error {
	ew := &errWriter{w: out}
	w := io.Writer(ew)
	title := "Fleet energy plan: " + esc(p.Site)
	fmt.Fprintln(w, title)
	fmt.Fprintln(w, strings.Repeat("=", len([]rune(title))))
	row := func(label, format string, args ...any) {
		fmt.Fprintf(w, "  %-20s %s\n", label, fmt.Sprintf(format, args...))
	}
	more := func(format string, args ...any) {
		fmt.Fprintf(w, "  %-20s %s\n", "", fmt.Sprintf(format, args...))
	}
	row("scenario", "%s", esc(p.Source))
	row("region", "%s (tables: %s)", p.Region, p.RegionTables)
	row("fleet", "%d nodes in %d groups; gateways %s", p.Nodes, len(p.Groups), quoteAll(p.Gateways))
	for _, c := range p.Cells {
		row("cell", "%s", esc(c.Name))
		more("%s; %s nominal, %s at the rated usable fraction; self-discharge %s at the reference temperature", esc(c.Chemistry), joules(c.NominalEnergyJ), joules(c.UsableEnergyJ), watts(c.SelfDischargeW))
		cal := "no calendar life given"
		if c.CalendarLifeYears > 0 {
			cal = fmt.Sprintf("calendar life %s", Years(c.CalendarLifeYears))
		}
		end := "end of life at the rated usable fraction"
		if c.VoltageCurve {
			end = "end of life by voltage under the largest pulse"
		}
		more("capacity spread %s (sd, cell to cell); %s; %s", Percent(c.CapacitySD), cal, end)
	}
	row("climate", "%s", p.Climate)
	row("shared", "cell batch capacity sd %s; site temperature offset sd %.1f °C (one draw for the fleet)", Percent(p.Shared.BatchCapacitySD), p.Shared.TemperatureOffsetSDC)
	fmt.Fprintln(w)

	for i, g := range p.Groups {
		head := fmt.Sprintf("Group %d of %d: %s", i+1, len(p.Groups), esc(g.Name))
		fmt.Fprintln(w, head)
		fmt.Fprintln(w, strings.Repeat("-", len([]rune(head))))
		kind := "unconfirmed"
		if g.Confirmed {
			kind = fmt.Sprintf("confirmed, up to %d transmissions", g.MaxTransmission)
		}
		row("nodes", "%d around %s, %.0f–%.0f m", g.Nodes, scenario.Quote(g.Gateway), g.InnerRadiusM, g.OuterRadiusM)
		every := fmt.Sprintf("every %.0f s ± %.0f s", g.IntervalS, g.JitterS)
		if g.JitterS == 0 {
			every = fmt.Sprintf("every %.0f s on a fixed schedule", g.IntervalS)
		}
		row("traffic", "%d-byte uplinks %s, %s", g.PayloadBytes, every, kind)
		row("hardware", "%s, %s; %s", esc(g.Node), g.Supply, esc(g.Cell))
		e := g.EnergyPerCycle
		eu := unitFor(e.Mean)
		row("energy per cycle", "mean %s, sd %s", eu.with(e.Mean), eu.with(e.SD))
		more("90 %% of cycles in %s, 99 %% in %s", eu.pair(e.In90), eu.pair(e.In99))
		row("energy per day", "%s on average", joules(g.EnergyPerDay))
		row("outlier threshold", "%s: the group's largest cycle exceeds it in %s of cycles", eu.with(g.OutlierJ), Percent(p.Fleet.OutlierLevel))
		row("average current", "%s over the group; 90 %% of nodes between %s and %s", amps(g.Current.Mean), amps(g.Current.In90[0]), amps(g.Current.In90[1]))
		top := 0.0
		for _, s := range g.Breakdown {
			top = max(top, s.MeanEnergyJ)
		}
		bu := unitFor(top)
		row("where it goes", "%-26s %14s %12s %9s %12s", "state", "runs per cycle", "mean ("+bu.name+")", "of mean", "of variance")
		for _, s := range g.Breakdown {
			vs := math.NaN()
			if s.ShareVariance != nil {
				vs = *s.ShareVariance
			}
			more("%-26s %14s %12s %9s %12s", esc(s.State), sig3(s.RunsPerCycle), bu.num(s.MeanEnergyJ), Percent(s.ShareMean), Percent(vs))
		}
		if i == 0 {
			more("(runs per cycle: times the state runs in a cycle, on average, below 1 when it runs in some cycles")
			more("only; of variance: covariance with the cycle's energy over its variance, summing to 100 %%: negative")
			more("for a state that runs instead of a costlier one, which may then exceed 100 %%)")
		}
		row("data rates", "%-18s %8s %9s %8s %9s %8s %8s %8s", "", "of nodes", "airtime", "load", "uplink ok", "tx/rep", "dl RX1", "dl RX2")
		for _, d := range g.DataRates {
			if d.OutOfReach {
				more("%-18s %8s %9s %8s %9s %8.3f %8s %8s", "out of reach", Percent(d.Share), seconds(d.AirtimeS), "–", "lost", d.Frames, "none", "none")
				continue
			}
			more("%-18s %8s %9s %8.4f %9s %8.3f %8s %8s", d.Name, Percent(d.Share), seconds(d.AirtimeS), d.Load, Percent(d.UplinkSuccess), d.Frames, Percent(d.DownlinkRX1), Percent(d.DownlinkRX2))
		}
		switch {
		case g.OutOfReachPlanned >= 1:
			more("EVERY node is out of reach at the installation margin: all planned at the ADR back-off")
			more("setting (slowest data rate, full power), every uplink lost; they draw %s", amps(g.OutOfReachCurrentA))
		case g.OutOfReachPlanned > 0:
			drain := ""
			if g.OutOfReachHeaviest {
				drain = ", as much as the heaviest setting: they drain first"
			}
			more("out of reach at the installation margin: %s of placements, planned at the ADR back-off", Percent(g.OutOfReach))
			more("(slowest data rate, full power, every uplink lost); they draw %s%s", amps(g.OutOfReachCurrentA), drain)
		default:
			more("out of reach at the installation margin: %s of placements", Percent(g.OutOfReach))
		}
		dc := g.DutyCycle
		verdict := "keeps the limit at every data rate its nodes use"
		if !dc.Feasible {
			verdict = "BREAKS the limit at a data rate its nodes use"
		}
		if dc.SubBand == "" {
			row("duty cycle", "none in %s; each uplink against its %s dwell time: %s", p.Region, seconds(dc.DwellTimeS), verdict)
			var bad []string
			for _, r := range dc.Rows {
				if r.Used && !r.Feasible {
					bad = append(bad, fmt.Sprintf("DR%d", r.DR))
				}
			}
			if len(bad) > 0 {
				more("too long at %s", strings.Join(bad, ", "))
			}
		} else {
			row("duty cycle", "%s, %d transmission(s) per report: %s", dc.SubBand, dc.Attempts, verdict)
		}
		var mins []string
		for _, r := range dc.Rows {
			if r.Used {
				mark := ""
				if !r.Feasible {
					mark = " (!)"
				}
				mins = append(mins, fmt.Sprintf("DR%d %s%s", r.DR, seconds(r.MinIntervalS), mark))
			}
		}
		if dc.SubBand != "" {
			more("shortest interval allowed: %s", strings.Join(mins, ", "))
		}
		pulse := 0.0
		for _, c := range p.Cells {
			if c.Name == g.Cell {
				pulse = c.PulseCurrentA
			}
		}
		switch {
		case pulse == 0:
			row("cell pulse", "not checked (the scenario gives no pulse rating)")
		case len(g.PulseWarnings) == 0:
			row("cell pulse", "every state within the cell's %s rating", amps(pulse))
		default:
			for _, pw := range g.PulseWarnings {
				row("cell pulse", "WARNING %s", pw)
			}
		}
		if g.UsableFraction[0] == g.UsableFraction[1] {
			row("usable capacity", "%s of the rated capacity", Percent(g.UsableFraction[0]))
		} else {
			row("usable capacity", "%s to %s of the rated capacity, by setting", Percent(g.UsableFraction[0]), Percent(g.UsableFraction[1]))
		}
		l := g.Lifetime
		note := ""
		if sameTime(l.In90[0], l.In90[1]) && g.CalendarLimit > 0 && sameTime(l.In90[0], g.CalendarLimit) {
			note = " (the calendar limit)"
		}
		row("battery lifetime", "median %s; 90 %% of nodes in %s%s", Years(l.Median), yearPair(l.In90), note)
		more("1 %% of this group's nodes are at the end of their life by %s", Years(g.Lifetime1))
		if g.CalendarLimit > 0 {
			binds := "the energy ends every node's life before it"
			switch {
			case g.EnergyBinds < 1e-9:
				binds = "it ends every node's life: the energy outlasts it"
			case g.EnergyBinds < 1-1e-9:
				binds = fmt.Sprintf("the energy ends %s of the lives, the calendar the rest", Percent(g.EnergyBinds))
			}
			more("calendar limit %s after deployment: %s", Years(g.CalendarLimit), binds)
		}
		sp := g.Spread
		var parts []string
		for _, x := range []struct {
			name  string
			share float64
		}{{"radio setting", sp.Setting}, {"cell capacity", sp.Capacity}, {"sleep current", sp.Floor}, {"active energy", sp.Active},
			{"cell batch", sp.Batch}, {"site temperature", sp.Temperature}, {"per cycle", sp.PerCycle}} {
			if x.share >= 0.0005 {
				parts = append(parts, fmt.Sprintf("%s %s", x.name, Percent(x.share)))
			}
		}
		if len(parts) > 0 {
			more("spread of the lifetime (shares of its variance): %s", strings.Join(parts, ", "))
		}
		f := g.FirstFailure
		row("first failure", "in this group: median %s, 90 %% in %s", Years(f.Median), yearPair(f.In90))
		fmt.Fprintln(w)
	}

	writeBudgets(w, p)

	fl := p.Fleet
	fmt.Fprintln(w, "Fleet: energy per cycle")
	fmt.Fprintln(w, "-----------------------")
	fu := unitFor(fl.EnergyPerCycle.Mean)
	row("a node's cycle", "mean %s, 90 %% in %s", fu.with(fl.EnergyPerCycle.Mean), fu.pair(fl.EnergyPerCycle.In90))
	row(fmt.Sprintf("largest of %d", p.Nodes), "mean %s, 90 %% in %s", fu.with(fl.MaxPerCycle.Mean), fu.pair(fl.MaxPerCycle.In90))
	row(fmt.Sprintf("smallest of %d", p.Nodes), "mean %s, 90 %% in %s", fu.with(fl.MinPerCycle.Mean), fu.pair(fl.MinPerCycle.In90))
	row("outlier threshold", "%s: the fleet's largest cycle exceeds it in %s of cycles", fu.with(fl.OutlierJ), Percent(fl.OutlierLevel))
	more("a node above its group's threshold in more cycles than that, and not at the slowest data rates")
	more("(whose nodes keep them and exceed it routinely), is worth a look (stuck retransmissions, a")
	more("failing sensor); the fleet's threshold is set by its heaviest group")
	fmt.Fprintln(w)

	fmt.Fprintln(w, "Fleet: batteries and replacement")
	fmt.Fprintln(w, "--------------------------------")
	row("first failure", "median %s, 90 %% in %s", Years(fl.FirstFailure.Median), yearPair(fl.FirstFailure.In90))
	more("(a node's life ends when its cell is flat or at the cell's calendar limit, whichever comes first)")
	for _, f := range fl.FlatBy {
		note := ""
		if f.In90[0] == f.In90[1] {
			note = " (the cells' calendar limit)"
		}
		row(fmt.Sprintf("%.0f %% at end (%d)", 100*f.Fraction, f.Count), "median %s, 90 %% in %s%s", Years(f.Median), yearPair(f.In90), note)
	}
	r := fl.Replacement
	row("planned replacement", "after %s:", Years(r.AfterYears))
	more("expected failures before it: %.1f of %d (90 %%: %d to %d nodes)", r.ExpectedFailures, p.Nodes, r.Failures90[0], r.Failures90[1])
	more("probability that no battery is flat before it: %s", probability(r.NoFailure))
	var per []string
	for i, g := range p.Groups {
		per = append(per, fmt.Sprintf("%s %.1f", esc(g.Name), r.PerGroupExpected[i]))
	}
	more("expected by group: %s", strings.Join(per, "; "))
	row("replace by", "%s keeps the risk of any flat battery at %s", Years(fl.ReplaceByRisk), Percent(fl.Risk))
	for _, g := range p.Groups {
		more("%s alone: %s", esc(g.Name), Years(g.ReplaceByRisk))
	}
	more("(lifetime laws computed to a CDF error bound of %.1g)", fl.LifetimeAccuracy)
	fmt.Fprintln(w)

	writeDesign(w, p) // design_report.go
	fmt.Fprintln(w, "Laws")
	fmt.Fprintln(w, "----")
	fmt.Fprintln(w, "  each law in one line: mean, sd, 90 % interval, support; how it was computed and its stated")
	fmt.Fprintln(w, "  bound on the error of its distribution function")
	for _, g := range p.Groups {
		wrap(w, "  - ", fmt.Sprintf("%s, energy per cycle: %s", esc(g.Name), lawLine(g.EnergyPerCycle, energyText(g.EnergyPerCycle.Mean))))
		wrap(w, "  - ", fmt.Sprintf("%s, lifetime: %s", esc(g.Name), lawLine(g.Lifetime, yearsText)))
		wrap(w, "  - ", fmt.Sprintf("%s, first failure: %s", esc(g.Name), lawLine(g.FirstFailure, yearsText)))
	}
	for _, x := range []struct {
		name string
		s    Summary
		unit func(float64) string
	}{
		{"a node of the fleet, energy per cycle", fl.EnergyPerCycle, energyText(fl.EnergyPerCycle.Mean)},
		{fmt.Sprintf("the largest cycle of %d", p.Nodes), fl.MaxPerCycle, energyText(fl.EnergyPerCycle.Mean)},
		{fmt.Sprintf("the smallest cycle of %d", p.Nodes), fl.MinPerCycle, energyText(fl.EnergyPerCycle.Mean)},
		{"the fleet's first failure", fl.FirstFailure, yearsText},
	} {
		wrap(w, "  - ", fmt.Sprintf("%s: %s", x.name, lawLine(x.s, x.unit)))
	}
	fmt.Fprintln(w)

	if len(p.Warnings) > 0 {
		fmt.Fprintln(w, "Warnings")
		fmt.Fprintln(w, "--------")
		for _, x := range p.Warnings {
			wrap(w, "  - ", x)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w, "Cautions")
	fmt.Fprintln(w, "--------")
	for _, x := range p.Cautions {
		wrap(w, "  - ", x)
	}
	return ew.err
}

func watts(x float64) string {
	switch a := math.Abs(x); {
	case a >= 1e-3:
		return fmt.Sprintf("%.3g mW", x*1e3)
	default:
		return fmt.Sprintf("%.3g µW", x*1e6)
	}
}

func probability(x float64) string {
	if x != 0 && x < 1e-3 {
		return fmt.Sprintf("%.2g", x)
	}
	return fmt.Sprintf("%.3f", x)
}

func quoteAll(xs []string) string {
	q := make([]string, len(xs))
	for i, x := range xs {
		q[i] = scenario.Quote(x)
	}
	return strings.Join(q, ", ")
}

// wrap prints text after prefix, wrapped at 100 columns.
func wrap(w io.Writer, prefix, text string) {
	indent := strings.Repeat(" ", len([]rune(prefix)))
	line := prefix
	for _, word := range strings.Fields(text) {
		if len([]rune(line))+1+len([]rune(word)) > 100 && strings.TrimSpace(line) != strings.TrimSpace(prefix) {
			fmt.Fprintln(w, line)
			line = indent
		}
		if line == prefix || line == indent {
			line += word
		} else {
			line += " " + word
		}
	}
	fmt.Fprintln(w, line)
}

// sameTime reports whether two of a law's times (quantiles, a support's
// end, a calendar limit, in one unit) are the same within the quantiles'
// stated 1e-12 relative accuracy: the report's notes on an atom then do not
// turn on or off with a quantile's last bits.
func sameTime(a, b float64) bool {
	return a == b || math.Abs(a-b) <= 1e-12*max(math.Abs(a), math.Abs(b))
}

// lawLine is a law's one-line summary: mean, sd, 90 % interval and support
// in one unit, then how it was computed and its stated CDF error.
func lawLine(s Summary, unit func(float64) string) string {
	how := s.Method
	switch {
	case s.CDFError > 1e-12 && s.CDFError < 1e-4:
		how += "; CDF error ≤ 0.0001" // a true bound, without an exponent
	case s.CDFError > 0:
		how += fmt.Sprintf("; CDF error ≤ %.1g", s.CDFError)
	}
	atom := ""
	if sameTime(s.In90[0], s.In90[1]) && sameTime(s.In90[1], s.Support[1]) && s.Support[0] < s.Support[1] && !math.IsInf(s.Support[1], 0) {
		// A lifetime law whose 90 % sits at the top of its support: an
		// atom at the calendar limit, which no input of the model spreads.
		atom = " (an atom at the end of the support: the calendar limit, which nothing in the model spreads)"
	}
	return fmt.Sprintf("mean %s, sd %s, 90 %% in [%s, %s]%s, support [%s, %s]; %s",
		unit(s.Mean), unit(s.SD), unit(s.In90[0]), unit(s.In90[1]), atom, unit(s.Support[0]), unit(s.Support[1]), how)
}

// energyText prints energies (J) in the unit that suits ref (J).
func energyText(ref float64) func(float64) string {
	u := unitFor(ref)
	return func(x float64) string {
		if math.IsInf(x, 0) {
			return fmt.Sprintf("%s %s", infText(x), u.name)
		}
		return u.with(x)
	}
}

// yearsText prints a duration in years with three significant digits.
func yearsText(y float64) string {
	if math.IsInf(y, 0) {
		return infText(y) + " years"
	}
	return sig3(y) + " years"
}

func infText(x float64) string {
	if x < 0 {
		return "−∞"
	}
	return "∞"
}

// writeBudgets prints the gateways' downlink airtime per sub-band against
// the limit, by receive window.
func writeBudgets(w io.Writer, p *Plan) {
	if len(p.GatewayBudgets) == 0 {
		return
	}
	fmt.Fprintln(w, "Gateways: downlink airtime")
	fmt.Fprintln(w, "--------------------------")
	fmt.Fprintln(w, "  share of time each gateway transmits answers, per sub-band, against its duty-cycle limit;")
	fmt.Fprintln(w, "  RX2 needed includes the answers refused in RX1 and tried in RX2; lost: sent in neither window")
	fmt.Fprintf(w, "  %-24s %-26s %7s %10s %10s %10s %10s %10s %7s\n", "gateway", "sub-band", "limit", "RX1 needed", "RX1 used", "RX2 needed", "RX2 used", "fallback", "lost")
	for _, b := range p.GatewayBudgets {
		flag := ""
		if b.Over {
			flag = "  OVER"
		}
		fmt.Fprintf(w, "  %-24s %-26s %7s %10s %10s %10s %10s %10s %7s%s\n", esc(b.Gateway), b.SubBand, Percent(b.Limit), Percent(b.OfferedRX1), Percent(b.UsedRX1),
			Percent(b.OfferedRX2), Percent(b.UsedRX2), Percent(b.FallbackUsed), Percent(b.LostShare), flag)
	}
	fmt.Fprintln(w, "  (limits for planning, not certification: check the local rules for gateways and defer to the regulator)")
	fmt.Fprintln(w)
}
