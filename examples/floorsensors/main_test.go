package main

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestRun runs the program twice: it succeeds, prints every section, and
// prints the same bytes both times (seeded, deterministic).
func TestRun(t *testing.T) {
	var a, b strings.Builder
	require.NoError(t, run(&a))
	require.NoError(t, run(&b))
	assert.Equal(t, a.String(), b.String())
	for _, want := range []string{"channel busy at a CCA", "near nodes", "far  nodes", "one sensor's life", "first flat battery of 48", "flat before 5 years"} {
		assert.Contains(t, a.String(), want)
	}
}
