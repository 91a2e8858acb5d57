package dist

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
)

// Mixture returns the law that draws component i with probability
// weights[i] and then a value from laws[i]:
//
//	F(x) = Σ w_i F_i(x),  S(x) = Σ w_i S_i(x)
//
// Each tail is summed from its own components, so the survival stays
// accurate. Weights must be finite, >= 0 and sum to 1 within
// ProbSumTolerance; zero-weight components are dropped. A mixture of finite
// discrete laws is a finite discrete law; a mixture of one component is that
// component. The result lists the components' atoms (merged within
// AtomMergeTolerance) and has a Density when every component has a density
// or is purely atomic.
//
// A component taken from outside (a FromDistuv law, also under Affine or
// NewTruncated) is checked before it is mixed: its CDF and Survival at its
// own quantiles at p = (i + 1/2)/OutsideProbes, i < OutsideProbes, midway
// between them and at the ends of its support, must be probabilities in
// [0, 1]; else the error
// wraps ErrParam and names the component, the method and the point (a
// component answering NaN made every value of the mixture NaN; issue 13).
// A hole narrower than the probes is not seen: there the mixture answers
// what the component answers, NaN included.
func Mixture(weights []float64, laws []Law) (Law, error) {
	const fn = "Mixture"
	if len(laws) == 0 {
		return nil, paramErr(fn, "laws", "[]", "must not be empty")
	}
	if len(weights) != len(laws) {
		return nil, paramErr(fn, "weights", fmt.Sprintf("len %d", len(weights)), fmt.Sprintf("must have the length of laws (%d)", len(laws)))
	}
	allDiscrete, allDensity := true, true
	sum, err := probSum(fn, "weights", weights)
	if err != nil {
		return nil, err
	}
	kept, last := 0, 0 // the components with positive weight; the last of them
	for i, w := range weights {
		if laws[i] == nil {
			return nil, paramErr(fn, fmt.Sprintf("laws[%d]", i), nil, "must not be nil")
		}
		if w == 0 {
			continue
		}
		if err := checkOutside(fn, func() string { return fmt.Sprintf("laws[%d]", i) }, laws[i]); err != nil {
			return nil, err
		}
		kept, last = kept+1, i
		if _, ok := laws[i].(Discrete); !ok {
			allDiscrete = false
			if _, ok := laws[i].(Densitied); !ok {
				allDensity = false
			}
		}
	}
	if kept == 1 {
		return laws[last], nil
	}
	if allDiscrete {
		n := 0
		for i, l := range laws {
			if weights[i] != 0 {
				n += l.(Discrete).Len()
			}
		}
		atoms := make([]Atom, 0, n)
		for i, l := range laws {
			if weights[i] == 0 {
				continue
			}
			w := weights[i] / sum
			d := l.(Discrete) // its atoms, as Atoms lists them
			ps := d.probs()
			for j, v := range d.values() {
				atoms = append(atoms, Atom{Value: v, Mass: ps[j] * w})
			}
		}
		return discreteFromAtoms(atoms), nil
	}
	m := mixture{weights: make([]float64, 0, kept), laws: make([]Law, 0, kept)}
	for i, w := range weights {
		if w != 0 {
			m.weights = append(m.weights, w/sum)
			m.laws = append(m.laws, laws[i])
		}
	}
	var total compSum
	for _, w := range m.weights {
		total.add(w)
	}
	m.total = total.value()
	m.lo, m.hi = math.Inf(1), math.Inf(-1)
	for _, l := range m.laws {
		lo, hi := l.Support()
		m.lo, m.hi = min(m.lo, lo), max(m.hi, hi)
	}
	m.cum = make([]float64, len(m.weights))
	var c compSum
	for i, w := range m.weights {
		c.add(w)
		m.cum[i] = c.value() / m.total
	}
	m.cum[len(m.cum)-1] = 1
	if allDensity {
		return mixtureDensity{m}, nil
	}
	return m, nil
}

// mixture holds its components with positive weights summing to 1. Fields
// are read by the characteristic-function and sum code:
// φ(t) = Σ weights[i]·φ_i(t).
type mixture struct {
	weights []float64
	laws    []Law
	cum     []float64 // cumulative weights, the last 1
	total   float64   // the weights' compensated sum (1 to rounding): CDF and Survival divide by it, so all components at 1 give exactly 1
	lo, hi  float64
}

// Components returns copies of the weights and the component laws.
func (m mixture) Components() (weights []float64, laws []Law) {
	return append([]float64(nil), m.weights...), append([]Law(nil), m.laws...)
}

// CDF returns Σ w_i·F_i(x), compensated, divided by the weights' own
// compensated sum: 1 exactly where every component's CDF is 1.
func (m mixture) CDF(x float64) float64 {
	if v, ok := edgeCDF(x, m.lo, m.hi); ok {
		return v
	}
	var s compSum
	for i, l := range m.laws {
		s.add(m.weights[i] * l.CDF(x))
	}
	return min(s.value()/m.total, 1)
}

// Survival returns Σ w_i·S_i(x), each tail from its own components, like
// CDF.
func (m mixture) Survival(x float64) float64 {
	if v, ok := edgeSurvival(x, m.lo, m.hi); ok {
		return v
	}
	var s compSum
	for i, l := range m.laws {
		s.add(m.weights[i] * l.Survival(x))
	}
	return min(s.value()/m.total, 1)
}

