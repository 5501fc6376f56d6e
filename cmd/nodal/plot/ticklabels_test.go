package plot

import (
	"math"
	"strings"
	"testing"

	"nodal/netlist/syntax"

	gplot "gonum.org/v1/plot"
)

// The rule under test (common practice for axis labelling): every label
// of an axis carries the same number of decimals, the fewest that write
// each tick exactly and keep neighbours apart.
func TestLinearTickLabels(t *testing.T) {
	tests := []struct {
		name string
		vals []float64
		si   bool
		want string
	}{
		{"spacing 0.05", []float64{5.95, 6.00, 6.05, 6.10}, true, "5.95 6.00 6.05 6.10"},
		{"spacing 250", []float64{0, 250, 500, 750}, true, "0 250 500 750"},
		{"spacing 0.25", []float64{0, 0.25, 0.5, 0.75}, true, "0 0.25 0.50 0.75"},
		{"integers", []float64{1900, 2000, 2100}, true, "1900 2000 2100"},
		{"through zero", []float64{-0.1, -0.05, 0, 0.05}, true, "-0.10 -0.05 0 0.05"},
		{"float noise", []float64{0.1 + 0.2, 0.6000000000000001, 0.9}, true, "0.3 0.6 0.9"},
		{"large with prefix", []float64{1.2e6, 1.25e6, 1.3e6}, true, "1.20M 1.25M 1.30M"},
		{"large exponent", []float64{1.2e6, 1.25e6, 1.3e6}, false, "1.20e6 1.25e6 1.30e6"},
		{"small with prefix", []float64{0.002, 0.004, 0.006}, true, "2m 4m 6m"},
		{"tiny spacing on big offset", []float64{1e6, 1e6 + 0.5, 1e6 + 1}, true, "1.0000000M 1.0000005M 1.0000010M"},
		{"nano", []float64{2.2e-9, 2.4e-9}, false, "2.2e-9 2.4e-9"},
		{"single tick", []float64{3.5}, true, "3.5"},
		{"negative zero", []float64{-1, negZero(), 1}, true, "-1 0 1"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := strings.Join(linearTickLabels(tt.vals, tt.si), " "); got != tt.want {
				t.Errorf("linearTickLabels(%v) = %q, want %q", tt.vals, got, tt.want)
			}
		})
	}
}

func negZero() float64 {
	z := 0.0
	return -z
}

// labelsOf returns the labels of the labelled ticks of axis a over its
// final range.
func labelsOf(a gplot.Axis) []string {
	var out []string
	for _, tk := range a.Tick.Marker.Ticks(a.Min, a.Max) {
		if tk.Label != "" {
			out = append(out, tk.Label)
		}
	}
	return out
}

// The dc-gain histogram of the vibration logger's tolerance run spans
// 5.95…6.1 dB; its x labels were "6 6 6 6.1".
func TestHistogramTickLabelsDistinct(t *testing.T) {
	var vals []float64
	for i := 0; i <= 300; i++ {
		vals = append(vals, 5.95+0.15*float64(i)/300)
	}
	fig, err := Histogram("dc (dB)", vals, 0, 6.02)
	if err != nil {
		t.Fatal(err)
	}
	fig.Layout()
	labels := labelsOf(fig.panels[0].p.X)
	if len(labels) < 3 {
		t.Fatalf("only %d labelled ticks: %q", len(labels), labels)
	}
	seen := map[string]bool{}
	for _, l := range labels {
		if seen[l] {
			t.Errorf("label %q repeats in %q", l, labels)
		}
		seen[l] = true
	}
	// every label has the same decimals, two for a spacing of 0.05 or 0.02
	for _, l := range labels {
		if dot := strings.IndexByte(l, '.'); dot < 0 || len(l)-dot-1 != 2 {
			t.Errorf("label %q should carry two decimals (all %q)", l, labels)
		}
	}
}

// A step response over 0…780 µs was labelled "250.00 500.00 750.00".
func TestStepTimeLabelsNoSpareDecimals(t *testing.T) {
	ts, ys, m := firstOrderStep(130e-6, 301)
	fig, err := Step(ts, ys, m, StepOptions{})
	if err != nil {
		t.Fatal(err)
	}
	l := fig.Layout()[0]
	if l.XLabel != "time (µs)" {
		t.Fatalf("x label %q", l.XLabel)
	}
	labels := labelsOf(fig.panels[0].p.X)
	for _, s := range labels {
		if strings.Contains(s, ".") {
			t.Errorf("time labels %q carry needless decimals", labels)
			break
		}
	}
	if len(labels) < 3 {
		t.Errorf("time labels %q", labels)
	}
}

