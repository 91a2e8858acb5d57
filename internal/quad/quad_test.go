package quad

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"
)

// rulePoly applies a rule in gk15's layout (the positive half's nodes,
// largest first, ending with the centre; Kronrod weights; the Gauss
// weights of the odd-indexed nodes) to x^n on [−1, 1]: its Kronrod value,
// or its Gauss value.
func rulePoly(nodes, wk, wg []float64, n int, kronrod bool) float64 {
	m := len(nodes)
	s := 0.0
	for i := 0; i < m; i++ {
		for _, sg := range []float64{-1, 1} {
			if i == m-1 && sg > 0 {
				break
			}
			v := math.Pow(sg*nodes[i], float64(n))
			if kronrod {
				s += wk[i] * v
			} else if i%2 == 1 {
				s += wg[i/2] * v
			}
		}
	}
	return s
}

// gaussAgainstGonum checks the Gauss nodes and weights inside a rule in
// gk15's layout against gonum's Gauss–Legendre rule of the same order
// (quad.Legendre).
func gaussAgainstGonum(t *testing.T, nodes, wg []float64) {
	n := len(nodes) - 1 // the Gauss rule's order
	x, w := make([]float64, n), make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	for i := range wg {
		// Gauss node i of the rule (index 2i+1, positive, largest first)
		// is gonum's i-th node in absolute value (gonum lists them from −1)
		assert.InDelta(t, math.Abs(x[i]), nodes[2*i+1], 1e-15, "Gauss node %d", i)
		assert.InDelta(t, w[i], wg[i], 1e-15, "Gauss weight %d", i)
	}
}

// TestRuleAgainstGonum checks the 7-point Gauss nodes and weights inside
// the 7–15 rule against gonum's Gauss–Legendre rule (quad.Legendre), and the
// Kronrod rule's exactness: x^0 … x^22 and Gauss x^0 … x^13 integrate to
// the closed form ∫_{−1}^{1} x^n dx = 2/(n+1) (n even), 0 (n odd).
func TestRuleAgainstGonum(t *testing.T) {
	nodes, wk, wg := gk15()
	gaussAgainstGonum(t, nodes[:], wg[:])
	poly := func(n int, kronrod bool) float64 { return rulePoly(nodes[:], wk[:], wg[:], n, kronrod) }
	for n := 0; n <= 24; n++ {
		want := 0.0
		if n%2 == 0 {
			want = 2 / float64(n+1)
		}
		if n <= 22 {
			assert.InDelta(t, want, poly(n, true), 4e-16, "Kronrod x^%d", n)
		}
		if n <= 13 {
			assert.InDelta(t, want, poly(n, false), 4e-16, "Gauss x^%d", n)
		}
	}
	// one degree beyond, neither is exact (the tests can fail)
	assert.Greater(t, math.Abs(poly(24, true)-2.0/25), 1e-10)
	assert.Greater(t, math.Abs(poly(14, false)-2.0/15), 1e-6)
	// the published DQK15 values, from memory: the largest Kronrod node and
	// the centre's Kronrod weight
	assert.Equal(t, 0.991455371120812639206854697526329, nodes[0])
	assert.Equal(t, 0.209482141084727828012999174891714, wk[7])
}

type closedCase struct {
	name   string
	f      func(float64) float64
	a, b   float64
	want   float64 // closed form, named beside each case
	opt    Options
	budget int // evaluations the case may use at most
}

