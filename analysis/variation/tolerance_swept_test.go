package variation

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/mna/testcircuit"
)

// ladderSrc is a uniform RC ladder of n sections (1 kΩ, 10 nF, as
// testdata/reference/ladder), source at n0, output at n<n>; tol is the
// tolerance written after every resistor ("" for none).
func ladderSrc(n int, tol string) string {
	var b strings.Builder
	b.WriteString("V1: voltage source (n0, gnd) 1\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) 1k %s\nC%d: capacitor (n%d, gnd) 10n ±1%%\n", i, i, i+1, tol, i, i+1)
	}
	return b.String()
}

// TestSweptPathAgreesWithExtraction forces the swept path (direct solves
// of H, no poles) on circuits the extraction also takes, a 100-section
// ladder and the logger filter (both small enough for their stability to
// be computed, not certified: every run's stability is checked; the
// certificate only skips that check) and a Sallen-Key peaking by about
// 14 dB, and requires every
// draw's f3db, peak, fpeak and spot values to agree with the extraction path (Extract,
// Metric.Eval) to 1e-9: relative for Hz, absolute for dB and degrees
// (the brief's figure; the two are different root searches on the same
// H, so only rounding separates them).
func TestSweptPathAgreesWithExtraction(t *testing.T) {
	logger := directCircuit(t, "")
	peaking, _ := directCase(t, "peaking") // Q ≈ 5: a peak well inside the band
	for _, tc := range []struct {
		name, src, out string
		draws          int
		certified      bool
	}{
		{"ladder 100", ladderSrc(100, "±1%"), "n100", 20, false},
		{"ladder 250", ladderSrc(250, "±1%"), "n250", 4, false},
		{"logger", logger, "out", 200, false},
		{"peaking Sallen-Key", peaking, "out", 200, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := tolLoad(t, tc.src)
			ev := tolEvaluator(t, c, tc.out, "f3db", "gain@1kHz", "phase@2kHz", "peak", "fpeak")
			sp, err := newSweptPath(ev, c)
			if err != nil {
				t.Fatal(err)
			}
			if sp.certified != tc.certified {
				t.Fatalf("certified = %v, want %v", sp.certified, tc.certified)
			}
			buf := make([]float64, len(c.Variations))
			worst := make([]float64, len(ev.Metrics()))
			defer func() { t.Logf("largest differences %v", worst) }()
			for i := 0; i < tc.draws; i++ {
				drawFactors(c.Variations, 5, i, buf)
				vc, err := c.Vary(buf)
				if err != nil {
					t.Fatal(err)
				}
				if got := sp.keepsCertificate(vc); got != tc.certified {
					t.Fatalf("draw %d: keepsCertificate = %v", i, got)
				}
				want, werr := ev.evalExtract(vc, true)
				got, gerr := sp.eval(ev, vc)
				if werr != nil || gerr != nil {
					t.Fatalf("draw %d: swept %v, extraction %v", i, gerr, werr)
				}
				for j, name := range ev.Metrics() {
					d := math.Abs(got[j] - want[j])
					if !metricPerPercent(name) && want[j] != 0 {
						d /= math.Abs(want[j])
					}
					worst[j] = math.Max(worst[j], d)
					if d > 1e-9 {
						t.Errorf("draw %d: %s = %.15g swept, %.15g extracted", i, name, got[j], want[j])
					}
				}
			}
		})
	}
}

// TestSweptLadderF3dBReference checks the nominal f3db of uniform RC
// ladders of 1,000 and 10,000 sections (which the extraction refuses, so
// NewMetricEvaluator takes the swept path) against the 50-digit mpmath
// reference of testdata/reference/ladder/gen_ladder_f3db.py (the ladder
// walked by hand, checked against the closed-form poles), to 1e-10
// relative at 1,000 sections and 1e-9 at 10,000: the solves' forward
// error grows with the condition of G, the ladder's path Laplacian,
// about (4N/π)² (common practice of numerical linear algebra), 4·10⁷·ε
// ≈ 10⁻⁸ at 10,000 sections as a bound; 1.5·10⁻¹⁰ is seen.
func TestSweptLadderF3dBReference(t *testing.T) {
	ref, err := testcircuit.LadderF3dBReference("../../testdata/reference/ladder/ladder_f3db.json")
	if err != nil {
		t.Fatal(err)
	}
	checked := 0
	for sections, want := range ref {
		if sections < 1000 {
			continue
		}
		c := tolLoad(t, ladderSrc(sections, "±1%"))
		ev := tolEvaluator(t, c, fmt.Sprintf("n%d", sections), "f3db")
		if ev.swept == nil {
			t.Fatalf("%d sections: not on the swept path", sections)
		}
		got := ev.phaseRefDeg[0] // the nominal value
		tol := 1e-10
		if sections > 1000 {
			tol = 1e-9
		}
		if d := math.Abs(got-want) / want; d > tol {
			t.Errorf("%d sections: f3db %.15g Hz, reference %.15g (rel %.2g)", sections, got, want, d)
		}
		checked++
	}
	if checked != 2 {
		t.Fatalf("checked %d ladders, want 2", checked)
	}
}

