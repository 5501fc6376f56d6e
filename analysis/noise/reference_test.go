package noise

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"testing"

	"nodal/netlist"
)

// referenceDir holds the independent noise reference: a photodiode
// transimpedance amplifier of our own whose node equations are written by
// hand in gen_noise_reference.py and solved with sympy, integrated with
// scipy's quad (see that script; Go never runs it).
const referenceDir = "../../testdata/reference/noise/"

type referenceGolden struct {
	Circuit string             `json:"circuit"`
	Input   string             `json:"input"`
	Output  string             `json:"output"`
	TempK   float64            `json:"temperature_k"`
	Values  map[string]float64 `json:"values"`
	Points  []struct {
		FreqHz  float64            `json:"freq_hz"`
		Out     float64            `json:"out_v_per_rthz"`
		In      float64            `json:"in_a_per_rthz"`
		Sources map[string]float64 `json:"sources_v_per_rthz"`
	} `json:"points"`
	Band struct {
		FromHz  float64 `json:"from_hz"`
		ToHz    float64 `json:"to_hz"`
		OutRMS  float64 `json:"out_rms_v"`
		InRMS   float64 `json:"in_rms_a"`
		ENBW    float64 `json:"enbw_hz"`
		Contrib []struct {
			Source   string  `json:"source"`
			RMS      float64 `json:"rms_v"`
			Fraction float64 `json:"fraction"`
		} `json:"contributions"`
	} `json:"band"`
}

func TestPhotodiodeTIAReference(t *testing.T) {
	raw, err := os.ReadFile(referenceDir + "photodiode_tia_noise.json")
	if err != nil {
		t.Fatal(err)
	}
	var g referenceGolden
	if err := json.Unmarshal(raw, &g); err != nil {
		t.Fatal(err)
	}
	src, err := os.ReadFile(referenceDir + g.Circuit)
	if err != nil {
		t.Fatal(err)
	}
	c, err := netlist.Load(g.Circuit, src, nil)
	if err != nil {
		t.Fatal(err)
	}
	// The script typed the values in; they must be the file's.
	u1, _ := c.Part("U1")
	for name, want := range g.Values {
		var got float64
		switch name {
		case "a0":
			got = u1.A0
		case "gbw":
			got = u1.GBWHz
		case "rout":
			got = u1.Rout
		case "en":
			got = u1.EnVPerRtHz
		case "in_":
			got = u1.InAPerRtHz
		case "fen":
			got = u1.FenHz
		case "fin":
			got = u1.FinHz
		default:
			p, ok := c.Part(name)
			if !ok {
				t.Fatalf("golden value %s: no such part", name)
			}
			got = p.Value
		}
		if relErr(got, want) > 1e-12 {
			t.Errorf("%s = %g in the circuit, %g in the script", name, got, want)
		}
	}
	a := analyzer(t, c, Config{Out: node(g.Output), Input: g.Input, HasInput: true, TempK: g.TempK})
	freqs := make([]float64, len(g.Points))
	for i, p := range g.Points {
		freqs[i] = p.FreqHz
	}
	sp, err := a.Spectrum(context.Background(), freqs)
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range g.Points {
		if relErr(sp.OutDensity[i], p.Out) > 1e-9 || relErr(sp.InDensity[i], p.In) > 1e-9 {
			t.Errorf("%g Hz: out %.10g V/√Hz, in %.10g A/√Hz; reference %.10g, %.10g", p.FreqHz, sp.OutDensity[i], sp.InDensity[i], p.Out, p.In)
		}
		for j, s := range a.Sources {
			want, ok := p.Sources[s.Name]
			if !ok {
				t.Fatalf("source %s not in the reference", s.Name)
			}
			if got := math.Sqrt(sp.ContribPSD[i][j]); relErr(got, want) > 1e-8 {
				t.Errorf("%g Hz: %s %.10g V/√Hz; reference %.10g", p.FreqHz, s.Name, got, want)
			}
		}
		if len(p.Sources) != len(a.Sources) {
			t.Errorf("%d sources; the reference has %d (Rq is noiseless)", len(a.Sources), len(p.Sources))
		}
	}
	b, err := a.Integrate(context.Background(), g.Band.FromHz, g.Band.ToHz)
	if err != nil {
		t.Fatal(err)
	}
	// The promise is 0.1 % of the total; hold the integrals to 1e-4.
	for _, q := range []struct {
		what      string
		got, want float64
	}{{"out_rms_v", b.OutRMS, g.Band.OutRMS}, {"in_rms_a", b.InRMS, g.Band.InRMS}, {"enbw_hz", b.ENBWHz, g.Band.ENBW}} {
		if e := relErr(q.got, q.want); e > 1e-4 {
			t.Errorf("%s %.8g; reference %.8g (rel. error %.2g)", q.what, q.got, q.want, e)
		}
	}
	if len(b.Contributions) != len(g.Band.Contrib) {
		t.Fatalf("%d contributions; reference %d", len(b.Contributions), len(g.Band.Contrib))
	}
	for i, want := range g.Band.Contrib {
		got := b.Contributions[i]
		if got.Source != want.Source || math.Abs(got.Fraction-want.Fraction) > 1e-4 || relErr(got.RMSOut, want.RMS) > 1e-3 {
			t.Errorf("contribution %d: %+v; reference %+v", i, got, want)
		}
	}
}
