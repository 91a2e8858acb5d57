package orderstat_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

// The largest per-cycle energy across 10,000 nodes whose per-cycle energy
// is normal with mean 42 mJ and standard deviation 3 mJ (an invented
// scenario).
func ExampleMax() {
	cycle := dist.MustNormal(0.042, 0.003) // J
	mx, err := orderstat.Max(cycle, 10_000)
	if err != nil {
		panic(err)
	}
	fmt.Printf("mean %.4f J, 99%% quantile %.4f J\n", mx.Mean(), mx.Quantile(0.99))
	fmt.Printf("P(max > 60 mJ) = %.3g\n", mx.Survival(0.060))
	r := rand.New(rand.NewPCG(1, 2))
	fmt.Printf("one draw: %.4f J\n", mx.Rand(r))
	// Output:
	// mean 0.0536 J, 99% quantile 0.0563 J
	// P(max > 60 mJ) = 9.87e-06
	// one draw: 0.0541 J
}

// The first battery to go flat among 500 nodes whose lifetimes are gamma
// distributed with mean 4 years (shape 16; invented figures).
func ExampleMin() {
	const year = 365.25 * 24 * 3600 // s
	life := dist.MustGamma(16, 4/year)
	first, err := orderstat.Min(life, 500)
	if err != nil {
		panic(err)
	}
	fmt.Printf("first failure: median %.2f years, 10%% quantile %.2f years\n",
		first.Quantile(0.5)/year, first.Quantile(0.1)/year)
	// Output:
	// first failure: median 1.65 years, 10% quantile 1.38 years
}

// The 10th battery to go flat out of 500.
func ExampleKth() {
	const year = 365.25 * 24 * 3600 // s
	life := dist.MustGamma(16, 4/year)
	tenth, err := orderstat.Kth(life, 10, 500)
	if err != nil {
		panic(err)
	}
	lo, hi := tenth.Quantile(0.05), tenth.UpperQuantile(0.05)
	fmt.Printf("10th failure: 90%% interval [%.2f, %.2f] years\n", lo/year, hi/year)
	// Output:
	// 10th failure: 90% interval [2.07, 2.35] years
}

// Nodes at three spreading factors, each group with its own per-cycle
// energy law (invented figures, J).
func ExampleMaxOfGroups() {
	groups := []orderstat.Group{
		{Law: dist.MustNormal(0.020, 0.002), Count: 600}, // short airtime
		{Law: dist.MustNormal(0.045, 0.004), Count: 300},
		{Law: dist.MustNormal(0.110, 0.010), Count: 100}, // long airtime
	}
	mx, err := orderstat.MaxOfGroups(groups)
	if err != nil {
		panic(err)
	}
	fmt.Printf("largest per-cycle energy: mean %.4f J, 99.9%% quantile %.4f J\n", mx.Mean(), mx.Quantile(0.999))
	// Output:
	// largest per-cycle energy: mean 0.1351 J, 99.9% quantile 0.1526 J
}

// Time to the first flat battery in a fleet of two kinds of node.
func ExampleMinOfGroups() {
	const year = 365.25 * 24 * 3600 // s
	groups := []orderstat.Group{
		{Law: dist.MustGamma(25, 5/year), Count: 800}, // mean 5 years
		{Law: dist.MustGamma(16, 4/year), Count: 200}, // mean 4 years
	}
	first, err := orderstat.MinOfGroups(groups)
	if err != nil {
		panic(err)
	}
	fmt.Printf("P(no battery flat in the first 2 years) = %.3f\n", first.Survival(2*year))
	// Output:
	// P(no battery flat in the first 2 years) = 0.184
}

// When will 5 % of the batteries (50 of 1000) be flat?
func ExampleKthOfGroups() {
	const year = 365.25 * 24 * 3600 // s
	groups := []orderstat.Group{
		{Law: dist.MustGamma(25, 5/year), Count: 800},
		{Law: dist.MustGamma(16, 4/year), Count: 200},
	}
	k50, err := orderstat.KthOfGroups(groups, 50)
	if err != nil {
		panic(err)
	}
	fmt.Printf("50th failure: median %.3f years\n", k50.Quantile(0.5)/year)
	// Output:
	// 50th failure: median 3.097 years
}

// The spread between the most and the least hungry of 20 nodes.
func ExampleRange() {
	r, err := orderstat.Range(dist.MustNormal(0.042, 0.003), 20)
	if err != nil {
		panic(err)
	}
	fmt.Printf("range: mean %.4f J, P(range > 15 mJ) = %.3g\n", r.Mean(), r.Survival(0.015))
	// Output:
	// range: mean 0.0112 J, P(range > 15 mJ) = 0.0514
}

