package main

import (
	"math"
	"nodal/analysis/check"
	"nodal/analysis/stability"
	"nodal/analysis/steady"
	"nodal/analysis/timeresp"
	"nodal/analysis/transfer"
)

// The JSON documents of the commands. Every command writes one of the
// structs declared in cmd/nodal (this file and beside each command);
// analysis results carry no JSON tags. Keys are lower snake case with the
// unit in the name (freq_hz, phase_deg); optional numbers are pointers
// (null), never NaN or Inf. The key set of every document is pinned by
// TestJSONSchemas (testdata/json_keys).

// complexJSON is a complex number: s = re + j·im (rad/s for roots).
type complexJSON struct {
	Re float64 `json:"re"`
	Im float64 `json:"im"`
}

// stabilityJSON is the stability part of a JSON document: the class
// ("stable", "marginal", "unstable", "passive": no natural frequency in
// the right half-plane but not proven strictly stable, or "not checked"),
// how it was reached (stability.Reason in words), whether every natural
// frequency was computed, and the offending natural frequencies (rad/s;
// empty when stable; only those found when not all were computed).
type stabilityJSON struct {
	Stability       string        `json:"stability"`
	StabilityReason string        `json:"stability_reason"`
	AllNatural      bool          `json:"all_natural_computed"`
	UnstablePoles   []complexJSON `json:"unstable_poles"`
}

// newStabilityJSON fills stabilityJSON from a result.
func newStabilityJSON(res *stability.Result) stabilityJSON {
	return stabilityJSON{Stability: res.Class.String(), StabilityReason: res.Reason.String(),
		AllNatural: res.AllNatural, UnstablePoles: rootsJSON(res.Offending)}
}

// complexDoc returns z as a complexJSON.
func complexDoc(z complex128) complexJSON { return complexJSON{Re: real(z), Im: imag(z)} }

// complexDocs returns zs as complexJSON, nil for none.
func complexDocs(zs []complex128) []complexJSON {
	var out []complexJSON
	for _, z := range zs {
		out = append(out, complexDoc(z))
	}
	return out
}

// complexPtrDoc returns *z as a complexJSON, nil for nil.
func complexPtrDoc(z *complex128) *complexJSON {
	if z == nil {
		return nil
	}
	d := complexDoc(*z)
	return &d
}

// timeJSON is the document of `nodal time`.
type timeJSON struct {
	Kind          string        `json:"kind"`
	ClosedForm    string        `json:"closed_form"`
	Dirac         float64       `json:"dirac"`
	Modes         []modeJSON    `json:"modes"`
	Metrics       timeMetrics   `json:"metrics"`
	Points        []pointJSON   `json:"points"`
	SpanS         float64       `json:"span_s"`
	Unstable      bool          `json:"unstable"`
	UnstablePoles []complexJSON `json:"unstable_poles,omitempty"`
	AxisPoles     []complexJSON `json:"axis_poles,omitempty"`
	Overflow      bool          `json:"overflow,omitempty"`
	// Stability is the circuit's (every natural frequency, see
	// stabilityJSON); UnstablePoles above are those of H only.
	Stability string `json:"stability"`
	// ReducedModel says, above the reduced-model size, which verified
	// model the samples come from; TimeCheck how they were held to the
	// integration of the full circuit (when they were).
	ReducedModel *reducedJSON   `json:"reduced_model,omitempty"`
	TimeCheck    *timeCheckJSON `json:"time_check,omitempty"`
	// ReducedRefused says why a reduced model's samples were refused
	// when those shown are the full extraction's instead.
	ReducedRefused string `json:"reduced_model_refused,omitempty"`
}

// modeJSON is one term t^power·e^(σt)·(cos·cos ωt + sin·sin ωt).
type modeJSON struct {
	Power     int     `json:"power"`
	SigmaPerS float64 `json:"sigma_per_s"`
	OmegaRad  float64 `json:"omega"`
	Cos       float64 `json:"cos"`
	Sin       float64 `json:"sin"`
}

