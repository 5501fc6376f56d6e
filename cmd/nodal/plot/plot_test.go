package plot

import (
	"bytes"
	"encoding/xml"
	"errors"
	"image/png"
	"io"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
)

// logGrid returns n frequencies spaced evenly in log f over [lo, hi] Hz.
func logGrid(lo, hi float64, n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return f
}

// responseOf samples H(j2πf) as dB and degrees.
func responseOf(fHz []float64, h func(s complex128) complex128) (db, deg []float64) {
	for _, f := range fHz {
		v := h(complex(0, 2*math.Pi*f))
		db = append(db, 20*math.Log10(cmplx.Abs(v)))
		deg = append(deg, cmplx.Phase(v)*180/math.Pi)
	}
	return db, deg
}

// First-order RC low-pass H(s) = 1/(1 + s/ωc) and second-order low-pass
// H(s) = ω0²/(s² + sω0/Q + ω0²): the standard forms (Horowitz & Hill,
// The Art of Electronics, 3rd ed., §1.7.1 and §6.2). At fc the first-order
// magnitude is 20·log10(1/√2) = −3.0103 dB; the second-order peak for
// Q = 2 is Q/√(1 − 1/(4Q²)) = 2.0656 (6.300 dB) at f0·√(1 − 1/(2Q²)).
const (
	fcHz = 1000.0
	f0Hz = 3000.0
	q2   = 2.0
)

func rcLowPass(s complex128) complex128 { return 1 / (1 + s/complex(2*math.Pi*fcHz, 0)) }

func secondOrder(s complex128) complex128 {
	w0 := complex(2*math.Pi*f0Hz, 0)
	return w0 * w0 / (s*s + s*w0/complex(q2, 0) + w0*w0)
}

func testTraces() []BodeTrace {
	f := logGrid(10, 100e3, 401)
	db1, deg1 := responseOf(f, rcLowPass)
	db2, deg2 := responseOf(f, secondOrder)
	pkHz := f0Hz * math.Sqrt(1-1/(2*q2*q2))
	pkDB := 20 * math.Log10(q2/math.Sqrt(1-1/(4*q2*q2)))
	return []BodeTrace{
		{Label: "rc", FreqHz: f, MagDB: db1, PhaseDeg: deg1, Minus3dBHz: []float64{fcHz}},
		{Label: "resonant", FreqHz: f, MagDB: db2, PhaseDeg: deg2, PeakHz: &pkHz, PeakDB: &pkDB},
	}
}

// sameXY reports the first difference between plotted points and the
// input columns.
func sameXY(t *testing.T, key string, got [][2]float64, x, y []float64) {
	t.Helper()
	if len(got) != len(x) {
		t.Fatalf("%s: %d points plotted, %d given", key, len(got), len(x))
	}
	for i := range got {
		if got[i][0] != x[i] || got[i][1] != y[i] {
			t.Fatalf("%s point %d = %v, want (%g, %g)", key, i, got[i], x[i], y[i])
		}
	}
}