func closedCases() []closedCase {
	return []closedCase{
		// ∫_0^1 e^x dx = e − 1
		{"exp", math.Exp, 0, 1, math.E - 1, Options{}, 30},
		// ∫_{−1}^{1} 1/(1+x²) dx = π/2
		{"arctan", func(x float64) float64 { return 1 / (1 + x*x) }, -1, 1, math.Pi / 2, Options{}, 300},
		// ∫_0^1 √x dx = 2/3 (derivative singular at 0)
		{"sqrt", math.Sqrt, 0, 1, 2.0 / 3, Options{}, 2000},
		// ∫_0^1 x^(−1/2) dx = 2 (integrable singularity at 0)
		{"inverse sqrt", func(x float64) float64 { return 1 / math.Sqrt(x) }, 0, 1, 2, Options{RelTol: 1e-10}, 10000},
		// ∫_0^1 log x dx = −1
		{"log", math.Log, 0, 1, -1, Options{RelTol: 1e-11}, 10000},
		// ∫_0^π sin x dx = 2
		{"sin", math.Sin, 0, math.Pi, 2, Options{}, 100},
		// ∫_0^{20π} sin²x dx = 10π (oscillating)
		{"sin² oscillating", func(x float64) float64 { return math.Sin(x) * math.Sin(x) }, 0, 20 * math.Pi, 10 * math.Pi, Options{}, 3000},
		// ∫_0^1 |x − 1/3| dx = 5/18 (kink off the dyadic points)
		{"kink", func(x float64) float64 { return math.Abs(x - 1.0/3) }, 0, 1, 5.0 / 18, Options{}, 2000},
		// ∫_{−3}^{3} x³ dx = 0: absolute target
		{"odd", func(x float64) float64 { return x * x * x }, -3, 3, 0, Options{AbsTol: 1e-13}, 15},
		// (1/200)·∫_{−60}^{140} erfc(u) du = 2·60/200 = 0.6 (∫ erfc over a
		// symmetric range is its length; the far tail beyond 140 is below
		// 1e-300): a smoothed step
		{"step-like", func(x float64) float64 { return math.Erfc(200 * (x - 0.3)) }, 0, 1, 0.6, Options{}, 3000},
		// ∫_0^1 dx/(1e-4 + (x − 1/2)²) = 2·arctan(50)/1e-2: a sharp peak
		{"peak", func(x float64) float64 { return 1 / (1e-4 + (x-0.5)*(x-0.5)) }, 0, 1, 2 * math.Atan(50) / 1e-2, Options{}, 3000},
		// a == b
		{"empty", math.Exp, 2, 2, 0, Options{}, 0},
	}
}

// TestAdaptiveClosedForms checks values against closed forms and that the
// stated Error bounds the true error, with either rule (the evaluation
// budgets are GK15's).
func TestAdaptiveClosedForms(t *testing.T) {
	for _, rule := range []Rule{GK15, GK7} {
		for _, c := range closedCases() {
			t.Run(fmt.Sprintf("%s rule %d", c.name, rule), func(t *testing.T) {
				opt := c.opt
				opt.Rule = rule
				if rule == GK7 {
					opt.MaxEvals = 1 << 16
				}
				r, err := Adaptive(c.f, c.a, c.b, opt)
				require.NoError(t, err)
				trueErr := math.Abs(r.Value - c.want)
				assert.LessOrEqual(t, trueErr, r.Error+4e-16*math.Abs(c.want), "true error %g, stated %g", trueErr, r.Error)
				tol := math.Max(c.opt.AbsTol, c.opt.RelTol*math.Abs(r.Value))
				if c.opt.AbsTol == 0 && c.opt.RelTol == 0 {
					tol = DefaultRelTol * math.Abs(r.Value)
				}
				assert.LessOrEqual(t, r.Error, tol)
				if rule == GK15 {
					assert.LessOrEqual(t, r.Evals, c.budget)
				}
			})
		}
	}
}

// TestRuleGK7 checks the 3–7 rule: its Gauss nodes and weights against
// gonum's 3-point Gauss–Legendre rule (quad.Legendre); its two added
// nodes as the roots of the Stieltjes polynomial x⁴ − (10/9)·x² +
// 1085/6237 (closed form, derived from its orthogonality to P₃(x)·x and
// P₃(x)·x³); and its exactness: Kronrod x^0 … x^11 and Gauss x^0 … x^5
// integrate to ∫_{−1}^{1} x^n dx = 2/(n+1) (n even), 0 (n odd), and one
// degree beyond they do not.
func TestRuleGK7(t *testing.T) {
	nodes, wk, wg := gk7()
	gaussAgainstGonum(t, nodes[:], wg[:])
	for _, i := range []int{0, 2} {
		x2 := nodes[i] * nodes[i]
		assert.InDelta(t, 0, x2*x2-10.0/9*x2+1085.0/6237, 1e-15, "Stieltjes root %d", i)
	}
	poly := func(n int, kronrod bool) float64 { return rulePoly(nodes[:], wk[:], wg[:], n, kronrod) }
	for n := 0; n <= 11; n++ {
		want := 0.0
		if n%2 == 0 {
			want = 2 / float64(n+1)
		}
		assert.InDelta(t, want, poly(n, true), 4e-16, "Kronrod x^%d", n)
		if n <= 5 {
			assert.InDelta(t, want, poly(n, false), 4e-16, "Gauss x^%d", n)
		}
	}
	assert.Greater(t, math.Abs(poly(12, true)-2.0/13), 1e-6)
	assert.Greater(t, math.Abs(poly(6, false)-2.0/7), 1e-3)
}

