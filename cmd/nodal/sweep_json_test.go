package main

import (
	"bytes"
	"math"
	"testing"

	"nodal/analysis/response"
)

// refPoint mirrors sweepPoint's JSON through encoding/json's own
// reflection (pointers for the numbers that may be null), so the
// streaming encoder is compared with the library, not with itself.
type refPoint struct {
	FreqHz      float64  `json:"freq_hz"`
	Mag         *float64 `json:"mag"`
	MagDB       *float64 `json:"mag_db"`
	PhaseDeg    *float64 `json:"phase_deg"`
	GroupDelayS *float64 `json:"group_delay_s"`
	Note        string   `json:"note,omitempty"`
}

type refDoc struct {
	Input   string        `json:"input"`
	Output  string        `json:"output"`
	Variant []variantJSON `json:"variant,omitempty"`
	Points  []refPoint    `json:"points"`
	stabilityJSON
}

// TestSweepJSONStreamMatchesEncoder: writeSweepJSON gives byte for byte
// what encoding/json (through writeJSON) gives the same documents, one
// or a list, with every kind of number: exponent forms on both sides of
// 1e-6 and 1e21, negative zero, a pole (nulls and a note), an underflow
// point, a variant and unstable poles.
func TestSweepJSONStreamMatchesEncoder(t *testing.T) {
	negZero := math.Copysign(0, -1)
	r := &response.Response{
		FreqHz:      []float64{1e-7, 1e-6, 0.5, 1e20, 1e21, 3},
		Mag:         []float64{1, 2.5e-7, math.Inf(1), 0, 123456789.125, 1e300},
		MagDB:       []float64{0, -131.9, math.Inf(1), math.NaN(), 161.8, 6000},
		PhaseDeg:    []float64{negZero, -179.999, math.NaN(), math.NaN(), 359, -720.5},
		GroupDelayS: []float64{1.5e-9, negZero, math.NaN(), math.NaN(), 2e-300, 1e22},
		Input:       "Vin",
		Output:      "out<&>",
		AtPole:      []bool{false, false, true, false, false, false},
		Underflow:   []bool{false, false, false, true, false, false},
	}
	stab := stabilityJSON{Stability: "unstable", UnstablePoles: []complexJSON{{Re: 1e3, Im: -2e-7}}}
	vars := []variantJSON{{Name: "R", Value: 8e3}}
	ref := func(r *response.Response, v []variantJSON) refDoc {
		d := refDoc{Input: r.Input, Output: r.Output, Variant: v, stabilityJSON: stab}
		for i := range r.FreqHz {
			p := sweepPointOf(r, i)
			d.Points = append(d.Points, refPoint{p.FreqHz, finiteOrNil(p.Mag), p.MagDB, finiteOrNil(p.PhaseDeg), p.GroupDelayS, p.Note})
		}
		return d
	}
	for _, tc := range []struct {
		name string
		docs []sweepDoc
		list bool
		want any
	}{
		{"one", []sweepDoc{{r: r, stab: stab}}, false, ref(r, nil)},
		{"list", []sweepDoc{{r: r, stab: stab, variant: vars}, {r: r, stab: stab}}, true, []refDoc{ref(r, vars), ref(r, nil)}},
	} {
		var got, want bytes.Buffer
		if err := writeSweepJSON(&got, tc.docs, tc.list); err != nil {
			t.Fatal(err)
		}
		if err := writeJSON(&want, tc.want); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want.Bytes()) {
			t.Errorf("%s: streamed\n%s\nencoding/json\n%s", tc.name, got.String(), want.String())
		}
	}
}