func TestBodeSeriesMatchInput(t *testing.T) {
	traces := testTraces()
	fig, err := Bode(traces, BodeOptions{Title: "tone stage"})
	if err != nil {
		t.Fatal(err)
	}
	s := fig.Series()
	for _, tr := range traces {
		sameXY(t, "magnitude/"+tr.Label, s["magnitude/"+tr.Label], tr.FreqHz, tr.MagDB)
		sameXY(t, "phase/"+tr.Label, s["phase/"+tr.Label], tr.FreqHz, tr.PhaseDeg)
	}
	// −3 dB mark sits on the curve: 20·log10(1/√2) (first-order formula
	// above); the log-f interpolation on a 100-per-decade grid is far
	// better than 0.01 dB.
	m3 := s["magnitude/rc/-3dB"]
	if len(m3) != 1 || m3[0][0] != fcHz || math.Abs(m3[0][1]-20*math.Log10(1/math.Sqrt2)) > 0.01 {
		t.Errorf("−3 dB mark = %v, want (%g Hz, −3.0103 dB)", m3, fcHz)
	}
	pk := s["magnitude/resonant/peak"]
	if len(pk) != 1 || math.Abs(pk[0][1]-6.300) > 0.001 {
		t.Errorf("peak mark = %v, want 6.300 dB (Q/√(1−1/4Q²) for Q=2)", pk)
	}
	// the curve itself confirms the peak value within the grid resolution
	if lo, hi := yRange(s["magnitude/resonant"]); hi > pk[0][1]+1e-9 || hi < pk[0][1]-0.01 || lo > -50 {
		t.Errorf("resonant curve max %g dB vs peak mark %g dB (min %g)", hi, pk[0][1], lo)
	}

	lay := fig.Layout()
	if len(lay) != 2 || lay[0].Name != PanelMagnitude || lay[1].Name != PanelPhase {
		t.Fatalf("layout = %+v", lay)
	}
	mag, ph := lay[0], lay[1]
	if !mag.LogX || !ph.LogX || mag.XMin != ph.XMin || mag.XMax != ph.XMax || mag.XMin != 10 || mag.XMax != 100e3 {
		t.Errorf("x axes not shared log 10 Hz…100 kHz: %+v / %+v", mag, ph)
	}
	if math.Abs(float64(mag.Width-ph.Width)) > 1e-9 {
		t.Errorf("data widths differ: %v vs %v", mag.Width, ph.Width)
	}
	if mag.YLabel != "magnitude (dB)" || ph.YLabel != "phase (°)" || ph.XLabel != "frequency (Hz)" || mag.Title != "tone stage" {
		t.Errorf("labels: %+v / %+v", mag, ph)
	}
}

