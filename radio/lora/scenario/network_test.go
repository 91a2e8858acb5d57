package scenario_test

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/radio/lora"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// The network's settings end to end (issue 14): a US902-928 site whose
// gateway listens on channel block 1 (common practice for a gateway of
// eight receive paths), RX1 one data rate down, RX2 at DR10 (SF10/500 kHz)
// and out-of-reach nodes rejoining every 24 reports. The file is valid
// under the schema; the reader fills the fields; the model spreads the
// frames over the 8 + 1 channels the gateway hears (the load by hand, as in
// TestUS902928Site) and passes the windows to the class A cycle.
func TestNetworkSettingsEndToEnd(t *testing.T) {
	path := filepath.Join("testdata", "us902-928-network.json")
	data, err := os.ReadFile(path)
	require.NoError(t, err)
	v := loadSchema(t)
	assert.Empty(t, v.check("", v.root, decodeJSON(t, data)))
	s, err := scenario.Parse(data)
	require.NoError(t, err)
	b1, err := s.Region.ChannelBlock(1)
	require.NoError(t, err)
	assert.Equal(t, b1, s.Gateways[0].Channels)
	for _, g := range s.Groups {
		assert.Equal(t, 1, g.RX1DROffset)
		assert.Equal(t, lora.RX2Window{Frequency: 923.3e6, DR: 10}, g.RX2)
		assert.Equal(t, 24, g.RejoinEvery)
	}
	s.Groups = s.Groups[:1] // the unconfirmed group alone: loads by hand
	m, err := scenario.Build(s, nil)
	require.NoError(t, err)
	g := m.Groups[0]
	n, T := float64(s.Groups[0].Nodes), s.Groups[0].Interval
	for _, d := range g.PerDR {
		ch := map[bool]float64{true: 1, false: 8}[d.DR == 4]
		want := (n - 1) * g.Heard() * d.Share * d.Airtime / (T * ch)
		assert.InDelta(t, want, d.Vulnerable, 1e-15*math.Max(1, want), "DR%d", d.DR)
	}
	tls, err := g.ClassA.Timelines()
	require.NoError(t, err)
	for _, tl := range tls {
		want, err := s.Region.RX1DataRate(tl.Setting.DR, 1)
		require.NoError(t, err)
		assert.Equal(t, want, tl.RX1DR)
		assert.Equal(t, 10, tl.RX2DR)
	}
}

// A Go-built scenario's network settings are checked before anything is
// computed, each named by its field.
func TestNetworkSettingsChecked(t *testing.T) {
	for _, tc := range []struct {
		field string
		edit  func(s *scenario.Scenario)
	}{
		{"groups[0].rx1_dr_offset", func(s *scenario.Scenario) { s.Groups[0].RX1DROffset = 6 }},
		{"groups[0].rx2.data_rate", func(s *scenario.Scenario) { s.Groups[0].RX2 = lora.RX2Window{Frequency: 869.525e6, DR: 7} }},
		{"groups[0].rx2.frequency_mhz", func(s *scenario.Scenario) { s.Groups[0].RX2 = lora.RX2Window{Frequency: 868.65e6, DR: 0} }},
		{"groups[0].rejoin_every_reports", func(s *scenario.Scenario) { s.Groups[0].RejoinEvery = -1 }},
		{"gateways[0].channels", func(s *scenario.Scenario) {
			m, err := s.Region.Mask(0)
			require.NoError(t, err)
			s.Gateways[0].Channels = m
			s.Region = lora.US915() // channel 0 carries DR0 … DR3, not DR4
		}},
	} {
		t.Run(tc.field, func(t *testing.T) {
			s := scenario.Demo()
			tc.edit(&s)
			err := s.Check()
			require.ErrorIs(t, err, scenario.ErrInvalid)
			assert.Contains(t, err.Error(), tc.field)
		})
	}
	require.NoError(t, scenario.Demo().Check())
}