// timeMetrics are the figures of a time response (see timeresp.Metrics).
type timeMetrics struct {
	Final         *float64 `json:"final"`
	RiseTimeS     *float64 `json:"rise_time_s"`
	Rise10S       *float64 `json:"rise_10pct_s,omitempty"`
	Rise90S       *float64 `json:"rise_90pct_s,omitempty"`
	OvershootPct  *float64 `json:"overshoot_pct"`
	PeakTimeS     *float64 `json:"peak_time_s"`
	Peak          *float64 `json:"peak"`
	SettlingTimeS *float64 `json:"settling_time_s"`
	Note          string   `json:"note,omitempty"`
}

// pointJSON is one sample y(t_s).
type pointJSON struct {
	TS float64 `json:"t_s"`
	Y  float64 `json:"y"`
}

// timeDoc returns the document of r.
func timeDoc(r *timeresp.TimeResponse) timeJSON {
	m := r.Metrics
	d := timeJSON{Kind: r.Kind, ClosedForm: closedFormText(r), Dirac: r.Dirac, SpanS: r.SpanS,
		Unstable: r.Unstable, UnstablePoles: complexDocs(r.UnstablePoles), AxisPoles: complexDocs(r.AxisPoles), Overflow: r.Overflow,
		Metrics: timeMetrics{Final: m.Final, RiseTimeS: m.RiseTimeS, Rise10S: m.Rise10S, Rise90S: m.Rise90S, OvershootPct: m.OvershootPct,
			PeakTimeS: m.PeakTimeS, Peak: m.Peak, SettlingTimeS: m.SettlingTimeS, Note: m.Note}}
	if r.Modes != nil {
		d.Modes = make([]modeJSON, len(r.Modes))
	}
	for i, md := range r.Modes {
		d.Modes[i] = modeJSON{Power: md.Power, SigmaPerS: md.SigmaPerS, OmegaRad: md.OmegaRad, Cos: md.Cos, Sin: md.Sin}
	}
	if r.Points != nil {
		d.Points = make([]pointJSON, len(r.Points))
	}
	for i, p := range r.Points {
		d.Points[i] = pointJSON{TS: p.TS, Y: p.Y}
	}
	return d
}

// steadyJSON is the document of `nodal drive`.
type steadyJSON struct {
	Terms       []steadyTermJSON `json:"terms"`
	DCIn        float64          `json:"dc_in"`
	DCOut       *float64         `json:"dc_out"`
	DCUnbounded bool             `json:"dc_unbounded,omitempty"`
	Output      string           `json:"output_expression"`
	Phasors     []nodePhasor     `json:"phasors,omitempty"`
	stabilityJSON
}

// steadyTermJSON is one sinusoid of the drive and its output.
type steadyTermJSON struct {
	FreqHz       float64  `json:"freq_hz"`
	OmegaRad     float64  `json:"omega"`
	Function     string   `json:"function"`
	InAmplitude  float64  `json:"in_amplitude"`
	InPhaseDeg   float64  `json:"in_phase_deg"`
	Gain         *float64 `json:"gain"`
	ShiftDeg     *float64 `json:"shift_deg"`
	OutAmplitude *float64 `json:"out_amplitude"`
	OutPhaseDeg  *float64 `json:"out_phase_deg"`
	Unbounded    bool     `json:"unbounded,omitempty"`
}

// steadyDoc returns the document of st with the node phasors of --all.
func steadyDoc(st *steady.Steady, phasors []nodePhasor) steadyJSON {
	d := steadyJSON{DCIn: st.DCIn, DCOut: st.DCOut, DCUnbounded: st.DCUnbounded, Output: steadyText(st), Phasors: phasors}
	if st.Terms != nil {
		d.Terms = make([]steadyTermJSON, len(st.Terms))
	}
	for i, t := range st.Terms {
		d.Terms[i] = steadyTermJSON{FreqHz: t.FreqHz, OmegaRad: t.OmegaRad, Function: t.Function, InAmplitude: t.InAmplitude,
			InPhaseDeg: t.InPhaseDeg, Gain: t.Gain, ShiftDeg: t.ShiftDeg, OutAmplitude: t.OutAmplitude, OutPhaseDeg: t.OutPhaseDeg, Unbounded: t.Unbounded}
	}
	return d
}

