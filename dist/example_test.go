package dist_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/joulelaw/joulelaw/dist"
)

// A jittered duration that must stay positive: a normal truncated to
// [0, ∞). Invented numbers: a 2 ms sensor read with 0.8 ms of jitter.
func ExampleNewTruncated() {
	read := dist.MustNormal(2e-3, 0.8e-3)
	t, err := dist.NewTruncated(read, 0, math.Inf(1))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.4f ms, P(read > 4 ms) = %.3g\n", 1e3*t.Mean(), t.Survival(4e-3))
	// Output:
	// mean 2.0141 ms, P(read > 4 ms) = 0.00625
}

// The energy of a radio burst whose transmit power is one of two levels
// (invented: 25 mW or 80 mW) and whose duration is uniform between 40 and
// 60 ms: an exact mixture, with its tail summed from the top.
func ExampleScaleByDiscrete() {
	power := dist.MustDiscrete([]float64{25e-3, 80e-3}, []float64{0.7, 0.3})
	duration := dist.MustUniform(40e-3, 60e-3)
	energy, err := dist.ScaleByDiscrete(duration, power)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("mean %.3f mJ, P(E > 4 mJ) = %.3f\n", 1e3*energy.Mean(), energy.Survival(4e-3))
	// Output:
	// mean 2.075 mJ, P(E > 4 mJ) = 0.150
}

// Intervals of a law: equal-tailed and shortest.
func ExampleHighestDensity() {
	wait := dist.MustExponential(1 / 3.0) // invented: a 3 s mean wait
	lo, hi, _ := dist.EqualTailed(wait, 0.9)
	fmt.Printf("equal-tailed 90 %%: [%.3f, %.3f] s\n", lo, hi)
	lo, hi, _ = dist.HighestDensity(wait, 0.9)
	fmt.Printf("shortest 90 %%:     [%.3f, %.3f] s\n", lo, hi)
	// Output:
	// equal-tailed 90 %: [0.154, 8.987] s
	// shortest 90 %:     [0.000, 6.908] s
}

// Far tails are computed directly: the normal survival at 30 σ, and the
// quantile that gives it back.
func ExampleNormal_UpperQuantile() {
	n := dist.MustNormal(0, 1)
	q := n.Survival(30)
	fmt.Printf("P(Z > 30) = %.6e\n", q)
	fmt.Printf("UpperQuantile(P) = %.12f\n", n.UpperQuantile(q))
	// Output:
	// P(Z > 30) = 4.906714e-198
	// UpperQuantile(P) = 30.000000000000
}

// Affine maps stay exact and nested maps collapse: -2·X + 1 for X on {1, 2, 3}.
func ExampleAffine() {
	x := dist.MustDiscrete([]float64{1, 2, 3}, []float64{0.2, 0.3, 0.5})
	y, _ := dist.Affine(x, -2, 1)
	fmt.Println(y)
	fmt.Printf("P(Y <= -3) = %.1f\n", y.CDF(-3))
	// Output:
	// Discrete{-5:0.5, -3:0.3, -1:0.2}
	// P(Y <= -3) = 0.8
}

// A mixture of a point mass and a continuous law keeps the atom exact.
func ExampleMixture() {
	idle := dist.MustPointMass(0)
	busy := dist.MustGamma(2, 100) // invented: busy time, mean 20 ms
	m, _ := dist.Mixture([]float64{0.6, 0.4}, []dist.Law{idle, busy})
	fmt.Println(m.(dist.Atomic).Atoms())
	fmt.Printf("P(X > 50 ms) = %.4f\n", m.Survival(0.05))
	// Output:
	// [{0 0.6}]
	// P(X > 50 ms) = 0.0162
}

// Constant-time sampling from a large discrete law, with the caller's
// seeded source.
func ExampleNewAliasSampler() {
	dr := dist.MustDiscrete([]float64{0, 1, 2, 3, 4, 5}, []float64{0.05, 0.05, 0.1, 0.1, 0.2, 0.5})
	s := dist.NewAliasSampler(dr)
	r := rand.New(rand.NewPCG(7, 11))
	counts := make([]int, 6)
	for i := 0; i < 100000; i++ {
		counts[int(s.Rand(r))]++
	}
	fmt.Println(counts[5] > 49000 && counts[5] < 51000)
	// Output:
	// true
}
