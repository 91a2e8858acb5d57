package lifesim_test

import (
	"math/rand/v2"
	"testing"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/lifesim"
)

// One fleet of the validation (3 groups of 8 nodes, some 440 cycles per
// life): the Monte Carlo a planner would otherwise run, one fleet per
// sample of the first failure.
func BenchmarkPlayerFleet(b *testing.B) {
	p, err := lifesim.NewPlayer(siteSpec(b))
	if err != nil {
		b.Fatal(err)
	}
	r := rand.New(rand.NewPCG(1, 2))
	b.ResetTimer()
	for range b.N {
		if _, err := p.Fleet(r); err != nil {
			b.Fatal(err)
		}
	}
}

// The laws the fleets are checked against: building the Site and reading
// its first-failure law's median.
func BenchmarkSiteFirstFailureMedian(b *testing.B) {
	spec := siteSpec(b)
	for range b.N {
		s, err := energy.NewSite(spec)
		if err != nil {
			b.Fatal(err)
		}
		ff, err := s.FirstFailure()
		if err != nil {
			b.Fatal(err)
		}
		_ = ff.Quantile(0.5)
	}
}
