package dist_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// TestPointTailsIrwinHall: the k-fold sums of a uniform law at one point,
// over every k whose tails are both above 1e-300, against the exact
// Irwin–Hall law (rational arithmetic, testref.IrwinHall): the smaller tail
// within 1e-12 relative and within its stated estimate (measured: at most
// 0.3 of it, 1.8e-13 at worst, in the far tails near the support's ends),
// the other within as much absolute.
func TestPointTailsIrwinHall(t *testing.T) {
	u := dist.MustUniform(0, 1)
	s, err := dist.NewIIDSums(u)
	require.NoError(t, err)
	for _, x := range []float64{10.3, 25.7, 30.13} {
		q, err := s.AtPoint(x)
		require.NoError(t, err)
		require.True(t, q.Shared())
		var worst, ratio float64
		for k := int(math.Floor(x)) + 1; k <= 4*int(x); k++ {
			wb, wa := testref.IrwinHall(k, x)
			if math.Min(wb, wa) < 1e-300 {
				continue
			}
			b, a, rel, err := q.Evaluate(k)
			require.NoError(t, err)
			got, want := b, wb
			if wa < wb {
				got, want = a, wa
			}
			e := math.Abs(got-want) / want
			worst = math.Max(worst, e)
			assert.LessOrEqual(t, e, 1e-12, "x=%g k=%d: %g, want %g (estimate %g)", x, k, got, want, rel)
			assert.LessOrEqual(t, e, rel+1e-15, "x=%g k=%d: %g, want %g (estimate %g)", x, k, got, want, rel)
			ratio = math.Max(ratio, e/rel)
			assert.InDelta(t, wb, b, 1e-12*want+2e-16)
			assert.InDelta(t, wa, a, 1e-12*want+2e-16)
		}
		t.Logf("x=%g: worst relative error of the smaller tail %.2e, largest error/estimate %.2f", x, worst, ratio)
	}
}

// soilLike is a cycle-energy-like law: six radio energies (J) plus a
// uniform sensing energy, no atoms (invented for the test).
func soilLike(t *testing.T) dist.Law {
	t.Helper()
	d := dist.MustDiscrete([]float64{2.5, 2.61, 20, 20.88, 80, 83.52}, []float64{0.06, 0.54, 0.03, 0.27, 0.01, 0.09})
	l, err := dist.Sum(d, dist.MustUniform(0.35, 0.52))
	require.NoError(t, err)
	return l
}

// TestPointTailsAgainstSingle: on a law with atoms beside a uniform term,
// at 1.5·10^5 terms, the shared panels give the values of the single
// tilted inversion (IIDSums.Evaluate, stated about 1e-11 and tested in
// TestSumIIDExponentialIsGamma and TestIIDSumsMatchesGamma) within 1e-11
// relative to the smaller tail, over ±8 renewal standard deviations.
func TestPointTailsAgainstSingle(t *testing.T) {
	l := soilLike(t)
	s, err := dist.NewIIDSums(l)
	require.NoError(t, err)
	mu, v := l.Mean(), l.Variance()
	x := 1.5e5 * mu
	q, err := s.AtPoint(x)
	require.NoError(t, err)
	require.True(t, q.Shared())
	sd := math.Sqrt(x * v / (mu * mu * mu))
	var worst float64
	for z := -8.0; z <= 8; z += 0.1 {
		k := int(math.Round(x/mu + z*sd))
		b, a, rel, err := q.Evaluate(k)
		require.NoError(t, err)
		wb, wa := s.Tails(k, x)
		got, want := b, wb
		if wa < wb {
			got, want = a, wa
		}
		e := math.Abs(got-want) / want
		worst = math.Max(worst, e)
		assert.LessOrEqual(t, e, 1e-11, "k=%d: %g, single inversion %g (estimate %g)", k, got, want, rel)
	}
	t.Logf("worst relative difference from the single inversion %.2e", worst)
}

