package main

import (
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

// buildNodal builds the command into a temporary folder for tests that
// need a real process (signals).
func buildNodal(t *testing.T) string {
	t.Helper()
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Skipf("no go tool to build the command: %v", err)
	}
	bin := filepath.Join(t.TempDir(), "nodal")
	out, err := exec.Command(gobin, "build", "-o", bin, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// TestSIGINTStopsSweep interrupts a sweep of a million points while it
// writes its output file: the process exits with status 2 and leaves
// neither the output nor its temporary file. The test waits for the
// temporary file to appear (so the signal handler is surely installed);
// its timeouts are hang guards, not timing assertions.
func TestSIGINTStopsSweep(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command")
	}
	bin := buildNodal(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "sweep.txt")
	cmd := exec.Command(bin, "sweep", rcFile, "--out", "out", "--linear", "--from", "0", "--to", "1MHz", "--points", "1000000", "-o", out)
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	exited := make(chan error, 1)
	go func() { exited <- cmd.Wait() }()
	guard := time.After(2 * time.Minute)
	for {
		if tmp, _ := filepath.Glob(filepath.Join(dir, ".sweep.txt.tmp-*")); len(tmp) > 0 {
			break
		}
		select {
		case err := <-exited:
			t.Fatalf("the sweep ended (%v) before it was interrupted", err)
		case <-guard:
			cmd.Process.Kill()
			t.Fatal("the sweep never started writing")
		case <-time.After(5 * time.Millisecond):
		}
	}
	sent := time.Now()
	if err := cmd.Process.Signal(os.Interrupt); err != nil {
		t.Fatal(err)
	}
	select {
	case err := <-exited:
		t.Logf("exited %v after the signal", time.Since(sent))
		var ee *exec.ExitError
		if !errors.As(err, &ee) || ee.ExitCode() != exitInput {
			t.Fatalf("exit %v; want status 2", err)
		}
		if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
			t.Fatalf("killed by the signal instead of stopping: %v", ws)
		}
	case <-guard:
		cmd.Process.Kill()
		t.Fatal("the sweep did not stop after SIGINT")
	}
	if left, _ := filepath.Glob(filepath.Join(dir, "*")); len(left) > 0 {
		t.Errorf("left behind: %v", left)
	}
	if left, _ := filepath.Glob(filepath.Join(dir, ".*")); len(left) > 0 {
		t.Errorf("left behind: %v", left)
	}
}
