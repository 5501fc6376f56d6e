package signal

import (
	"errors"
	"math"
	"strings"
	"testing"

	"nodal/netlist/syntax"
)

func near(a, b float64) bool { return math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b)) }

// The expected values below are computed from the definitions
// (ω = 2πf, 1 deg = π/180 rad, SI prefixes per the SI brochure, BIPM).
func TestParseValues(t *testing.T) {
	type want struct {
		fn       string
		amp, w   float64
		phaseRad float64
		hz       bool
		text     string
	}
	cases := []struct {
		src   string
		terms []want
		dc    float64
	}{
		{"0.8*sin(2*pi*400*t)", []want{{"sin", 0.8, 2 * math.Pi * 400, 0, true, "2*pi*400*t"}}, 0},
		{"1.5*cos(2*pi*50*t + 30deg) + 0.2*sin(2*pi*150*t) + 2", []want{
			{"cos", 1.5, 2 * math.Pi * 50, math.Pi / 6, true, "2*pi*50*t"},
			{"sin", 0.2, 2 * math.Pi * 150, 0, true, "2*pi*150*t"}}, 2},
		{"5*sin(2500*t)", []want{{"sin", 5, 2500, 0, false, "2500*t"}}, 0},
		{"-sin(2*pi*1k*t - 0.5)", []want{{"sin", -1, 2 * math.Pi * 1000, -0.5, true, "2*pi*1k*t"}}, 0},
		{"2m + 3u", nil, 2e-3 + 3e-6},
		{"-2", nil, -2},
		{"sin(t)", []want{{"sin", 1, 1, 0, false, "t"}}, 0},
		{"cos(2*pi*1.5M*t + pi/4)", []want{{"cos", 1, 2 * math.Pi * 1.5e6, math.Pi / 4, true, "2*pi*1.5M*t"}}, 0},
		{"sin(2 * pi * 50 * t) * 3 / 2", []want{{"sin", 1.5, 2 * math.Pi * 50, 0, true, "2*pi*50*t"}}, 0},
		{"0.5·sin(2·π·400·t − 45.0°)", []want{{"sin", 0.5, 2 * math.Pi * 400, -math.Pi / 4, true, "2·π·400·t"}}, 0},
		{"sin(pi*800*t)", []want{{"sin", 1, 800 * math.Pi, 0, false, "pi*800*t"}}, 0},
		{"1e-3*sin(1e4*t + 1rad - 10deg)", []want{{"sin", 1e-3, 1e4, 1 - math.Pi/18, false, "1e4*t"}}, 0},
		// equal frequencies may repeat: superposition is kept term by term
		{"sin(100*t) + sin(100*t + 90deg) + 1 - 1", []want{
			{"sin", 1, 100, 0, false, "100*t"}, {"sin", 1, 100, math.Pi / 2, false, "100*t"}}, 0},
	}
	for _, c := range cases {
		s, err := Parse("signal", c.src)
		if err != nil {
			t.Errorf("%q: %v", c.src, err)
			continue
		}
		if !near(s.DC, c.dc) {
			t.Errorf("%q: DC %g, want %g", c.src, s.DC, c.dc)
		}
		if len(s.Terms) != len(c.terms) {
			t.Errorf("%q: %d terms, want %d", c.src, len(s.Terms), len(c.terms))
			continue
		}
		for i, w := range c.terms {
			g := s.Terms[i]
			if g.Func != w.fn || !near(g.Amplitude, w.amp) || !near(g.OmegaRad, w.w) || !near(g.PhaseRad, w.phaseRad) || g.WrittenAsHz != w.hz || g.OmegaText != w.text {
				t.Errorf("%q term %d: got %+v, want %+v", c.src, i, g, w)
			}
		}
	}
}

func TestFreqHz(t *testing.T) {
	s, err := Parse("signal", "sin(2*pi*400*t)")
	if err != nil {
		t.Fatal(err)
	}
	if got := s.Terms[0].FreqHz(); !near(got, 400) {
		t.Errorf("FreqHz = %g, want 400", got)
	}
}

func TestParseErrors(t *testing.T) {
	cases := []struct {
		src, want string
	}{
		{"", "signal:1:1: unexpected token"},
		{"sin(2*pi*t", "signal:1:11:"},
		{"2pi", `signal:1:1: number "2pi": unknown unit or prefix "pi" (write the multiplication with *)`},
		{"0.8*sin(2*pi*400*t) + 3*tan(t)", `signal:1:25: unknown function "tan"`},
		{"sin(2*pi*400*t) * cos(t)", "signal:1:19: a product of two sinusoids"},
		{"sin(30deg)", "signal:1:1: sin(...) has no t"},
		{"sin(t*t)", "signal:1:7: t may appear only once"},
		{"sin(t) + t", "signal:1:10: t may appear only inside"},
		{"sin(-2*pi*t)", "signal:1:6: angular frequency must be positive"},
		{"sin(0*t)", "signal:1:5: angular frequency must be positive"},
		{"sin(sin(t))", "signal:1:5: sin(...) inside"},
		{"sin(t + 2*t)", "signal:1:9: t appears in two places"},
		{"30deg", "signal:1:1: an angle unit belongs inside"},
		{"sin(2deg*t)", "signal:1:5: an angle unit on the frequency"},
		{"1/0", "signal:1:3: division by zero"},
		{"1e999", "signal:1:1: number"},
		{"3 $ 4", "signal:1:3:"},
		{"sin 2", "signal:1:5:"},
		{"x*sin(t)", `signal:1:1: unknown name "x"`},
		{"1/cos(t)", "signal:1:3: cos(...) may not divide"},
		{"sin", `signal:1:1: expected "(" after sin`},
		{"1/t", "signal:1:3: t may not divide"},
		{"\xff", "signal:1:1: signal is not valid UTF-8"},
	}
	for _, c := range cases {
		_, err := Parse("signal", c.src)
		if err == nil {
			t.Errorf("%q: no error, want %q", c.src, c.want)
			continue
		}
		var l syntax.ErrorList
		if !errors.As(err, &l) || len(l) != 1 {
			t.Errorf("%q: error %T is not a one-diagnostic syntax.ErrorList", c.src, err)
		}
		if !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("%q: error %q, want prefix %q", c.src, err, c.want)
		}
	}
}

