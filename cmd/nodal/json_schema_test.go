package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// schemaCases run every command that writes JSON on a circuit of the
// command tests; the key set of each document is pinned in
// testdata/json_keys/NAME.keys (one key path per line, "[]" for the
// elements of an array, their key sets merged). Regenerate with
// NODAL_UPDATE_JSON_KEYS=1 go test ./cmd/nodal -run TestJSONSchemas, and
// review the diff: a changed key breaks every script that reads it.
var schemaCases = []struct {
	name string
	args []string
}{
	{"parts", []string{"parts", rcFile, "--format", "json"}},
	{"parts_params", []string{"parts", "../../testdata/examples/logger_antialias.nodal", "--format", "json"}},
	{"equations", []string{"equations", rcFile, "--format", "json"}},
	{"equations_sparse", []string{"equations", rcFile, "--format", "sparse-json"}},
	{"sweep", []string{"sweep", rcFile, "--out", "out", "--at", "1k,2k", "--format", "json"}},
	{"transfer", []string{"transfer", "../../testdata/examples/logger_antialias.nodal", "--out", "out", "--format", "json"}},
	{"transfer_rc", []string{"transfer", rcFile, "--out", "out", "--format", "json"}},
	{"transfer_reduced", []string{"transfer", "../../testdata/perf/cable_ladder_1000.nodal", "--out", "n1000", "--format", "json"}},
	{"noise", []string{"noise", rcFile, "--out", "out", "--band", "10..10k", "--format", "json"}},
	{"transfer_axis", []string{"transfer", "testdata/lc_tank.nodal", "--out", "out", "--format", "json"}},
	{"transfer_symbolic", []string{"transfer", rcFile, "--out", "out", "--symbolic", "--format", "json"}},
	{"impedance", []string{"impedance", "testdata/lc_tank.nodal", "--node", "out", "--per-decade", "2", "--format", "json"}},
	{"impedance_port", []string{"impedance", rcFile, "--port", "Vs", "--at", "1k", "--format", "json"}},
	{"impedance_symbolic", []string{"impedance", rcFile, "--node", "out", "--symbolic", "--format", "json"}},
	{"check", []string{"check", rcFile, "--out", "out", "--ode", "R1*C1*y' + y = u", "--format", "json"}},
	{"drive", []string{"drive", rcFile, "--out", "out", "--signal", "sin(2*pi*1k*t) + 1", "--format", "json"}},
	{"time_step", []string{"time", "../../testdata/examples/logger_antialias.nodal", "--out", "out", "--points", "5", "--format", "json"}},
	{"time_reduced", []string{"time", "../../testdata/perf/cable_ladder_1000.nodal", "--out", "n1000", "--points", "5", "--format", "json"}},
	{"time_impulse", []string{"time", rcFile, "--input", "impulse", "--out", "out", "--points", "5", "--format", "json"}},
	{"tolerance", []string{"tolerance", rcFile, "--out", "out", "--metric", "f3db", "--metric", "gain@1kHz", "--worst-case", "--sensitivity", "--runs", "20", "--format", "json"}},
	{"verify", []string{"verify", "testdata/bridge_pass.nodal", "--runs", "20", "--format", "json"}},
	{"snap", []string{"snap", "testdata/bridge_snap.nodal", "--series", "E24", "--format", "json"}},
	{"sweep_vary", []string{"sweep", rcFile, "--vary", "R=1k,2k", "--at", "1k", "--format", "json"}},
	{"transfer_vary", []string{"transfer", rcFile, "--vary", "C1=10n,20n", "--format", "json"}},
	{"compare_measured", []string{"compare", "../../testdata/examples/speaker_crossover.nodal", "--measured", "../../testdata/compare/woofer_measured.csv", "--out", "woofer", "--format", "json"}},
	{"time_vary", []string{"time", rcFile, "--vary", "R=1k,2k", "--points", "3", "--format", "json"}},
	{"verify_responses", []string{"verify", "../../testdata/examples/speaker_crossover.nodal", "--runs", "20", "--format", "json"}},
	{"sweep_responses", []string{"sweep", "../../testdata/examples/speaker_crossover.nodal", "--out", "woofer", "--out", "woofer+tweeter", "--at", "1k", "--format", "json"}},
	{"loop", []string{"loop", "../../testdata/examples/photodiode_frontend.nodal", "--at", "U1", "--format", "json"}},
	{"tune", []string{"tune", "testdata/tune_logger_rc.nodal", "--print", "?R=6.8k"}},
}

// keyPaths adds the key paths of v under prefix to set.
func keyPaths(prefix string, v any, set map[string]bool) {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			p := k
			if prefix != "" {
				p = prefix + "." + k
			}
			set[p] = true
			keyPaths(p, e, set)
		}
	case []any:
		for _, e := range x {
			keyPaths(prefix+"[]", e, set)
		}
	}
}

func TestJSONSchemas(t *testing.T) {
	update := os.Getenv("NODAL_UPDATE_JSON_KEYS") != ""
	for _, c := range schemaCases {
		t.Run(c.name, func(t *testing.T) {
			r := runNodal(t, "", c.args...)
			if r.code != 0 && r.code != 1 {
				t.Fatalf("exit %d: %s", r.code, r.stderr)
			}
			var doc any
			if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
				t.Fatalf("not JSON: %v\n%s", err, r.stdout)
			}
			set := map[string]bool{}
			keyPaths("", doc, set)
			keys := make([]string, 0, len(set))
			for k := range set {
				keys = append(keys, k)
			}
			sort.Strings(keys)
			got := strings.Join(keys, "\n") + "\n"
			file := filepath.Join("testdata", "json_keys", c.name+".keys")
			if update {
				if err := os.WriteFile(file, []byte(got), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			if got != string(want) {
				t.Errorf("JSON keys of %s changed:\n got: %s\nwant: %s", c.name, strings.ReplaceAll(got, "\n", " "), strings.ReplaceAll(string(want), "\n", " "))
			}
		})
	}
}