// TestGK7Breaks: GK7 between breakpoints where the integrand is a
// different smooth function on each piece (as a table interpolated
// between its points): the values against the closed form, the stated
// error bounding the true one, in one pass of 7 evaluations a piece
// against GK15's 15. Closed form: on the i-th of 300 pieces [a, b] of
// [−3, 3] the integrand is e^{−(x−c)²}, c = 0.01·i, and
// ∫_a^b e^{−(x−c)²} dx = (√π/2)·(erf(b − c) − erf(a − c)),
// ∫_a^b x·e^{−(x−c)²} dx = (e^{−(a−c)²} − e^{−(b−c)²})/2 + c·(√π/2)·(erf(b − c) − erf(a − c)).
func TestGK7Breaks(t *testing.T) {
	pts := make([]float64, 301)
	for i := range pts {
		pts[i] = -3 + 0.02*float64(i)
	}
	f := func(x float64, y []float64) {
		i := sort.SearchFloat64s(pts, x) - 1
		d := x - 0.01*float64(i)
		y[0] = math.Exp(-d * d)
		y[1] = x * y[0]
	}
	want := [2]float64{}
	for i := 0; i+1 < len(pts); i++ {
		c := 0.01 * float64(i)
		a, b := pts[i]-c, pts[i+1]-c
		want[0] += math.Sqrt(math.Pi) / 2 * (math.Erf(b) - math.Erf(a))
		want[1] += (math.Exp(-a*a)-math.Exp(-b*b))/2 + c*math.Sqrt(math.Pi)/2*(math.Erf(b)-math.Erf(a))
	}
	var evals [2]int
	for k, rule := range []Rule{GK15, GK7} {
		dst := make([]float64, 2)
		r, err := BreaksVec(dst, f, pts, Options{RelTol: 1e-12, Rule: rule})
		require.NoError(t, err)
		for j := range dst {
			assert.InDelta(t, want[j], dst[j], r.Error+1e-15, "rule %d component %d", rule, j)
		}
		assert.LessOrEqual(t, r.Error, 1e-12*math.Abs(want[0]))
		evals[k] = r.Evals
	}
	assert.Equal(t, 15*300, evals[0], "GK15: one pass")
	assert.Equal(t, 7*300, evals[1], "GK7: one pass")
}

// TestAgainstGonum compares with gonum's fixed Gauss–Legendre rule at a
// high order on smooth integrands (where it is accurate to rounding).
func TestAgainstGonum(t *testing.T) {
	fs := []struct {
		name string
		f    func(float64) float64
		a, b float64
	}{
		{"gaussian", func(x float64) float64 { return math.Exp(-x * x / 2) }, -3, 5},
		{"rational", func(x float64) float64 { return 1 / (2 + math.Cos(x)) }, 0, 7},
		{"poly-exp", func(x float64) float64 { return x * x * math.Exp(-x) }, 0, 10},
	}
	for _, c := range fs {
		want := quad.Fixed(c.f, c.a, c.b, 200, quad.Legendre{}, 0)
		r, err := Adaptive(c.f, c.a, c.b, Options{})
		require.NoError(t, err, c.name)
		assert.InDelta(t, want, r.Value, math.Max(r.Error, 1e-15*math.Abs(want))+1e-15, c.name)
	}
}

