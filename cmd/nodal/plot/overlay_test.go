package plot

import (
	"strings"
	"testing"
)

// The overlay figures of --vary keep each trace's points under its own
// label and refuse labels that would merge two traces.
func TestOverlaySeries(t *testing.T) {
	f := []float64{10, 100, 1000}
	tt := []float64{0, 1e-3, 2e-3}
	cases := []struct {
		name string
		draw func() (*Figure, error)
		keys []string
		err  string
	}{
		{"steps", func() (*Figure, error) {
			return Steps([]TimeTrace{{"A", tt, []float64{0, 0.5, 0.7}}, {"B", tt, []float64{0, 0.2, 0.4}}}, StepOptions{})
		}, []string{"step/A", "step/B"}, ""},
		{"steps same label", func() (*Figure, error) {
			return Steps([]TimeTrace{{"A", tt, []float64{0, 1, 1}}, {"A", tt, []float64{0, 1, 1}}}, StepOptions{})
		}, nil, "unique"},
		{"steps times", func() (*Figure, error) {
			return Steps([]TimeTrace{{"A", []float64{0, 2, 1}, []float64{0, 1, 1}}}, StepOptions{})
		}, nil, "times must increase"},
		{"impedances", func() (*Figure, error) {
			return Impedances([]ImpedanceTrace{{"A", f, []float64{1e3, 900, 100}, []float64{0, -10, -80}}, {"B", f, []float64{2e3, 1e3, 50}, []float64{0, -20, -85}}}, BodeOptions{})
		}, []string{"magnitude/A", "phase/A", "magnitude/B", "phase/B"}, ""},
		{"impedances unlabelled", func() (*Figure, error) {
			return Impedances([]ImpedanceTrace{{"", f, []float64{1, 2, 3}, []float64{0, 0, 0}}, {"", f, []float64{1, 2, 3}, []float64{0, 0, 0}}}, BodeOptions{})
		}, nil, "unique and non-empty"},
		{"root sets", func() (*Figure, error) {
			return PoleZeroSets([]RootSet{{"A", []complex128{-1, -2}, []complex128{-3}}, {"B", []complex128{complex(-1, 1), complex(-1, -1)}, nil}}, PoleZeroOptions{})
		}, []string{"polezero/A/poles", "polezero/A/zeros", "polezero/B/poles", "polezero/B/zeros"}, ""},
		{"root sets unlabelled", func() (*Figure, error) {
			return PoleZeroSets([]RootSet{{"", []complex128{-1}, nil}, {"B", []complex128{-2}, nil}}, PoleZeroOptions{})
		}, nil, "unique and non-empty"},
	}
	for _, tc := range cases {
		fig, err := tc.draw()
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%s: error %v, want %q", tc.name, err, tc.err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		s := fig.Series()
		for _, k := range tc.keys {
			if _, ok := s[k]; !ok {
				t.Errorf("%s: no series %q in %v", tc.name, k, keysOf(s))
			}
		}
	}
	// each root set keeps its own roots
	fig, err := PoleZeroSets([]RootSet{{"A", []complex128{-1, -2}, nil}, {"B", []complex128{-5}, nil}}, PoleZeroOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if b := fig.Series()["polezero/B/poles"]; len(b) != 1 || b[0] != [2]float64{-5, 0} {
		t.Errorf("set B poles %v, want [(-5, 0)]", b)
	}
}

func keysOf(m map[string][][2]float64) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	return out
}
