package lifesim_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/internal/lifesim"
)

// TestNilSource: issue 13. A nil random source panicked in Shared, Node
// and Fleet (a nil pointer dereference). Node and Fleet now return an error
// wrapping ErrParam that names r; Shared, which has no error, returns NaN
// conditions, which Node refuses. The same player with a source plays (the
// test is not vacuous).
func TestNilSource(t *testing.T) {
	p, err := lifesim.NewPlayer(siteSpec(t))
	require.NoError(t, err)
	require.NotPanics(t, func() {
		c := p.Shared(nil)
		assert.True(t, math.IsNaN(c.BatchFactor) && math.IsNaN(c.TemperatureOffset), "%+v", c)
		_, err := p.Node(0, c, rand.New(rand.NewPCG(1, 2)))
		assert.True(t, errors.Is(err, lifesim.ErrParam), "%v", err)
		_, err = p.Node(0, energy.Conditions{}, nil)
		assert.True(t, errors.Is(err, lifesim.ErrParam), "%v", err)
		assert.Contains(t, err.Error(), "r = nil")
		_, err = p.Fleet(nil)
		assert.True(t, errors.Is(err, lifesim.ErrParam), "%v", err)
		assert.Contains(t, err.Error(), "r = nil")
	})
	r := rand.New(rand.NewPCG(1, 2))
	_, err = p.Node(0, p.Shared(r), r)
	require.NoError(t, err)
}