func TestLogTicksDecades(t *testing.T) {
	ticks := logTicks{}.Ticks(10, 100e3)
	var labels []string
	for _, tk := range ticks {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	if got, want := strings.Join(labels, " "), "10 100 1k 10k 100k"; got != want {
		t.Errorf("decade labels %q, want %q", got, want)
	}
	if len(ticks) != 4*9+1 {
		t.Errorf("%d ticks, want 9 per decade + 1", len(ticks))
	}
	for _, tk := range (logTicks{hideLabels: true}).Ticks(10, 1000) {
		if tk.Label != "" && tk.Label != " " {
			t.Errorf("hidden label shows %q", tk.Label)
		}
	}
}

func TestPoleZeroEqualScaling(t *testing.T) {
	// Butterworth-like pair plus a far real pole: x span ≫ y span before
	// equalising, so the y range must be widened.
	w := 2 * math.Pi * 1000
	poles := []complex128{complex(-w/math.Sqrt2, w/math.Sqrt2), complex(-w/math.Sqrt2, -w/math.Sqrt2), complex(-40*w, 0)}
	zeros := []complex128{0, 0}
	fig, err := PoleZero(poles, zeros, PoleZeroOptions{Title: "sensor bridge"})
	if err != nil {
		t.Fatal(err)
	}
	for _, size := range [][2]float64{{340, 340}, {600, 300}, {300, 700}} {
		if err := fig.SetSize(vgPoints(size[0]), vgPoints(size[1])); err != nil {
			t.Fatal(err)
		}
		l := fig.Layout()[0]
		sx := (l.XMax - l.XMin) / float64(l.Width)
		sy := (l.YMax - l.YMin) / float64(l.Height)
		if math.Abs(sx-sy) > 1e-6*sx {
			t.Errorf("size %v: %g rad/s per pt on x, %g on y", size, sx, sy)
		}
		for _, r := range append(append([]complex128{}, poles...), zeros...) {
			if real(r) < l.XMin || real(r) > l.XMax || imag(r) < l.YMin || imag(r) > l.YMax {
				t.Errorf("size %v: root %v outside %+v", size, r, l)
			}
		}
		if l.XMin >= 0 || l.XMax <= 0 || l.YMin >= 0 || l.YMax <= 0 {
			t.Errorf("origin not inside %+v", l)
		}
		if !strings.Contains(l.XLabel, "krad/s") || !strings.Contains(l.YLabel, "krad/s") {
			t.Errorf("labels %q / %q should name krad/s for |p| = %g", l.XLabel, l.YLabel, 40*w)
		}
	}
	s := fig.Series()
	for _, set := range []struct {
		key   string
		roots []complex128
	}{{"polezero/poles", poles}, {"polezero/zeros", zeros}} {
		got := s[set.key]
		if len(got) != len(set.roots) {
			t.Fatalf("%s: %d points, want %d", set.key, len(got), len(set.roots))
		}
		for i, r := range set.roots {
			if got[i] != [2]float64{real(r), imag(r)} {
				t.Errorf("%s[%d] = %v, want %v", set.key, i, got[i], r)
			}
		}
	}
}

func TestOmegaScale(t *testing.T) {
	tests := []struct {
		m      float64
		factor float64
		unit   string
	}{{0, 1, "rad/s"}, {999, 1, "rad/s"}, {1e3, 1e3, "krad/s"}, {8928, 1e3, "krad/s"}, {6.3e6, 1e6, "Mrad/s"}, {2e8, 1e6, "Mrad/s"}, {1e11, 1e9, "Grad/s"}, {math.NaN(), 1, "rad/s"}}
	for _, tt := range tests {
		if f, u := OmegaScale(tt.m); f != tt.factor || u != tt.unit {
			t.Errorf("OmegaScale(%g) = %g %q, want %g %q", tt.m, f, u, tt.factor, tt.unit)
		}
	}
}

// firstOrderStep is y = 1 − exp(−t/τ) with its textbook figures of merit
// (Ogata, Modern Control Engineering, 5th ed., §5-3): 10 % at τ·ln(10/9),
// 90 % at τ·ln 10, 2 % settling at τ·ln 50.
func firstOrderStep(tau float64, n int) (t, y []float64, m StepMarks) {
	for i := 0; i < n; i++ {
		ti := 6 * tau * float64(i) / float64(n-1)
		t = append(t, ti)
		y = append(y, 1-math.Exp(-ti/tau))
	}
	r0, r1, ts := tau*math.Log(10.0/9), tau*math.Log(10), tau*math.Log(50)
	return t, y, StepMarks{Final: 1, RiseStartS: &r0, RiseEndS: &r1, SettlingS: &ts, SettlingBand: 0.02}
}

func TestStepMarks(t *testing.T) {
	tau := 1e-3
	ts, ys, m := firstOrderStep(tau, 601)
	fig, err := Step(ts, ys, m, StepOptions{Title: "vibration logger input"})
	if err != nil {
		t.Fatal(err)
	}
	s := fig.Series()
	sameXY(t, "step/response", s["step/response"], ts, ys)
	rise := s["step/rise"]
	if len(rise) != 2 || rise[0] != [2]float64{*m.RiseStartS, 0.1} || math.Abs(rise[1][1]-0.9) > 1e-12 {
		t.Errorf("rise marks %v", rise)
	}
	// the 10 %/90 % times given really are where the curve crosses
	for _, r := range rise {
		if y := interpLinX(ts, ys, r[0]); math.Abs(y-r[1]) > 1e-4 {
			t.Errorf("curve at %g s is %g, mark says %g", r[0], y, r[1])
		}
	}
	if st := s["step/settling"]; len(st) != 1 || math.Abs(st[0][1]-0.98) > 1e-4 {
		t.Errorf("settling mark %v, want y ≈ 0.98", st)
	}
	if f := s["step/final"]; len(f) != 2 || f[0][1] != 1 || f[1][1] != 1 || f[0][0] != 0 || f[1][0] != ts[len(ts)-1] {
		t.Errorf("final line %v", f)
	}
	if lo, hi := s["step/band/lo"], s["step/band/hi"]; lo[0][1] != 0.98 || hi[0][1] != 1.02 {
		t.Errorf("band %v %v", lo, hi)
	}
	if l := fig.Layout()[0]; l.XLabel != "time (ms)" || l.XMin != 0 || l.XMax != 6*tau {
		t.Errorf("time axis %+v", l)
	}
}

func TestHistogramCounts(t *testing.T) {
	var vals []float64
	for i := 0; i < 200; i++ { // a deterministic spread 19…21
		vals = append(vals, 20+math.Sin(float64(i)*1.7))
	}
	fig, err := Histogram("gain@1kHz (dB)", vals, 10, 20)
	if err != nil {
		t.Fatal(err)
	}
	s := fig.Series()
	counts := s["histogram gain@1kHz (dB)/counts"]
	if len(counts) != 10 {
		t.Fatalf("%d bins, want 10", len(counts))
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	width := (hi - lo) / 10
	total := 0.0
	for i, c := range counts {
		bLo := lo + float64(i)*width
		n := 0.0
		for _, v := range vals { // independent count, last bin closed
			if v >= bLo && (v < bLo+width || (i == 9 && v <= hi)) {
				n++
			}
		}
		if math.Abs(c[0]-(bLo+width/2)) > 1e-9 || c[1] != n {
			t.Errorf("bin %d = %v, want centre %g count %g", i, c, bLo+width/2, n)
		}
		total += c[1]
	}
	if total != 200 {
		t.Errorf("counts sum to %g, want 200", total)
	}
	if nom := s["histogram gain@1kHz (dB)/nominal"]; len(nom) != 2 || nom[0][0] != 20 {
		t.Errorf("nominal line %v", nom)
	}
}

func ptr(v float64) *float64 { return &v }

func testBand() BandTrace {
	f := logGrid(10, 100e3, 201)
	nomDB, nomDeg := responseOf(f, rcLowPass)
	b := BandTrace{Label: "out", FreqHz: f, NominalDB: nomDB, NominalDeg: nomDeg, Runs: 500}
	for i := range f {
		b.MinDB = append(b.MinDB, nomDB[i]-0.5)
		b.MaxDB = append(b.MaxDB, nomDB[i]+0.5)
		b.MinDeg = append(b.MinDeg, nomDeg[i]-3)
		b.MaxDeg = append(b.MaxDeg, nomDeg[i]+3)
	}
	return b
}

func TestBandLimits(t *testing.T) {
	b := testBand()
	limits := []Limit{
		{Label: "gain@100Hz within -1..1 dB", FromHz: 100, ToHz: 100, Lo: ptr(-1), Hi: ptr(1)},
		{Label: "f3db within 900..1100 Hz", FromHz: 900, ToHz: 1100},
		{Label: "stop band below -20 dB", FromHz: 20e3, ToHz: 100e3, Hi: ptr(-20)},
		{Label: "phase above -95°", Quantity: Phase, Lo: ptr(-95)},
	}
	fig, err := Band(b, limits, BodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	s := fig.Series()
	sameXY(t, "nominal", s["magnitude/nominal"], b.FreqHz, b.NominalDB)
	sameXY(t, "min", s["magnitude/min"], b.FreqHz, b.MinDB)
	sameXY(t, "max", s["magnitude/max"], b.FreqHz, b.MaxDB)
	sameXY(t, "phase max", s["phase/max"], b.FreqHz, b.MaxDeg)
	check := func(key string, want [][2]float64) {
		t.Helper()
		got := s[key]
		if len(got) != len(want) {
			t.Fatalf("%s = %v, want %v", key, got, want)
		}
		for i := range got {
			for j := 0; j < 2; j++ {
				if math.Abs(got[i][j]-want[i][j]) > 1e-9*math.Max(1, math.Abs(want[i][j])) {
					t.Errorf("%s = %v, want %v", key, got, want)
				}
			}
		}
	}
	spot := math.Pow(10, 1.0/16)
	check("magnitude/limit 1 gain@100Hz within -1..1 dB/lo", [][2]float64{{100 / spot, -1}, {100 * spot, -1}})
	check("magnitude/limit 1 gain@100Hz within -1..1 dB/hi", [][2]float64{{100 / spot, 1}, {100 * spot, 1}})
	check("magnitude/limit 3 stop band below -20 dB/hi", [][2]float64{{20e3, -20}, {100e3, -20}})
	check("phase/limit 4 phase above -95°/lo", [][2]float64{{10, -95}, {100e3, -95}})
	l := fig.Layout()[0]
	check("magnitude/limit 2 f3db within 900..1100 Hz/from", [][2]float64{{900, l.YMin}, {900, l.YMax}})
	check("magnitude/limit 2 f3db within 900..1100 Hz/to", [][2]float64{{1100, l.YMin}, {1100, l.YMax}})
}

func TestBandWithoutPhase(t *testing.T) {
	b := testBand()
	b.NominalDeg, b.MinDeg, b.MaxDeg = nil, nil, nil
	fig, err := Band(b, nil, BodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if l := fig.Layout(); len(l) != 1 || l[0].XLabel != "frequency (Hz)" {
		t.Errorf("layout %+v, want one magnitude panel with the frequency label", l)
	}
	if _, err := Band(b, []Limit{{Quantity: Phase, Lo: ptr(-90)}}, BodeOptions{}); err == nil {
		t.Error("phase limit on a band without phase accepted")
	}
}

// allFigures builds one figure of every kind.
func allFigures(t *testing.T) map[string]*Figure {
	t.Helper()
	ts, ys, m := firstOrderStep(2e-6, 301)
	w := 2 * math.Pi * 50e3
	figs := map[string]*Figure{}
	var err error
	if figs["bode"], err = Bode(testTraces(), BodeOptions{Title: "tone stage"}); err != nil {
		t.Fatal(err)
	}
	if figs["band"], err = Band(testBand(), []Limit{{Label: "f3db", FromHz: 900, ToHz: 1100}}, BodeOptions{}); err != nil {
		t.Fatal(err)
	}
	if figs["pz"], err = PoleZero([]complex128{complex(-w, w), complex(-w, -w), complex(-w, w), complex(-w, -w)}, []complex128{0}, PoleZeroOptions{}); err != nil {
		t.Fatal(err)
	}
	if figs["step"], err = Step(ts, ys, m, StepOptions{YLabel: "v(out) (V)"}); err != nil {
		t.Fatal(err)
	}
	h1, err := Histogram("f3db (Hz)", []float64{990, 1000, 1003, 1010, 1022, 998}, 0, 1000)
	if err != nil {
		t.Fatal(err)
	}
	h2, err := Histogram("q", []float64{0.70, 0.71, 0.69, 0.72}, 3, math.NaN())
	if err != nil {
		t.Fatal(err)
	}
	if figs["hist"], err = Stack(h1, h2); err != nil {
		t.Fatal(err)
	}
	return figs
}

func TestEncodeFiles(t *testing.T) {
	dir := t.TempDir()
	for name, fig := range allFigures(t) {
		for _, ext := range []string{".svg", ".png"} {
			path := filepath.Join(dir, name+ext)
			format, err := FormatFromPath(path)
			if err != nil {
				t.Fatal(err)
			}
			var buf bytes.Buffer
			if err := fig.Encode(&buf, format); err != nil {
				t.Fatalf("%s: %v", path, err)
			}
			if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
			data, err := os.ReadFile(path)
			if err != nil || len(data) == 0 {
				t.Fatalf("%s not produced: %v", path, err)
			}
			switch format {
			case FormatSVG:
				checkSVG(t, path, data)
			case FormatPNG:
				img, err := png.Decode(bytes.NewReader(data))
				if err != nil {
					t.Fatalf("%s: %v", path, err)
				}
				w, h := fig.Size()
				b := img.Bounds()
				// 144 dpi: one pt is 2 px
				if b.Dx() < int(w.Points()*2)-1 || b.Dy() < int(h.Points()*2)-1 {
					t.Errorf("%s: %v px for %v × %v pt", path, b, w, h)
				}
			}
		}
	}
	if os.Getenv("NODAL_KEEP_PLOTS") != "" {
		t.Logf("plots in %s", dir)
	}
}

// checkSVG parses data as XML to the end and checks the root is <svg>
// with a view box, and that text the plot must show is there.
func checkSVG(t *testing.T, path string, data []byte) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(data))
	root := ""
	texts := 0
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("%s: not well-formed XML: %v", path, err)
		}
		if se, ok := tok.(xml.StartElement); ok {
			if root == "" {
				root = se.Name.Local
				hasViewBox := false
				for _, a := range se.Attr {
					hasViewBox = hasViewBox || a.Name.Local == "viewBox"
				}
				if !hasViewBox {
					t.Errorf("%s: <svg> without viewBox", path)
				}
			}
			if se.Name.Local == "text" {
				texts++
			}
		}
	}
	if root != "svg" || texts < 5 {
		t.Errorf("%s: root <%s>, %d text elements", path, root, texts)
	}
}