// checkJSON is the document of `nodal check`: the numeric comparison with
// the symbolic one; agrees is the final verdict, numeric_agrees the
// numeric one alone.
type checkJSON struct {
	CircuitNum      []float64   `json:"circuit_num"`
	CircuitDen      []float64   `json:"circuit_den"`
	YoursNum        []float64   `json:"yours_num"`
	YoursDen        []float64   `json:"yours_den"`
	Coefficients    []coefJSON  `json:"coefficients"`
	Poles           []matchJSON `json:"poles"`
	Zeros           []matchJSON `json:"zeros"`
	FromHz          float64     `json:"from_hz"`
	ToHz            float64     `json:"to_hz"`
	MaxMagDiffDB    float64     `json:"max_mag_diff_db"`
	MaxMagDiffHz    float64     `json:"max_mag_diff_hz"`
	MaxPhaseDiffDeg float64     `json:"max_phase_diff_deg"`
	MaxPhaseDiffHz  float64     `json:"max_phase_diff_hz"`
	// The allowance of the written precision at those two frequencies.
	MagAllowanceDB    float64       `json:"mag_allowance_db"`
	PhaseAllowanceDeg float64       `json:"phase_allowance_deg"`
	BandOnly          bool          `json:"band_only"`
	YoursCancelled    []complexJSON `json:"yours_cancelled"`
	CircuitCancelled  []complexJSON `json:"circuit_cancelled"`
	Diagnosis         []string      `json:"diagnosis"`
	Agrees            bool          `json:"agrees"`
	NumericAgrees     bool          `json:"numeric_agrees"`
	Symbolic          symbolicCheck `json:"symbolic"`
}

// coefJSON compares the coefficient of s^power on one side.
type coefJSON struct {
	Side    string  `json:"side"`
	Power   int     `json:"power"`
	Circuit float64 `json:"circuit"`
	Yours   float64 `json:"yours"`
	Ratio   float64 `json:"ratio"`
	// Precision: the absolute precision yours was written to
	// (normalised like yours; 0 when exact).
	Precision float64 `json:"precision"`
	Status    string  `json:"status"`
}

// matchJSON sets a circuit root beside the nearest of yours (null for
// none). rel_diff is null when a side is missing, and status says which:
// "matched", "missing" (the circuit's root has none of yours) or "extra".
type matchJSON struct {
	Circuit *complexJSON `json:"circuit"`
	Yours   *complexJSON `json:"yours"`
	RelDiff *float64     `json:"rel_diff"`
	Status  string       `json:"status"`
}

// rootDocs returns the root matches ms as matchJSON, nil for none.
func matchDocs(ms []check.RootMatch) []matchJSON {
	var out []matchJSON
	for _, m := range ms {
		d := matchJSON{Circuit: complexPtrDoc(m.Circuit), Yours: complexPtrDoc(m.Yours), Status: "matched"}
		switch {
		case m.Yours == nil:
			d.Status = "missing"
		case m.Circuit == nil:
			d.Status = "extra"
		default:
			d.RelDiff = &m.RelDiff
		}
		out = append(out, d)
	}
	return out
}

// checkDoc returns the document of a comparison res with its symbolic
// part sc; agrees is the final verdict.
func checkDoc(res *check.CheckResult, agrees bool, sc symbolicCheck) checkJSON {
	d := checkJSON{Agrees: agrees, NumericAgrees: res.Agrees, CircuitNum: res.CircuitNum, CircuitDen: res.CircuitDen,
		YoursNum: res.YoursNum, YoursDen: res.YoursDen, Poles: matchDocs(res.Poles), Zeros: matchDocs(res.Zeros),
		FromHz: res.FromHz, ToHz: res.ToHz, MaxMagDiffDB: res.MaxMagDiffDB, MaxMagDiffHz: res.MaxMagDiffHz,
		MaxPhaseDiffDeg: res.MaxPhaseDiffDeg, MaxPhaseDiffHz: res.MaxPhaseDiffHz,
		MagAllowanceDB: res.MagAllowanceDB, PhaseAllowanceDeg: res.PhaseAllowanceDeg, BandOnly: res.Options.BandOnly,
		YoursCancelled: complexDocs(res.YoursCancelled), CircuitCancelled: complexDocs(res.CircuitCancelled),
		Diagnosis: diagnosis(res), Symbolic: sc}
	for _, c := range res.Coefficients {
		d.Coefficients = append(d.Coefficients, coefJSON{Side: c.Side, Power: c.Power, Circuit: c.Circuit, Yours: c.Yours, Ratio: c.Ratio, Precision: c.Precision, Status: string(c.Status)})
	}
	return d
}