// TestSweptPathSaysWhy checks the refusals of the swept path: a run whose
// |H| is below the level at the bottom of the scan or above it at the
// top (the scan range moved past the crossing), a peak above the top of
// the scan, a high-pass (no DC
// reference), a metric that needs poles; and that a draw with a negative
// resistor loses the passivity certificate.
func TestSweptPathSaysWhy(t *testing.T) {
	// 1,000 sections: past stability.MaxUnknowns, so certified.
	c := tolLoad(t, ladderSrc(1000, "±1%"))
	ev := tolEvaluator(t, c, "n1000", "f3db")
	sp, err := newSweptPath(ev, c)
	if err != nil {
		t.Fatal(err)
	}
	u := math.Log(2 * math.Pi * ev.phaseRefDeg[0])
	for _, tc := range []struct {
		lo, hi float64
		want   string
	}{
		{u + 0.1, u + 3, "already below"},
		{u - 3, u - 0.1, "stays above"},
	} {
		p, err := newSweptPath(ev, c)
		if err != nil {
			t.Fatal(err)
		}
		p.lo, p.hi = tc.lo, tc.hi
		_, err = p.eval(ev, c)
		if !errors.Is(err, errNoCrossing) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("scan [%g, %g]: error %v, want %q", tc.lo, tc.hi, err, tc.want)
		}
	}
	hp := tolLoad(t, "Vin: voltage source (in, gnd) 1\nC1: capacitor (in, out) 10nF ±5%\nR1: resistor (out, gnd) 10k ±1%\n")
	hev := tolEvaluator(t, hp, "out", "gain@1kHz")
	hev.metrics, hev.names = ev.metrics, ev.names
	if _, err := newSweptPath(hev, hp); err == nil || !strings.Contains(err.Error(), "DC gain") {
		t.Errorf("high-pass f3db: %v", err)
	}
	// A scan whose top lies below the peak of a peaking Sallen-Key
	// (|H| still rising there) vouches for no peak.
	src, _ := directCase(t, "peaking")
	pc := tolLoad(t, src)
	pev := tolEvaluator(t, pc, "out", "peak", "fpeak")
	pp, err := newSweptPath(pev, pc)
	if err != nil {
		t.Fatal(err)
	}
	v, err := pp.eval(pev, pc)
	if err != nil {
		t.Fatal(err)
	}
	pp.hi = math.Log(2*math.Pi*v[1]) - 0.2
	if _, err := pp.eval(pev, pc); err == nil || !strings.Contains(err.Error(), "does not fall") {
		t.Errorf("scan topped below the peak: %v", err)
	}
	qev := tolEvaluator(t, hp, "out", "gain@1kHz")
	qev.metrics, qev.names = nil, nil
	for _, name := range []string{"gain@1kHz", "q"} {
		m, err := transfer.ParseMetric(name)
		if err != nil {
			t.Fatal(err)
		}
		qev.metrics, qev.names = append(qev.metrics, m), append(qev.names, name)
	}
	if _, err := newSweptPath(qev, hp); err == nil || !strings.Contains(err.Error(), "q needs") {
		t.Error("q: swept path taken")
	}
	neg := c.Clone()
	for i := range neg.Parts {
		if neg.Parts[i].Name == "R3" {
			neg.Parts[i].Value = -neg.Parts[i].Value
		}
	}
	if !sp.certified {
		t.Fatal("1,000-section ladder: not certified by passivity")
	}
	if sp.keepsCertificate(neg) {
		t.Error("a negative resistor keeps the passivity certificate")
	}
	if !sp.keepsCertificate(c) {
		t.Error("the nominal circuit loses its certificate")
	}
	small := tolLoad(t, ladderSrc(20, "±1%"))
	ssp, err := newSweptPath(tolEvaluator(t, small, "n20", "f3db"), small)
	if err != nil || ssp.certified {
		t.Errorf("20 sections (stability computed): certified %v, %v", ssp != nil && ssp.certified, err)
	}
}

// BenchmarkSweptLadder times 100 Monte Carlo runs of f3db on uniform RC
// ladders of 1,000 and 10,000 sections (±1 % resistors and capacitors),
// the whole analysis per op on 2 workers; it reports ns/run.
func BenchmarkSweptLadder(b *testing.B) {
	for _, n := range []int{1000, 10000} {
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			c := tolLoad(b, ladderSrc(n, "±1%"))
			ev, err := NewMetricEvaluator(c, mna.Input{}, mna.Output{Node: fmt.Sprintf("n%d", n)}, []string{"f3db"})
			if err != nil || ev.swept == nil {
				b.Fatal(err, "or not on the swept path")
			}
			const runs = 100
			for b.Loop() {
				res, err := MonteCarlo(context.Background(), c, ev, MonteCarloOptions{Runs: runs, Seed: 1, Workers: 2})
				if err != nil || res.Failed != 0 {
					b.Fatal(err, res.Failed)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/runs, "ns/run")
		})
	}
}

// TestSweptLadderScaling checks a run of the swept path against time
// scaling (common practice): every R and C of an RC network times k
// divides each natural frequency, hence f3db, by k², so the 1,000-section
// ladder with both at 1.01 (and both at 0.99) must give the nominal f3db
// over 1.01² (0.99²), to 1e-10 relative (the solves' rounding, see
// TestSweptLadderF3dBReference); the run is certified (no stability
// analysis), the nominal range serves it.
func TestSweptLadderScaling(t *testing.T) {
	const n = 1000
	c := tolLoad(t, ladderSrc(n, "±1%"))
	ev := tolEvaluator(t, c, fmt.Sprintf("n%d", n), "f3db")
	if ev.swept == nil || !ev.swept.certified {
		t.Fatal("not on the certified swept path")
	}
	nominal := ev.phaseRefDeg
	for _, k := range []float64{1.01, 0.99} {
		f := make([]float64, len(c.Variations))
		for i := range f {
			f[i] = k
		}
		vc, err := c.Vary(f)
		if err != nil {
			t.Fatal(err)
		}
		got, err := ev.Eval(vc)
		if err != nil {
			t.Fatal(err)
		}
		if want := nominal[0] / (k * k); math.Abs(got[0]-want) > 1e-10*want {
			t.Errorf("k = %g: f3db %.15g Hz, want %.15g", k, got[0], want)
		}
	}
}
