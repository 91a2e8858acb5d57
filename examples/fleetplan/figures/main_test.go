package main

import (
	"bytes"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/joulelaw/joulelaw/examples/fleetplan/internal/fleet"
	"github.com/joulelaw/joulelaw/radio/lora/scenario"
)

func runArgs(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = run(args, &out, &errb)
	return code, out.String(), errb.String()
}

// TestFigures: the three figures of the demo's plan, as PNG an image
// decoder reads (Go's image/png) and as SVG with the axes' labels; the
// files written are listed on stdout.
func TestFigures(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "figs")
	code, out, errs := runArgs(t, "-quiet", dir)
	require.Equal(t, 0, code, errs)
	for _, name := range []string{"energy-per-cycle", "lifetime-survival", "failed-nodes"} {
		f, err := os.Open(filepath.Join(dir, name+".png"))
		require.NoError(t, err)
		img, err := png.Decode(f)
		require.NoError(t, f.Close())
		require.NoError(t, err, name)
		assert.Greater(t, img.Bounds().Dx(), 400)
		svg, err := os.ReadFile(filepath.Join(dir, name+".svg"))
		require.NoError(t, err)
		assert.Contains(t, string(svg), "<svg")
		assert.Contains(t, out, name+".png")
		assert.Contains(t, out, name+".svg")
	}
	assert.Equal(t, 6, strings.Count(out, "\n"), "one line per file written")
	svg, err := os.ReadFile(filepath.Join(dir, "lifetime-survival.svg"))
	require.NoError(t, err)
	for _, label := range []string{"time since deployment (years)", "share of nodes still running", "planned replacement"} {
		assert.Contains(t, string(svg), label)
	}
}

// TestConstantEnergyFigures: a site whose energy per cycle is one value
// (one node at a fixed distance, no shadowing, no downlinks) is drawn too:
// the energy figure shows 10 % around the value instead of an empty span.
func TestConstantEnergyFigures(t *testing.T) {
	s := scenario.Demo()
	g := s.Groups[0]
	g.Nodes, g.Gateway = 1, 0
	g.InnerRadius, g.OuterRadius = 10, 11
	g.AnswerShare = 0
	s.Groups, s.Gateways = []scenario.Group{g}, s.Gateways[:1]
	s.Environment.ShadowingSD = 0
	s.Design = nil
	p, err := fleet.Build(s, "one constant node", func(string, ...any) {})
	require.NoError(t, err)
	require.Zero(t, p.Groups[0].EnergyPerCycle.SD, "the energy is one value")
	names, err := writeFigures(p, t.TempDir())
	require.NoError(t, err)
	assert.Len(t, names, 6)
	pl, err := energyFigure(p)
	require.NoError(t, err)
	e := p.Fleet.EnergyPerCycle.Mean * 1e3
	assert.Less(t, pl.X.Min, e)
	assert.Greater(t, pl.X.Max, e)
}

// TestUsage: the directory is required, and only one.
func TestUsage(t *testing.T) {
	for _, args := range [][]string{{}, {"-quiet"}, {"a", "b"}} {
		code, out, errs := runArgs(t, args...)
		assert.Equal(t, 2, code, args)
		assert.Empty(t, out)
		assert.Contains(t, errs, "usage: figures")
	}
}

// Issue 13: a bad figures directory is found before the computation (no
// progress past loading), and nothing is printed on stdout.
func TestBadFiguresDirBeforeComputing(t *testing.T) {
	dir := t.TempDir()
	blocker := filepath.Join(dir, "a-file")
	require.NoError(t, os.WriteFile(blocker, []byte("x"), 0o600))
	code, out, errs := runArgs(t, filepath.Join(blocker, "figs"))
	assert.Equal(t, 1, code)
	assert.Empty(t, out)
	assert.Contains(t, errs, "not a directory")
	assert.NotContains(t, errs, "assembling the model", "refused before computing")
}

// Issue 13: a figure that cannot be written does not discard the others:
// the status is 1, the error names the file, and the good figures are in
// place and listed. (A directory in the way of one figure's name makes its
// rename fail even for root, unlike permissions.)
func TestFigureFailureKeepsTheOthers(t *testing.T) {
	dir := t.TempDir()
	require.NoError(t, os.Mkdir(filepath.Join(dir, "failed-nodes.svg"), 0o755))
	code, out, errs := runArgs(t, "-quiet", dir)
	assert.Equal(t, 1, code, errs)
	assert.Contains(t, errs, "failed-nodes.svg")
	assert.Contains(t, out, "failed-nodes.png")
	assert.NotContains(t, out, "failed-nodes.svg")
	for _, name := range []string{"energy-per-cycle.png", "energy-per-cycle.svg", "lifetime-survival.png", "failed-nodes.png"} {
		fi, err := os.Stat(filepath.Join(dir, name))
		require.NoError(t, err, name)
		assert.Positive(t, fi.Size(), name)
	}
}