// TestInfinite checks the mapped infinite intervals against closed forms.
func TestInfinite(t *testing.T) {
	cases := []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64
		opt  Options
	}{
		// ∫_0^∞ e^{−x} dx = 1
		{"exp right", func(x float64) float64 { return math.Exp(-x) }, 0, math.Inf(1), 1, Options{}},
		// ∫_{−∞}^{∞} 1/(1+x²) dx = π
		{"cauchy", func(x float64) float64 { return 1 / (1 + x*x) }, math.Inf(-1), math.Inf(1), math.Pi, Options{}},
		// ∫_{−∞}^{∞} e^{−x²/2} dx = √(2π)
		{"gaussian", func(x float64) float64 { return math.Exp(-x * x / 2) }, math.Inf(-1), math.Inf(1), math.Sqrt(2 * math.Pi), Options{}},
		// ∫_{−∞}^{1} e^{x} dx = e
		{"exp left", math.Exp, math.Inf(-1), 1, math.E, Options{}},
		// ∫_1^∞ x^{−2} dx = 1
		{"power", func(x float64) float64 { return 1 / (x * x) }, 1, math.Inf(1), 1, Options{}},
		// finite ends behave as Adaptive: ∫_0^1 e^x = e − 1
		{"finite", math.Exp, 0, 1, math.E - 1, Options{}},
	}
	for _, c := range cases {
		r, err := Infinite(c.f, c.a, c.b, c.opt)
		require.NoError(t, err, c.name)
		trueErr := math.Abs(r.Value - c.want)
		assert.LessOrEqual(t, trueErr, r.Error+4e-16*math.Abs(c.want), "%s: true error %g, stated %g", c.name, trueErr, r.Error)
		assert.LessOrEqual(t, r.Error, 1e-12*math.Abs(c.want), c.name)
	}
}

// TestBreaks: a jump at 1/3 given as a breakpoint is integrated at the
// cost of a smooth integrand; closed form ∫_0^1 (x < 1/3 ? 1 : e^x) dx =
// 1/3 + e − e^{1/3}.
func TestBreaks(t *testing.T) {
	f := func(x float64) float64 {
		if x < 1.0/3 {
			return 1
		}
		return math.Exp(x)
	}
	want := 1.0/3 + math.E - math.Exp(1.0/3)
	r, err := Breaks(f, []float64{0, 1.0 / 3, 1}, Options{})
	require.NoError(t, err)
	assert.InDelta(t, want, r.Value, r.Error+4e-16*want)
	assert.LessOrEqual(t, r.Evals, 60)
	// without the breakpoint the jump costs many bisections; the value is
	// still within the stated error
	r2, err := Adaptive(f, 0, 1, Options{})
	require.NoError(t, err)
	assert.InDelta(t, want, r2.Value, r2.Error+4e-16*want)
	assert.Greater(t, r2.Evals, 10*r.Evals)
	// an infinite last piece: ∫_0^∞ e^{−x} with a break at 2 is 1
	r3, err := Breaks(func(x float64) float64 { return math.Exp(-x) }, []float64{0, 2, 2, math.Inf(1)}, Options{})
	require.NoError(t, err)
	assert.InDelta(t, 1, r3.Value, r3.Error+1e-16)
}

// TestVector integrates (1, x, x², e^x, cos 3x) on [0, 2] at once: closed
// forms 2, 2, 8/3, e² − 1, sin(6)/3; Error bounds every component.
func TestVector(t *testing.T) {
	want := []float64{2, 2, 8.0 / 3, math.Exp(2) - 1, math.Sin(6) / 3}
	f := func(x float64, y []float64) {
		y[0], y[1], y[2], y[3], y[4] = 1, x, x*x, math.Exp(x), math.Cos(3*x)
	}
	dst := make([]float64, 5)
	r, err := AdaptiveVec(dst, f, 0, 2, Options{RelTol: 1e-13})
	require.NoError(t, err)
	for j := range want {
		assert.InDelta(t, want[j], dst[j], r.Error+1e-15, "component %d", j)
	}
	assert.LessOrEqual(t, r.Error, 1e-13*(math.Exp(2)-1))
	// the same through BreaksVec with an infinite end: ∫_0^∞ (e^{−x}, x e^{−x}, e^{−2x}) = (1, 1, 1/2)
	g := func(x float64, y []float64) {
		e := math.Exp(-x)
		y[0], y[1], y[2] = e, x*e, e*e
	}
	dst3 := make([]float64, 3)
	r, err = BreaksVec(dst3, g, []float64{0, 1, math.Inf(1)}, Options{})
	require.NoError(t, err)
	for j, w := range []float64{1, 1, 0.5} {
		assert.InDelta(t, w, dst3[j], r.Error+1e-16, "component %d", j)
	}
}

