package lifesim_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/lifesim"
)

// fixedNode is a node whose cycle spends the same energy every time: a
// 60 mA, 4 s transmission at 3.6 V every day over a floor of floorCurrent
// (invented test values).
func fixedNode(t *testing.T, floorCurrent float64) (energy.Cycle, energy.Battery) {
	t.Helper()
	tx, err := energy.NewFixedState("tx", 60*energy.MilliAmp, 3.6, 4)
	require.NoError(t, err)
	c, err := energy.NewCycle(energy.MustSequence(tx), dist.MustPointMass(energy.Day), floorCurrent*3.6)
	require.NoError(t, err)
	b, err := energy.NewBattery(energy.BatterySpec{Charge: 50 * energy.MilliAmpHour, NominalVoltage: 3.6, UsableFraction: 0.9,
		SelfDischargePerYear: 0.03})
	require.NoError(t, err)
	return c, b
}

// With constant rates the cell empties linearly, so the sampler's
// interpolated death is the closed form: with P_a the active power above
// the floor and P_f the floor power (both at the rail), k the supply's
// energy scale, P_q its quiescent power, F_f and F_sd the thermal factors
// and s the self-discharge rate, a node with factors (c, a, f) in a batch b
// dies at
//
//	t = c·b·(U − N·s·S) / (k·(a·P_a + f·F_f·P_f) + P_q + c·b·N·s·F_sd)
//
// (closed form of the model's balance). The factors at a constant 30 °C
// with no daily swing are hand-computed: the floor doubles every 10 °C
// (F_f = 2) and self-discharge follows Arrhenius with Ea = 50 kJ/mol
// (F_sd = exp(−Ea/R·(1/303.15 − 1/293.15)), R = 8.31446261815324
// J/(mol·K), CODATA 2018); the derating table of TypicalThermal is 1 at
// 30 °C.
func TestClosedFormConstantRates(t *testing.T) {
	c, b := fixedNode(t, 8*energy.MicroAmp)
	th, err := energy.NewThermal(energy.TypicalThermal())
	require.NoError(t, err)
	clim, err := energy.ConstantClimate(30)
	require.NoError(t, err)
	sw, err := energy.SwitchingRegulator(3.0, 0.85, 1*energy.MicroAmp)
	require.NoError(t, err)
	const storage = 0.3 * energy.Year
	spec := energy.SiteSpec{Climate: &clim, Shared: energy.SharedSpread{Batch: 0.05},
		Groups: []energy.SiteGroup{{Count: 50, Node: energy.NodeSpec{
			Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b, Thermal: &th, Supply: sw,
			StorageTime: storage, StartMonth: 5,
			Spread: energy.NodeSpread{Capacity: 0.05, Floor: 0.4, Active: 0.1}}}}}
	p, err := lifesim.NewPlayer(spec)
	require.NoError(t, err)
	f, err := p.Fleet(rand.New(rand.NewPCG(7, 8)))
	require.NoError(t, err)
	require.Len(t, f.Nodes, 50)

	const ea, gas = 50e3, 8.31446261815324
	fsd := math.Exp(-ea / gas * (1/303.15 - 1/293.15))
	pf := 8e-6 * 3.6
	pa := 0.06 * 3.6 * 4 / energy.Day // above the floor: (60 mA − floor)·3.6 V·4 s per day
	pa -= pf * 4 / energy.Day
	n := b.NominalEnergy()
	u := n * 0.9
	s := 0.03 / energy.Year
	k, q := 1/0.85, 1e-6*3.6
	for i, node := range f.Nodes {
		cb := node.Capacity * f.BatchFactor
		want := cb * (u - n*s*storage) / (k*(node.Active*pa+node.Floor*2*pf) + q + cb*n*s*fsd)
		assert.InDelta(t, 1, node.Lifetime/want, 1e-9, "node %d", i)
		assert.False(t, node.Calendar)
		assert.Equal(t, int(math.Ceil(want/energy.Day)), node.Cycles, "node %d: cycles begun", i)
	}
}

// A calendar limit ends a life with energy left exactly at CalendarLife −
// StorageTime; a node whose energy runs out first keeps its own date.
func TestCalendarLimit(t *testing.T) {
	c, b := fixedNode(t, 8*energy.MicroAmp)
	// Without spread the node lasts about 0.47 years: 573 J left after
	// storage at 3.35 J a day (the closed form above with c = a = f = 1
	// and no thermal factors).
	for _, tc := range []struct {
		name     string
		calendar float64
		ends     bool // the calendar ends the life
	}{
		{"calendar binds", 0.8 * energy.Year, true},
		{"energy binds", 1.2 * energy.Year, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			spec := energy.SiteSpec{Groups: []energy.SiteGroup{{Count: 3, Node: energy.NodeSpec{
				Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b,
				CalendarLife: tc.calendar, StorageTime: 0.5 * energy.Year}}}}
			p, err := lifesim.NewPlayer(spec)
			require.NoError(t, err)
			f, err := p.Fleet(rand.New(rand.NewPCG(1, 1)))
			require.NoError(t, err)
			for _, node := range f.Nodes {
				assert.Equal(t, tc.ends, node.Calendar)
				if tc.ends {
					assert.Equal(t, tc.calendar-0.5*energy.Year, node.Lifetime)
				} else {
					assert.Less(t, node.Lifetime, tc.calendar-0.5*energy.Year)
				}
			}
			assert.Equal(t, 3, f.FailedBy(tc.calendar))
			assert.Equal(t, 0, f.FailedBy(0.1*energy.Year))
		})
	}
}