func TestFormatFromPath(t *testing.T) {
	tests := []struct {
		path, want string
		ok         bool
	}{
		{"bode.svg", FormatSVG, true},
		{"out/Band.SVG", FormatSVG, true},
		{"pz.png", FormatPNG, true},
		{"step.pdf", "", false},
		{"hist", "", false},
	}
	for _, tt := range tests {
		got, err := FormatFromPath(tt.path)
		if tt.ok != (err == nil) || got != tt.want {
			t.Errorf("FormatFromPath(%q) = %q, %v", tt.path, got, err)
		}
		if err != nil && !(strings.Contains(err.Error(), ".svg") && strings.Contains(err.Error(), ".png") && strings.Contains(err.Error(), tt.path)) {
			t.Errorf("error %q should name the file and the supported extensions", err)
		}
	}
	fig, _ := Histogram("x", []float64{1, 2}, 2, 1)
	if err := fig.Encode(io.Discard, "pdf"); err == nil {
		t.Error("Encode accepted pdf")
	}
}

func TestBadInput(t *testing.T) {
	good := testTraces()[0]
	bad := func(mut func(*BodeTrace)) []BodeTrace {
		tr := good
		tr.FreqHz = append([]float64(nil), good.FreqHz...)
		mut(&tr)
		return []BodeTrace{tr}
	}
	tests := []struct {
		name string
		run  func() error
		want string
	}{
		{"no traces", func() error { _, err := Bode(nil, BodeOptions{}); return err }, "at least one"},
		{"decreasing", func() error {
			_, err := Bode(bad(func(tr *BodeTrace) { tr.FreqHz[5] = tr.FreqHz[3] }), BodeOptions{})
			return err
		}, "increase"},
		{"zero freq", func() error { _, err := Bode(bad(func(tr *BodeTrace) { tr.FreqHz[0] = 0 }), BodeOptions{}); return err }, "positive"},
		{"short phase", func() error {
			_, err := Bode(bad(func(tr *BodeTrace) { tr.PhaseDeg = tr.PhaseDeg[:3] }), BodeOptions{})
			return err
		}, "phase"},
		{"-3 dB outside", func() error {
			_, err := Bode(bad(func(tr *BodeTrace) { tr.Minus3dBHz = []float64{1} }), BodeOptions{})
			return err
		}, "outside"},
		{"duplicate labels", func() error { _, err := Bode([]BodeTrace{good, good}, BodeOptions{}); return err }, "two Bode traces"},
		{"inf pole", func() error {
			_, err := PoleZero([]complex128{cmplx.Inf()}, nil, PoleZeroOptions{})
			return err
		}, "finite"},
		{"step decreasing", func() error {
			_, err := Step([]float64{0, 2, 1}, []float64{0, 1, 1}, StepMarks{}, StepOptions{})
			return err
		}, "increase"},
		{"settling outside", func() error {
			_, err := Step([]float64{0, 1}, []float64{0, 1}, StepMarks{Final: 1, SettlingS: ptr(5)}, StepOptions{})
			return err
		}, "outside"},
		{"empty histogram", func() error { _, err := Histogram("x", nil, 5, 0); return err }, "no values"},
		{"nan histogram", func() error { _, err := Histogram("x", []float64{math.NaN()}, 5, 0); return err }, "value 1"},
		{"limit lo>hi", func() error { _, err := Band(testBand(), []Limit{{Lo: ptr(2), Hi: ptr(1)}}, BodeOptions{}); return err }, "above high"},
		{"limit empty", func() error { _, err := Band(testBand(), []Limit{{Label: "x"}}, BodeOptions{}); return err }, "needs a bound"},
		{"stack clash", func() error {
			a, _ := Histogram("x", []float64{1}, 1, 1)
			b, _ := Histogram("x", []float64{1}, 1, 1)
			_, err := Stack(a, b)
			return err
		}, "two panels"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := tt.run()
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %v, want one containing %q", err, tt.want)
			}
		})
	}
}