// TestBudgetAndResolution: a small budget returns the best result with
// ErrBudget and an error estimate that still covers the true error; a
// non-integrable singularity (1/x on (0, 1], ∫ = ∞) cannot meet any
// target.
func TestBudgetAndResolution(t *testing.T) {
	f := func(x float64) float64 { return 1 / math.Sqrt(x) }
	r, err := Adaptive(f, 0, 1, Options{MaxEvals: 100})
	require.ErrorIs(t, err, ErrBudget)
	assert.LessOrEqual(t, r.Evals, 100)
	assert.LessOrEqual(t, math.Abs(r.Value-2), r.Error) // closed form 2
	// 1/x: ∫_0^1 diverges; the driver bisects toward 0 until the budget
	// ends, its panels cannot be bisected, or 1/x overflows, never
	// claiming convergence
	_, err = Adaptive(func(x float64) float64 { return 1 / x }, 0, 1, Options{MaxEvals: MaxEvalsCap})
	require.Error(t, err)
	assert.True(t, errors.Is(err, ErrBudget) || errors.Is(err, ErrResolution) || errors.Is(err, ErrParam), "%v", err)
	// panels a few units in the last place wide cannot be bisected: an
	// integrand alternating between neighbouring floats cannot meet a
	// 1e-300 target
	_, err = Adaptive(func(x float64) float64 {
		return float64(math.Float64bits(x) & 1)
	}, 1, 1+8*0x1p-52, Options{AbsTol: 1e-300})
	assert.ErrorIs(t, err, ErrResolution)
	// a jump between a panel's end and its outermost node is not seen by
	// K15 − G7; the rounding terms still cover the true error, and a
	// 1e-300 target is reported out of reach (∫_0^1 sign(x − 1/3) dx =
	// 1/3, closed form)
	r, err = Adaptive(func(x float64) float64 { return math.Copysign(1, x-1.0/3) }, 0, 1, Options{AbsTol: 1e-300, MaxEvals: MaxEvalsCap})
	require.ErrorIs(t, err, ErrResolution)
	assert.InDelta(t, 1.0/3, r.Value, r.Error)
	assert.Less(t, r.Error, 1e-14)
}

// TestAbscissaRounding: a panel 2^−12 wide at x = 10^6 has its nodes only
// to about 5e-7 of its width (ulp(10^6) = 2^−33 ≈ 1.16e-10); the stated error must
// still cover the true error of ∫_c^{c+2^−12} e^{(x−c)/s} dx = s·(e⁴ − 1)
// (closed form; s = 2^−14, x − c exact by Sterbenz's lemma), and the
// default 1e-12 target is reported out of reach rather than met falsely.
func TestAbscissaRounding(t *testing.T) {
	const c, s = 1e6, 0x1p-14
	f := func(x float64) float64 { return math.Exp((x - c) / s) }
	want := s * math.Expm1(4)
	r, err := Adaptive(f, c, c+0x1p-12, Options{})
	assert.ErrorIs(t, err, ErrResolution)
	assert.LessOrEqual(t, math.Abs(r.Value-want), r.Error)
	// no worse than the node jitter allows: 2·ulp·(variation e⁴ − 1) is
	// 3.8e-6 of the value
	assert.Less(t, r.Error, 5e-6*want)
	// at a target the abscissae allow, it converges
	r, err = Adaptive(f, c, c+0x1p-12, Options{RelTol: 1e-5})
	require.NoError(t, err)
	assert.LessOrEqual(t, math.Abs(r.Value-want), r.Error)
}

