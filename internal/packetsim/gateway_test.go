package packetsim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/joulelaw/joulelaw/internal/packetsim"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// TestGatewayCapacityAgainstSampling compares the site model's gateway
// budget (lora.GatewayDownlinks inside Build's fixed point) with the
// packet-level play at several loads: a confirmed group answered after every
// received uplink, 85 % in RX1 (the 1 % sub-band of the uplink channels) and
// the rest in RX2 (869.525 MHz, 10 %: ERC Rec. 70-03 Annex 1), reporting
// every 600 s. The play books each answer with the gateway when the uplink
// ends and refuses it when it would overlap, on the transmitter or on its
// band's off-time, an answer taken on before; an answer refused in RX1 is
// booked in RX2 at once (the fallback), and one refused there is lost; the
// lost answers make the node retransmit (after max(ACK_TIMEOUT, the node's
// own off-time)).
//
// Per play the share of booked answers sent, per window, and the group's
// mean energy per cycle are one sample each (plays are independent); the
// tolerance is Student's t at two-sided level 1e-6 (gonum) times the
// plays' standard error, plus the model's stated error of the shares sent
// (DownlinkBudget.Error) — for the energy, its effect through the
// retransmissions (taken as E[N]'s relative change, bounded by the share's
// error times the attempts, times the mean).
func TestGatewayCapacityAgainstSampling(t *testing.T) {
	cases := []struct {
		nodes, plays int
		loaded       bool // the budget loses answers for sure (the check has power)
	}{
		{30, 300, false},
		{400, 120, true},
		{1500, 60, true},
	}
	for ci, tc := range cases {
		t.Run(fmt.Sprintf("%d nodes", tc.nodes), func(t *testing.T) {
			s, err := scenario.Demo().WithCounts([]int{1, 1, tc.nodes, 1})
			require.NoError(t, err)
			s.Groups = s.Groups[2:3]
			s.Groups[0].Interval = 600
			m, err := scenario.Build(s, nil)
			require.NoError(t, err)
			laws, err := m.Laws(2, nil)
			require.NoError(t, err)
			g := m.Groups[0]
			// Index 1: RX1 answers sent in RX1; 2: RX2 answers sent in RX2;
			// 0: RX1 answers refused there and sent in RX2 (the fallback).
			sentOf := map[[2]int]float64{}
			for _, d := range g.PerDR {
				sentOf[[2]int{d.DR, 1}] = d.RX1Sent
				sentOf[[2]int{d.DR, 2}] = d.RX2Sent
				sentOf[[2]int{d.DR, 0}] = d.RX1Fallback
			}
			bud := m.Gateways[0].Budget
			stated := [3]float64{bud.FallbackError, bud.Error, bud.Error}
			r := rand.New(rand.NewPCG(uint64(31+ci), 0x6761746577617973))
			var share [3][]float64
			var pred [3][]float64
			var means []float64
			for range tc.plays {
				out, err := packetsim.Play(s, packetsim.Options{Start: 300}, r)
				require.NoError(t, err)
				var booked, sent [3]int
				var want [3]float64
				for _, a := range out.Answers {
					booked[a.Window] += a.Booked
					sent[a.Window] += a.Sent
					want[a.Window] += float64(a.Booked) * sentOf[[2]int{a.DR, a.Window}]
					if a.Window == 1 {
						booked[0] += a.Booked
						sent[0] += a.Fallback
						want[0] += float64(a.Booked) * sentOf[[2]int{a.DR, 0}]
					}
				}
				for w := range 3 {
					if booked[w] > 0 {
						share[w] = append(share[w], float64(sent[w])/float64(booked[w]))
						pred[w] = append(pred[w], want[w]/float64(booked[w]))
					}
				}
				e, _ := meanSD(out.Energy)
				means = append(means, e)
			}
			name := [3]string{"RX1 refused, sent in RX2", "RX1", "RX2"}
			for w := range 3 {
				n := len(share[w])
				require.Greater(t, n, 10, "%s: plays with answers", name[w])
				tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 1)}.Quantile(1 - 5e-7)
				got, sd := meanSD(share[w])
				want, _ := meanSD(pred[w])
				tol := tq*sd/math.Sqrt(float64(n)) + stated[w]
				assert.InDelta(t, want, got, tol, "%s: share sent", name[w])
				if tc.loaded && w == 1 {
					assert.Greater(t, 1-got, tol, "RX1: a model without the gateway's limits would pass")
				}
				if w == 0 && want > 2*tol {
					// Where the fallback is well above the tolerance, a
					// model that loses every refused answer fails.
					assert.Greater(t, got, tol, "the fallback: a model that loses every refused answer would pass")
				}
				t.Logf("%d nodes, %s: share sent, model %.4f, sampled %.4f ± %.4f (stated error %.2g)", tc.nodes, name[w], want, got, tol, stated[w])
			}
			tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(len(means) - 1)}.Quantile(1 - 5e-7)
			got, sd := meanSD(means)
			want := laws.GroupEnergy[0].Mean()
			tol := tq*sd/math.Sqrt(float64(len(means))) + want*bud.FallbackError*float64(s.Groups[0].MaxTransmissions)
			assert.InDelta(t, want, got, tol, "mean energy per cycle")
			t.Logf("%d nodes: mean energy per cycle, law %.5g J, sampled %.5g J ± %.2g J", tc.nodes, want, got, tol)
		})
	}
}
