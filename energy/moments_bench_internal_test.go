package energy

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/fexp"
	"github.com/joulelaw/joulelaw/internal/testref"
)

// BenchmarkTableMoments integrates the moments of one conditional node
// law's table (what a Site's node law asks of each of its components) and
// of the first failure among 80 such nodes (componentQuad of S^80): the
// twelve-settings group of BenchmarkTabulate, in CPU time per table.
func BenchmarkTableMoments(b *testing.B) {
	spec, twelve := benchTwelve(b)
	l, err := NewNodeLifetime(twelve, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
	require.NoError(b, err)
	tb := tabulate(l)
	b.Run("node", func(b *testing.B) {
		defer testref.ReportCPU(b)()
		for b.Loop() {
			tb.integrateMoments()
		}
	})
	b.Run("first-80", func(b *testing.B) {
		const n = 80.0
		lo := tb.Quantile(-math.Expm1(math.Log1p(-1e-15) / n))
		med := tb.Quantile(-math.Expm1(math.Log(0.5) / n))
		hi := tb.UpperQuantile(math.Exp(math.Log(1e-15) / n))
		defer testref.ReportCPU(b)()
		for b.Loop() {
			hint := 0
			componentQuad(func(t float64) float64 { return fexp.Exp(n * tb.logSurvival(t, &hint)) }, lo, med, hi, componentMomentTol)
		}
	})
}
