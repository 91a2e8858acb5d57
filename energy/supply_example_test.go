package energy_test

import (
	"fmt"

	"github.com/joulelaw/joulelaw/energy"
)

// A node whose radio draws 40 mA at a 3.3 V rail for 60 ms, fed from a
// 3.6 V cell through a linear regulator and through a switching one
// (invented figures, for the demo).
func ExampleSupply_EnergyScale() {
	const vcell = 3.6
	node := 40 * energy.MilliAmp * 3.3 * 60 * energy.Millisecond // J at the rail
	lin, err := energy.LinearRegulator(3.3, 2*energy.MicroAmp)
	if err != nil {
		fmt.Println(err)
		return
	}
	sw, err := energy.SwitchingRegulator(3.3, 0.85, 1*energy.MicroAmp)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range []energy.Supply{energy.DirectSupply(), lin, sw} {
		fmt.Printf("%s: %.3f mJ from the cell, %.2f µW idle\n",
			s, node*s.EnergyScale(vcell)/energy.MilliJoule, s.QuiescentPower(vcell)/energy.MicroWatt)
	}
	fmt.Println(lin.Check(3.0) != nil)
	// Output:
	// direct from the cell: 7.920 mJ from the cell, 0.00 µW idle
	// linear regulator to 3.3 V, quiescent 2 µA: 8.640 mJ from the cell, 7.20 µW idle
	// switching regulator to 3.3 V, efficiency 85 %, quiescent 1 µA: 9.318 mJ from the cell, 3.60 µW idle
	// true
}
