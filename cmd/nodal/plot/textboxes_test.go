package plot

import (
	"math"
	"strconv"
	"testing"

	"gonum.org/v1/plot/vg"
)

// overlapping returns the pairs of text boxes of fig that overlap.
func overlapping(fig *Figure) [][2]TextBox {
	boxes := fig.TextBoxes()
	var out [][2]TextBox
	for i := range boxes {
		for j := i + 1; j < len(boxes); j++ {
			if boxes[i].Overlaps(boxes[j]) {
				out = append(out, [2]TextBox{boxes[i], boxes[j]})
			}
		}
	}
	return out
}

func TestTextBoxesSeeOverlap(t *testing.T) {
	a := TextBox{Text: "a", Max: vgPoint(10, 10)}
	if !a.Overlaps(TextBox{Text: "b", Min: vgPoint(5, 5), Max: vgPoint(20, 20)}) || a.Overlaps(TextBox{Text: "c", Min: vgPoint(10, 0), Max: vgPoint(20, 10)}) {
		t.Error("Overlaps misjudges")
	}
	fig, err := Histogram("x", []float64{1, 2, 3}, 3, 2)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, b := range fig.TextBoxes() {
		found = found || b.Text == "nominal 2"
	}
	if !found {
		t.Errorf("the nominal label is not among the boxes %v", fig.TextBoxes())
	}
}

// TestNoOverlappingLabels: the marks' notes, the tick labels, titles and
// legends of every kind of figure the report draws never overlap.
func TestNoOverlappingLabels(t *testing.T) {
	figs := map[string]func() (*Figure, error){}
	// Second-order low-pass, ω0 = 2π·2 kHz, Q = 0.707 and Q = 3.
	for _, q := range []float64{0.7071, 3} {
		q := q
		w0 := 2 * math.Pi * 2e3
		p := complex(-w0/(2*q), w0*math.Sqrt(1-1/(4*q*q)))
		name := "q=" + trimQ(q)
		figs["bode "+name] = func() (*Figure, error) {
			var f, mag, ph []float64
			for k := 0; k <= 200; k++ {
				fr := 10 * math.Pow(10, float64(k)/50)
				s := complex(0, 2*math.Pi*fr)
				h := complex(w0*w0, 0) / ((s - p) * (s - complexConj(p)))
				f = append(f, fr)
				mag = append(mag, 20*math.Log10(absC(h)))
				ph = append(ph, argDeg(h))
			}
			peak, peakDB := 2e3*math.Sqrt(1-1/(2*q*q)), 20*math.Log10(q/math.Sqrt(1-1/(4*q*q)))
			tr := BodeTrace{Label: "out", FreqHz: f, MagDB: mag, PhaseDeg: ph, Minus3dBHz: []float64{2e3}}
			if q > 1 {
				tr.PeakHz, tr.PeakDB = &peak, &peakDB
			}
			return Bode([]BodeTrace{tr}, BodeOptions{})
		}
		figs["step "+name] = func() (*Figure, error) {
			zeta := 1 / (2 * q)
			wd := w0 * math.Sqrt(1-zeta*zeta)
			var ts, ys []float64
			for k := 0; k <= 400; k++ {
				tt := float64(k) * 6e-6
				ts = append(ts, tt)
				ys = append(ys, 1-math.Exp(-zeta*w0*tt)*(math.Cos(wd*tt)+zeta/math.Sqrt(1-zeta*zeta)*math.Sin(wd*tt)))
			}
			tp := math.Pi / wd
			marks := StepMarks{Final: 1, RiseStartS: ptrF(0.1 / w0), RiseEndS: ptrF(2.2 / w0), SettlingS: ptrF(4 / (zeta * w0)), SettlingBand: 0.02,
				PeakTimeS: &tp, PeakValue: ptrF(1 + math.Exp(-zeta*math.Pi/math.Sqrt(1-zeta*zeta)))}
			return Step(ts, ys, marks, StepOptions{})
		}
	}
	figs["histogram"] = func() (*Figure, error) {
		var v []float64
		for i := 0; i < 300; i++ {
			v = append(v, 2000+100*math.Sin(float64(i)*1.3))
		}
		return MetricHistogram(HistogramSpec{Label: "−3 dB frequency (Hz)", Values: v, Nominal: 2000, Unit: "Hz", Limits: []float64{1900, 2100}})
	}
	figs["pole-zero"] = func() (*Figure, error) {
		return PoleZero([]complex128{complex(-8903, 8928), complex(-8903, -8928), -3.14e6, -6.3e6, -6.3e6}, []complex128{-4545}, PoleZeroOptions{})
	}
	for name, mk := range figs {
		fig, err := mk()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if len(fig.TextBoxes()) < 5 {
			t.Errorf("%s: only %d text boxes found", name, len(fig.TextBoxes()))
		}
		for _, o := range overlapping(fig) {
			t.Errorf("%s: %q at %v–%v overlaps %q at %v–%v", name, o[0].Text, o[0].Min, o[0].Max, o[1].Text, o[1].Min, o[1].Max)
		}
	}
}

func vgPoint(x, y float64) vg.Point { return vg.Point{X: vg.Length(x), Y: vg.Length(y)} }

func ptrF(v float64) *float64 { return &v }

func complexConj(c complex128) complex128 { return complex(real(c), -imag(c)) }

func absC(c complex128) float64 { return math.Hypot(real(c), imag(c)) }

func argDeg(c complex128) float64 { return math.Atan2(imag(c), real(c)) * 180 / math.Pi }

func trimQ(q float64) string { return strconv.FormatFloat(q, 'g', 3, 64) }
