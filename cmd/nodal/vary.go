package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"nodal/cmd/nodal/notation"
	"nodal/cmd/nodal/plot"
	"nodal/netlist"
	"nodal/netlist/syntax"
)

// maxVariants caps the grid of --vary values (every combination is a
// full analysis).
const maxVariants = 200

// varyArgs is the --vary flag of the commands that show variants side by
// side.
type varyArgs struct {
	Vary []string `help:"Repeat the analysis for several values of a let parameter or a part value: NAME=V1,V2,... or NAME=LO..HI/N (N log-spaced values); two --vary flags give the grid of both." placeholder:"NAME=VALUES" sep:"none"`
}

// varySpec is one --vary flag: a name and its values (SI).
type varySpec struct {
	name   string
	values []float64
}

// variant is one point of the --vary grid: an override per --vary flag.
type variant struct {
	names  []string
	values []float64
}

// label is "Rf=4.7k" or "Rf=4.7k, C1=10n" ("" for no variation).
func (v variant) label() string {
	var parts []string
	for i, n := range v.names {
		parts = append(parts, n+"="+notation.Compact(v.values[i], ""))
	}
	return strings.Join(parts, ", ")
}

// variantJSON is one --vary value in a JSON document.
type variantJSON struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
}

func (v variant) json() []variantJSON {
	out := make([]variantJSON, len(v.names))
	for i := range v.names {
		out[i] = variantJSON{v.names[i], v.values[i]}
	}
	return out
}

// parseVary reads one --vary value: NAME=V1,V2,... or NAME=LO..HI/N.
func parseVary(s string) (varySpec, error) {
	name, val, ok := strings.Cut(s, "=")
	name = strings.TrimSpace(name)
	if !ok || name == "" || strings.TrimSpace(val) == "" {
		return varySpec{}, fmt.Errorf("--vary %q: want NAME=V1,V2,... or NAME=LO..HI/N", s)
	}
	start := strings.IndexByte(s, '=') + 1
	if lo, rest, isRange := strings.Cut(val, ".."); isRange {
		hi, count, hasN := strings.Cut(rest, "/")
		if !hasN {
			return varySpec{}, fmt.Errorf("--vary %s: a range needs the number of values, as in %s=%s..%s/5", s, name, lo, rest)
		}
		loV, err := syntax.ParseValueAt("--vary", s, start, start+len(lo), "")
		if err != nil {
			return varySpec{}, err
		}
		hiStart := start + len(lo) + 2
		hiV, err := syntax.ParseValueAt("--vary", s, hiStart, hiStart+len(hi), "")
		if err != nil {
			return varySpec{}, err
		}
		n, err := strconv.Atoi(strings.TrimSpace(count))
		if err != nil || n < 2 || n > maxVariants {
			return varySpec{}, fmt.Errorf("--vary %s: the number of values after / must be a whole number from 2 to %d", s, maxVariants)
		}
		if !(loV > 0 && hiV > loV) || math.IsInf(hiV, 0) {
			return varySpec{}, fmt.Errorf("--vary %s: log-spaced values need 0 < LO < HI", s)
		}
		vals := make([]float64, n)
		for i := range vals {
			vals[i] = loV * math.Pow(hiV/loV, float64(i)/float64(n-1))
		}
		vals[n-1] = hiV
		return varySpec{name, vals}, nil
	}
	vals, err := syntax.ParseFlagListAt("--vary", s, start, "")
	if err != nil {
		return varySpec{}, err
	}
	if len(vals) > maxVariants {
		return varySpec{}, fmt.Errorf("--vary %s: %d values; at most %d", name, len(vals), maxVariants)
	}
	return varySpec{name, vals}, nil
}

// variants is the grid of the --vary flags (one empty variant when none).
func (a *varyArgs) variants() ([]variant, error) {
	grid := []variant{{}}
	seen := map[string]bool{}
	for _, s := range a.Vary {
		spec, err := parseVary(s)
		if err != nil {
			return nil, err
		}
		if seen[spec.name] {
			return nil, fmt.Errorf("--vary %s is given twice", spec.name)
		}
		seen[spec.name] = true
		if len(grid)*len(spec.values) > maxVariants {
			return nil, fmt.Errorf("--vary: %d combinations; at most %d", len(grid)*len(spec.values), maxVariants)
		}
		var next []variant
		for _, g := range grid {
			for _, v := range spec.values {
				next = append(next, variant{names: append(append([]string(nil), g.names...), spec.name), values: append(append([]float64(nil), g.values...), v)})
			}
		}
		grid = next
	}
	return grid, nil
}

// loadVariants reads the circuit once and elaborates it for every variant
// (the --set overrides, then the variant's values). Warnings are printed
// once.
func (a *circuitArgs) loadVariants(e *env, vs []variant) ([]*loaded, error) {
	src, name, err := readSource(e, a.File)
	if err != nil {
		return nil, err
	}
	return a.loadVariantsFrom(e, name, src, vs)
}

// loadVariantsFrom is loadVariants on a source already read.
func (a *circuitArgs) loadVariantsFrom(e *env, name string, src []byte, vs []variant) ([]*loaded, error) {
	var out []*loaded
	for i, v := range vs {
		extra := netlist.Overrides{}
		for j, n := range v.names {
			for _, set := range a.Set {
				if k, _, _ := strings.Cut(set, "="); strings.TrimSpace(k) == n {
					return nil, fmt.Errorf("--vary %s: %s is also given by --set", n, n)
				}
			}
			extra[n] = v.values[j]
		}
		quiet := *e
		if i > 0 {
			quiet.stderr = io.Discard
		}
		l, err := elaborateWith(&quiet, name, src, a.Set, extra)
		if err != nil {
			return nil, err
		}
		out = append(out, l)
	}
	return out, nil
}

