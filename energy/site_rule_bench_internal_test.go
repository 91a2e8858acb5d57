package energy

import (
	"testing"

	"github.com/joulelaw/joulelaw/internal/testref"
)

// BenchmarkSiteRuleError measures the shared rule's error estimate alone
// (what NewSite's probeRule does on the rule it keeps): the probes of each
// group's node law and first failure and of the fleet's first failure on
// the invented two-factor site (TwoFactorSiteSpec), without building the
// site. Its CPU time per operation (cpu-ns/op) is much steadier on a
// shared machine than the demo's (9.7 to 10.3 ms in most runs of 100
// operations, the demo's 0.20 to 0.25 s): for changes to the probes'
// passes (mixZs, interpBoundsWith, probeFinish) too small to see there.
func BenchmarkSiteRuleError(b *testing.B) {
	s, err := NewSite(TwoFactorSiteSpec(b))
	if err != nil {
		b.Fatal(err)
	}
	defer testref.ReportCPU(b)()
	for b.Loop() {
		for g := range s.names {
			if s.twin[g] != g {
				continue
			}
			s.lawProbes(kindNode, g, 0)
			s.lawProbes(kindFirst, g, 0)
		}
		s.lawProbes(kindFleet, 0, 0)
	}
}
