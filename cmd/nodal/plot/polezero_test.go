package plot

import (
	"math"
	"strings"
	"testing"
)

// equalScaled checks that one rad/s is as long on x as on y in l.
func equalScaled(t *testing.T, what string, l PanelLayout) {
	t.Helper()
	sx := (l.XMax - l.XMin) / float64(l.Width)
	sy := (l.YMax - l.YMin) / float64(l.Height)
	if math.Abs(sx-sy) > 1e-6*sx {
		t.Errorf("%s %s: %g rad/s per pt on x, %g on y", what, l.Name, sx, sy)
	}
}

// inside reports whether root r lies in the ranges of l.
func inside(l PanelLayout, r complex128) bool {
	return real(r) >= l.XMin && real(r) <= l.XMax && imag(r) >= l.YMin && imag(r) <= l.YMax
}

// The vibration logger's poles (nodal transfer on the demo): a pair at
// −8903 ± j8928 rad/s (ζ 0.706) and real poles at −3.142 and −6.301 Mrad/s,
// three decades apart; here with a zero at the origin as well.
func TestPoleZeroZoomOnDominantRoots(t *testing.T) {
	pair := []complex128{complex(-8903.28, 8928.46), complex(-8903.28, -8928.46)}
	poles := append(append([]complex128{}, pair...), -3.14162e6, -6.30112e6)
	zeros := []complex128{0}
	fig, err := PoleZero(poles, zeros, PoleZeroOptions{Title: "vibration logger"})
	if err != nil {
		t.Fatal(err)
	}
	w, h := fig.Size()
	if h != 2*w {
		t.Errorf("figure %v × %v, want twice as tall as wide", w, h)
	}
	s := fig.Series()
	want := map[string][]complex128{
		"polezero/poles": poles, "polezero/zeros": zeros,
		"polezero zoom/poles": pair, "polezero zoom/zeros": zeros,
	}
	if len(s) != len(want) {
		t.Errorf("series %v, want the keys of %v", s, want)
	}
	for key, roots := range want {
		got := s[key]
		if len(got) != len(roots) {
			t.Fatalf("%s: %v, want %v", key, got, roots)
		}
		for i, r := range roots {
			if got[i] != [2]float64{real(r), imag(r)} {
				t.Errorf("%s[%d] = %v, want %v", key, i, got[i], r)
			}
		}
	}
	for _, size := range [][2]float64{{340, 680}, {600, 500}, {300, 900}} {
		if err := fig.SetSize(vgPoints(size[0]), vgPoints(size[1])); err != nil {
			t.Fatal(err)
		}
		lay := fig.Layout()
		if len(lay) != 2 || lay[0].Name != PanelPoleZero || lay[1].Name != PanelPoleZeroZoom {
			t.Fatalf("panels %+v", lay)
		}
		main, zoom := lay[0], lay[1]
		for _, l := range lay {
			equalScaled(t, "size", l)
			if !inside(l, 0) {
				t.Errorf("origin outside %+v", l)
			}
		}
		for _, r := range poles {
			if !inside(main, r) {
				t.Errorf("pole %v outside the main map %+v", r, main)
			}
		}
		for _, r := range pair {
			if !inside(zoom, r) {
				t.Errorf("dominant pole %v outside the zoom %+v", r, zoom)
			}
		}
		if inside(zoom, poles[2]) || inside(zoom, poles[3]) {
			t.Errorf("zoom %+v should leave out the far poles", zoom)
		}
		// the zoom magnifies: the pair spans a visible part of it
		if span := zoom.YMax - zoom.YMin; span > 4*2*8928.46 {
			t.Errorf("zoom spans %g rad/s vertically for a pair at ±8928 rad/s", span)
		}
		if !strings.HasPrefix(zoom.Title, "zoom") || !strings.Contains(zoom.Title, "12.6 krad/s") {
			t.Errorf("zoom title %q should say it is a zoom and to which |s| (|p| = 12.6 krad/s)", zoom.Title)
		}
		if !strings.Contains(main.XLabel, "(Mrad/s)") || !strings.Contains(zoom.XLabel, "(krad/s)") {
			t.Errorf("axis units %q / %q", main.XLabel, zoom.XLabel)
		}
		if main.Title != "vibration logger" {
			t.Errorf("main title %q", main.Title)
		}
	}
}

// Roots within two decades need no zoom; exactly at the boundary rule
// (largest/smallest non-zero magnitude ≤ 100) the map stays single.
func TestPoleZeroNoZoom(t *testing.T) {
	tests := []struct {
		name  string
		poles []complex128
		zoom  bool
	}{
		{"one decade", []complex128{-1e3, -1e4}, false},
		{"exactly two decades", []complex128{-1e3, -1e5}, false},
		{"just over two decades", []complex128{-1e3, -1.01e5}, true},
		{"only origin and one", []complex128{0, -1e6}, false},
	}
	for _, tt := range tests {
		fig, err := PoleZero(tt.poles, nil, PoleZeroOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if got := len(fig.Layout()) == 2; got != tt.zoom {
			t.Errorf("%s: zoom %v, want %v", tt.name, got, tt.zoom)
		}
	}
}