// tfJSON is the document of `nodal transfer` (numeric), keys in alphabetical
// order. gain_dc is null for a
// pole at DC and 0 for a zero there; gain_dc_db only for a finite,
// non-zero DC gain; f3db and the peak only when they exist.
type tfJSON struct {
	Cancelled   []complexJSON  `json:"cancelled,omitempty"`
	Den         []float64      `json:"den"`
	F3dBHz      []float64      `json:"f3db_hz,omitempty"`
	F3dBRefDB   *float64       `json:"f3db_ref_db,omitempty"`
	Factored    string         `json:"factored"`
	Gain        *float64       `json:"gain"`
	GainDC      *float64       `json:"gain_dc"`
	GainDCDB    *float64       `json:"gain_dc_db,omitempty"`
	HFAsymptote *asymptoteJSON `json:"hf_asymptote,omitempty"`
	Num         []float64      `json:"num"`
	// NumScaled, DenScaled: the coefficients in ŝ = s/ScaleRadS, given
	// only when those in s do not fit a float64 (Num, Den, Gain null).
	NumScaled []float64  `json:"num_scaled,omitempty"`
	DenScaled []float64  `json:"den_scaled,omitempty"`
	ScaleRadS *float64   `json:"scale_rad_s,omitempty"`
	ODE       string     `json:"ode,omitempty"`
	Pairs     []pairJSON `json:"pairs"`
	PeakDB    *float64   `json:"peak_db,omitempty"`
	PeakHz    *float64   `json:"peak_hz,omitempty"`
	// PeakingDB is the peak above the passband gain of a low- or
	// high-pass, dB; null with peaking_reason for any other response.
	PeakingDB     *float64 `json:"peaking_db"`
	PeakingReason string   `json:"peaking_reason,omitempty"`
	// F0Hz and Q are of the dominant pole pair (DominantPair); null with
	// pair_reason when there is none ("first-order: no pole pair").
	F0Hz       *float64   `json:"f0_hz"`
	Q          *float64   `json:"q"`
	PairReason string     `json:"pair_reason,omitempty"`
	Poles      []rootJSON `json:"poles"`
	Unit       string     `json:"unit"`
	What       string     `json:"what"`
	ZeroPairs  []pairJSON `json:"zero_pairs"`
	Zeros      []rootJSON `json:"zeros"`
	// Reduced is true when the roots are the dominant ones of a reduced
	// model (ReducedModel says which and how it was verified; the ode and
	// hf_asymptote keys are then left out), false for the full extraction.
	Reduced      bool         `json:"reduced"`
	ReducedModel *reducedJSON `json:"reduced_model,omitempty"`
	stabilityJSON
}

// asymptoteJSON is gain·s^power, the slope in dB per decade.
type asymptoteJSON struct {
	Gain             *float64 `json:"gain"`
	Power            int      `json:"power"`
	SlopeDBPerDecade *float64 `json:"slope_db_per_decade"`
}

// pairJSON is a complex pair. q is null for a pair on the jω axis (Q is
// infinite, which JSON cannot carry) and q_reason says so.
type pairJSON struct {
	F0Hz     float64  `json:"f0_hz"`
	OmegaRad float64  `json:"omega0_rad_s"`
	Q        *float64 `json:"q"`
	QReason  string   `json:"q_reason,omitempty"`
	Zeta     float64  `json:"zeta"`
}

// qOnAxis is the reason a pair on the jω axis has no number for Q.
const qOnAxis = "pair on the jω axis"