// String must print in the parser's own syntax: parsing it again gives the
// same signal (phases to the 0.05° printing resolution, numbers to 4 digits).
func TestStringRoundTrip(t *testing.T) {
	for _, src := range []string{
		"1.5*cos(2*pi*50*t + 30deg) + 0.2*sin(2*pi*150*t) + 2",
		"-sin(2*pi*1k*t - 0.5) - 0.25",
		"5*sin(2500*t)",
		"0",
	} {
		a, err := Parse("signal", src)
		if err != nil {
			t.Fatal(err)
		}
		b, err := Parse("signal", a.String())
		if err != nil {
			t.Fatalf("%q printed as %q: %v", src, a.String(), err)
		}
		if err := sameSignal(a, b, 1e-3, 0.05*math.Pi/180); err != "" {
			t.Errorf("%q printed as %q: %s", src, a.String(), err)
		}
	}
}

func sameSignal(a, b *Signal, relTol, phaseTol float64) string {
	if len(a.Terms) != len(b.Terms) {
		return "term count differs"
	}
	if math.Abs(a.DC-b.DC) > relTol*math.Max(1, math.Abs(a.DC)) {
		return "DC differs"
	}
	for i := range a.Terms {
		x, y := a.Terms[i], b.Terms[i]
		if x.Func != y.Func || x.OmegaText != y.OmegaText ||
			math.Abs(x.Amplitude-y.Amplitude) > relTol*math.Abs(x.Amplitude) ||
			math.Abs(x.OmegaRad-y.OmegaRad) > 1e-12*x.OmegaRad ||
			math.Abs(x.PhaseRad-y.PhaseRad) > phaseTol {
			return "term differs"
		}
	}
	return ""
}

func TestFormatNumber(t *testing.T) {
	for _, c := range []struct {
		x    float64
		want string
	}{
		{0.56568542, "0.5657"}, {0.0995037, "0.0995"}, {2, "2"}, {12345.6, "12346"},
		{-1.5e-7, "-1.5e-07"}, {2.5e6, "2.5e+06"}, {0, "0"},
	} {
		if got := FormatNumber(c.x); got != c.want {
			t.Errorf("FormatNumber(%g) = %q, want %q", c.x, got, c.want)
		}
	}
}

// FuzzParse checks that Parse never panics, that errors are positioned,
// that a parsed signal is finite and prints to text that parses back to
// the same signal to printing precision (4 significant digits for
// amplitudes and the constant, 0.1° for phases, ω·t as written).
func FuzzParse(f *testing.F) {
	for _, s := range []string{
		"0.8*sin(2*pi*400*t)",
		"1.5*cos(2*pi*50*t + 30deg) + 0.2*sin(2*pi*150*t) + 2",
		"5*sin(2500*t)",
		"-sin(2*pi*1k*t - 0.5)",
		"sin(t)/2 - 3m",
		"2pi", "sin(", "1e", "sin(t*t)",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		s, err := Parse("signal", src)
		if err != nil {
			var l syntax.ErrorList
			if !errors.As(err, &l) || len(l) == 0 || l[0].Pos.Line < 1 || l[0].Pos.Col < 1 || l[0].Msg == "" {
				t.Fatalf("%q: unpositioned error %v", src, err)
			}
			return
		}
		finite := func(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
		for _, term := range s.Terms {
			if !(term.OmegaRad > 0) || !finite(term.OmegaRad) || !finite(term.Amplitude) || !finite(term.PhaseRad) {
				t.Fatalf("%q: invalid term %+v", src, term)
			}
		}
		if !finite(s.DC) || !finite(s.At(1e-3)) {
			t.Fatalf("%q: DC %v, u(1 ms) %v", src, s.DC, s.At(1e-3))
		}
		again, err := Parse("signal", s.String())
		if err != nil {
			t.Fatalf("%q printed as %q does not parse: %v", src, s.String(), err)
		}
		// The printed amplitude is rounded to 4 digits: relative error at
		// most 5e-4 (half a unit in the fourth digit).
		near := func(a, b float64) bool { return math.Abs(a-b) <= 5e-4*math.Max(math.Abs(a), math.Abs(b)) }
		if !near(again.DC, s.DC) || len(again.Terms) != len(s.Terms) {
			t.Fatalf("%q printed as %q parses to %+v, want %+v", src, s.String(), again, s)
		}
		for i, a := range again.Terms {
			b := s.Terms[i]
			dph := math.Remainder(a.PhaseRad-b.PhaseRad, 2*math.Pi)
			if a.Func != b.Func || !near(a.Amplitude, b.Amplitude) || a.OmegaRad != b.OmegaRad || math.Abs(dph) > 0.051*math.Pi/180 {
				t.Fatalf("%q printed as %q: term %d is %+v, want %+v", src, s.String(), i, a, b)
			}
		}
	})
}
