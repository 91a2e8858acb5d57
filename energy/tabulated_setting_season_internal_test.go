package energy

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// tabSeasonLaw is an invented node (test input, in the demo's style): a
// 2.4 Ah bobbin cell with 1 % self-discharge a year, a 15-year calendar
// limit, a seasonal climate (10 °C ± 8 °C) and the typical thermal model,
// so that the floor and self-discharge clocks run twice as fast in summer
// as in winter, and four settings that report every one or two hours,
// whose laws stretch over 6 to 12 years: their tables' intervals span
// seasons (0.5 to 1.4 years).
func tabSeasonLaw(t *testing.T) NodeLifetime {
	t.Helper()
	return tabSeasonNode(t, []NodeSetting{
		{Weight: 0.4, Cycle: tabTestCycle(1*Hour, 4*MicroAmp, 0.5)},
		{Weight: 0.3, Cycle: tabTestCycle(2*Hour, 2*MicroAmp, 1)},
		{Weight: 0.2, Cycle: tabTestCycle(2*Hour, 4*MicroAmp, 1)},
		{Weight: 0.1, Cycle: tabTestCycle(2*Hour, 4*MicroAmp, 0.5)},
	}, 15*Year)
}

// tabSeasonNode is tabSeasonLaw's node (its cell, climate, thermal model
// and spreads) with the settings given and a calendar limit of cal (s).
func tabSeasonNode(t *testing.T, settings []NodeSetting, cal float64) NodeLifetime {
	t.Helper()
	clim, err := NewSeasonalClimate(10, 8, 6, 7)
	require.NoError(t, err)
	th, err := NewThermal(TypicalThermal())
	require.NoError(t, err)
	b, err := NewBattery(BatterySpec{Charge: 2400 * MilliAmpHour, NominalVoltage: 3.6, UsableFraction: 0.85, SelfDischargePerYear: 0.01})
	require.NoError(t, err)
	node := NodeSpec{
		Settings: settings,
		Battery:  b, Thermal: &th, CalendarLife: cal,
		Spread: NodeSpread{Capacity: 0.04, Floor: 0.35, Active: 0.04},
	}
	l, err := NewNodeLifetime(node, Environment{Climate: &clim, Conditions: Conditions{BatchFactor: 1}})
	require.NoError(t, err)
	return l
}

// Each setting's table of a node whose laws stretch over years
// (tabSeasonLaw), where the tables' intervals span seasons, against
// direct evaluation of the setting's law by the node model (the oracle:
// settingAt afresh at each time): every interval between the table's
// knots at 39 times inside it must be within 1.5 times the tolerance, the
// error the tables state (settingOut.errZ); at the full tolerance and at
// a loose one (3 times, from tabLooseInitial knots, what settingTables
// builds for a setting small beside the mixture). Before the seasonal
// guard (gradGrid) the midpoint checks passed intervals whose halves
// erred by up to 3.0 times the tolerance here (7 of the 8 tables above
// 1.5 times); with it, 0.81 times at most.
func TestSettingTablesSeasons(t *testing.T) {
	l := tabSeasonLaw(t)
	longest := 0.0
	for j := range l.n.settings {
		st, ok := settingTable(l, j, tabSetZTol, tabSetTail)
		require.True(t, ok)
		require.NotNil(t, st.gk, "setting %d: a table in the clocks", j)
		for _, loose := range []float64{1, 3} {
			t.Run(fmt.Sprintf("setting %d loose %g", j, loose), func(t *testing.T) {
				tol := loose * tabSetZTol
				pt := st
				if loose != 1 {
					pt = l.n.gradGrid(&tableScratch{}, j, st.gk[0], st.gk[len(st.gk)-1], tol, tabLooseInitial, nil, nil)
				}
				worst, wAt, wLen := 0.0, 0.0, 0.0
				for q := 0; q+1 < len(pt.gk); q++ {
					a, b := pt.gk[q].t, pt.gk[q+1].t
					longest = math.Max(longest, b-a)
					for i := 1; i < 40; i++ {
						x := a + (b-a)*float64(i)/40
						al, d, _ := l.n.settingAt(j, x)
						if e := math.Abs(pt.zAt(x) - probitOf(al, d)); e > worst {
							worst, wAt, wLen = e, x, b-a
						}
					}
				}
				assert.LessOrEqual(t, worst, 1.5*tol, "probit error against direct evaluation at %.3f y (interval of %.2f y)", wAt/Year, wLen/Year)
				t.Logf("%d knots, %d model evaluations: probit error %.2g, %.2f of the tolerance, at %.3f y on an interval of %.2f y",
					len(pt.gk), pt.evals, worst, worst/tol, wAt/Year, wLen/Year)
			})
		}
	}
	assert.Greater(t, longest, 0.75*Year, "the test's tables have intervals that span seasons")
}

// kinks lists the month boundaries m·Month in (lo, hi) where a monthly
// factor changes (the floor's or the self-discharge's from month m − 1 to
// month m, the months counted from deployment, twelve to a year): checked
// against that definition, each boundary tested on its own, on the
// seasonal node of tabSeasonLaw, whose climate changes every month, and on
// one whose months' factors are made equal but for two months' (its kinks
// only where those months begin and end: four a year), over spans from
// before deployment to decades, with ends on and off the boundaries.
func TestKinksAgainstDefinition(t *testing.T) {
	l := tabSeasonLaw(t)
	flat := *l.n
	months := *flat.months // the nodes share their month table: changed on a copy
	flat.months = &months
	for i := range months.floorRate {
		months.floorRate[i], months.sdFactor[i] = 1, 1
	}
	months.floorRate[4], months.sdFactor[9] = 2, 3
	spans := [][2]float64{{0, Year}, {-Year, 2 * Year}, {3 * Month, 3 * Month}, {3 * Month, 4 * Month},
		{math.Nextafter(3*Month, 0), math.Nextafter(4*Month, 5*Month)}, {0.37 * Year, 23.9 * Year}, {Month / 2, 150 * Year}}
	for name, n := range map[string]*node{"seasonal": l.n, "two changes a year": &flat} {
		for _, sp := range spans {
			lo, hi := sp[0], sp[1]
			var want []float64
			if hi > lo && (hi-lo)/Month <= maxKinks {
				for m := 1; float64(m)*Month < hi; m++ {
					x := float64(m) * Month
					i, j := (m-1)%12, m%12
					if x > lo && (n.months.floorRate[i] != n.months.floorRate[j] || n.months.sdFactor[i] != n.months.sdFactor[j]) {
						want = append(want, x)
					}
				}
			}
			assert.Equal(t, want, n.kinks(lo, hi), "%s: kinks in (%g, %g) y", name, lo/Year, hi/Year)
		}
	}
	assert.Len(t, flat.kinks(0, 10*Year), 40, "four a year for ten years")
}
