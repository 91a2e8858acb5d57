// Command lawtour prints a few laws built with package dist, on invented
// numbers: a first look at the law algebra — sums, k-fold and random sums,
// products, intervals, the largest of many nodes, and the error every
// numerical law states.
package main

import (
	"fmt"
	"math"
	"os"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

func main() {
	if err := run(); err != nil {
		fmt.Fprintln(os.Stderr, "lawtour:", err)
		os.Exit(1)
	}
}

// stated returns a law's stated CDF error, or "exact".
func stated(l dist.Law) string {
	if e, ok := l.(dist.Estimated); ok {
		return fmt.Sprintf("CDF error bound %.1e", e.Accuracy().CDFAbs)
	}
	return "exact"
}

func run() error {
	// An invented sensing burst: 2.0 mJ or 3.5 mJ, depending on whether a
	// second measurement is taken, and a radio burst of about 40 mJ.
	sense := dist.MustDiscrete([]float64{2.0e-3, 3.5e-3}, []float64{0.8, 0.2})
	radio := dist.MustNormal(40e-3, 4e-3)
	fmt.Println("sensing energy (J):", sense)
	fmt.Println("radio energy (J):  ", radio)
	fmt.Printf("radio energy above 55 mJ: %.3g\n", radio.Survival(55e-3))

	// A warm-up of random length (exponential, mean 30 ms at 60 mW) and a
	// uniform wait of 0-2 s at 0.5 mW before the radio.
	warmUp, err := dist.Product(dist.MustPointMass(60e-3), dist.MustExponential(1/30e-3))
	if err != nil {
		return err
	}
	wait := dist.MustUniform(0, 1e-3)
	cycle, err := dist.Sum(sense, warmUp, wait, radio)
	if err != nil {
		return err
	}
	lo, hi, err := dist.EqualTailed(cycle, 0.9)
	if err != nil {
		return err
	}
	fmt.Printf("\none cycle: mean %.2f mJ, sd %.2f mJ, 90 %% in [%.2f, %.2f] mJ (%s)\n",
		1e3*cycle.Mean(), 1e3*math.Sqrt(cycle.Variance()), 1e3*lo, 1e3*hi, stated(cycle))

	// A day of 96 cycles: the k-fold sum.
	day, err := dist.SumIID(cycle, 96)
	if err != nil {
		return err
	}
	fmt.Printf("one day (96 cycles): mean %.3f J, P(day > 4.4 J) = %.3g (%s)\n", day.Mean(), day.Survival(4.4), stated(day))

	// A confirmed uplink repeated until acknowledged (at most 4 times, each
	// acknowledged with probability 0.8): the random sum of radio bursts.
	attempts := dist.MustDiscrete([]float64{1, 2, 3, 4}, []float64{0.8, 0.16, 0.032, 0.008})
	frame, err := dist.RandomSum(attempts, radio)
	if err != nil {
		return err
	}
	fmt.Printf("confirmed frame: mean %.1f mJ, 99.9 %% below %.1f mJ (%s)\n", 1e3*frame.Mean(), 1e3*frame.Quantile(0.999), stated(frame))

	// The largest cycle among 10 000 nodes.
	mx, err := orderstat.Max(cycle, 10000)
	if err != nil {
		return err
	}
	fmt.Printf("largest cycle of 10 000 nodes: median %.2f mJ, mean %.2f mJ\n", 1e3*mx.Quantile(0.5), 1e3*mx.Mean())
	return nil
}
