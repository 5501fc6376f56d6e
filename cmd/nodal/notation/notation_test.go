package notation

import (
	"math"
	"testing"
)

// The expected strings follow the SI Brochure (BIPM, 9th edition 2019,
// §5.2–5.4: prefix symbols, the space between number and unit, no space
// inside a compact formula is nodal's own choice).

func TestEng(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		unit string
		want string
	}{
		{4700, "Ω", "4.7 kΩ"}, {4700, "ohm", "4.7 kΩ"}, {10e-9, "F", "10 nF"}, {1591.549, "Hz", "1.592 kHz"},
		{0.1, "Ω", "100 mΩ"}, {0, "Ω", "0 Ω"}, {0, "", "0"}, {-4700, "Ω", "-4.7 kΩ"}, {2e5, "", "200k"},
		{0.98, "", "0.98"}, {999.97, "Hz", "1 kHz"}, {2.2e-6, "F", "2.2 µF"}, {1, "V", "1 V"},
		{-3.01, "dB", "-3.01 dB"}, {0.05, "%", "5 %"}, {1e-18, "F", "1e-18 F"}, {123456, "Ω", "123.5 kΩ"},
		{math.Inf(1), "Hz", "+Inf Hz"}, {math.NaN(), "", "NaN"},
	} {
		if got := Eng(tc.v, tc.unit); got != tc.want {
			t.Errorf("Eng(%v, %q) = %q; want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}

func TestDigits(t *testing.T) {
	for _, tt := range []struct {
		v      float64
		digits int
		unit   string
		want   string
	}{
		{1591.549, 4, "Hz", "1.592 kHz"},
		{0.00123, 3, "s", "1.23 ms"},
		{999.96, 4, "Hz", "1 kHz"},
		{-6.3, 3, "dB", "-6.3 dB"},
		{0, 4, "V", "0 V"},
		{2.2e-9, 3, "F", "2.2 nF"},
		{47e3, 2, "", "47 k"},
		{0.5, 3, "", "500 m"},
		{150, 3, "", "150"},
		{math.Inf(1), 3, "Hz", "+Inf"},
	} {
		if got := Digits(tt.v, tt.digits, tt.unit); got != tt.want {
			t.Errorf("Digits(%g, %d, %q) = %q, want %q", tt.v, tt.digits, tt.unit, got, tt.want)
		}
	}
}

func TestCompact(t *testing.T) {
	for _, c := range []struct {
		x    float64
		unit string
		want string
	}{
		{1e-3, "s", "1ms"}, {2.2e-6, "s", "2.2µs"}, {1591.549, "Hz", "1.59kHz"},
		{999.7, "Hz", "1kHz"}, {0.5, "s", "500ms"}, {12, "s", "12s"}, {3.3e-12, "s", "3.3ps"},
		{0, "s", "0s"}, {2e15, "Hz", "2000THz"},
	} {
		if got := Compact(c.x, c.unit); got != c.want {
			t.Errorf("Compact(%g) = %q, want %q", c.x, got, c.want)
		}
	}
}

func TestExp(t *testing.T) {
	for _, c := range []struct {
		v    float64
		want string
	}{
		{112.5e-6, "112.5e-6"}, {2.53e9, "2.53e9"}, {1, "1"}, {-4700, "-4.7e3"}, {999.97e3, "1e6"}, {0.5, "500e-3"},
	} {
		if got, ok := Exp(c.v); !ok || got != c.want {
			t.Errorf("Exp(%g) = %q %v, want %q", c.v, got, ok, c.want)
		}
	}
	for _, v := range []float64{0, math.Inf(-1), math.NaN()} {
		if _, ok := Exp(v); ok {
			t.Errorf("Exp(%g) accepted", v)
		}
	}
}

func TestSuperscript(t *testing.T) {
	for k, want := range map[int]string{2: "²", 10: "¹⁰", -1: "⁻¹", 0: "⁰"} {
		if got := Superscript(k); got != want {
			t.Errorf("Superscript(%d) = %q, want %q", k, got, want)
		}
	}
}

func TestAxisExp3AndPrefix(t *testing.T) {
	for v, want := range map[float64]string{0: "", 5e-14: "p", 0.02: "m", 3e4: "k", 7e15: "T"} {
		if got := Prefix(AxisExp3(v)); got != want {
			t.Errorf("Prefix(AxisExp3(%g)) = %q, want %q", v, got, want)
		}
	}
}

func TestQ(t *testing.T) {
	for q, want := range map[float64]string{math.Inf(1): "∞", 0.70710678: "0.7071", 12.3456: "12.35", -3.2: "-3.2", 0.5: "0.5"} {
		if got := Q(q); got != want {
			t.Errorf("Q(%g) = %q, want %q", q, got, want)
		}
	}
}

func TestMetric(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		unit string
		want string
	}{
		{-40.0312, "dB", "-40.03 dB"},
		{-0.0001, "dB", "0.00 dB"},
		{-92.26, "deg", "-92.3°"},
		{0.70814, "", "0.7081"},
		{1885.9, "Hz", "1.886 kHz"},
		{math.Inf(-1), "dB", "-inf dB"},
		{math.Inf(1), "", "inf"},
	} {
		if got := Metric(tc.v, tc.unit); got != tc.want {
			t.Errorf("Metric(%g, %q) = %q, want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}
