package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"nodal/cmd/nodal/internal/headless"
)

// tuneBrowser starts headless Chromium through the DevTools protocol with the
// flags of every headless check (headless.Flags), retrying a failed launch
// (headless.Launch, which skips the test when the browser never starts).
// The context it returns ends with the test or after 20 s.
func tuneBrowser(t *testing.T) context.Context {
	t.Helper()
	headless.Require(t, headless.ChromiumPath)
	type session struct {
		ctx    context.Context
		cancel func()
	}
	s := headless.Launch(t, func() (session, string, error) {
		var log strings.Builder
		opts := []chromedp.ExecAllocatorOption{chromedp.ExecPath(headless.ChromiumPath), chromedp.WindowSize(1280, 1000), chromedp.CombinedOutput(&log)}
		for _, f := range headless.Flags(t.TempDir()) {
			name, value, hasValue := strings.Cut(strings.TrimPrefix(f, "--"), "=")
			if hasValue {
				opts = append(opts, chromedp.Flag(name, value))
			} else {
				opts = append(opts, chromedp.Flag(name, true))
			}
		}
		actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
		tctx, cancelTime := context.WithTimeout(actx, 20*time.Second)
		bctx, cancelBrowser := chromedp.NewContext(tctx)
		cancel := func() { cancelBrowser(); cancelTime(); cancelAlloc() }
		if err := chromedp.Do(bctx); err != nil { // starts the browser
			cancel()
			return session{}, log.String(), err
		}
		return session{bctx, cancel}, "", nil
	})
	t.Cleanup(s.cancel)
	return s.ctx
}

