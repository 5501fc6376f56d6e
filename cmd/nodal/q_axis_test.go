package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// An LC tank, H = 1/(1 + s²LC), has its pole pair on the jω axis at
// f0 = 1/(2π√LC) = 5.033 kHz for 10 mH and 100 nF (common practice):
// Q = ∞, shown as ∞ in the tf table and the report, and as null with a
// reason in JSON.
func TestPairOnAxisQ(t *testing.T) {
	file := filepath.Join(t.TempDir(), "tank.nodal")
	src := "title \"LC tank\"\nVs: voltage source (in, gnd) 1\nL1: inductor (in, out) 10mH\nC1: capacitor (out, gnd) 100nF\n"
	if err := os.WriteFile(file, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "transfer", file, "--out", "out")
	if r.code != 0 || !strings.Contains(r.stdout, "pair: f0 5.033 kHz, Q ∞, ζ 0") {
		t.Errorf("tf table (exit %d):\n%s%s", r.code, r.stdout, r.stderr)
	}
	r = runNodal(t, "", "transfer", file, "--out", "out", "--format", "json")
	var doc struct {
		Pairs []struct {
			F0Hz    float64  `json:"f0_hz"`
			Q       *float64 `json:"q"`
			QReason string   `json:"q_reason"`
		} `json:"pairs"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Pairs) != 1 || doc.Pairs[0].Q != nil || doc.Pairs[0].QReason != "pair on the jω axis" || !strings.Contains(r.stdout, `"q": null`) {
		t.Errorf("tf json pairs %+v", doc.Pairs)
	}
	r = runNodal(t, "", "report", file, "--out", "out", "--format", "text")
	if r.code != 0 || !strings.Contains(r.stdout, "5.0329 kHz │ ∞ │") {
		t.Errorf("report (exit %d) shows no Q ∞:\n%s%s", r.code, r.stdout, r.stderr)
	}
}
