package stdvalue

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Series is one IEC 60063 series of preferred numbers: the mantissas of
// one decade, each in [1, 10), strictly increasing. A value of the series
// is a mantissa times a power of ten.
type Series struct {
	Name   string    // "E6", "E12", ..., "E192"
	Values []float64 // mantissas in [1, 10), strictly increasing
}

// Digits returns the significant digits of the series' values: 2 for E6 to
// E24, 3 for E48 to E192.
func (s Series) Digits() int {
	if len(s.Values) >= 48 {
		return 3
	}
	return 2
}

// The tables below are IEC 60063:2015 (Preferred number series for
// resistors and capacitors), written down from memory. E6, E12 and E24
// keep the historical values that differ from the rounded geometric
// series 10^(i/N) (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2 in E24); E192
// has 9.20 where the geometric series rounds to 9.19. The tests check every
// table against the geometric series, listing these exceptions.

var e24 = []float64{
	1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
	3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
}

var e12 = []float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}

var e6 = []float64{1.0, 1.5, 2.2, 3.3, 4.7, 6.8}

var e48 = []float64{
	1.00, 1.05, 1.10, 1.15, 1.21, 1.27, 1.33, 1.40, 1.47, 1.54, 1.62, 1.69,
	1.78, 1.87, 1.96, 2.05, 2.15, 2.26, 2.37, 2.49, 2.61, 2.74, 2.87, 3.01,
	3.16, 3.32, 3.48, 3.65, 3.83, 4.02, 4.22, 4.42, 4.64, 4.87, 5.11, 5.36,
	5.62, 5.90, 6.19, 6.49, 6.81, 7.15, 7.50, 7.87, 8.25, 8.66, 9.09, 9.53,
}

var e96 = []float64{
	1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30,
	1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74,
	1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32,
	2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09,
	3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12,
	4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49,
	5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
	7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76,
}

var e192 = []float64{
	1.00, 1.01, 1.02, 1.04, 1.05, 1.06, 1.07, 1.09, 1.10, 1.11, 1.13, 1.14,
	1.15, 1.17, 1.18, 1.20, 1.21, 1.23, 1.24, 1.26, 1.27, 1.29, 1.30, 1.32,
	1.33, 1.35, 1.37, 1.38, 1.40, 1.42, 1.43, 1.45, 1.47, 1.49, 1.50, 1.52,
	1.54, 1.56, 1.58, 1.60, 1.62, 1.64, 1.65, 1.67, 1.69, 1.72, 1.74, 1.76,
	1.78, 1.80, 1.82, 1.84, 1.87, 1.89, 1.91, 1.93, 1.96, 1.98, 2.00, 2.03,
	2.05, 2.08, 2.10, 2.13, 2.15, 2.18, 2.21, 2.23, 2.26, 2.29, 2.32, 2.34,
	2.37, 2.40, 2.43, 2.46, 2.49, 2.52, 2.55, 2.58, 2.61, 2.64, 2.67, 2.71,
	2.74, 2.77, 2.80, 2.84, 2.87, 2.91, 2.94, 2.98, 3.01, 3.05, 3.09, 3.12,
	3.16, 3.20, 3.24, 3.28, 3.32, 3.36, 3.40, 3.44, 3.48, 3.52, 3.57, 3.61,
	3.65, 3.70, 3.74, 3.79, 3.83, 3.88, 3.92, 3.97, 4.02, 4.07, 4.12, 4.17,
	4.22, 4.27, 4.32, 4.37, 4.42, 4.48, 4.53, 4.59, 4.64, 4.70, 4.75, 4.81,
	4.87, 4.93, 4.99, 5.05, 5.11, 5.17, 5.23, 5.30, 5.36, 5.42, 5.49, 5.56,
	5.62, 5.69, 5.76, 5.83, 5.90, 5.97, 6.04, 6.12, 6.19, 6.26, 6.34, 6.42,
	6.49, 6.57, 6.65, 6.73, 6.81, 6.90, 6.98, 7.06, 7.15, 7.23, 7.32, 7.41,
	7.50, 7.59, 7.68, 7.77, 7.87, 7.96, 8.06, 8.16, 8.25, 8.35, 8.45, 8.56,
	8.66, 8.76, 8.87, 8.98, 9.09, 9.20, 9.31, 9.42, 9.53, 9.65, 9.76, 9.88,
}

// seriesTables lists the series by name; the tables are never modified.
var seriesTables = []Series{
	{"E6", e6}, {"E12", e12}, {"E24", e24}, {"E48", e48}, {"E96", e96}, {"E192", e192},
}

// SeriesNames returns the names of the IEC 60063 series nodal knows, from
// the coarsest (E6) to the finest (E192).
func SeriesNames() []string {
	out := make([]string, len(seriesTables))
	for i, s := range seriesTables {
		out[i] = s.Name
	}
	return out
}

// SeriesByName returns the series named name ("E24"; case-insensitive).
// The returned Values are a copy.
func SeriesByName(name string) (Series, error) {
	for _, s := range seriesTables {
		if strings.EqualFold(s.Name, strings.TrimSpace(name)) {
			return Series{Name: s.Name, Values: append([]float64(nil), s.Values...)}, nil
		}
	}
	return Series{}, fmt.Errorf("unknown series %q (series: %s)", name, strings.Join(SeriesNames(), ", "))
}

// Nearest returns the value of series s nearest to value on a logarithmic
// scale: the candidate x minimising |log(value) − log(x)|, searched across
// the decade boundary (9.6 kΩ in E12 becomes 10 kΩ, not 8.2 kΩ). An exact
// tie goes to the larger value. The result is the correctly rounded float64
// of the decimal value (4.7e-9, not 4.7·1e-9 with an extra rounding).
// A value that is not finite and > 0 is returned unchanged, as is any
// value when s has no values.
func Nearest(value float64, s Series) float64 {
	if !(value > 0) || math.IsInf(value, 0) || len(s.Values) == 0 {
		return value
	}
	dec := int(math.Floor(math.Log10(value)))
	m := value / math.Pow(10, float64(dec))
	// Guard the floor of log10 against rounding at decade edges.
	if m >= 10 {
		m, dec = m/10, dec+1
	} else if m < 1 {
		m, dec = m*10, dec-1
	}
	i := sort.SearchFloat64s(s.Values, m) // first value ≥ m
	lo, hi := 0.0, 0.0
	if i == 0 {
		lo, hi = s.Values[len(s.Values)-1]/10, s.Values[0]
	} else if i == len(s.Values) {
		lo, hi = s.Values[i-1], 10*s.Values[0]
	} else {
		lo, hi = s.Values[i-1], s.Values[i]
	}
	best := hi
	if math.Log(m/lo) < math.Log(hi/m) {
		best = lo
	}
	return decimalValue(best, dec, s.Digits())
}

// decimalValue returns mantissa·10^dec as the float64 nearest the decimal
// number, with the mantissa rounded to digits significant digits.
func decimalValue(mantissa float64, dec, digits int) float64 {
	if mantissa >= 10-1e-9 { // 10·10^dec: the next decade's 1
		mantissa, dec = mantissa/10, dec+1
	}
	if mantissa < 1-1e-9 { // the previous decade's last value
		mantissa, dec = mantissa*10, dec-1
	}
	text := strconv.FormatFloat(mantissa, 'f', digits-1, 64) + "e" + strconv.Itoa(dec)
	v, err := strconv.ParseFloat(text, 64)
	if err != nil {
		return mantissa * math.Pow(10, float64(dec))
	}
	return v
}
