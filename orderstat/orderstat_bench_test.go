package orderstat_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/orderstat"
)

var sinkF float64

// BenchmarkMeanMaxNormal1e6 builds the law of the largest of 10^6 standard
// normals and computes its mean (to 1e-10 relative; see the oracle tests).
// Target: at most 1 ms.
func BenchmarkMeanMaxNormal1e6(b *testing.B) {
	nrm := dist.MustNormal(0, 1)
	for i := 0; i < b.N; i++ {
		l, err := orderstat.Max(nrm, 1_000_000)
		if err != nil {
			b.Fatal(err)
		}
		sinkF = l.Mean()
	}
}

// hundredGroups is a fleet of 100 groups of normal per-cycle energies (an
// invented scenario: means 10 to 20 mJ, spreads 0.5 to 1.5 mJ, 50 to 149
// nodes each), in joules.
func hundredGroups() []orderstat.Group {
	gs := make([]orderstat.Group, 100)
	for i := range gs {
		mu := 0.010 + 0.0001*float64(i)
		sigma := 0.0005 + 0.00001*float64(i)
		gs[i] = orderstat.Group{Law: dist.MustNormal(mu, sigma), Count: int64(50 + i)}
	}
	return gs
}

// BenchmarkMeanMaxOfGroups100 computes the mean of the largest value over
// 100 non-identical groups. Target: at most 5 ms.
func BenchmarkMeanMaxOfGroups100(b *testing.B) {
	gs := hundredGroups()
	for i := 0; i < b.N; i++ {
		l, err := orderstat.MaxOfGroups(gs)
		if err != nil {
			b.Fatal(err)
		}
		sinkF = l.Mean()
	}
}

// monteCarloReplicates is the number of replicates that gives the mean of
// the maximum of 10^6 standard normals to three correct digits: its
// standard deviation is about 0.25, so 10^4 replicates give a standard
// error of 0.0025, half a unit in the third digit of 4.86.
const monteCarloReplicates = 10_000

// BenchmarkMonteCarloMaxNormal1e6 is the baseline: the same mean by Monte
// Carlo, each replicate the largest of 10^6 fresh normal draws. One
// iteration takes about a minute; run it with -benchtime=1x.
func BenchmarkMonteCarloMaxNormal1e6(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < b.N; i++ {
		sum := 0.0
		for rep := 0; rep < monteCarloReplicates; rep++ {
			m := math.Inf(-1)
			for j := 0; j < 1_000_000; j++ {
				if x := r.NormFloat64(); x > m {
					m = x
				}
			}
			sum += m
		}
		sinkF = sum / monteCarloReplicates
	}
	b.ReportMetric(sinkF, "mean")
}

// BenchmarkQuantileMaxOfGroups100 finds the 99 % quantile of the maximum
// over 100 groups (bracketing on the parents' quantiles, then regula falsi).
func BenchmarkQuantileMaxOfGroups100(b *testing.B) {
	gs := hundredGroups()
	l, _ := orderstat.MaxOfGroups(gs)
	for i := 0; i < b.N; i++ {
		sinkF = l.Quantile(0.99)
	}
}

// BenchmarkKthNormal evaluates the CDF of the 100th smallest of 10^4
// normals (Beta law by quadrature).
func BenchmarkKthNormal(b *testing.B) {
	l, _ := orderstat.Kth(dist.MustNormal(0, 1), 100, 10_000)
	for i := 0; i < b.N; i++ {
		sinkF = l.CDF(-2.3)
	}
}

// BenchmarkExceedances60Groups builds the count of nodes, out of 10,000
// in 60 groups, above a threshold.
func BenchmarkExceedances60Groups(b *testing.B) {
	laws := make([]dist.Law, 60)
	counts := make([]int64, 60)
	for i := range laws {
		laws[i] = dist.MustNormal(1+0.01*float64(i), 0.1)
		counts[i] = 10_000 / 60
	}
	for i := 0; i < b.N; i++ {
		c, err := orderstat.Exceedances(laws, counts, 1.4)
		if err != nil {
			b.Fatal(err)
		}
		sinkF = c.Mean()
	}
}

// BenchmarkPoissonBinomialDemo builds the whole count law of three counts
// of the kind the demo's fleet laws ask for (4 groups of 60, 180, 24 and
// 40 nodes at three dates).
func BenchmarkPoissonBinomialDemo(b *testing.B) {
	counts := []int64{60, 180, 24, 40}
	probs := [][]float64{
		{0.08969852488196156, 0.47732442985089274, 0.005320289899893146, 0.18508563173545034},
		{5.946795908328213e-07, 0.0034866146405806795, 0.00013135055734092614, 4.4545803699541886e-12},
		{0.00041309677509868603, 0.058831426970242365, 0.0001313505573729481, 0.00014440949326350764},
	}
	for b.Loop() {
		for _, p := range probs {
			c, err := orderstat.PoissonBinomial(p, counts)
			if err != nil {
				b.Fatal(err)
			}
			sinkF = c.Mean()
		}
	}
}
