package main

import (
	"fmt"
	"testing"

	"github.com/joulelaw/joulelaw/internal/testref"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// site5000 is the demo site grown to 5,000 nodes in 8 groups (its four
// groups twice, 625 nodes each, the copies on reports jittered by ±10 % of
// their interval and the originals by ±2 %), the pump alarms confirmed with
// up to four transmissions as in the demo, without the design section.
func site5000() scenario.Scenario {
	s := scenario.Demo()
	s.Design = nil
	var gs []scenario.Group
	for copyNo, jitter := range []float64{0.02, 0.1} {
		for _, g := range s.Groups {
			g.Name = fmt.Sprintf("%s, part %d", g.Name, copyNo+1)
			g.Nodes = 625
			g.Jitter = jitter * g.Interval
			gs = append(gs, g)
		}
	}
	s.Groups = gs
	return s
}

// BenchmarkSite5000 computes the plan of a 5,000-node, 8-group site with
// jittered schedules and a confirmed group (issue 12 target: at most 0.5 s).
// Its CPU time per operation is reported as cpu-ns/op.
func BenchmarkSite5000(b *testing.B) {
	s := site5000()
	if s.TotalNodes() != 5000 || len(s.Groups) != 8 {
		b.Fatalf("site: %d nodes in %d groups", s.TotalNodes(), len(s.Groups))
	}
	confirmed := 0
	for _, g := range s.Groups {
		if g.Confirmed {
			confirmed++
		}
	}
	if confirmed == 0 {
		b.Fatal("no confirmed group")
	}
	defer testref.ReportCPU(b)()
	benchPlan(b, s)
}
