package energy

import (
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// BenchmarkTabulate builds the table of one conditional node law (what
// NewSite does for every group at every node of its shared rule): the
// invented test sites' groups (tabTestSpec: one and two settings) and a
// group of twelve settings whose transmissions of 0.2 to 6 s spread the
// settings' lives over years, with a calendar limit (as the demo's
// groups), in CPU time per table.
func BenchmarkTabulate(b *testing.B) {
	spec, twelve := benchTwelve(b)
	for _, c := range []struct {
		name string
		node NodeSpec
	}{{"one-setting", spec.Groups[0].Node}, {"two-settings", spec.Groups[1].Node}, {"twelve-settings", twelve}} {
		l, err := NewNodeLifetime(c.node, Environment{Climate: spec.Climate, Conditions: Conditions{BatchFactor: 1}})
		require.NoError(b, err)
		b.Run(c.name, func(b *testing.B) {
			defer testref.ReportCPU(b)()
			for b.Loop() {
				tabulate(l)
			}
		})
	}
}

// benchTwelve returns the invented test site (tabTestSpec) and a node of
// twelve settings whose transmissions of 0.2 to 6 s spread the settings'
// lives over years, with a calendar limit of 2.5 years (as the demo's
// groups).
func benchTwelve(tb testing.TB) (SiteSpec, NodeSpec) {
	spec := tabTestSpec(tb)
	twelve := spec.Groups[0].Node
	twelve.Settings = nil
	for i := range 12 {
		tx := 0.2 + 0.5*float64(i)
		twelve.Settings = append(twelve.Settings, NodeSetting{Weight: 1.0 / 12, Cycle: tabTestCycle(12*Hour, 8*MicroAmp, tx)})
	}
	twelve.CalendarLife = 2.5 * Year
	return spec, twelve
}
