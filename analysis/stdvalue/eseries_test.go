package stdvalue

import (
	"math"
	"strconv"
	"testing"
)

// roundSig rounds x to n significant digits (x in [1, 10)).
func roundSig(x float64, n int) float64 {
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'f', n-1, 64), 64)
	return v
}

// TestSeriesTables checks each IEC 60063 table (from memory) for its count,
// strict increase, and against the geometric series round(10^(i/N)) to 2
// (E6–E24) or 3 (E48–E192) significant digits. The values that IEC 60063
// keeps off the rounded geometric series are listed explicitly (from
// memory of the standard: E24's 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2, of
// which E12 and E6 inherit their members; E192's 9.20 for 9.19).
func TestSeriesTables(t *testing.T) {
	tests := []struct {
		name       string
		n          int
		exceptions map[float64]bool
	}{
		{"E6", 6, map[float64]bool{3.3: true, 4.7: true}},
		{"E12", 12, map[float64]bool{2.7: true, 3.3: true, 3.9: true, 4.7: true, 8.2: true}},
		{"E24", 24, map[float64]bool{2.7: true, 3.0: true, 3.3: true, 3.6: true, 3.9: true, 4.3: true, 4.7: true, 8.2: true}},
		{"E48", 48, nil},
		{"E96", 96, nil},
		{"E192", 192, map[float64]bool{9.20: true}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s, err := SeriesByName(tc.name)
			if err != nil {
				t.Fatal(err)
			}
			if len(s.Values) != tc.n {
				t.Fatalf("%d values, want %d", len(s.Values), tc.n)
			}
			found := 0
			for i, v := range s.Values {
				if i > 0 && !(v > s.Values[i-1]) {
					t.Errorf("value %d (%v) not above %v", i, v, s.Values[i-1])
				}
				geo := roundSig(math.Pow(10, float64(i)/float64(tc.n)), s.Digits())
				switch {
				case tc.exceptions[v]:
					found++
					if geo == v {
						t.Errorf("%v listed as an exception but equals the geometric value", v)
					}
				case geo != v:
					t.Errorf("value %d: %v, geometric series gives %v", i, v, geo)
				}
			}
			if found != len(tc.exceptions) {
				t.Errorf("%d of %d listed exceptions present", found, len(tc.exceptions))
			}
		})
	}
}

// TestSeriesNesting checks E6 ⊂ E12 ⊂ E24 and E48 ⊂ E96 ⊂ E192, each coarser
// series being every other value of the finer one (IEC 60063, from memory).
func TestSeriesNesting(t *testing.T) {
	for _, pair := range [][2]string{{"E6", "E12"}, {"E12", "E24"}, {"E48", "E96"}, {"E96", "E192"}} {
		coarse, _ := SeriesByName(pair[0])
		fine, _ := SeriesByName(pair[1])
		for i, v := range coarse.Values {
			if fine.Values[2*i] != v {
				t.Errorf("%s[%d] = %v, %s[%d] = %v", pair[0], i, v, pair[1], 2*i, fine.Values[2*i])
			}
		}
	}
}

func TestNearest(t *testing.T) {
	tests := []struct {
		series string
		in     float64
		want   float64
	}{
		{"E12", 9.6e3, 10e3},     // across the decade: log distance to 10k is 0.018, to 8.2k 0.068
		{"E12", 9.0e3, 8.2e3},    // √(8.2·10) = 9.055k is the log midpoint
		{"E12", 9.1e3, 10e3},     // above the midpoint
		{"E12", 1.04e3, 1.0e3},   // lower edge of the decade
		{"E12", 1.1e3, 1.2e3},    // √(1.0·1.2) = 1.0954: 1.1 is above it
		{"E12", 1.09e3, 1.0e3},   // below it
		{"E12", 0.95e-9, 1.0e-9}, // rounds up into the decade from below
		{"E24", 3.1e3, 3.0e3},    // E24's 3.0 (not 2.9)
		{"E24", 4.6e-9, 4.7e-9},  // exact decimal 4.7e-9
		{"E24", 100, 100},        // an exact member stays
		{"E96", 10.05e3, 10.0e3}, // √(10.0·10.2) = 10.0995
		{"E96", 9.9e3, 10.0e3},   // √(9.76·10) = 9.879: above the midpoint
		{"E96", 9.85e3, 9.76e3},  // below it
		{"E192", 9.19e3, 9.20e3}, // the documented exception
		{"E6", 5.5e-6, 4.7e-6},   // √(4.7·6.8) = 5.653
		{"E6", 5.7e-6, 6.8e-6},
	}
	for _, tc := range tests {
		s, err := SeriesByName(tc.series)
		if err != nil {
			t.Fatal(err)
		}
		if got := Nearest(tc.in, s); got != tc.want {
			t.Errorf("Nearest(%v, %s) = %v, want %v", tc.in, tc.series, got, tc.want)
		}
	}
}

// TestNearestIsNearestOnLogScale compares Nearest with a brute-force search
// over three decades of the series.
func TestNearestIsNearestOnLogScale(t *testing.T) {
	for _, name := range SeriesNames() {
		s, _ := SeriesByName(name)
		for k := 0; k < 500; k++ {
			v := math.Pow(10, 3+float64(k)/500) // 1k .. 10k
			got := Nearest(v, s)
			best, bestD := 0.0, math.Inf(1)
			for dec := 2; dec <= 4; dec++ {
				for _, m := range s.Values {
					x := m * math.Pow(10, float64(dec))
					if d := math.Abs(math.Log(v / x)); d < bestD {
						best, bestD = x, d
					}
				}
			}
			if math.Abs(got-best) > 1e-9*best {
				t.Fatalf("%s: Nearest(%v) = %v, brute force %v", name, v, got, best)
			}
		}
	}
}

func TestNearestDegenerate(t *testing.T) {
	s, _ := SeriesByName("E12")
	for _, v := range []float64{0, -1, math.Inf(1), math.NaN()} {
		got := Nearest(v, s)
		if !(got == v || (math.IsNaN(v) && math.IsNaN(got))) {
			t.Errorf("Nearest(%v) = %v, want it unchanged", v, got)
		}
	}
	if _, err := SeriesByName("E13"); err == nil {
		t.Error("E13 accepted")
	}
	if s, err := SeriesByName("e96"); err != nil || s.Name != "E96" {
		t.Errorf("e96: %v %v", s.Name, err)
	}
}
