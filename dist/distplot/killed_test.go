package distplot_test

import (
	"bytes"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot/vg"

	"github.com/joulelaw/joulelaw/dist"
	"github.com/joulelaw/joulelaw/dist/distplot"
)

// killedWriterEnv names the environment variable that turns this test
// binary into a child that rewrites one figure until it is killed.
const killedWriterEnv = "DISTPLOT_KILLED_WRITER_PATH"

// TestKilledWriterChild is the child process of TestKilledWriteLeavesFigureWhole:
// it does nothing unless the parent sets killedWriterEnv.
func TestKilledWriterChild(t *testing.T) {
	path := os.Getenv(killedWriterEnv)
	if path == "" {
		t.Skip("child process of TestKilledWriteLeavesFigureWhole")
	}
	pl, err := distplot.CDF([]distplot.Curve{{Law: dist.MustNormal(0, 1)}}, distplot.Options{})
	require.NoError(t, err)
	for {
		// A large figure, so that a kill lands inside a write.
		if err := distplot.WriteFile(pl, path, 60*vg.Centimeter, 40*vg.Centimeter); err != nil {
			t.Fatal(err)
		}
	}
}

// A run killed at any moment (SIGKILL: no deferred clean-up runs) leaves the
// figure at path either absent or whole: a PNG that decodes. Writing in place
// fails this (a kill during the write leaves a truncated or empty file).
func TestKilledWriteLeavesFigureWhole(t *testing.T) {
	if runtime.GOOS == "windows" || runtime.GOOS == "js" || runtime.GOOS == "wasip1" {
		t.Skip("needs a killable child process")
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "cdf.png")
	// Kill times spread over a write (a write of this figure takes tens of ms).
	for _, delay := range []int{0, 7, 19, 41, 83, 150} { // ms
		cmd := exec.Command(os.Args[0], "-test.run=^TestKilledWriterChild$")
		cmd.Env = append(os.Environ(), killedWriterEnv+"="+path)
		require.NoError(t, cmd.Start())
		// Wait for the first whole figure, then a little more, then kill.
		deadline := time.Now().Add(2 * time.Minute)
		for {
			if _, err := os.Stat(path); err == nil || time.Now().After(deadline) {
				break
			}
			time.Sleep(time.Millisecond)
		}
		time.Sleep(time.Duration(delay) * time.Millisecond)
		require.NoError(t, cmd.Process.Kill())
		_ = cmd.Wait() // killed: its exit status is the signal
		b, err := os.ReadFile(path)
		require.NoError(t, err, "delay %d ms", delay)
		_, err = png.Decode(bytes.NewReader(b))
		require.NoError(t, err, "delay %d ms: the figure is not whole (%d bytes)", delay, len(b))
	}
}