// TestBadInput: every bad parameter returns an error wrapping ErrParam.
func TestBadInput(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	one := func(float64) float64 { return 1 }
	cases := []struct {
		name string
		call func() error
	}{
		{"a > b", func() error { _, err := Adaptive(one, 1, 0, Options{}); return err }},
		{"NaN end", func() error { _, err := Adaptive(one, nan, 0, Options{}); return err }},
		{"infinite end in Adaptive", func() error { _, err := Adaptive(one, 0, inf, Options{}); return err }},
		{"negative AbsTol", func() error { _, err := Adaptive(one, 0, 1, Options{AbsTol: -1}); return err }},
		{"NaN RelTol", func() error { _, err := Adaptive(one, 0, 1, Options{RelTol: nan}); return err }},
		{"MaxEvals above cap", func() error { _, err := Adaptive(one, 0, 1, Options{MaxEvals: MaxEvalsCap + 1}); return err }},
		{"negative MaxEvals", func() error { _, err := Adaptive(one, 0, 1, Options{MaxEvals: -1}); return err }},
		{"nil f", func() error { _, err := Adaptive(nil, 0, 1, Options{}); return err }},
		{"Infinite a = +Inf", func() error { _, err := Infinite(one, inf, inf, Options{}); return err }},
		{"unsorted breaks", func() error { _, err := Breaks(one, []float64{0, 2, 1}, Options{}); return err }},
		{"one break", func() error { _, err := Breaks(one, []float64{0}, Options{}); return err }},
		{"inner infinite break", func() error { _, err := Breaks(one, []float64{0, inf, inf}, Options{}); return err }},
		{"too many breaks", func() error { _, err := Breaks(one, make([]float64, MaxBreaks+1), Options{}); return err }},
		{"unknown Rule", func() error { _, err := Adaptive(one, 0, 1, Options{Rule: 2}); return err }},
		{"Partition with GK7", func() error {
			_, _, err := Partition(nil, one, []float64{0, 1}, Options{Rule: GK7})
			return err
		}},
		{"empty dst", func() error {
			_, err := AdaptiveVec(nil, func(float64, []float64) {}, 0, 1, Options{})
			return err
		}},
		{"NaN integrand", func() error {
			_, err := Adaptive(func(x float64) float64 { return math.Log(x - 0.5) }, 0, 1, Options{})
			return err
		}},
		{"NaN component of a vector integrand", func() error {
			_, err := BreaksVec(make([]float64, 2), func(x float64, y []float64) { y[0], y[1] = 1, math.Log(x-0.5) }, []float64{0, 1}, Options{})
			return err
		}},
		{"infinite component of a vector integrand", func() error {
			_, err := BreaksVec(make([]float64, 2), func(x float64, y []float64) {
				y[0], y[1] = 1, 1
				if x > 0.7 {
					y[1] = math.Inf(1)
				}
			}, []float64{0, 0.5, 1}, Options{Rule: GK7})
			return err
		}},
	}
	for _, c := range cases {
		err := c.call()
		require.Error(t, err, c.name)
		assert.ErrorIs(t, err, ErrParam, c.name)
		var pe *ParamError
		assert.ErrorAs(t, err, &pe, c.name)
	}
}

// TestVectorAsScalar: a vector integrand of one component gives the bits
// of the same integrand as a scalar (the two paths of the driver do the
// same arithmetic), with either rule, over finite and infinite pieces.
func TestVectorAsScalar(t *testing.T) {
	f := func(x float64) float64 { return math.Exp(-x) * (1 + math.Sin(3*x)) / (1 + x*x) }
	fv := func(x float64, y []float64) { y[0] = f(x) }
	for _, rule := range []Rule{GK15, GK7} {
		for _, pts := range [][]float64{{0, 0.3, 2, 5}, {-1, 0, math.Inf(1)}} {
			opt := Options{RelTol: 1e-13, Rule: rule}
			want, err := Breaks(f, pts, opt)
			require.NoError(t, err)
			var got [1]float64
			r, err := BreaksVec(got[:], fv, pts, opt)
			require.NoError(t, err)
			assert.Equal(t, math.Float64bits(want.Value), math.Float64bits(got[0]), "rule %v pts %v", rule, pts)
			assert.Equal(t, math.Float64bits(want.Error), math.Float64bits(r.Error), "rule %v pts %v", rule, pts)
			assert.Equal(t, want.Evals, r.Evals, "rule %v pts %v", rule, pts)
		}
	}
}

