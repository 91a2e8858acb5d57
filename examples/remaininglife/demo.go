package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// groupConfig is what the program knows of one group of devices built
// alike: its radio and currents (the per-event energies), its node
// description (cell, voltage curve, spreads, the shares of its data
// rates), how its devices map their voltage to the status battery level,
// and the shared tier of its cells.
type groupConfig struct {
	name   string
	radio  lora.ClassA
	spec   energy.NodeSpec
	level  lora.LevelScale
	shared energy.SharedSpread
	// demo only: the data rates' shares, the report period (s) and the
	// downlink probabilities the invented devices are played with
	drShare []float64
	drs     []int
	period  float64
	nbTrans int
}

// demoStart is the demo's first installation: 2024-01-01 00:00 UTC.
const demoStart = 1704067200.0

// demoGroups returns the demo's two groups. INVENTED DATA for a
// demonstration: the cells, currents, spreads and traffic below describe
// no real product; use your devices' own figures.
func demoGroups() ([]groupConfig, error) {
	cell := energy.TypicalER14505()
	cell.Name = "invented small bobbin cell (demo)"
	cell.Charge = 500 * energy.MilliAmpHour
	bat, err := energy.NewBattery(cell)
	if err != nil {
		return nil, err
	}
	curve := energy.TypicalBobbinCurve()
	cur := lora.TypicalCurrents()
	cur.Floor = 12e-6 // an invented sensor board's sleep draw
	cur.Wait = 12e-6
	type def struct {
		name      string
		drs       []int
		share     []float64
		period    float64
		confirmed bool
		nbTrans   int
		spread    energy.NodeSpread
	}
	defs := []def{
		{"meters-north", []int{5, 3, 0}, []float64{0.5, 0.3, 0.2}, 8 * energy.Hour, false, 1,
			energy.NodeSpread{Capacity: 0.03, Active: 0.05, Floor: 0.4}},
		{"valves-south", []int{4, 2}, []float64{0.6, 0.4}, 12 * energy.Hour, true, 3,
			energy.NodeSpread{Capacity: 0.03, Active: 0.05, Floor: 0.4}},
	}
	var out []groupConfig
	for _, d := range defs {
		c := lora.ClassA{Region: lora.EU868(), Currents: cur, App: 12, Confirmed: d.confirmed, NbTrans: d.nbTrans,
			Downlink: lora.Windows{RX1: 0.02, RX2: 0.01}, ClockMargin: lora.DefaultClockMargin}
		var settings []energy.NodeSetting
		for i, dr := range d.drs {
			ci := c
			ci.Settings = []lora.Setting{{DR: dr, TXPower: 1, Prob: 1}}
			cyc, err := ci.Cycle(dist.MustPointMass(d.period))
			if err != nil {
				return nil, fmt.Errorf("demo group %s, DR%d: %w", d.name, dr, err)
			}
			settings = append(settings, energy.NodeSetting{Weight: d.share[i], Cycle: cyc})
		}
		c.Settings = []lora.Setting{{DR: d.drs[0], TXPower: 1, Prob: 1}}
		out = append(out, groupConfig{
			name: d.name, radio: c,
			spec: energy.NodeSpec{Name: d.name, Settings: settings, Battery: bat, Voltage: &curve, Brownout: 3.0,
				Spread: d.spread},
			level:   lora.LevelScale{Empty: 3.0, Full: 3.7, Noise: 0.02},
			shared:  energy.SharedSpread{Batch: 0.03},
			drShare: d.share, drs: d.drs, period: d.period, nbTrans: d.nbTrans,
		})
	}
	return out, nil
}