// rootJSON is a distinct pole or zero, s = re + j·im in rad/s, and the
// number of times it is a root (an m-fold root is listed once; a
// conjugate pair is two entries).
type rootJSON struct {
	Re           float64 `json:"re"`
	Im           float64 `json:"im"`
	Multiplicity int     `json:"multiplicity"`
}

// distinctRootsJSON returns each distinct root of rs once with its
// multiplicity, [] for none.
func distinctRootsJSON(rs []complex128) []rootJSON {
	d := transfer.DistinctRoots(rs)
	out := make([]rootJSON, len(d))
	for i, r := range d {
		out[i] = rootJSON{Re: real(r.Root), Im: imag(r.Root), Multiplicity: r.Multiplicity}
	}
	return out
}

// rootsJSON returns rs as complexJSON, [] for none.
func rootsJSON(rs []complex128) []complexJSON {
	out := make([]complexJSON, len(rs))
	for i, r := range rs {
		out[i] = complexDoc(r)
	}
	return out
}

func pairsJSON(ps []transfer.RootPair) []pairJSON {
	out := make([]pairJSON, len(ps))
	for i, p := range ps {
		out[i] = pairJSON{F0Hz: p.F0Hz, OmegaRad: p.OmegaRad, Q: finiteOrNil(p.Q), Zeta: p.Zeta}
		if math.IsInf(p.Q, 1) {
			out[i].QReason = qOnAxis
		}
	}
	return out
}

// tfDoc returns the document of `nodal transfer` for rep.
func tfDoc(rep *tfReport) tfJSON {
	h := rep.r.tf
	doc := tfJSON{What: rep.r.what, Unit: rep.r.unit,
		Poles: distinctRootsJSON(h.Poles), Zeros: distinctRootsJSON(h.Zeros), Pairs: pairsJSON(rep.pairs), ZeroPairs: pairsJSON(rep.zeroPairs),
		Factored: factoredText(h), ODE: odeText(rep.ode, rep.r.yName, rep.r.uName),
		HFAsymptote: &asymptoteJSON{Gain: finiteOrNil(rep.hf.Gain), Power: rep.hf.Power, SlopeDBPerDecade: finiteOrNil(rep.hf.SlopeDBPerDecade)}}
	if h.Fits() {
		doc.Num, doc.Den, doc.Gain = h.Num, h.Den, finiteOrNil(h.Gain)
	} else {
		num, den, w := h.ScaledPoly()
		doc.NumScaled, doc.DenScaled, doc.ScaleRadS = num, den, &w
	}
	switch {
	case rep.dc.Power == 0:
		doc.GainDC, doc.GainDCDB = finiteOrNil(rep.dc.Gain), finiteOrNil(rep.dc.GainDB)
	case rep.dc.Power > 0:
		zero := 0.0
		doc.GainDC = &zero
	}
	if len(h.Cancelled) > 0 {
		doc.Cancelled = rootsJSON(h.Cancelled)
	}
	if rep.bw != nil {
		doc.F3dBHz, doc.F3dBRefDB = rep.bw.CrossingsHz, finiteOrNil(rep.bw.RefDB)
	}
	if rep.peak != nil {
		doc.PeakDB, doc.PeakHz = finiteOrNil(rep.peak.GainDB), finiteOrNil(rep.peak.FreqHz)
	}
	if rep.peakingErr == nil {
		doc.PeakingDB = finiteOrNil(rep.peaking)
	} else {
		doc.PeakingReason = rep.peakingErr.Error()
	}
	if rep.pairErr == nil {
		doc.F0Hz, doc.Q = finiteOrNil(rep.pair.F0Hz), finiteOrNil(rep.pair.Q)
		if math.IsInf(rep.pair.Q, 1) {
			doc.PairReason = qOnAxis
		}
	} else {
		doc.PairReason = rep.pairErr.Error()
	}
	return doc
}

// polysJSON holds the coefficient strings of N and D of a symbolic
// result: index k is the coefficient of s^k; each string uses only
// numbers, names, "*", "+" and "-" (and "/" inside an exact fraction).
type polysJSON struct {
	Num []string `json:"num"`
	Den []string `json:"den"`
}