// TestDeterministic: the same call gives the same bits, alone or while
// other goroutines integrate.
func TestDeterministic(t *testing.T) {
	f := func(x float64) float64 { return math.Sqrt(x) * math.Cos(7*x) }
	first, err := Adaptive(f, 0, 3, Options{})
	require.NoError(t, err)
	done := make(chan Result, 8)
	for i := 0; i < 8; i++ {
		go func() {
			_, _ = Adaptive(math.Exp, 0, float64(i), Options{})
			r, _ := Adaptive(f, 0, 3, Options{})
			done <- r
		}()
	}
	for i := 0; i < 8; i++ {
		assert.Equal(t, first, <-done)
	}
}

// TestAllocations: one call allocates a small workspace (the panels, with
// the heap in them; the scratch with the values), not one per panel: two
// allocations while the panels fit the first capacity (3 for one piece;
// e^x takes one panel), and two more (panels, values) per growth beyond
// (√x takes 41 panels: 8 allocations in all here).
func TestAllocations(t *testing.T) {
	n := testing.AllocsPerRun(20, func() { _, _ = Adaptive(math.Exp, 0, 1, Options{}) })
	assert.LessOrEqual(t, n, 2.0)
	f := func(x float64) float64 { return math.Sqrt(x) }
	n = testing.AllocsPerRun(20, func() { _, _ = Adaptive(f, 0, 1, Options{}) })
	assert.LessOrEqual(t, n, 8.0)
}

// TestPartition: the panels tile the interval, carry f at exactly the
// points where f was evaluated, add up to the Result, and integrate
// another function of the same shape: ∫_0^{10} e^{−x}·cos(tx) dx =
// [1 − e^{−10}(cos 10t − t·sin 10t)]/(1 + t²) (closed form).
func TestPartition(t *testing.T) {
	seen := map[float64]bool{}
	f := func(x float64) float64 { seen[x] = true; return math.Exp(-x) }
	pans, r, err := Partition(nil, f, []float64{0, 1, 10}, Options{RelTol: 1e-14})
	require.NoError(t, err)
	require.NotEmpty(t, pans)
	assert.Equal(t, 0.0, pans[0].A)
	assert.Equal(t, 10.0, pans[len(pans)-1].B)
	sum, errSum := 0.0, 0.0
	for i, p := range pans {
		if i > 0 {
			assert.Equal(t, pans[i-1].B, p.A, "panels tile")
		}
		x, w := p.Nodes()
		s := 0.0
		for k := range x {
			assert.True(t, seen[x[k]], "node %v evaluated", x[k])
			assert.Equal(t, math.Exp(-x[k]), p.F[k])
			s += w[k] * p.F[k]
		}
		assert.InDelta(t, p.Value, s, 1e-15*math.Abs(p.Value)+1e-300)
		sum += p.Value
		errSum += p.Error
	}
	assert.InDelta(t, r.Value, sum, 4e-16*sum)
	assert.InDelta(t, r.Error, errSum, 1e-12*errSum)
	assert.InDelta(t, -math.Expm1(-10), r.Value, r.Error+4e-16)
	for _, tt := range []float64{0.5, 2} {
		got := 0.0
		for _, p := range pans {
			x, w := p.Nodes()
			for k := range x {
				got += w[k] * p.F[k] * math.Cos(tt*x[k])
			}
		}
		s, c := math.Sincos(10 * tt)
		want := (1 - math.Exp(-10)*(c-tt*s)) / (1 + tt*tt)
		assert.InDelta(t, want, got, 1e-12, "t = %v", tt)
	}
	_, _, err = Partition(nil, f, []float64{0, math.Inf(1)}, Options{})
	assert.ErrorIs(t, err, ErrParam)
}
