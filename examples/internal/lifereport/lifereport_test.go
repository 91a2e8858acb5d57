package lifereport

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
)

// TestLivesClosedForm checks the printed figures for exponential lives
// (mean 4 years, 20 nodes, a 1-year horizon) against closed forms: the
// median ln 2/λ and the quantiles −ln(1 − p)/λ; the first of n is
// exponential with rate nλ; the share flat by t is 1 − exp(−λt), and the
// count flat is binomial(n, that share), none with probability exp(−nλt).
func TestLivesClosedForm(t *testing.T) {
	const n, meanYears = 20, 4.0
	lam := 1 / (meanYears * energy.Year)
	life, err := dist.NewExponential(lam)
	require.NoError(t, err)
	var b strings.Builder
	require.NoError(t, lives(&b, life, "node", n, energy.Year, 1))
	out := b.String()

	y := func(s float64) float64 { return energy.Years(s) }
	q := func(p, rate float64) float64 { return -math.Log1p(-p) / rate }
	want := []string{
		fmt.Sprintf("one node's life: median %.2f years, 90 %% between %.2f and %.2f years", y(q(0.5, lam)), y(q(0.05, lam)), y(q(0.95, lam))),
		fmt.Sprintf("first flat battery of 20: median %.2f years, 90 %% between %.2f and %.2f years", y(q(0.5, n*lam)), y(q(0.05, n*lam)), y(q(0.95, n*lam))),
		fmt.Sprintf("flat before 1 years: %.3g %% of them", 100*-math.Expm1(-lam*energy.Year)),
		fmt.Sprintf("none with probability %.3g", math.Exp(-n*lam*energy.Year)),
	}
	for _, w := range want {
		assert.Contains(t, out, w)
	}
}
