package lora_test

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
)

// GatewayDownlinksFrom solves the same fixed point as GatewayDownlinks from
// another start: on the fallback cases of TestGatewayDownlinksFallback
// (checked there against the booking rules played out), started from the
// answer for the same streams at 90 % of their rates, it must agree with
// the cold start within the two answers' solver tolerance (1e-12, far
// below their stated Error), in fewer rounds; a start with another number
// of streams is no start (the cold start's bits).
func TestGatewayDownlinksFrom(t *testing.T) {
	for _, tc := range gatewayCases(true) {
		t.Run(tc.name, func(t *testing.T) {
			cold, err := lora.GatewayDownlinks(tc.streams)
			require.NoError(t, err)
			near := append([]lora.DownlinkStream(nil), tc.streams...)
			for i := range near {
				near[i].Rate *= 0.9
			}
			prev, err := lora.GatewayDownlinks(near)
			require.NoError(t, err)
			warm, err := lora.GatewayDownlinksFrom(tc.streams, prev)
			require.NoError(t, err)
			for i := range tc.streams {
				assert.InDelta(t, cold.Sent[i], warm.Sent[i], 1e-12, "stream %d: Sent", i)
				assert.InDelta(t, cold.FallbackSent[i], warm.FallbackSent[i], 1e-12, "stream %d: FallbackSent", i)
			}
			assert.InDelta(t, cold.Error, warm.Error, 1e-12)
			assert.Less(t, warm.Iterations, cold.Iterations, "rounds from a nearby answer")
			other, err := lora.GatewayDownlinksFrom(tc.streams, lora.DownlinkBudget{Sent: []float64{0.5}})
			require.NoError(t, err)
			assert.Equal(t, cold, other, "a start of another size is ignored")
		})
	}
}

// A DownlinkLayout's budgets are GatewayDownlinksFrom's to the bit (the
// oracle: GatewayDownlinksFrom itself, checked against the booking rules
// in TestGatewayDownlinksFallback) on the fallback cases at their rates
// and at 90 % of them, cold and warm started, however many rate sets one
// layout serves; streams that differ from the layout's in more than Rate,
// or in number, or a bad rate are errors wrapping ErrParam.
func TestDownlinkLayout(t *testing.T) {
	for _, tc := range gatewayCases(true) {
		t.Run(tc.name, func(t *testing.T) {
			lay, err := lora.NewDownlinkLayout(tc.streams)
			require.NoError(t, err)
			near := append([]lora.DownlinkStream(nil), tc.streams...)
			for i := range near {
				near[i].Rate *= 0.9
			}
			var prevWant, prevGot lora.DownlinkBudget
			for _, streams := range [][]lora.DownlinkStream{near, tc.streams, near} {
				want, err := lora.GatewayDownlinksFrom(streams, prevWant)
				require.NoError(t, err)
				got, err := lay.BudgetFrom(streams, prevGot)
				require.NoError(t, err)
				assert.Equal(t, want, got)
				prevWant, prevGot = want, got
			}
			bad := append([]lora.DownlinkStream(nil), tc.streams...)
			bad[0].Airtime *= 2
			_, err = lay.BudgetFrom(bad, lora.DownlinkBudget{})
			assert.ErrorIs(t, err, lora.ErrParam)
			_, err = lay.BudgetFrom(tc.streams[1:], lora.DownlinkBudget{})
			assert.ErrorIs(t, err, lora.ErrParam)
			bad = append([]lora.DownlinkStream(nil), tc.streams...)
			bad[0].Rate = -1
			_, err = lay.BudgetFrom(bad, lora.DownlinkBudget{})
			assert.ErrorIs(t, err, lora.ErrParam)
		})
	}
	_, err := lora.NewDownlinkLayout([]lora.DownlinkStream{{Rate: 1, Airtime: 0, DutyCycle: 1}})
	assert.ErrorIs(t, err, lora.ErrParam)
}