// The rule under test (common practice for axis labelling): on any range,
// narrow or wide, the labelled ticks are pairwise distinct, at most
// maxTickLabelRunes long, and read back (with the reference and the unit
// scale the axis label names) within half a tick step of where they sit.
// The narrow ranges are a metric that barely moves across Monte Carlo
// runs; before offsetAxis every tick of the first read "-43.4293396" or
// longer, and those of the second all read "1".
func TestOffsetAxisTicksReadable(t *testing.T) {
	tests := []struct {
		name   string
		lo, hi float64
		unit   string
		offset bool // labelled by offsets from a reference
	}{
		{"dc gain barely moving", -43.4293396, -43.4293390, "dB", true},
		{"1e-12 wide at 1", 1, 1 + 1e-12, "", true},
		{"demo rounding spread", -43.42933962e-6, -43.42933962e-6 + 1e-16, "", true},
		{"unit interval", 0, 1, "", false},
		{"three decades", 1e3, 1e6, "Hz", false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ticker, label := offsetAxis(tt.lo, tt.hi, "x", tt.unit)
			lt, ok := ticker.(linearTicks)
			if !ok {
				t.Fatalf("ticker %T, want linearTicks", ticker)
			}
			if got := lt.Offset != 0 || lt.Scale != 0; got != tt.offset {
				t.Errorf("offset labelling %v (label %q), want %v", got, label, tt.offset)
			}
			if tt.offset && !strings.Contains(label, "Δ from ") {
				t.Errorf("label %q does not name the reference", label)
			}
			scale := lt.Scale
			if scale == 0 {
				scale = 1
			}
			var vals, pos []float64
			seen := map[string]bool{}
			for _, tk := range ticker.Ticks(tt.lo, tt.hi) {
				if tk.Label == "" {
					continue
				}
				if seen[tk.Label] {
					t.Errorf("label %q repeats", tk.Label)
				}
				seen[tk.Label] = true
				if n := len([]rune(tk.Label)); n > maxTickLabelRunes {
					t.Errorf("label %q has %d characters", tk.Label, n)
				}
				v, err := syntax.ParseValue(tk.Label, "")
				if err != nil {
					t.Fatalf("label %q: %v", tk.Label, err)
				}
				vals = append(vals, lt.Offset+v*scale)
				pos = append(pos, tk.Value)
			}
			if len(vals) < 2 {
				t.Fatalf("%d labelled ticks", len(vals))
			}
			step := pos[1] - pos[0]
			for i := range vals {
				if math.Abs(vals[i]-pos[i]) > step/2 {
					t.Errorf("tick at %.17g reads back as %.17g (step %g)", pos[i], vals[i], step)
				}
			}
		})
	}
}

// A range of zero width gets one tick, at the value.
func TestOffsetAxisZeroWidth(t *testing.T) {
	ticker, _ := offsetAxis(-43.4293396, -43.4293396, "x", "dB")
	ticks := ticker.Ticks(-43.5, -43.3)
	if len(ticks) != 1 || ticks[0].Value != -43.4293396 || ticks[0].Label == "" {
		t.Fatalf("ticks %+v, want one labelled tick at the value", ticks)
	}
	v, err := syntax.ParseValue(ticks[0].Label, "")
	if err != nil || math.Abs(v+43.4293396) > 0.05 {
		t.Errorf("label %q reads %g (%v)", ticks[0].Label, v, err)
	}
}

// A histogram of a metric that never moves draws one bar and one tick.
func TestHistogramConstantMetric(t *testing.T) {
	vals := make([]float64, 200)
	for i := range vals {
		vals[i] = -43.4293396
	}
	fig, err := MetricHistogram(HistogramSpec{Label: "dc gain (dB)", Values: vals, Nominal: -43.4293396, Unit: "dB"})
	if err != nil {
		t.Fatal(err)
	}
	fig.Layout()
	if labels := labelsOf(fig.panels[0].p.X); len(labels) != 1 {
		t.Errorf("labels %q, want one", labels)
	}
}
