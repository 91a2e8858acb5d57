package dist_test

import (
	"math/rand/v2"
	"testing"

	"github.com/joulelaw/joulelaw/dist"
)

// BenchmarkNewDiscrete2000 builds a finite discrete law of 2000 atoms
// given in random order (sorting and merging its atoms: the step every
// count law of package orderstat and every discrete sum takes).
func BenchmarkNewDiscrete2000(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	vals, probs := make([]float64, 2000), make([]float64, 2000)
	sum := 0.0
	for i := range vals {
		vals[i], probs[i] = r.Float64()*1e3, r.Float64()
		sum += probs[i]
	}
	for i := range probs {
		probs[i] /= sum
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := dist.NewDiscrete(vals, probs); err != nil {
			b.Fatal(err)
		}
	}
}
