package scenario_test

import (
	"fmt"
	"strings"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

// Compute turns a scenario (here the built-in, invented demo) into the
// plan's laws: per-group per-cycle energy and the fleet's lifetime model.
func ExampleCompute() {
	laws, err := scenario.Compute(scenario.Demo(), 2, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for gi, g := range laws.Model.Groups {
		e := laws.GroupEnergy[gi]
		fmt.Printf("%-22s %5d nodes, mean energy per cycle %.3g mJ\n", g.Group.Name, g.Group.Nodes, e.Mean()*1e3)
	}
	first, err := laws.Site.FirstFailure()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("first flat battery: median %.1f years\n", first.Quantile(0.5)/energy.Year)
	// Output:
	// dyke piezometers          60 nodes, mean energy per cycle 39.9 mJ
	// field soil probes        180 nodes, mean energy per cycle 112 mJ
	// pump alarms               24 nodes, mean energy per cycle 44.9 mJ
	// weather masts             40 nodes, mean energy per cycle 77.3 mJ
	// first flat battery: median 1.8 years
}

// Parse refuses a bad file with every problem named by field (or, for the
// file's syntax, by line and column), the value found and the rule.
func ExampleParse() {
	_, err := scenario.Parse([]byte("{\"site\": \"Quillmoor\",\n  \"site\": \"again\"}"))
	fmt.Println(err)
	_, err = scenario.Parse([]byte(`{"format": "joulelaw-scenario/2", "site": 7}`))
	for _, line := range strings.Split(err.Error(), "\n")[:2] {
		fmt.Println(line)
	}
	// Output:
	// scenario: (file) = line 2, column 3: the key "site" appears twice in one object: each field once
	// scenario: site = 7: must be a string
	// scenario: description: missing: every field is required (no defaults)
}
