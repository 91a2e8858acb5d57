package dist

import (
	"math"
	"math/rand/v2"
)

// AliasSampler draws from a finite discrete law in constant time per draw,
// by Walker's alias method (Walker 1977, ACM Trans. Math. Softw. 3:253–256;
// table built by Vose's stable variant, IEEE TSE 17, 1991). Building it
// costs O(n); it is immutable and safe for concurrent use.
type AliasSampler struct {
	values []float64
	prob   []float64
	alias  []int
}

// NewAliasSampler prepares constant-time sampling from d.
func NewAliasSampler(d Discrete) AliasSampler {
	n := d.Len()
	s := AliasSampler{values: append([]float64(nil), d.values()...), prob: make([]float64, n), alias: make([]int, n)}
	scaled := make([]float64, n)
	var small, large []int
	for i, p := range d.probs() {
		scaled[i] = p * float64(n)
		if scaled[i] < 1 {
			small = append(small, i)
		} else {
			large = append(large, i)
		}
	}
	for len(small) > 0 && len(large) > 0 {
		l := small[len(small)-1]
		small = small[:len(small)-1]
		g := large[len(large)-1]
		large = large[:len(large)-1]
		s.prob[l], s.alias[l] = scaled[l], g
		scaled[g] = (scaled[g] + scaled[l]) - 1
		if scaled[g] < 1 {
			small = append(small, g)
		} else {
			large = append(large, g)
		}
	}
	for _, i := range large {
		s.prob[i], s.alias[i] = 1, i
	}
	for _, i := range small {
		s.prob[i], s.alias[i] = 1, i
	}
	return s
}

// Rand draws one value using r: one integer and one uniform variate.
// The zero AliasSampler returns NaN.
func (s AliasSampler) Rand(r *rand.Rand) float64 {
	if len(s.values) == 0 {
		return math.NaN()
	}
	i := r.IntN(len(s.values))
	if r.Float64() < s.prob[i] {
		return s.values[i]
	}
	return s.values[s.alias[i]]
}