// How many of five gateways' neighbourhoods see a collision, given each
// one's probability (invented figures).
func ExamplePoissonBinomial() {
	c, err := orderstat.PoissonBinomial([]float64{0.1, 0.2, 0.05, 0.3, 0.15}, nil)
	if err != nil {
		panic(err)
	}
	fmt.Printf("mean %.2f, P(C >= 3) = %.4f\n", c.Mean(), c.Survival(2))
	// Output:
	// mean 0.80, P(C >= 3) = 0.0267
}

// How many nodes spend more than 50 mJ in a cycle.
func ExampleExceedances() {
	laws := []dist.Law{dist.MustNormal(0.042, 0.003), dist.MustNormal(0.045, 0.004)}
	counts := []int64{700, 300}
	c, err := orderstat.Exceedances(laws, counts, 0.050)
	if err != nil {
		panic(err)
	}
	fmt.Printf("mean %.2f nodes, P(more than 20) = %.3g\n", c.Mean(), c.Survival(20))
	// Output:
	// mean 34.38 nodes, P(more than 20) = 0.996
}

// How many batteries are flat after 3 years.
func ExampleAtOrBelow() {
	const year = 365.25 * 24 * 3600 // s
	laws := []dist.Law{dist.MustGamma(25, 5/year), dist.MustGamma(16, 4/year)}
	c, err := orderstat.AtOrBelow(laws, []int64{800, 200}, 3*year)
	if err != nil {
		panic(err)
	}
	fmt.Printf("flat after 3 years: mean %.1f, 95%% at most %.0f\n", c.Mean(), c.Quantile(0.95))
	// Output:
	// flat after 3 years: mean 40.0, 95% at most 50
}

// The Gumbel approximation to the maximum of 10,000 normal energies,
// with its error against the exact law.
func ExampleGumbelMax() {
	g, err := orderstat.GumbelMax(dist.MustNormal(0.042, 0.003), 10_000)
	if err != nil {
		panic(err)
	}
	e := g.Error()
	fmt.Printf("Gumbel: sup|ΔF| = %.3f, mean error %.2f%%\n", e.CDFAbs, 100*e.MeanRel)
	// Output:
	// Gumbel: sup|ΔF| = 0.011, mean error 0.05%
}

// The Weibull approximation to the first failure among 500 gamma lifetimes.
func ExampleWeibullMin() {
	const year = 365.25 * 24 * 3600 // s
	w, err := orderstat.WeibullMin(dist.MustGamma(16, 4/year), 500)
	if err != nil {
		panic(err)
	}
	_, _, shape := w.Params()
	fmt.Printf("Weibull shape %.1f, sup|ΔF| = %.3f\n", shape, w.Error().CDFAbs)
	// Output:
	// Weibull shape 10.0, sup|ΔF| = 0.010
}

// Screen 200 observed per-cycle energies for outliers at level 1e-3.
func ExampleScreen() {
	law := dist.MustNormal(0.042, 0.003) // J
	r := rand.New(rand.NewPCG(5, 6))
	vals := make([]float64, 200)
	for i := range vals {
		vals[i] = law.Rand(r)
	}
	vals[42] = 0.065 // a node with a stuck radio, say
	flags, err := orderstat.Screen(vals, []dist.Law{law}, 1e-3)
	if err != nil {
		panic(err)
	}
	for _, f := range flags {
		fmt.Println(f)
	}
	// Output:
	// node 42 high: 0.065 vs 0.0552512 (fleet p=1.77e-12, node p=8.83e-15)
}

// The Gumbel approximation to the shortest of 1000 normal wake-up times
// (invented figures, s).
func ExampleGumbelMin() {
	g, err := orderstat.GumbelMin(dist.MustNormal(2.0, 0.05), 1000)
	if err != nil {
		panic(err)
	}
	loc, scale, _ := g.Params()
	fmt.Printf("location %.4f s, scale %.4f s, sup|ΔF| = %.3f\n", loc, scale, g.Error().CDFAbs)
	// Output:
	// location 1.8455 s, scale 0.0143 s, sup|ΔF| = 0.014
}

// The reversed Weibull approximation to the largest of 100 uniform
// transmit delays on [0, 3] s (a bounded law).
func ExampleWeibullMax() {
	w, err := orderstat.WeibullMax(dist.MustUniform(0, 3), 100)
	if err != nil {
		panic(err)
	}
	end, scale, shape := w.Params()
	fmt.Printf("end %.1f s, scale %.3f s, shape %.2f, sup|ΔF| = %.4f\n", end, scale, shape, w.Error().CDFAbs)
	// Output:
	// end 3.0 s, scale 0.030 s, shape 1.00, sup|ΔF| = 0.0027
}

// Order-statistic laws print compactly.
func ExampleStatistic_String() {
	mx, _ := orderstat.Max(dist.MustNormal(0, 1), 1000)
	fmt.Println(mx)
	// Output:
	// Max of 1000 × Normal(μ=0, σ=1): mean=3.24144, sd=0.3514, 5–95%=[2.74874, 3.8844]
}
