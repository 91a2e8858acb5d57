package fleet

import (
	"fmt"
	"io"
	"strings"

	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// interval prints a reading interval in s, min or h.
func interval(s float64) string {
	switch {
	case s >= 2*86400:
		return sig3(s/86400) + " days"
	case s >= 7200:
		return sig3(s/3600) + " h"
	case s >= 120:
		return sig3(s/60) + " min"
	}
	return sig3(s) + " s"
}

// writeDesign prints the "what it takes" section (nothing without one).
func writeDesign(w io.Writer, p *Plan) {
	d := p.Design
	if d == nil {
		return
	}
	head := "What it takes"
	fmt.Fprintln(w, head)
	fmt.Fprintln(w, strings.Repeat("-", len(head)))
	row := func(label, format string, args ...any) {
		fmt.Fprintf(w, "  %-20s %s\n", label, fmt.Sprintf(format, args...))
	}
	more := func(format string, args ...any) {
		fmt.Fprintf(w, "  %-20s %s\n", "", fmt.Sprintf(format, args...))
	}
	row("target", "%s", d.Target)
	for _, g := range d.Groups {
		kind := "unconfirmed"
		if g.Confirmed {
			kind = fmt.Sprintf("confirmed, up to %d transmissions", g.MaxTransmissions)
		}
		row(esc(g.Name), "%s; %s; %d reading(s) per uplink; receive window %s", esc(g.Cell), kind, g.ReadingsPerUplink, scenario.Quote(g.Window))
		figure := fmt.Sprintf("P(flat before %s) = %s (± %s), margin %s", Years(d.TargetYears), Percent(g.Probability), errPct(g.ProbError), Percent(g.Margin))
		if d.TargetKind == "lifetime_quantile" {
			figure = fmt.Sprintf("%s point of the lifetime %s, margin %s", Percent(d.TargetLevel), Years(g.Achieved), Years(g.Margin))
		}
		if !g.Feasible {
			more("CANNOT MEET THE TARGET: best achievable at a reading every %s: %s; what binds: %s", interval(g.ReadingIntervalS), figure, g.Binds)
			continue
		}
		more("a reading every %s (uplink every %s; the scenario's interval is %s): %s", interval(g.ReadingIntervalS), interval(g.UplinkIntervalS), interval(g.CurrentIntervalS), figure)
		if g.Binds == "energy" {
			more("what sets it: the energy; the shortest feasible interval lies in (%s, %s]", interval(g.IntervalLowS), interval(g.ReadingIntervalS))
		} else {
			more("what sets it: the %s (the energy would allow a shorter interval)", g.Binds)
		}
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "  lifetime of a node at the best choice against the reading interval (years; %s and %s points)\n", Percent(d.QuantileQ[0]), Percent(d.QuantileQ[1]))
	fmt.Fprintf(w, "  %-20s", "reading interval")
	for _, g := range d.Groups {
		fmt.Fprintf(w, " %22s", trimTo(esc(g.Name), 22))
	}
	fmt.Fprintln(w)
	if len(d.Groups) > 0 {
		for i := range d.Groups[0].Quantiles {
			fmt.Fprintf(w, "  %-20s", "")
			for _, g := range d.Groups {
				if i >= len(g.Quantiles) {
					fmt.Fprintf(w, " %22s", "")
					continue
				}
				q := g.Quantiles[i]
				mark := " "
				if q.Meets {
					mark = "*"
				}
				fmt.Fprintf(w, " %8s %5.2f %5.2f%s", interval(q.IntervalS), q.Years[0], q.Years[1], mark)
			}
			fmt.Fprintln(w)
		}
	}
	more("(* meets the target; each group's own interval found is among its rows)")
	fmt.Fprintln(w)

	pp := d.Policies
	fmt.Fprintf(w, "  replacement policies for the site as planned, over %s at an accepted risk of %s of any flat node; %.2f per visit, %.2f per cell\n",
		Years(pp.HorizonYears), Percent(pp.Risk), pp.CostVisit, pp.CostCell)
	if len(pp.OutOfReach) > 0 {
		var rows []string
		for _, o := range pp.OutOfReach {
			rows = append(rows, fmt.Sprintf("%s %s (%.2g of %d nodes)", esc(o.Group), Percent(o.Share), o.ExpectedNodes, o.Nodes))
		}
		more("for the nodes in reach; expected out of reach, to be found and fixed at commissioning: %s", strings.Join(rows, "; "))
	}
	for i, r := range pp.Rows {
		mark := " "
		if i == pp.Cheapest {
			mark = ">"
		}
		fmt.Fprintf(w, "  %s %s\n", mark, r.Policy)
		var per []string
		for gi, t := range r.PeriodsYears {
			if t == 0 {
				per = append(per, fmt.Sprintf("%s: none", esc(d.Groups[gi].Name)))
			} else {
				per = append(per, fmt.Sprintf("%s: %s", esc(d.Groups[gi].Name), Years(t)))
			}
		}
		more("  every  %s", strings.Join(per, "; "))
		more("  visits per year %s (90 %%: %s–%s); cells per year %s (90 %%: %s–%s)", sig3(r.VisitsPerYear.Mean), sig3(r.VisitsPerYear.Low), sig3(r.VisitsPerYear.High),
			sig3(r.CellsPerYear.Mean), sig3(r.CellsPerYear.Low), sig3(r.CellsPerYear.High))
		more("  P(any node flat within the horizon) %s (± %s); cost %.0f (90 %%: %.0f–%.0f)", Percent(r.AnyFlat), errPct(r.AnyFlatError), r.Cost.Mean, r.Cost.Low, r.Cost.High)
	}
	if pp.Feasible {
		more("> the cheapest policy that meets the accepted risk")
	} else {
		more("> NO POLICY MEETS THE ACCEPTED RISK: the least risky is marked")
	}
	for _, n := range d.Notes {
		wrap(w, "  - ", n)
	}
	fmt.Fprintln(w)
}

func trimTo(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}

// errPct prints a stated error as a percentage: like pct, except that an
// error too small for pct's "0.0 %" keeps two significant digits, so that
// a small stated error is not read as none.
func errPct(x float64) string {
	if x > 0 && x < 5e-7 {
		return fmt.Sprintf("%.2g %%", 100*x)
	}
	return Percent(x)
}