// TestTunePageInBrowser opens the page for the logger's RC anti-alias
// filter in headless Chromium, moves the R slider to a set position and
// checks that the −3 dB frequency shown is 1/(2πRC) for the value the
// slider gives (common practice), that the requirement `f3db above
// 1.2kHz` flips from pass to FAIL, that the query string holds the value,
// that a typed value with a prefix is taken, that a value that does not
// parse is shown as an error while the page keeps the last good view, that
// saving shows the diff and writes the file only once confirmed, and that
// a syntax error put into the file is shown with its caret.
func TestTunePageInBrowser(t *testing.T) {
	ctx := tuneBrowser(t)
	src, err := os.ReadFile(tuneFile)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "logger.nodal")
	if err := os.WriteFile(path, src, 0o644); err != nil {
		t.Fatal(err)
	}
	s := startTune(t, path)
	const c = 10e-9

	// readF3dB waits until the page shows R = r in its box (the analysis of
	// that value arrived) and returns the −3 dB figure (text and value),
	// the requirement's verdict and the page's query string.
	type view struct {
		F3Text  string `json:"f3_text"`
		F3Value string `json:"f3_value"`
		Verdict string `json:"verdict"`
		Search  string `json:"search"`
	}
	readView := func(r float64) view {
		t.Helper()
		wait := fmt.Sprintf(`(function(){var b=document.querySelector('input[name="R-text"]');return !!b&&b.dataset.value==%q;})()`, strconv.FormatFloat(r, 'g', -1, 64))
		if _, err := chromedp.Run(ctx, chromedp.Poll[bool](wait, chromedp.WithPollingTimeout(10*time.Second))); err != nil {
			t.Fatalf("page did not show R = %g: %v", r, err)
		}
		v, err := chromedp.Run(ctx, chromedp.Evaluate[view](`(function(){var f=document.getElementById('fig-f3db');
			return {f3_text: f.textContent, f3_value: String(f.dataset.value), verdict: document.getElementById('req-0').dataset.pass, search: location.search};})()`))
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	// act runs a script in the page.
	act := func(script string) {
		t.Helper()
		if _, err := chromedp.Run(ctx, chromedp.Evaluate[bool](`(function(){`+script+`;return true;})()`)); err != nil {
			t.Fatal(err)
		}
	}
	typeValue := func(text string) {
		t.Helper()
		act(fmt.Sprintf(`var b=document.querySelector('input[name="R-text"]');b.value=%q;b.dispatchEvent(new Event('change'))`, text))
	}
	checkF3dB := func(v view, r float64) {
		t.Helper()
		want := rcF3dBHz(r, c)
		got, err := strconv.ParseFloat(v.F3Value, 64)
		if err != nil || math.Abs(got-want) > 1e-9*want {
			t.Errorf("R = %g: −3 dB value %q, want %g = 1/(2πRC)", r, v.F3Value, want)
		}
		// the text is the transfer command's: "1.007 kHz (reference 0.000 dB)"
		m := regexp.MustCompile(`^([0-9.]+) (k?Hz) \(reference`).FindStringSubmatch(v.F3Text)
		if m == nil {
			t.Fatalf("R = %g: −3 dB shown as %q", r, v.F3Text)
		}
		shown, err := strconv.ParseFloat(m[1], 64)
		if scale := map[string]float64{"Hz": 1, "kHz": 1e3}[m[2]]; err != nil || math.Abs(shown*scale-want) > 5e-4*want {
			t.Errorf("R = %g: −3 dB shown as %q, want %.4g Hz", r, v.F3Text, want)
		}
	}

	if err := chromedp.Do(ctx, chromedp.Navigate(s.url)); err != nil {
		t.Fatal(err)
	}
	v := readView(10e3)
	checkF3dB(v, 10e3)
	if v.Verdict != "true" {
		t.Errorf("R = 10k: verdict pass=%s, want true (1.59 kHz above 1.2 kHz)", v.Verdict)
	}

	// position 600 of 1000 is 10k·10^(0.6·2 − 1) = 15.85k, written to
	// three digits as 15.8k: 1.007 kHz, below the 1.2 kHz limit
	act(`var r=document.querySelector('input[type=range][name="R"]');r.value=600;r.dispatchEvent(new Event('input',{bubbles:true}))`)
	v = readView(15.8e3)
	checkF3dB(v, 15.8e3)
	if v.Verdict != "false" {
		t.Errorf("R = 15.8k: verdict pass=%s, want false (1.007 kHz below 1.2 kHz)", v.Verdict)
	}
	if q, _ := url.ParseQuery(strings.TrimPrefix(v.Search, "?")); q.Get("R") != "15.8k" {
		t.Errorf("query string %q, want R=15.8k", v.Search)
	}

	// a typed value with an IEC 60062 code
	typeValue("4k7")
	v = readView(4.7e3)
	checkF3dB(v, 4.7e3)
	if v.Verdict != "true" || !strings.Contains(v.Search, "R=4k7") {
		t.Errorf("R = 4k7: verdict %s, query %q", v.Verdict, v.Search)
	}

	// a value that does not parse: the message with its caret, the view stays
	typeValue("4.7q")
	if _, err := chromedp.Run(ctx, chromedp.Poll[bool](`!document.getElementById('request-error').hidden`, chromedp.WithPollingTimeout(10*time.Second))); err != nil {
		t.Fatalf("no error shown for 4.7q: %v", err)
	}
	msg, err := chromedp.Run(ctx, chromedp.Evaluate[string](`document.getElementById('request-error').textContent`))
	if err != nil {
		t.Fatal(err)
	}
	f3, err := chromedp.Run(ctx, chromedp.Evaluate[string](`document.getElementById('fig-f3db').dataset.value`))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(msg, `bad value: "4.7q"`) || !strings.Contains(msg, "^") {
		t.Errorf("error shown: %q", msg)
	}
	if got, _ := strconv.ParseFloat(f3, 64); math.Abs(got-rcF3dBHz(4.7e3, c)) > 1e-9*got {
		t.Errorf("after a bad value the view changed: −3 dB %s", f3)
	}

	// saving: the diff first, the file untouched until confirmed
	typeValue("4k7")
	readView(4.7e3)
	act(`document.getElementById('save').click()`)
	if _, err := chromedp.Run(ctx, chromedp.Poll[bool](`document.getElementById('save-dialog').open && document.getElementById('diff').textContent.length > 0`, chromedp.WithPollingTimeout(10*time.Second))); err != nil {
		t.Fatalf("no diff shown: %v", err)
	}
	diff, err := chromedp.Run(ctx, chromedp.Evaluate[string](`document.getElementById('diff').textContent`))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(diff, "- 5: let R = 10k      # metal film") || !strings.Contains(diff, "+ 5: let R = 4.7k      # metal film") {
		t.Errorf("diff shown: %q", diff)
	}
	if now, _ := os.ReadFile(path); !bytes.Equal(now, src) {
		t.Error("the file changed before the save was confirmed")
	}
	act(`document.getElementById('save-confirm').click()`)
	want := bytes.Replace(src, []byte("let R = 10k "), []byte("let R = 4.7k "), 1)
	deadline := time.Now().Add(5 * time.Second)
	for now, _ := os.ReadFile(path); !bytes.Equal(now, want); now, _ = os.ReadFile(path) {
		if time.Now().After(deadline) {
			t.Fatalf("file after confirming:\n%s", now)
		}
		time.Sleep(20 * time.Millisecond)
	}

	// an edit with a syntax error: shown with its caret, the view stays
	if err := os.WriteFile(path, append(want, []byte("R2: resistor (out, gnd\n")...), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := chromedp.Run(ctx, chromedp.Poll[bool](`!document.getElementById('load-error').hidden`, chromedp.WithPollingTimeout(10*time.Second))); err != nil {
		t.Fatalf("syntax error not shown: %v", err)
	}
	le, err := chromedp.Run(ctx, chromedp.Evaluate[string](`document.getElementById('load-error').textContent`))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(le, "logger.nodal:13:") || !strings.Contains(le, "R2: resistor (out, gnd\n") || !strings.Contains(le, "^") {
		t.Errorf("load error shown: %q", le)
	}
	f3, err = chromedp.Run(ctx, chromedp.Evaluate[string](`document.getElementById('fig-f3db').dataset.value`))
	if err != nil || f3 == "" {
		t.Errorf("the view went away after a bad edit: %q %v", f3, err)
	}

	// an unstable setting: said so, no curve, no steady-state figure
	sk := startTune(t, "testdata/tune_sallen_key.nodal")
	if err := chromedp.Do(ctx, chromedp.Navigate(sk.url+"?K=3.5")); err != nil {
		t.Fatal(err)
	}
	if _, err := chromedp.Run(ctx, chromedp.Poll[bool](`!document.getElementById('unstable').hidden`, chromedp.WithPollingTimeout(10*time.Second))); err != nil {
		t.Fatalf("K = 3.5 not shown as unstable: %v", err)
	}
	type unstableView struct {
		Banner  string `json:"banner"`
		F3      string `json:"f3"`
		Curves  int    `json:"curves"`
		StepSVG int    `json:"step_svg"`
	}
	u, err := chromedp.Run(ctx, chromedp.Evaluate[unstableView](`({banner: document.getElementById('unstable').textContent,
		f3: document.getElementById('fig-f3db').textContent,
		curves: document.querySelectorAll('#bode path.current').length,
		step_svg: document.querySelectorAll('#step svg').length})`))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(u.Banner, "right half-plane") || !strings.Contains(u.F3, "unstable") || u.Curves != 0 || u.StepSVG != 0 {
		t.Errorf("unstable view: %+v", u)
	}
}