func TestNonFiniteMagnitudeDropped(t *testing.T) {
	tr := testTraces()[0]
	tr.MagDB = append([]float64(nil), tr.MagDB...)
	tr.MagDB[7] = math.Inf(-1) // a transmission zero exactly on the grid
	fig, err := Bode([]BodeTrace{tr}, BodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got := fig.Series()["magnitude/rc"]; len(got) != len(tr.FreqHz)-1 {
		t.Errorf("%d points, want %d", len(got), len(tr.FreqHz)-1)
	}
}

func vgPoints(v float64) vg.Length { return vg.Points(v) }

func TestStepTicks(t *testing.T) {
	tests := []struct {
		lo, hi float64
		tk     stepTicks
		want   string
	}{
		{-64, 8, magTicks, "-60 -50 -40 -30 -20 -10 0"},
		{-0.45, 0.45, magTicks, "-0.4 -0.2 0 0.2 0.4"},
		{-185, 5, phaseTicks, "-180 -150 -120 -90 -60 -30 0"},
		{-95, 2, phaseTicks, "-90 -75 -60 -45 -30 -15 0"},
	}
	for _, tt := range tests {
		var got []string
		for _, tk := range tt.tk.Ticks(tt.lo, tt.hi) {
			got = append(got, tk.Label)
		}
		if g := strings.Join(got, " "); g != tt.want {
			t.Errorf("ticks(%g, %g) = %q, want %q", tt.lo, tt.hi, g, tt.want)
		}
	}
}

func TestLegendAvoidsHighPassCurve(t *testing.T) {
	f := logGrid(10, 100e3, 101)
	hp := func(s complex128) complex128 { return s / (s + complex(2*math.Pi*fcHz, 0)) }
	for _, tt := range []struct {
		name string
		h    func(complex128) complex128
		top  bool
	}{{"low-pass", rcLowPass, true}, {"high-pass", hp, false}} {
		db, deg := responseOf(f, tt.h)
		fig, err := Bode([]BodeTrace{{Label: tt.name, FreqHz: f, MagDB: db, PhaseDeg: deg}}, BodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if got := fig.panels[0].p.Legend.Top; got != tt.top {
			t.Errorf("%s: legend at top = %v, want %v", tt.name, got, tt.top)
		}
	}
}

func TestMetricHistogramLimitsAndUnits(t *testing.T) {
	vals := []float64{1950, 1990, 2000, 2010, 2040, 2060}
	fig, err := MetricHistogram(HistogramSpec{Label: "−3 dB frequency (Hz)", Values: vals, Nominal: 2000, Unit: "Hz",
		Limits: []float64{1900, 2100, 1e6}})
	if err != nil {
		t.Fatal(err)
	}
	s := fig.Series()
	// The two near limits are drawn; the one far off (1 MHz) is only named.
	for k, want := range map[string]float64{"limit 1": 1900, "limit 2": 2100} {
		l := s["histogram −3 dB frequency (Hz)/"+k]
		if len(l) != 2 || l[0][0] != want || l[1][0] != want {
			t.Errorf("%s: %v, want a line at %g", k, l, want)
		}
	}
	if _, ok := s["histogram −3 dB frequency (Hz)/limit 3"]; ok {
		t.Error("off-scale limit drawn as a line")
	}
	var svg bytes.Buffer
	if err := fig.Encode(&svg, "svg"); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"nominal 2 kHz", "limit 1.9 kHz", "limit 2.1 kHz", "limit 1 MHz →", "−3 dB frequency (Hz)"} {
		if !strings.Contains(svg.String(), want) {
			t.Errorf("SVG lacks %q", want)
		}
	}
}