// demoLog generates the demo's back-end log (INVENTED DATA) and calls emit
// for every record in time order: per group 100 devices installed over
// the first half year from demoStart, each with hidden capacity, active
// and floor factors drawn from the group's spreads (and one cell batch
// factor per group), played until about two years after demoStart or
// until its cell is flat (it then goes silent). Each report is heard by
// the network with probability 0.95 (NbTrans attempts for the valves); a
// status answer every 7 days gives the battery level of the cell's loaded
// voltage (bobbin curve, 20 °C) with a 20 mV error. Planted: meters-north-07
// falls into a retransmission loop (each frame sent 8 times) for its last
// 40 days; valves-south-13 has a board drawing 8 times its group's median
// floor; valves-south-21 runs on external power; meters-north-30 had its
// cell swapped after a year. The energy a device spends is what the
// group's observer charges for its records (times its hidden active
// factor) plus its hidden floor: the demo shows the program at work, it
// does not validate it (energy's and radio/lora's tests do that).
func demoLog(groups []groupConfig, seed uint64, emit func(Record) error) error {
	r := rand.New(rand.NewPCG(seed, 15))
	const perGroup = 100
	end := demoStart + 2*energy.Year
	type dev struct {
		name        string
		g           int
		obs         lora.Observer
		shadow      lora.Device
		install     float64
		c, a, f     float64
		dr          int
		fcnt        uint32
		next        float64 // next report, s
		dead        bool
		loop, swap  bool
		external    bool
		nextStatus  float64
		swapAt      float64
		floorP      float64
		usable, nom float64
	}
	var devs []*dev
	for gi, g := range groups {
		obs, err := lora.NewObserver(g.radio, g.spec, energy.Environment{}, lora.ObserverOptions{Level: g.level})
		if err != nil {
			return err
		}
		batch := 1 + g.shared.Batch*r.NormFloat64()
		nom := g.spec.Battery.NominalEnergy()
		for i := range perGroup {
			d := &dev{name: fmt.Sprintf("%s-%02d", g.name, i), g: gi, obs: obs, nom: nom,
				install: demoStart + r.Float64()*0.5*energy.Year}
			sp := g.spec.Spread
			d.c = batch * (1 + sp.Capacity*r.NormFloat64())
			d.a = 1 + sp.Active*r.NormFloat64()
			d.f = math.Exp(sp.Floor * r.NormFloat64())
			u := r.Float64()
			for k, w := range g.drShare {
				if u -= w; u < 0 || k == len(g.drShare)-1 {
					d.dr = g.drs[k]
					break
				}
			}
			d.loop = g.name == "meters-north" && i == 7
			if g.name == "valves-south" && i == 13 {
				d.f = 8
			}
			d.external = g.name == "valves-south" && i == 21
			if g.name == "meters-north" && i == 30 {
				d.swap, d.swapAt = true, d.install+energy.Year
			}
			d.floorP = g.radio.Currents.Floor * g.radio.Currents.Voltage
			d.usable = 0.9 * nom // the invented devices' end: 90 % of the rated energy
			d.next = d.install + r.Float64()*g.period
			d.nextStatus = d.install + energy.Day
			devs = append(devs, d)
		}
	}
	sort.SliceStable(devs, func(i, j int) bool { return devs[i].install < devs[j].install })
	pf := func(x float64) *float64 { return &x }
	pi := func(x int) *int { return &x }
	for _, d := range devs {
		var err error
		if d.shadow, err = d.obs.NewDevice(d.install); err != nil {
			return err
		}
		if err := emit(Record{T: pf(d.install), Dev: d.name, Kind: "install", Group: groups[d.g].name}); err != nil {
			return err
		}
	}
	// Play day by day; within a day, device by device in time order.
	type ev struct {
		t   float64
		rec Record
	}
	var day []ev
	for t0 := demoStart; t0 < end; t0 += energy.Day {
		t1 := t0 + energy.Day
		day = day[:0]
		for _, d := range devs {
			if d.dead || d.install >= t1 {
				continue
			}
			g := groups[d.g]
			add := func(rec Record) error {
				var err error
				sh := d.shadow
				switch rec.Kind {
				case "up":
					sh, err = d.obs.Uplink(sh, lora.Uplink{Time: *rec.T, FCnt: uint32(*rec.FCnt), DR: *rec.DR, TXPower: *rec.TXP})
				case "down":
					sh, err = d.obs.Downlink(sh, *rec.T, *rec.Win)
				case "swap":
					sh, err = d.obs.Swap(sh, *rec.T)
				}
				if err != nil {
					return err
				}
				d.shadow = sh
				day = append(day, ev{*rec.T, rec})
				return nil
			}
			if d.swap && d.swapAt >= t0 && d.swapAt < t1 {
				if err := add(Record{T: pf(t0), Dev: d.name, Kind: "swap"}); err != nil { // at the day's start, before its frames
					return err
				}
				d.swap = false
			}
			for d.next < t1 {
				at := d.next
				d.next += g.period * (0.98 + 0.04*r.Float64())
				copies := 1
				if d.loop && at > end-40*energy.Day {
					copies = 8
				}
				heardAny := false
				for k := 0; k < max(copies, g.nbTrans); k++ {
					if r.Float64() < 0.95 {
						heardAny = true
						fc := int64(d.fcnt)
						if err := add(Record{T: pf(at + float64(k)*3), Dev: d.name, Kind: "up", FCnt: &fc, DR: pi(d.dr), TXP: pi(1)}); err != nil {
							return err
						}
						if g.radio.Confirmed || r.Float64() < 0.03 {
							w := 1
							if r.Float64() < 0.3 {
								w = 2
							}
							if err := add(Record{T: pf(at + float64(k)*3 + 2), Dev: d.name, Kind: "down", Win: pi(w)}); err != nil {
								return err
							}
							break
						}
					}
					if copies == 1 && !g.radio.Confirmed && heardAny {
						break
					}
				}
				d.fcnt++
			}
			// The day's energy: the counted active energy's growth (times
			// the hidden factor) and the floor.
			act, _ := d.shadow.Tally.ActiveEnergy()
			inst := d.shadow.Tally.Install()
			drawn := d.a*act + d.f*d.floorP*(t1-inst)
			depth := drawn / (d.c * d.nom)
			if drawn >= d.c*d.usable {
				d.dead = true
				continue
			}
			if t1 >= d.nextStatus {
				d.nextStatus += 7 * energy.Day
				bat := 0
				if !d.external {
					v := g.spec.Voltage.LoadedVoltage(min(1, depth), 0, 20) + 0.02*r.NormFloat64()
					q := (g.level.Full - g.level.Empty) / 253
					bat = int(math.Round((v-g.level.Empty)/q)) + 1
					bat = min(254, max(1, bat))
				}
				day = append(day, ev{t1 - 60, Record{T: pf(t1 - 60), Dev: d.name, Kind: "status", Bat: pi(bat)}})
			}
		}
		sort.SliceStable(day, func(i, j int) bool { return day[i].t < day[j].t })
		for _, e := range day {
			if err := emit(e.rec); err != nil {
				return err
			}
		}
	}
	return nil
}