// The same seed gives the same bits; a different seed other draws.
func TestDeterministic(t *testing.T) {
	spec := siteSpec(t)
	p, err := lifesim.NewPlayer(spec)
	require.NoError(t, err)
	a, err := p.Fleet(rand.New(rand.NewPCG(3, 4)))
	require.NoError(t, err)
	b, err := p.Fleet(rand.New(rand.NewPCG(3, 4)))
	require.NoError(t, err)
	assert.Equal(t, a, b)
	c, err := p.Fleet(rand.New(rand.NewPCG(3, 5)))
	require.NoError(t, err)
	assert.NotEqual(t, a.Nodes[0].Lifetime, c.Nodes[0].Lifetime)
	require.Len(t, a.Nodes, fleetGroups*perGroup)
	for g := range fleetGroups {
		assert.Len(t, a.Group(g).Nodes, perGroup)
	}
}

func TestBadInput(t *testing.T) {
	c, b := fixedNode(t, 8*energy.MicroAmp)
	jit, err := energy.NewCycle(c.Active(), dist.MustUniform(0.9*energy.Day, 1.1*energy.Day), c.FloorPower())
	require.NoError(t, err)
	vc := energy.VoltageCurve{}
	good := func() energy.SiteSpec {
		return energy.SiteSpec{Groups: []energy.SiteGroup{{Count: 2, Node: energy.NodeSpec{
			Settings: []energy.NodeSetting{{Weight: 1, Cycle: c}}, Battery: b}}}}
	}
	for _, tc := range []struct {
		name  string
		edit  func(*energy.SiteSpec)
		field string
	}{
		{"no groups", func(s *energy.SiteSpec) { s.Groups = nil }, "spec.Groups"},
		{"zero count", func(s *energy.SiteSpec) { s.Groups[0].Count = 0 }, "Count"},
		{"too many nodes", func(s *energy.SiteSpec) { s.Groups[0].Count = lifesim.MaxNodes + 1 }, "Count"},
		{"batch spread", func(s *energy.SiteSpec) { s.Shared.Batch = 0.2 }, "Shared.Batch"},
		{"temperature spread", func(s *energy.SiteSpec) { s.Shared.Temperature = math.NaN() }, "Shared.Temperature"},
		{"capacity spread", func(s *energy.SiteSpec) { s.Groups[0].Node.Spread.Capacity = -0.01 }, "Spread.Capacity"},
		{"floor spread", func(s *energy.SiteSpec) { s.Groups[0].Node.Spread.Floor = 1.5 }, "Spread.Floor"},
		{"active spread", func(s *energy.SiteSpec) { s.Groups[0].Node.Spread.Active = math.Inf(1) }, "Spread.Active"},
		{"no settings", func(s *energy.SiteSpec) { s.Groups[0].Node.Settings = nil }, "Settings"},
		{"weights", func(s *energy.SiteSpec) { s.Groups[0].Node.Settings[0].Weight = 0.5 }, "Settings"},
		{"zero cycle", func(s *energy.SiteSpec) { s.Groups[0].Node.Settings[0].Cycle = energy.Cycle{} }, "Cycle"},
		{"jittered period", func(s *energy.SiteSpec) { s.Groups[0].Node.Settings[0].Cycle = jit }, "Period"},
		{"zero battery", func(s *energy.SiteSpec) { s.Groups[0].Node.Battery = energy.Battery{} }, "Battery"},
		{"voltage", func(s *energy.SiteSpec) { s.Groups[0].Node.Voltage = &vc }, "Voltage"},
		{"storage past calendar", func(s *energy.SiteSpec) {
			s.Groups[0].Node.CalendarLife, s.Groups[0].Node.StorageTime = energy.Year, 2*energy.Year
		}, "StorageTime"},
		{"calendar NaN", func(s *energy.SiteSpec) { s.Groups[0].Node.CalendarLife = math.NaN() }, "CalendarLife"},
		{"start month", func(s *energy.SiteSpec) { s.Groups[0].Node.StartMonth = 12 }, "StartMonth"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := good()
			tc.edit(&s)
			_, err := lifesim.NewPlayer(s)
			require.Error(t, err)
			assert.True(t, errors.Is(err, lifesim.ErrParam), "%v", err)
			assert.Contains(t, err.Error(), tc.field)
		})
	}
	p, err := lifesim.NewPlayer(good())
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		name  string
		g     int
		cond  energy.Conditions
		field string
	}{
		{"group", 1, energy.Conditions{}, "g"},
		{"batch", 0, energy.Conditions{BatchFactor: -1}, "BatchFactor"},
		{"offset", 0, energy.Conditions{TemperatureOffset: math.NaN()}, "TemperatureOffset"},
	} {
		_, err := p.Node(tc.g, tc.cond, r)
		require.Error(t, err, tc.name)
		assert.True(t, errors.Is(err, lifesim.ErrParam), "%v", err)
		assert.Contains(t, err.Error(), tc.field)
	}
	_, err = lifesim.Player{}.Fleet(r)
	assert.True(t, errors.Is(err, lifesim.ErrParam), "%v", err)
}
