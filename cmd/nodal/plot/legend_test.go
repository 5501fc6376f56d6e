package plot

import (
	"math"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// toArea maps a data point to data-area coordinates of layout l (origin
// at the area's lower-left corner), as the axis scales do.
func toArea(l PanelLayout, q [2]float64) vg.Point {
	fx := (q[0] - l.XMin) / (l.XMax - l.XMin)
	if l.LogX {
		fx = math.Log(q[0]/l.XMin) / math.Log(l.XMax/l.XMin)
	}
	fy := (q[1] - l.YMin) / (l.YMax - l.YMin)
	return vg.Point{X: vg.Length(fx) * l.Width, Y: vg.Length(fy) * l.Height}
}

// legendClear checks, independently of the placement code, that no
// plotted point of any series of a panel falls inside its legend box.
func legendClear(t *testing.T, name string, fig *Figure) {
	t.Helper()
	s := fig.Series()
	for _, l := range fig.Layout() {
		if l.Legend == (vg.Rectangle{}) {
			continue
		}
		if l.LegendHits != 0 {
			t.Errorf("%s: legend of %s covers %d data", name, l.Name, l.LegendHits)
		}
		inside := l.Legend.Min.X >= 0 && l.Legend.Min.Y >= 0 && l.Legend.Max.X <= l.Width && l.Legend.Max.Y <= l.Height
		above := l.Legend.Min.Y >= l.Height && l.Legend.Max.X <= l.Width
		if !(inside && !l.LegendAbove || above && l.LegendAbove) {
			t.Errorf("%s: legend %v (above %v) neither inside nor above the %v × %v data area", name, l.Legend, l.LegendAbove, l.Width, l.Height)
		}
		for key, pts := range s {
			if len(key) <= len(l.Name) || key[:len(l.Name)+1] != l.Name+"/" {
				continue
			}
			for _, q := range pts {
				if p := toArea(l, q); inRect(l.Legend, p) {
					t.Errorf("%s: point %v of %s lies under the legend %v", name, q, key, l.Legend)
					break
				}
			}
		}
	}
}

// Two and three traces whose curves fill the top right (flat high-pass
// pass band), the bottom right (steep low-pass) or both: the legend must
// find a corner without data. The curves are the first- and second-order
// standard forms of testTraces (Horowitz & Hill §1.7.1, §6.2).
func TestLegendAvoidsData(t *testing.T) {
	f := logGrid(10, 100e3, 201)
	hp := func(s complex128) complex128 { return s / (s + complex(2*math.Pi*fcHz, 0)) }
	trace := func(label string, h func(complex128) complex128) BodeTrace {
		db, deg := responseOf(f, h)
		return BodeTrace{Label: label, FreqHz: f, MagDB: db, PhaseDeg: deg}
	}
	cases := map[string][]BodeTrace{
		"two low-pass":     testTraces(),
		"low and high":     {trace("rc", rcLowPass), trace("hp", hp)},
		"three traces":     {trace("rc", rcLowPass), trace("resonant", secondOrder), trace("hp", hp)},
		"single high-pass": {trace("hp", hp)},
	}
	for name, traces := range cases {
		fig, err := Bode(traces, BodeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		legendClear(t, name, fig)
		for _, size := range [][2]float64{{300, 500}, {700, 300}} {
			if err := fig.SetSize(vg.Points(size[0]), vg.Points(size[1])); err != nil {
				t.Fatal(err)
			}
			legendClear(t, name, fig)
		}
	}
	band, err := Band(testBand(), nil, BodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	legendClear(t, "band", band)
}

// Crossing low- and high-pass curves cover all four corners; the legend
// must go above the data area.
func TestLegendAboveWhenCornersTaken(t *testing.T) {
	f := logGrid(10, 100e3, 201)
	hpDB, hpDeg := responseOf(f, func(s complex128) complex128 { return s / (s + complex(2*math.Pi*fcHz, 0)) })
	lpDB, lpDeg := responseOf(f, rcLowPass)
	fig, err := Bode([]BodeTrace{{Label: "rc", FreqHz: f, MagDB: lpDB, PhaseDeg: lpDeg}, {Label: "hp", FreqHz: f, MagDB: hpDB, PhaseDeg: hpDeg}}, BodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 2; i++ { // a second layout must give the same result
		l := fig.Layout()
		if !l[0].LegendAbove || l[0].Legend.Min.Y < l[0].Height || l[0].Title != "" || l[1].LegendAbove {
			t.Fatalf("round %d: %+v", i, l[0])
		}
		if l[0].Height <= 0 || math.Abs(float64(l[0].Width-l[1].Width)) > 1e-9 {
			t.Errorf("data areas %v / %v", l[0], l[1])
		}
	}
	legendClear(t, "crossing", fig)
}

// Inside a shaded band wider than the legend no curve point lies under
// it, but the area is covered all the same.
func TestLegendCountsShadedBand(t *testing.T) {
	f := logGrid(10, 100e3, 201)
	b := BandTrace{Label: "out", FreqHz: f}
	for range f {
		b.NominalDB = append(b.NominalDB, 0)
		b.MinDB = append(b.MinDB, -100)
		b.MaxDB = append(b.MaxDB, 100)
	}
	fig, err := Band(b, nil, BodeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	pn := fig.panels[0]
	dc := draw.Canvas{Rectangle: vg.Rectangle{Max: vg.Point{X: fig.width, Y: fig.height}}}
	da := pn.p.DataCanvas(fig.layout(dc)[0][0])
	// a box at 100 Hz…1 kHz, −70…−30 dB: inside the band, clear of the
	// nominal line at 0 dB and of both edges
	trX, trY := pn.p.Transforms(&da)
	box := vg.Rectangle{Min: vg.Point{X: trX(100), Y: trY(-70)}, Max: vg.Point{X: trX(1000), Y: trY(-30)}}
	if got := pn.dataUnder(da, box); got == 0 {
		t.Error("box inside the shaded band counts as free")
	}
	saved := pn.fills
	pn.fills = nil
	if got := pn.dataUnder(da, box); got != 0 {
		t.Errorf("without the shading the box should be free, has %d hits", got)
	}
	pn.fills = saved
}

func TestSegmentHitsRect(t *testing.T) {
	r := vg.Rectangle{Min: vg.Point{X: 0, Y: 0}, Max: vg.Point{X: 10, Y: 10}}
	pt := func(x, y float64) vg.Point { return vg.Point{X: vg.Length(x), Y: vg.Length(y)} }
	tests := []struct {
		a, b vg.Point
		want bool
	}{
		{pt(-5, 5), pt(15, 5), true},    // crosses through
		{pt(-5, -5), pt(15, 15), true},  // diagonal through
		{pt(-5, 12), pt(15, 12), false}, // passes above
		{pt(2, 2), pt(3, 3), true},      // inside
		{pt(-5, 0), pt(0, -5), false},   // misses the corner
		{pt(-5, 6), pt(6, -5), true},    // clips the corner
		{pt(11, -5), pt(11, 15), false}, // vertical, right of it
		{pt(10, -5), pt(10, 15), true},  // along the edge
		{pt(20, 20), pt(30, 30), false}, // far away
		{pt(5, 15), pt(5, 15), false},   // degenerate, outside
	}
	for _, tt := range tests {
		if got := segmentHitsRect(tt.a, tt.b, r); got != tt.want {
			t.Errorf("segment %v–%v: %v, want %v", tt.a, tt.b, got, tt.want)
		}
	}
}
