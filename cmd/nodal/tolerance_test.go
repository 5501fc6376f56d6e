package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"nodal/analysis/variation"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"

	"github.com/alecthomas/kong"
)

// runTolerance parses args for the tolerance command alone with the
// command's kong tags and runs it, like run does for the whole tree.
func runTolerance(t *testing.T, ctx context.Context, args ...string) (stdout, stderr string, err error) {
	t.Helper()
	var out, errb bytes.Buffer
	e := &env{ctx: ctx, stdin: strings.NewReader(""), stdout: &out, stderr: &errb}
	var tree struct {
		Tolerance toleranceCmd `cmd:""`
	}
	parser, err := kong.New(&tree, kong.Name("nodal"), helpVars(), kong.Writers(&out, &errb), kong.Exit(func(int) { t.Fatal("kong exit") }))
	if err != nil {
		t.Fatal(err)
	}
	kctx, err := parser.Parse(append([]string{"tolerance"}, args...))
	if err != nil {
		return "", "", err
	}
	err = kctx.Run(e)
	return out.String(), errb.String(), err
}

func TestToleranceJSON(t *testing.T) {
	out, stderr, err := runTolerance(t, context.Background(), rcFile, "--out", "out", "--metric", "f3db", "--metric", "gain@1kHz",
		"--runs", "400", "--seed", "3", "--worst-case", "--sensitivity", "--format", "json")
	if err != nil {
		t.Fatalf("%v; stderr %s", err, stderr)
	}
	var doc struct {
		Runs    int    `json:"runs"`
		Seed    uint64 `json:"seed"`
		Metrics []struct {
			Name                                         string
			Nominal, Mean, Std, Min, Max, P00135, P99865 float64
		} `json:"metrics"`
		WorstCase []struct {
			Name      string  `json:"name"`
			Min       float64 `json:"min"`
			Max       float64 `json:"max"`
			MinCorner struct {
				High []string `json:"high"`
			} `json:"min_corner"`
		} `json:"worst_case"`
		Sensitivity []struct {
			Name  string `json:"name"`
			Unit  string `json:"unit"`
			Items []struct {
				Item  string  `json:"item"`
				Value float64 `json:"value"`
			} `json:"items"`
		} `json:"sensitivity"`
	}
	dec := json.NewDecoder(strings.NewReader(out))
	if err := dec.Decode(&doc); err != nil {
		t.Fatalf("%v in %s", err, out)
	}
	if doc.Runs != 400 || doc.Seed != 3 || len(doc.Metrics) != 2 || len(doc.WorstCase) != 2 || len(doc.Sensitivity) != 2 {
		t.Fatalf("document %s", out)
	}
	f := doc.Metrics[0]
	// fc = 1/(2πRC) at nominal; R and C uniform ±1 %: every run within the
	// corners 1/(2πR(1±t)C(1±t)) (closed form of the first-order low-pass;
	// common practice), relative σ ≈ √2·1 %/√3 =
	// 0.816 % (common practice; 400 runs give it to about ±3.0 % of itself
	// at 1σ, so allow ±15 %).
	lo, hi := rcCornerHz/(1.01*1.01), rcCornerHz/(0.99*0.99)
	if f.Name != "f3db" || math.Abs(f.Nominal/rcCornerHz-1) > 1e-9 || f.Min < lo || f.Max > hi || math.Abs(f.Std/f.Mean/0.008165-1) > 0.15 {
		t.Errorf("f3db stats %+v", f)
	}
	if !(f.Min <= f.P00135 && f.P00135 <= f.Mean && f.Mean <= f.P99865 && f.P99865 <= f.Max) {
		t.Errorf("order of statistics %+v", f)
	}
	if w := doc.WorstCase[0]; math.Abs(w.Min/lo-1) > 1e-9 || len(w.MinCorner.High) != 2 {
		t.Errorf("worst case %+v; want min %v with R1 and C1 high", w, lo)
	}
	// f3db ∝ 1/(RC): −1 %/% for each (logarithmic derivative of the closed
	// form; common practice).
	if len(doc.Sensitivity) != 2 || len(doc.Sensitivity[0].Items) != 2 {
		t.Fatalf("sensitivity %+v; want two metrics with R1 and C1 each", doc.Sensitivity)
	}
	for _, it := range doc.Sensitivity[0].Items {
		if doc.Sensitivity[0].Unit != "%/%" || math.Abs(it.Value+1) > 1e-6 {
			t.Errorf("sensitivity of f3db to %s: %v %s; want −1 %%/%%", it.Item, it.Value, doc.Sensitivity[0].Unit)
		}
	}
	if doc.Sensitivity[1].Unit != "dB/%" {
		t.Errorf("gain@1kHz sensitivity unit %q", doc.Sensitivity[1].Unit)
	}
	// The same seed with another worker count prints the same document.
	again, _, err := runTolerance(t, context.Background(), rcFile, "--out", "out", "--metric", "f3db", "--metric", "gain@1kHz",
		"--runs", "400", "--seed", "3", "--worst-case", "--sensitivity", "--format", "json", "--workers", "1")
	if err != nil || again != out {
		t.Errorf("--workers 1 differs (%v)", err)
	}
}

