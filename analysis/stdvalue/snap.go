package stdvalue

import (
	"fmt"
	"math"
	"sort"

	"nodal/netlist"
)

// SnapChange is one part rounded to a standard value.
type SnapChange struct {
	Part     string
	Kind     netlist.Kind
	Series   string
	Old, New float64 // SI values (Ω, F, H)
	// RelChange is (New − Old)/Old, a ratio (0.02 for +2 %).
	RelChange float64
}

// SnapSkip is a part that Snap left alone, with the reason.
type SnapSkip struct {
	Part   string
	Reason string
}

// SnapResult is the outcome of Snap.
type SnapResult struct {
	// Changes lists, in part order, every part rounded (New may equal Old
	// when the value already is a standard one; such a part's text is not
	// touched).
	Changes []SnapChange
	Skipped []SnapSkip
	Notes   []string // how the file was rewritten (see netlist.PlanValues)
	// Source is the rewritten file: the input with only the value texts
	// replaced.
	Source []byte
	// Before is the circuit as read; After is Source elaborated again with
	// the same overrides.
	Before, After *netlist.Circuit
}

// Snap rounds the value of every part whose kind has a series (for
// example Resistor → E24, Capacitor → E12) to the series' nearest value
// on a logarithmic scale, leaving parts marked fixed alone. It rewrites
// the source text (netlist.PlanValues, netlist.ReplaceValues), elaborates
// the new text again and checks that each rounded part has its new value
// there. name, src and ov are as for netlist.Load.
func Snap(name string, src []byte, ov netlist.Overrides, series map[netlist.Kind]Series) (*SnapResult, error) {
	f, err := netlist.Parse(name, src)
	if err != nil {
		return nil, err
	}
	before, err := netlist.Elaborate(f, ov)
	if err != nil {
		return nil, err
	}
	res := &SnapResult{Before: before}
	targets := map[string]float64{}
	digits := 2
	for _, p := range before.Parts {
		s, ok := series[p.Kind]
		if !ok {
			continue
		}
		if p.Fixed {
			res.Skipped = append(res.Skipped, SnapSkip{p.Name, "marked fixed"})
			continue
		}
		digits = max(digits, s.Digits())
		nv := Nearest(p.Value, s)
		if math.Abs(nv-p.Value) <= 1e-12*math.Abs(p.Value) {
			nv = p.Value // already a series value up to rounding of its literal (4n7 is 4.700000000000001e-9)
		}
		res.Changes = append(res.Changes, SnapChange{Part: p.Name, Kind: p.Kind, Series: s.Name, Old: p.Value, New: nv, RelChange: (nv - p.Value) / p.Value})
		if nv != p.Value {
			targets[p.Name] = nv
		}
	}
	plan := netlist.PlanValues(f, before, targets, digits, ov)
	res.Notes = plan.Notes
	kept := res.Changes[:0]
	for _, ch := range res.Changes {
		if why, skip := plan.Skipped[ch.Part]; skip {
			res.Skipped = append(res.Skipped, SnapSkip{ch.Part, why})
			continue
		}
		kept = append(kept, ch)
	}
	res.Changes = kept
	order := make(map[string]int, len(before.Parts))
	for i, p := range before.Parts {
		order[p.Name] = i
	}
	sort.SliceStable(res.Skipped, func(i, j int) bool {
		return order[res.Skipped[i].Part] < order[res.Skipped[j].Part]
	})
	res.Source, err = netlist.ReplaceValues(src, plan.Edits)
	if err != nil {
		return nil, fmt.Errorf("snap: %w", err)
	}
	res.After, err = netlist.Load(name, res.Source, ov)
	if err != nil {
		return nil, fmt.Errorf("snap: the rewritten file does not load: %w", err)
	}
	after := make(map[string]float64, len(res.After.Parts))
	for _, p := range res.After.Parts {
		after[p.Name] = p.Value
	}
	for _, ch := range res.Changes {
		got, ok := after[ch.Part]
		if !ok || math.Abs(got-ch.New) > 1e-9*math.Abs(ch.New) {
			if !ok {
				got = math.NaN()
			}
			return nil, fmt.Errorf("snap: %s is %v in the rewritten file, want %v", ch.Part, got, ch.New)
		}
	}
	return res, nil
}
