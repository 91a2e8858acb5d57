package dist_test

import (
	"fmt"
	"math"

	"github.com/joulelaw/joulelaw/dist"
)

// The energy of one reporting cycle (invented numbers): the radio spends
// 12 mJ or, one time in five, 30 mJ when a downlink keeps it listening; a
// sensor warm-up of exponential length costs 4 mJ on average; the firmware
// waits a uniform 0–2 s at 1.5 mW before sending. Conditioning on the
// radio and the wait gives the law in closed form (both tails to rounding;
// P(cycle > 60 mJ) = Σ_i p_i·e^{-(60 - v_i)/4}·(e^{3/4} - 1)/(3/4), with
// energies in mJ, can be checked by hand).
func ExampleSum() {
	radio := dist.MustDiscrete([]float64{12e-3, 30e-3}, []float64{0.8, 0.2})
	warmUp := dist.MustExponential(1 / 4e-3)
	wait := dist.MustUniform(0, 3e-3)
	cycle, err := dist.Sum(radio, warmUp, wait)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.2f mJ, sd %.2f mJ\n", 1e3*cycle.Mean(), 1e3*math.Sqrt(cycle.Variance()))
	fmt.Printf("P(cycle > 60 mJ) = %.4g\n", cycle.Survival(60e-3))
	fmt.Printf("99.9 %% of cycles below %.2f mJ\n", 1e3*cycle.Quantile(0.999))
	acc := cycle.(dist.Estimated).Accuracy()
	fmt.Println("stated CDF error below 1e-9:", acc.CDFAbs < 1e-9)
	// Output:
	// mean 21.10 mJ, sd 8.28 mJ
	// P(cycle > 60 mJ) = 0.0001721
	// 99.9 % of cycles below 52.96 mJ
	// stated CDF error below 1e-9: true
}

// The energy of a day of 48 such cycles, and how often a day needs more
// than 1.4 J: the 48-fold sum, raised as exp(48·log M) and inverted.
func ExampleSumIID() {
	radio := dist.MustDiscrete([]float64{12e-3, 30e-3}, []float64{0.8, 0.2})
	cycle := dist.MustSum(radio, dist.MustExponential(1/4e-3), dist.MustUniform(0, 3e-3))
	day, err := dist.SumIID(cycle, 48)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.4f J, P(day > 1.4 J) = %.3g\n", day.Mean(), day.Survival(1.4))
	// Output:
	// mean 1.0128 J, P(day > 1.4 J) = 1.24e-09
}

// A confirmed uplink sent until acknowledged, at most four times (invented:
// each attempt is acknowledged with probability 0.7), each attempt costing
// 20 mJ of airtime plus a uniform 0–1 mJ of listening: the random sum.
func ExampleRandomSum() {
	p := 0.7
	attempts := dist.MustDiscrete([]float64{1, 2, 3, 4},
		[]float64{p, (1 - p) * p, (1 - p) * (1 - p) * p, (1 - p) * (1 - p) * (1 - p)})
	attempt := dist.MustSum(dist.MustPointMass(20e-3), dist.MustUniform(0, 1e-3))
	frame, err := dist.RandomSum(attempts, attempt)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.3f mJ, P(frame > 60 mJ) = %.4f\n", 1e3*frame.Mean(), frame.Survival(60e-3))
	// Output:
	// mean 29.049 mJ, P(frame > 60 mJ) = 0.0900
}

// The energy of a state whose power and duration are both random (invented:
// 40–60 mW for an exponential time of mean 50 ms): the numerical product,
// which can itself be a term of a Sum.
func ExampleProduct() {
	power := dist.MustUniform(40e-3, 60e-3)
	duration := dist.MustExponential(1 / 50e-3)
	e, err := dist.Product(power, duration)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.3f mJ, P(E > 10 mJ) = %.4f\n", 1e3*e.Mean(), e.Survival(10e-3))
	// Output:
	// mean 2.500 mJ, P(E > 10 mJ) = 0.0193
}
