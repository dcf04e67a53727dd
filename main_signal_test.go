package main

import (
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestMain lets the test binary stand in for the riskgrid command, so a
// test can send it a real signal.
func TestMain(m *testing.M) {
	if os.Getenv("RISKGRID_TEST_MAIN") == "1" {
		os.Exit(cli(os.Args[1:], os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

// An interrupted run exits 130 and keeps the seeds that finished: the next
// run takes them from the cache.
func TestInterruptKeepsFinishedSeeds(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a sweep of a few seconds")
	}
	dir := t.TempDir()
	big := strings.NewReplacer("n_train = 20", "n_train = 200", "dim = 30", "dim = 1000",
		"values = [5, 20, 30]", "values = [50, 200, 210, 400, 1000]", "count = 4", "count = 400").Replace(tinySpec)
	sp := writeSpec(t, dir, "big.toml", big)
	out := filepath.Join(dir, "out")
	cmd := exec.Command(os.Args[0], "run", sp, "-o", out, "-j", "1")
	cmd.Env = append(os.Environ(), "RISKGRID_TEST_MAIN=1")
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	// Wait until some seeds are cached, then interrupt.
	deadline := time.Now().Add(60 * time.Second)
	for time.Now().Before(deadline) {
		files, _ := filepath.Glob(filepath.Join(out, ".cache", "*", "*"))
		if len(files) >= 3 {
			break
		}
		time.Sleep(20 * time.Millisecond)
	}
	cmd.Process.Signal(syscall.SIGINT)
	err := cmd.Wait()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != exitInterrupted {
		t.Fatalf("interrupted run: %v, want exit status %d", err, exitInterrupted)
	}
	if m, _ := filepath.Glob(filepath.Join(out, "big-*")); len(m) > 0 {
		t.Errorf("an interrupted run wrote a result folder: %v", m)
	}
	files, _ := filepath.Glob(filepath.Join(out, ".cache", "*", "*"))
	if len(files) < 3 {
		t.Fatalf("%d cache entries after the interrupt, want at least 3", len(files))
	}
	for _, f := range files {
		if strings.Contains(filepath.Base(f), ".tmp-") {
			t.Errorf("temporary file left behind: %s", f)
		}
	}
}
