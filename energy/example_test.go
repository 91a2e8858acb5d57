package energy_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// soilNode describes an invented soil-moisture node (demo figures, not a
// measured device): every 15 minutes it wakes, reads its probe for 80–120 ms,
// sends one uplink at a spreading factor drawn from sf, and opens its
// receive windows; a downlink arrives in the first window one time in ten,
// otherwise both windows time out. The spreading factor is drawn once per
// cycle and shared by the uplink and both windows.
func soilNode(sf dist.Discrete) (energy.Cycle, error) {
	const v = 3.6 // supply (V)
	wake := energy.MustFixedState("wake", 4*energy.MilliAmp, v, 3*energy.Millisecond)
	probe := energy.MustState("probe", dist.MustPointMass(1.2*energy.MilliAmp), v,
		dist.MustUniform(80*energy.Millisecond, 120*energy.Millisecond))
	radio, err := energy.Configured(sf, func(f float64) (energy.Stage, error) {
		air := 0.06 * math.Pow(2, f-7) // invented airtime (s), doubling per step
		tx, err := energy.NewFixedState("uplink", 38*energy.MilliAmp, v, air)
		if err != nil {
			return nil, err
		}
		rx := energy.MustFixedState("downlink", 11*energy.MilliAmp, v, air/2)
		timeout := energy.MustFixedState("window timeout", 11*energy.MilliAmp, v, 0.01*math.Pow(2, f-7))
		windows, err := energy.Choice([]float64{0.1, 0.9},
			[]energy.Stage{rx, energy.MustSequence(timeout, timeout)})
		if err != nil {
			return nil, err
		}
		return energy.Sequence(tx, windows)
	})
	if err != nil {
		return energy.Cycle{}, err
	}
	return energy.NewCycle(energy.MustSequence(wake, probe, radio),
		dist.MustPointMass(15*energy.Minute), 1.8*energy.MicroAmp*v)
}

// Describe a cycle and see which state drives its mean and its spread.
func ExampleNewCycle() {
	sf := dist.MustDiscrete([]float64{7, 10, 12}, []float64{0.6, 0.3, 0.1})
	c, err := soilNode(sf)
	if err != nil {
		fmt.Println(err)
		return
	}
	lo, hi, _ := dist.EqualTailed(c.Energy(), 0.95)
	fmt.Printf("mean %.2f mJ per cycle, 95 %% of cycles in [%.2f, %.2f] mJ\n",
		c.MeanEnergy()/energy.MilliJoule, lo/energy.MilliJoule, hi/energy.MilliJoule)
	fmt.Printf("average current %.2f µA\n", c.MeanCurrent(3.6)/energy.MicroAmp)
	for _, s := range c.Breakdown() {
		name := s.Name
		if s.Floor {
			name = "(sleep floor)"
		}
		fmt.Printf("%-15s %5.2f runs %7.3f mJ  mean share %5.1f %%  variance share %5.1f %%\n",
			name, s.Runs, s.MeanEnergy/energy.MilliJoule, 100*s.MeanShare, 100*s.VarianceShare)
	}
	r := rand.New(rand.NewPCG(1, 2))
	fmt.Printf("one simulated cycle: %.2f mJ\n", c.Rand(r)/energy.MilliJoule)
	// Output:
	// mean 62.35 mJ per cycle, 95 % of cycles in [15.23, 294.35] mJ
	// average current 19.24 µA
	// wake             1.00 runs   0.043 mJ  mean share   0.1 %  variance share   0.0 %
	// probe            1.00 runs   0.432 mJ  mean share   0.7 %  variance share   0.0 %
	// uplink           1.00 runs  50.890 mJ  mean share  81.6 %  variance share  90.8 %
	// downlink         0.10 runs   0.737 mJ  mean share   1.2 %  variance share   1.4 %
	// window timeout   1.80 runs   4.419 mJ  mean share   7.1 %  variance share   7.8 %
	// (sleep floor)    1.00 runs   5.832 mJ  mean share   9.4 %  variance share   0.0 %
	// one simulated cycle: 15.34 mJ
}

// Compute the lifetime law of a node on a bobbin cell, and compare it with
// the renewal quick estimate.
func ExampleNewLifetime() {
	sf := dist.MustDiscrete([]float64{7, 10, 12}, []float64{0.6, 0.3, 0.1})
	c, err := soilNode(sf)
	if err != nil {
		fmt.Println(err)
		return
	}
	cell := energy.MustBattery(energy.TypicalER14505())
	l, err := energy.NewLifetime(c, cell)
	if err != nil {
		fmt.Println(err)
		return
	}
	years := l.InYears()
	fmt.Printf("median lifetime %.2f years; 90 %% of nodes last %.2f to %.2f years\n",
		years.Quantile(0.5), years.Quantile(0.05), years.UpperQuantile(0.05))
	fmt.Printf("1 node in 10 000 is flat before %.2f years\n", years.Quantile(1e-4))
	fmt.Printf("deterministic figure (capacity ÷ average power): %.2f years\n",
		energy.Years(cell.DeterministicLifetime(c.MeanPower())))
	re, err := l.RenewalEstimate()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("renewal quick estimate: median %.2f years, largest CDF error %.1e\n",
		re.Law.Quantile(0.5)/energy.Year, re.MaxCDFError)
	for _, w := range energy.MustBattery(energy.TypicalCR2032()).PulseCheck(c) {
		fmt.Println("on a CR2032:", w)
	}
	// Output:
	// median lifetime 12.46 years; 90 % of nodes last 12.42 to 12.49 years
	// 1 node in 10 000 is flat before 12.37 years
	// deterministic figure (capacity ÷ average power): 12.46 years
	// renewal quick estimate: median 12.46 years, largest CDF error 3.0e-04
	// on a CR2032: state "uplink" draws up to 38 mA, above the cell's rated pulse current 15 mA: the voltage may sag below the cut-off; check the data sheet or add a buffer capacitor
}

