package disttest_test

import (
	"fmt"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/disttest"
)

// Check runs every conformance check on a law and returns nil when it
// passes, or one error listing every failure.
func ExampleCheck() {
	err := disttest.Check(dist.MustNormal(0, 1))
	fmt.Println(err)
	// Output: <nil>
}
