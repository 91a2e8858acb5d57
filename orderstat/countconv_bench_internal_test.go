package orderstat

import "testing"

var sinkSplit float64

// demoCounts are counts of the kind the demo's fleet laws split (4 groups
// of 60, 180, 24 and 40 nodes at one date of the lifetime laws; the
// probabilities are the groups' F(t) there).
var demoCounts = [][]binom{
	{{60, 0.08969852488196156, 0.9103014751180385}, {180, 0.47732442985089274, 0.5226755701491073}, {24, 0.005320289899893146, 0.9946797101001068}, {40, 0.18508563173545034, 0.8149143682645497}},
	{{60, 5.946795908328213e-07, 0.9999994053204092}, {180, 0.0034866146405806795, 0.9965133853594194}, {24, 0.00013135055734092614, 0.9998686494426591}, {40, 4.4545803699541886e-12, 0.9999999999955455}},
	{{60, 0.00041309677509868603, 0.9995869032249013}, {180, 0.058831426970242365, 0.9411685730297576}, {24, 0.0001313505573729481, 0.9998686494426271}, {40, 0.00014440949326350764, 0.9998555905067364}},
}

// BenchmarkCountSplitDemo is one tail P(C <= 3), P(C > 3) of each of the
// three demo counts by split (the fast path where it applies);
// BenchmarkCountSplitDemoTransform the same by the tilted transform alone
// (the path every split took before).
func BenchmarkCountSplitDemo(b *testing.B) { benchSplit(b, countModel.split) }

func BenchmarkCountSplitDemoTransform(b *testing.B) { benchSplit(b, countModel.splitTransform) }

func benchSplit(b *testing.B, split func(countModel, float64) (float64, float64)) {
	cms := make([]countModel, len(demoCounts))
	for i, ts := range demoCounts {
		cms[i] = newCountModel(ts)
	}
	for b.Loop() {
		for _, cm := range cms {
			le, _ := split(cm, 3)
			sinkSplit += le
		}
	}
}
