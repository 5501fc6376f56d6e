package report

import (
	"bytes"
	"strings"
	"testing"
)

// TestNoiseSection: a report with noise data gains a noise section with
// the band, the figures in their units and the sources in the given
// order; without it there is none.
func TestNoiseSection(t *testing.T) {
	d := demoData(t)
	in := 131.5e-12
	d.Noise = &Noise{Output: "v(out)", Input: "Iph", TempK: 300, FromHz: 100, ToHz: 100e3, OutRMS: 6.2e-6, OutUnit: "V",
		InUnit: "A", InRMS: &in, ENBWHz: 22.4e3, Method: "adaptive Simpson quadrature in ln f",
		Contributions: []NoiseContribution{{Source: "RF", RMS: 6.09e-6, Fraction: 0.9648}, {Source: "U1.en", RMS: 0.986e-6, Fraction: 0.0253}}}
	var b bytes.Buffer
	if err := RenderText(&b, d); err != nil {
		t.Fatal(err)
	}
	text := b.String()
	for _, s := range []string{"Noise\n-----", "at 300 K", "100 Hz … 100 kHz", "6.2 µV", "131.5 pA", "22.4 kHz", "96.48 %", "U1.en"} {
		if !strings.Contains(text, s) {
			t.Errorf("text report lacks %q", s)
		}
	}
	if strings.Index(text, "│ RF") > strings.Index(text, "│ U1.en") {
		t.Errorf("contributions out of order")
	}
	if html := render(t, d); !strings.Contains(html, `<section id="noise">`) {
		t.Errorf("HTML report has no noise section")
	}
	d.Noise = nil
	if html := render(t, d); strings.Contains(html, `id="noise"`) {
		t.Errorf("noise section without noise data")
	}
}