func TestToleranceTableEnvelopePlot(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "band.svg")
	out, stderr, err := runTolerance(t, context.Background(), rcFile, "--out", "out", "--metric", "f3db", "--runs", "200",
		"--envelope", "--from", "100", "--to", "10k", "--per-decade", "5", "--plot", svg)
	if err != nil {
		t.Fatalf("%v; stderr %s", err, stderr)
	}
	for _, want := range []string{"Monte Carlo: 200 runs, seed 1", "f3db (Hz)", "#", "Envelope over 200 runs", "freq_hz"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	if b, err := os.ReadFile(svg); err != nil || !bytes.Contains(b, []byte("<svg")) {
		t.Errorf("plot file: %v", err)
	}
}

// countdownCtx reports itself cancelled from its n-th Err call on, like a
// Ctrl-C arriving part-way through the runs (the engine asks Err before
// every run).
type countdownCtx struct {
	context.Context
	n atomic.Int64
}

func (c *countdownCtx) Err() error {
	if c.n.Add(-1) < 0 {
		return context.Canceled
	}
	return nil
}

func TestToleranceCancelReportsFinishedRuns(t *testing.T) {
	ctx := &countdownCtx{Context: context.Background()}
	ctx.n.Store(150)
	out, stderr, err := runTolerance(t, ctx, rcFile, "--out", "out", "--metric", "f3db", "--runs", "1000",
		"--worst-case", "--format", "json", "--workers", "1")
	if !errors.Is(err, errInterrupted) {
		t.Fatalf("error %v, want errInterrupted (exit status 2: partial figures); stderr %s", err, stderr)
	}
	var doc struct {
		Runs          int  `json:"runs"`
		RunsRequested int  `json:"runs_requested"`
		Cancelled     bool `json:"cancelled"`
		WorstCase     []any
		Metrics       []struct{ Mean float64 }
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	if !doc.Cancelled || doc.Runs < 100 || doc.Runs > 150 || doc.RunsRequested != 1000 || len(doc.WorstCase) != 0 || !(doc.Metrics[0].Mean > 0) {
		t.Errorf("document %s", out)
	}
	if !strings.Contains(stderr, "interrupted") {
		t.Errorf("stderr %q lacks the interruption note", stderr)
	}
	ctx2, cancel := context.WithCancel(context.Background())
	cancel() // Ctrl-C before the first run: nothing to report
	if _, _, err := runTolerance(t, ctx2, rcFile, "--out", "out", "--metric", "f3db"); err == nil || !strings.Contains(err.Error(), "before any run") {
		t.Errorf("error %v", err)
	}
}

func TestToleranceProgressBarOnTerminal(t *testing.T) {
	for _, terminal := range []bool{false, true} {
		var out, errb bytes.Buffer
		e := &env{ctx: context.Background(), stdin: strings.NewReader(""), stdout: &out, stderr: &errb, stderrIsTerminal: terminal}
		c := &toleranceCmd{Metric: []string{"f3db"}, Runs: progressMinRuns, Seed: 1, Format: "json"}
		c.File, c.Out = rcFile, "out"
		c.Temp = "300K"
		c.PerDecade = 50
		if err := c.Run(e); err != nil {
			t.Fatal(err)
		}
		if got := strings.Contains(errb.String(), "monte carlo"); got != terminal {
			t.Errorf("terminal %v: stderr %q", terminal, errb.String())
		}
	}
}

func TestToleranceErrors(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{rcFile, "--out", "out", "--metric", "bandwidth"}, "valid metrics"},
		{[]string{rcFile, "--out", "out", "--metric", "f3db", "--metric", "f3db"}, "twice"},
		{[]string{rcFile, "--out", "out", "--metric", "f3db", "--runs", "0"}, "--runs"},
		{[]string{rcFile, "--out", "nowhere", "--metric", "f3db"}, "nowhere"},
		{[]string{rcFile, "--out", "out", "--metric", "f3db", "--plot", "x.gif"}, ".gif"},
	}
	for _, tc := range cases {
		_, _, err := runTolerance(t, context.Background(), tc.args...)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%v: error %v; want %q", tc.args, err, tc.want)
		}
	}
}

func TestCornerTextNamesOnlyWhatMoves(t *testing.T) {
	if got := cornerText(variation.ToleranceCorner{High: []string{"R1"}, Low: []string{"C1"}}); got != "R1+ C1−" {
		t.Errorf("corner %q", got)
	}
	if got := cornerText(variation.ToleranceCorner{}); got != "any corner (no toleranced item moves it)" {
		t.Errorf("empty corner %q", got)
	}
	// A corner of many items stays one line (common practice: a message
	// line stays short; the JSON lists every item).
	many := make([]string, 1000)
	for i := range many {
		many[i] = fmt.Sprintf("R%d", i)
	}
	for _, tc := range []struct {
		c    variation.ToleranceCorner
		want string
	}{
		{variation.ToleranceCorner{High: many}, "every toleranced item high (+), all 1000 of them"},
		{variation.ToleranceCorner{Low: many}, "every toleranced item low (−), all 1000 of them"},
		{variation.ToleranceCorner{High: many[:990], Low: many[990:]}, strings.Join(plusAll(many[:20]), " ") + " … and 980 more (--format json lists every item)"},
	} {
		if got := cornerText(tc.c); got != tc.want {
			t.Errorf("cornerText(%d high, %d low) = %q, want %q", len(tc.c.High), len(tc.c.Low), got, tc.want)
		}
	}
}

// plusAll marks every name high, as cornerText writes it.
func plusAll(names []string) []string {
	out := make([]string, len(names))
	for i, n := range names {
		out[i] = n + "+"
	}
	return out
}
