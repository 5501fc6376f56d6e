package main

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	"nodal/netlist/syntax"
)

// maxMeasuredBytes is the largest measured-data file nodal reads (16 MiB).
const maxMeasuredBytes = 16 << 20

// measured is a measured frequency response read from CSV: strictly
// increasing frequencies > 0 (Hz), the magnitude in dB and, when the file
// has the column, the phase in degrees (nil otherwise).
type measured struct {
	FreqHz   []float64
	MagDB    []float64
	PhaseDeg []float64
}

// readMeasured reads CSV with a header row naming the columns freq_hz,
// mag_db and optionally phase_deg (found by name, case-insensitive; other
// columns are ignored). Every error is a diagnostic named name at the
// line and column of the cell: a header without the columns (naming the
// columns found), a cell that is not a number, NaN or infinite, a
// frequency that is not positive or not increasing, a short row, fewer
// than two points.
func readMeasured(name string, src []byte) (*measured, error) {
	if len(src) > maxMeasuredBytes {
		return nil, fmt.Errorf("%s: file is larger than 16 MiB", name)
	}
	text := syntax.NewText(name, src)
	starts := []int{0}
	for i, c := range src {
		if c == '\n' {
			starts = append(starts, i+1)
		}
	}
	offset := func(line, col int) int {
		if line < 1 || line > len(starts) {
			return len(src)
		}
		return min(len(src), starts[line-1]+max(0, col-1))
	}
	fail := func(line, col int, format string, args ...any) error {
		return syntax.ErrorList{text.Errorf(offset(line, col), format, args...)}
	}
	r := csv.NewReader(bytes.NewReader(src))
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	r.ReuseRecord = false
	header, err := r.Read()
	if errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("%s: empty file; want a header row freq_hz,mag_db[,phase_deg] and the data", name)
	}
	if err != nil {
		return nil, csvError(fail, err)
	}
	col := map[string]int{}
	for i, h := range header {
		key := strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\uFEFF")))
		if _, dup := col[key]; !dup {
			col[key] = i
		}
	}
	fi, okF := col["freq_hz"]
	mi, okM := col["mag_db"]
	pi, okP := col["phase_deg"]
	if !okF || !okM {
		var missing []string
		if !okF {
			missing = append(missing, "freq_hz")
		}
		if !okM {
			missing = append(missing, "mag_db")
		}
		return nil, fail(1, 1, "the header lacks %s (columns found: %s); want freq_hz, mag_db and optionally phase_deg", strings.Join(missing, " and "), quoteCells(header))
	}
	m := &measured{}
	if okP {
		m.PhaseDeg = []float64{}
	}
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, csvError(fail, err)
		}
		line, _ := r.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		cell := func(i int, what, unit string) (float64, error) {
			if i >= len(rec) {
				_, c := r.FieldPos(len(rec) - 1)
				return 0, fail(line, c, "the row has %d cells and no %s", len(rec), what)
			}
			_, c := r.FieldPos(i)
			s := strings.TrimSpace(rec[i])
			if l := strings.ToLower(s); l == "nan" || strings.TrimLeft(l, "+-") == "inf" {
				return 0, fail(line, c, "%s is %s; every cell must be a finite number", what, s)
			}
			v, err := syntax.ParseValue(s, unit)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, fail(line, c, "%s %q is not a number", what, s)
			}
			return v, nil
		}
		f, err := cell(fi, "freq_hz", syntax.UnitHertz)
		if err != nil {
			return nil, err
		}
		_, fc := r.FieldPos(fi)
		if f <= 0 {
			return nil, fail(line, fc, "frequency %s Hz is not positive", strings.TrimSpace(rec[fi]))
		}
		if n := len(m.FreqHz); n > 0 && f <= m.FreqHz[n-1] {
			return nil, fail(line, fc, "frequency %s Hz does not increase (the row before has %g Hz)", strings.TrimSpace(rec[fi]), m.FreqHz[n-1])
		}
		db, err := cell(mi, "mag_db", syntax.UnitDecibel)
		if err != nil {
			return nil, err
		}
		m.FreqHz, m.MagDB = append(m.FreqHz, f), append(m.MagDB, db)
		if okP {
			ph, err := cell(pi, "phase_deg", syntax.UnitDegree)
			if err != nil {
				return nil, err
			}
			m.PhaseDeg = append(m.PhaseDeg, ph)
		}
		if len(m.FreqHz) > maxPoints {
			return nil, fail(line, 1, "more than %d points", maxPoints)
		}
	}
	if len(m.FreqHz) < 2 {
		return nil, fmt.Errorf("%s: %d data row(s); a comparison needs at least 2", name, len(m.FreqHz))
	}
	return m, nil
}

// csvError positions an encoding/csv error (a stray quote, say).
func csvError(fail func(line, col int, format string, args ...any) error, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return fail(pe.Line, pe.Column, "%v", pe.Err)
	}
	return err
}

// quoteCells is `"a", "b"` (or "none").
func quoteCells(cells []string) string {
	if len(cells) == 0 || len(cells) == 1 && strings.TrimSpace(cells[0]) == "" {
		return "none"
	}
	q := make([]string, len(cells))
	for i, c := range cells {
		q[i] = fmt.Sprintf("%q", strings.TrimSpace(c))
	}
	return strings.Join(q, ", ")
}