// Plan battery replacements for a fleet of three groups of nodes. Adaptive
// data rate keeps each node near one spreading factor, so the groups differ
// by their spreading-factor mix; within a group the cycles are independent
// and the spread of a lifetime over hundreds of thousands of cycles is
// small. The model counts energy only: lifetimes beyond a cell's rated
// shelf life, and failures from other causes, need the data sheet and local
// maintenance practice.
func ExampleFleet_ReplacementPlan() {
	groups := []struct {
		name  string
		sf    []float64 // probabilities of SF 7, 10, 12
		count int64
	}{
		{"near gateway", []float64{0.9, 0.1, 0}, 600},
		{"mid field", []float64{0.4, 0.5, 0.1}, 300},
		{"basement", []float64{0, 0.3, 0.7}, 100},
	}
	cell := energy.MustBattery(energy.TypicalER14505())
	var fg []energy.FleetGroup
	for _, g := range groups {
		c, err := soilNode(dist.MustDiscrete([]float64{7, 10, 12}, g.sf))
		if err != nil {
			fmt.Println(err)
			return
		}
		fg = append(fg, energy.FleetGroup{Name: g.name, Cycle: c, Battery: cell, Count: g.count})
	}
	fleet, err := energy.NewFleet(fg)
	if err != nil {
		fmt.Println(err)
		return
	}
	plan, err := fleet.ReplacementPlan(0.1)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, g := range plan.Groups {
		fmt.Printf("%-12s %4d nodes: median life %5.2f years, replace by %5.2f years (10 %% risk of a flat cell)\n",
			g.Name, g.Count, energy.Years(g.MedianLifetime), energy.Years(g.ReplaceBy))
	}
	fmt.Printf("whole fleet: replace by %.2f years\n", energy.Years(plan.FleetReplaceBy))
	fmt.Printf("P(no flat cell by then) = %.3f; a month earlier %.3f\n",
		fleet.NoFailureBefore(plan.FleetReplaceBy), fleet.NoFailureBefore(plan.FleetReplaceBy-energy.Month))
	failed, err := fleet.FailedBy(10.6 * energy.Year)
	if err != nil {
		fmt.Println(err)
		return
	}
	lo, hi, _ := dist.EqualTailed(failed, 0.9)
	fmt.Printf("flat cells after 10.6 years: %.1f expected, 90 %% interval %g to %g\n", failed.Mean(), lo, hi)
	// Output:
	// near gateway  600 nodes: median life 29.04 years, replace by 28.98 years (10 % risk of a flat cell)
	// mid field     300 nodes: median life 10.58 years, replace by 10.52 years (10 % risk of a flat cell)
	// basement      100 nodes: median life  3.71 years, replace by  3.69 years (10 % risk of a flat cell)
	// whole fleet: replace by 3.69 years
	// P(no flat cell by then) = 0.899; a month earlier 1.000
	// flat cells after 10.6 years: 378.1 expected, 90 % interval 370 to 385
}

// A fleet given by lifetime laws (invented): 200 cellar meters whose nodes
// settle on one of two radio settings, so that their lifetime is the
// mixture of two laws, and 50 roof meters with one law.
func ExampleNewFleetOfLaws() {
	year := energy.Year
	near := dist.MustNormal(9*year, 0.4*year)
	far := dist.MustNormal(5*year, 0.3*year)
	cellar, err := dist.Mixture([]float64{0.7, 0.3}, []dist.Law{
		dist.MustTruncated(near, 0, math.Inf(1)), dist.MustTruncated(far, 0, math.Inf(1))})
	if err != nil {
		fmt.Println(err)
		return
	}
	roof := dist.MustTruncated(dist.MustNormal(7*year, 0.5*year), 0, math.Inf(1))
	f, err := energy.NewFleetOfLaws([]energy.FleetLawGroup{
		{Name: "cellar", Lifetime: cellar, Count: 200},
		{Name: "roof", Lifetime: roof, Count: 50},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	plan, err := f.ReplacementPlan(0.05)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, g := range plan.Groups {
		fmt.Printf("%s: replace by %.2f years\n", g.Name, g.ReplaceBy/year)
	}
	fmt.Printf("whole fleet: replace by %.2f years\n", plan.FleetReplaceBy/year)
	// Output:
	// cellar: replace by 4.06 years
	// roof: replace by 5.46 years
	// whole fleet: replace by 4.06 years
}
