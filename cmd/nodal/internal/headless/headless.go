// Package headless is test support for the browser checks of cmd/nodal
// (the report's rendering, the tune page): where Chromium is, the flags
// every headless launch uses, the skip with its reason logged when there
// is no browser, and the bounded retry of a launch that fails. It is
// imported by tests only.
package headless

import (
	"fmt"
	"os"
	"strings"
	"testing"
	"time"
)

// ChromiumPath is Debian's chromium package binary, which the CI script
// installs.
const ChromiumPath = "/usr/bin/chromium"

// LaunchAttempts and LaunchBackoff bound the retries of a browser that
// fails to start (on a loaded machine Chromium sometimes cannot fork its
// zygote): the waits are 1 s, 2 s, 4 s, so at most 7 s are lost.
const (
	LaunchAttempts = 4
	LaunchBackoff  = time.Second
)

// Flags are the command-line flags of every headless launch, with a new
// empty profile in userDataDir: no sandbox (tests run as root in CI), no
// GPU, and nothing that reaches the network on its own.
func Flags(userDataDir string) []string {
	return []string{
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + userDataDir,
	}
}

// Require skips t, saying why on standard error (visible without -v), when
// the browser at path is missing or the tests run with -short.
func Require(t testing.TB, path string) {
	t.Helper()
	if _, err := os.Stat(path); err != nil {
		skip(t, fmt.Sprintf("headless browser check skipped: %s not found (install Debian's chromium package)", path))
	}
	if testing.Short() {
		t.Skip("headless browser check skipped in -short mode")
	}
}

// Launch calls start until it succeeds, at most LaunchAttempts times with
// a doubling back-off from LaunchBackoff, and returns its result. start
// returns what it launched, and on failure its error with the browser's
// log. When every attempt fails the test is skipped with the last reason
// logged, since a browser that cannot start says nothing about the page
// under test. Only the launch is retried: the assertions on a page that
// did load never are.
func Launch[T any](t testing.TB, start func() (T, string, error)) T {
	t.Helper()
	wait := LaunchBackoff
	var reason string
	for attempt := 1; attempt <= LaunchAttempts; attempt++ {
		v, log, err := start()
		if err == nil {
			return v
		}
		reason = fmt.Sprintf("attempt %d of %d: %v\n%.2000s", attempt, LaunchAttempts, err, strings.TrimSpace(log))
		t.Logf("chromium did not start, %s", reason)
		if attempt < LaunchAttempts {
			time.Sleep(wait)
			wait *= 2
		}
	}
	skip(t, fmt.Sprintf("headless browser check skipped: chromium failed to start %d times; last: %s", LaunchAttempts, reason))
	var zero T
	return zero
}

// skip skips t with msg, also written to standard error.
func skip(t testing.TB, msg string) {
	t.Helper()
	fmt.Fprintln(os.Stderr, t.Name()+": "+msg)
	t.Skip(msg)
}