// runVaried runs a command once per --vary value (the value added to its
// --set overrides) and writes the outputs together to output: text as a
// section per value under a "── NAME=VALUE ──" line, JSON as an array of
// {"variant", "result"} with each run's document, CSV with a first column
// variant. run is the command's own Run; it writes to the standard output
// of the env it is given, with the command's -o and --plot cleared by the
// caller. With plotPath, run hands the data it would plot to e.plotData
// (a T) instead of drawing it, and figure draws every value's data, under
// its label, in one figure written to plotPath.
func runVaried[T any](e *env, a *circuitArgs, v *varyArgs, output, plotPath, format string, run func(e *env) error, figure func(labels []string, data []T) (*plot.Figure, error)) error {
	if err := checkOutputs([]string{a.File}, output, plotPath); err != nil {
		return err
	}
	plotFormat := ""
	if plotPath != "" {
		var err error
		if plotFormat, err = plot.FormatFromPath(plotPath); err != nil {
			return err
		}
	}
	vs, err := v.variants()
	if err != nil {
		return err
	}
	src, name, err := readSource(e, a.File)
	if err != nil {
		return err
	}
	sets := a.Set
	defer func() { a.Set = sets }()
	outs := make([][]byte, len(vs))
	labels := make([]string, len(vs))
	var data []T
	for i, vr := range vs {
		// Check the names once, with --vary's own message for a clash.
		quiet := *e
		quiet.stderr = io.Discard
		if _, err := (&circuitArgs{File: a.File, Set: sets}).loadVariantsFrom(&quiet, name, src, vs[i:i+1]); err != nil {
			return err
		}
		a.Set = append([]string(nil), sets...)
		for j, n := range vr.names {
			a.Set = append(a.Set, n+"="+strconv.FormatFloat(vr.values[j], 'g', -1, 64))
		}
		var buf bytes.Buffer
		sub := *e
		sub.stdout = &buf
		sub.stdin = bytes.NewReader(src) // "-" is read again from here
		if i > 0 {
			sub.stderr = io.Discard
		}
		labels[i] = vr.label()
		sub.plotData = nil
		if plotPath != "" {
			sub.plotData = func(d any) { data = append(data, d.(T)) }
		}
		if err := run(&sub); err != nil {
			return fmt.Errorf("%s: %w", vr.label(), err)
		}
		if plotPath != "" && len(data) != i+1 {
			return fmt.Errorf("%s: no plot data", vr.label())
		}
		outs[i] = buf.Bytes()
	}
	if plotPath != "" {
		fig, err := figure(labels, data)
		if err != nil {
			return err
		}
		if err := writeTo(e, plotPath, []string{a.File, output}, func(w io.Writer) error { return fig.Encode(w, plotFormat) }); err != nil {
			return err
		}
	}
	return writeTo(e, output, []string{a.File, plotPath}, func(w io.Writer) error {
		switch format {
		case "json":
			docs := make([]struct {
				Variant []variantJSON   `json:"variant"`
				Result  json.RawMessage `json:"result"`
			}, len(vs))
			for i := range vs {
				docs[i].Variant, docs[i].Result = vs[i].json(), json.RawMessage(outs[i])
			}
			return writeJSON(w, docs)
		case "csv":
			cw := csv.NewWriter(w)
			for i := range vs {
				recs, err := csv.NewReader(bytes.NewReader(outs[i])).ReadAll()
				if err != nil {
					return err
				}
				for k, rec := range recs {
					if k == 0 && i > 0 {
						continue
					}
					lab := vs[i].label()
					if k == 0 {
						lab = "variant"
					}
					if err := cw.Write(append([]string{lab}, rec...)); err != nil {
						return err
					}
				}
			}
			cw.Flush()
			return cw.Error()
		}
		for i := range vs {
			if i > 0 {
				fmt.Fprintln(w)
			}
			fmt.Fprintf(w, "── %s ──\n", vs[i].label())
			if _, err := w.Write(outs[i]); err != nil {
				return err
			}
		}
		return nil
	})
}

// variantPlot is what one --vary run hands to env.plotData: the figure's
// title as the single-value plot would have it and the data to overlay.
type variantPlot[D any] struct {
	title string
	data  D
}

// overlayTitle is the title of a figure overlaying the values: the
// single-value title of the first and a note.
func overlayTitle[D any](runs []variantPlot[D], note string) string {
	if len(runs) == 0 {
		return note
	}
	return runs[0].title + ", " + note
}

// runVariedCmd is runVaried for a command whose Run serves both the whole
// run and each value's: it clears the command's -o and --vary (pointed to
// by output and vary) for the per-value runs and restores them after.
func runVariedCmd[T any](e *env, a *circuitArgs, output *string, vary *[]string, plotPath, format string, run func(e *env) error, figure func(labels []string, data []T) (*plot.Figure, error)) error {
	out, vs := *output, *vary
	*output, *vary = "", nil
	defer func() { *output, *vary = out, vs }()
	return runVaried(e, a, &varyArgs{Vary: vs}, out, plotPath, format, run, figure)
}