func (m mixture) Quantile(p float64) float64      { return quantileByInversion(m, p) }
func (m mixture) UpperQuantile(q float64) float64 { return upperQuantileByInversion(m, q) }

func (m mixture) Mean() float64 {
	s := 0.0
	for i, l := range m.laws {
		s += m.weights[i] * l.Mean()
	}
	return s
}

func (m mixture) Variance() float64 {
	mean := m.Mean()
	s := 0.0
	for i, l := range m.laws {
		d := l.Mean() - mean
		s += m.weights[i] * (l.Variance() + d*d)
	}
	return s
}

func (m mixture) Support() (lo, hi float64) { return m.lo, m.hi }

func (m mixture) Rand(r *rand.Rand) float64 {
	u := r.Float64()
	i := sort.SearchFloat64s(m.cum, u)
	if i >= len(m.laws) {
		i = len(m.laws) - 1
	}
	return m.laws[i].Rand(r)
}

// Atoms lists the weighted atoms of the components, merged.
func (m mixture) Atoms() []Atom {
	var atoms []Atom
	for i, l := range m.laws {
		if al, ok := l.(Atomic); ok {
			for _, a := range al.Atoms() {
				atoms = append(atoms, Atom{Value: a.Value, Mass: a.Mass * m.weights[i]})
			}
		}
	}
	return mergeAtoms(atoms)
}

func (m mixture) String() string {
	return fmt.Sprintf("Mixture(%d components, %s)", len(m.laws), summary(m))
}

// mixtureDensity is a mixture whose components all have densities or are
// purely atomic.
type mixtureDensity struct{ mixture }

func (m mixtureDensity) Density(x float64) float64 {
	if math.IsNaN(x) {
		return x
	}
	s := 0.0
	for i, l := range m.laws {
		if d, ok := l.(Densitied); ok {
			s += m.weights[i] * d.Density(x)
		}
	}
	return s
}

// mergeAtoms drops atoms without positive mass (masses that underflowed
// to 0 in a product, say), sorts the rest and merges those within
// AtomMergeTolerance, keeping their masses as given (no renormalisation).
func mergeAtoms(atoms []Atom) []Atom {
	kept := atoms[:0]
	for _, a := range atoms {
		if a.Mass > 0 {
			kept = append(kept, a)
		}
	}
	atoms = kept
	if len(atoms) == 0 {
		return nil
	}
	slices.SortFunc(atoms, func(a, b Atom) int { return cmp.Compare(a.Value, b.Value) }) // no reflection
	out := atoms[:1]
	for _, a := range atoms[1:] {
		last := &out[len(out)-1]
		if math.Abs(a.Value-last.Value) <= AtomMergeTolerance*max(math.Abs(a.Value), math.Abs(last.Value)) {
			m := last.Mass + a.Mass
			last.Value += (a.Value - last.Value) * (a.Mass / m) // stable for tiny masses
			last.Mass = m
			continue
		}
		out = append(out, a)
	}
	return out
}

// OutsideProbes is how many of its quantiles Mixture checks a component
// taken from outside (a FromDistuv law) at.
const OutsideProbes = 64

// fromOutside reports whether l is a FromDistuv law, or an affine map or a
// truncation of one: a law whose answers this package does not compute.
func fromOutside(l Law) bool {
	switch b := l.(type) {
	case distuvLaw, distuvDensity:
		return true
	case affine:
		return fromOutside(b.base)
	case affineDensity:
		return fromOutside(b.base)
	case truncated:
		return fromOutside(b.base)
	case truncatedDensity:
		return fromOutside(b.base)
	}
	return false
}

// checkOutside returns an error wrapping ErrParam, naming param, when l is
// taken from outside (fromOutside) and its CDF or Survival answers outside
// [0, 1] at the ends of its support, at its quantiles at
// p = (i + 1/2)/OutsideProbes or midway between two of them; nil
// otherwise.
func checkOutside(fn string, param func() string, l Law) error {
	if !fromOutside(l) {
		return nil
	}
	lo, hi := l.Support()
	xs := []float64{lo, hi}
	prev := math.NaN()
	for i := 0; i < OutsideProbes; i++ {
		x := l.Quantile((float64(i) + 0.5) / OutsideProbes)
		if finite(prev) && finite(x) {
			// the midpoint too: an inverted quantile steps over a hole
			xs = append(xs, prev/2+x/2)
		}
		xs = append(xs, x)
		prev = x
	}
	for _, x := range xs {
		if math.IsNaN(x) {
			return paramErr(fn, param(), fmt.Sprintf("%v", l), "its Quantile answers NaN")
		}
		if v := l.CDF(x); !isProb(v) {
			return paramErr(fn, param(), fmt.Sprintf("%v", l), fmt.Sprintf("its CDF(%v) = %v is not a probability in [0, 1]", x, v))
		}
		if v := l.Survival(x); !isProb(v) {
			return paramErr(fn, param(), fmt.Sprintf("%v", l), fmt.Sprintf("its Survival(%v) = %v is not a probability in [0, 1]", x, v))
		}
	}
	return nil
}