// TestPointTailsDeterministic: the same k gives the same bits whatever was
// asked before (ascending, descending, shuffled with a fixed seed, on eight
// goroutines, or alone on a fresh evaluator).
func TestPointTailsDeterministic(t *testing.T) {
	l := soilLike(t)
	s, err := dist.NewIIDSums(l)
	require.NoError(t, err)
	x := 2e4 * l.Mean()
	ks := make([]int, 0, 300)
	for k := 19000; k < 21400; k += 8 {
		ks = append(ks, k)
	}
	fresh := map[int][2]float64{}
	for _, k := range ks {
		q, err := s.AtPoint(x)
		require.NoError(t, err)
		b, a := q.Tails(k)
		fresh[k] = [2]float64{b, a}
	}
	orders := [][]int{ks, make([]int, len(ks)), make([]int, len(ks))}
	for i, k := range ks {
		orders[1][len(ks)-1-i] = k
	}
	copy(orders[2], ks)
	r := rand.New(rand.NewPCG(1, 2))
	r.Shuffle(len(ks), func(i, j int) { orders[2][i], orders[2][j] = orders[2][j], orders[2][i] })
	for _, ord := range orders {
		q, err := s.AtPoint(x)
		require.NoError(t, err)
		for _, k := range ord {
			b, a := q.Tails(k)
			require.Equal(t, fresh[k], [2]float64{b, a}, "k=%d", k)
		}
	}
	q, err := s.AtPoint(x)
	require.NoError(t, err)
	var wg sync.WaitGroup
	got := make([][][2]float64, 8)
	for g := range got {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range ks {
				k := orders[2][(i+37*g)%len(ks)]
				b, a := q.Tails(k)
				got[g] = append(got[g], [2]float64{b, a})
			}
		}()
	}
	wg.Wait()
	for g := range got {
		for i, v := range got[g] {
			require.Equal(t, fresh[orders[2][(i+37*g)%len(ks)]], v)
		}
	}
}

// TestPointTailsErrors: bad input returns errors wrapping ErrParam, and
// NaN values exactly there; other paths (a closed form, a discrete law, a
// point beyond 2·MaxSumIIDTerms means) give IIDSums' own values.
func TestPointTailsErrors(t *testing.T) {
	s, err := dist.NewIIDSums(soilLike(t))
	require.NoError(t, err)
	for _, x := range []float64{math.NaN(), math.Inf(1)} {
		_, err := s.AtPoint(x)
		assert.True(t, errors.Is(err, dist.ErrParam), "x=%v: %v", x, err)
	}
	_, err = dist.IIDSums{}.AtPoint(1)
	assert.True(t, errors.Is(err, dist.ErrParam))
	q, err := s.AtPoint(100)
	require.NoError(t, err)
	for _, tc := range []struct {
		name string
		q    dist.PointTails
		k    int
	}{
		{"zero PointTails", dist.PointTails{}, 3},
		{"k = 0", q, 0},
		{"k above MaxSumIIDTerms", q, dist.MaxSumIIDTerms + 1},
	} {
		b, a, _, err := tc.q.Evaluate(tc.k)
		assert.True(t, errors.Is(err, dist.ErrParam), "%s: %v", tc.name, err)
		assert.True(t, math.IsNaN(b) && math.IsNaN(a), tc.name)
		b, a = tc.q.Tails(tc.k)
		assert.True(t, math.IsNaN(b) && math.IsNaN(a), tc.name)
	}
	// beyond 2·MaxSumIIDTerms means the values come from IIDSums one by one
	far, err := s.AtPoint(1e30)
	require.NoError(t, err)
	assert.False(t, far.Shared())
	b, a := far.Tails(1 << 30)
	assert.Equal(t, [2]float64{1, 0}, [2]float64{b, a}, "x far above the k-fold support")
	for _, l := range []dist.Law{dist.MustGamma(2, 1), dist.MustDiscrete([]float64{1, 2, 5}, []float64{0.5, 0.3, 0.2})} {
		ls, err := dist.NewIIDSums(l)
		require.NoError(t, err)
		q, err := ls.AtPoint(200)
		require.NoError(t, err)
		assert.False(t, q.Shared())
		for _, k := range []int{50, 90, 100, 120} {
			b, a := q.Tails(k)
			wb, wa := ls.Tails(k, 200)
			assert.Equal(t, [2]float64{wb, wa}, [2]float64{b, a}, "%v k=%d", l, k)
		}
	}
}

// The lifetime question: how likely a cell of 3000 J powers at least k
// cycles of a law with a uniform spread, for several k at once.
func ExampleIIDSums_AtPoint() {
	cycle := dist.MustUniform(0.9, 1.1) // J per cycle (invented)
	s, err := dist.NewIIDSums(cycle)
	if err != nil {
		fmt.Println(err)
		return
	}
	q, err := s.AtPoint(3000) // usable energy (J)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, k := range []int{2950, 2990, 3000, 3010, 3050} {
		atLeast, fewer := q.Tails(k) // P(S_k <= 3000), P(S_k > 3000)
		fmt.Printf("k=%d: P(at least k cycles) %.6g, P(fewer) %.6g\n", k, atLeast, fewer)
	}
	// Output:
	// k=2950: P(at least k cycles) 1, P(fewer) 5.11634e-58
	// k=2990: P(at least k cycles) 0.999232, P(fewer) 0.000767632
	// k=3000: P(at least k cycles) 0.5, P(fewer) 0.5
	// k=3010: P(at least k cycles) 0.000795953, P(fewer) 0.999204
	// k=3050: P(at least k cycles) 3.7376e-56, P(fewer) 1
}
