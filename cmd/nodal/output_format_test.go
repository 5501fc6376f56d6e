package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestChooseFormat(t *testing.T) {
	table := []string{"table", "json"}
	withCSV := []string{"table", "csv", "json"}
	report := []string{"html", "text"}
	tests := []struct {
		given, path string
		formats     []string
		want, err   string
	}{
		{"", "", table, "table", ""},
		{"", "-", withCSV, "table", ""},
		{"", "out.json", table, "json", ""},
		{"", "OUT.JSON", table, "json", ""},
		{"", "out.csv", withCSV, "csv", ""},
		{"", "out.txt", withCSV, "table", ""},
		{"", "out.dat", withCSV, "table", ""},
		{"table", "out.json", table, "table", ""},
		{"", "out.csv", table, "", "writes table or json, not csv"},
		{"xml", "", table, "", "--format xml: give table or json"},
		{"", "r.txt", report, "text", ""},
		{"", "r.htm", report, "html", ""},
		{"", "r", report, "html", ""},
	}
	for _, tc := range tests {
		got, err := chooseFormat(tc.given, tc.path, tc.formats...)
		switch {
		case tc.err != "" && (err == nil || !strings.Contains(err.Error(), tc.err)):
			t.Errorf("chooseFormat(%q, %q): error %v, want %q", tc.given, tc.path, err, tc.err)
		case tc.err == "" && (err != nil || got != tc.want):
			t.Errorf("chooseFormat(%q, %q) = %q, %v; want %q", tc.given, tc.path, got, err, tc.want)
		}
	}
}

// TestOutputExtensionChoosesFormat: every command that prints takes -o, and
// x.json / x.csv give that format without --format.
func TestOutputExtensionChoosesFormat(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		args  []string
		file  string
		first string
	}{
		{[]string{"sweep", rcFile, "--out", "out"}, "s.csv", "freq_hz,"},
		{[]string{"time", rcFile, "--out", "out"}, "t.csv", "t_s,"},
		{[]string{"sweep", rcFile, "--out", "out"}, "s.json", "{"},
		{[]string{"transfer", rcFile, "--out", "out"}, "tf.json", "{"},
		{[]string{"parts", rcFile}, "p.json", "{"},
		{[]string{"equations", rcFile}, "e.json", "{"},
		{[]string{"impedance", rcFile, "--port", "Vs"}, "z.json", "{"},
		{[]string{"drive", rcFile, "--out", "out", "--signal", "sin(2*pi*1k*t)"}, "d.json", "{"},
		{[]string{"tolerance", rcFile, "--out", "out", "--metric", "f3db", "--runs", "20"}, "m.json", "{"},
		{[]string{"verify", "testdata/bridge_pass.nodal", "--runs", "20"}, "v.json", "{"},
		{[]string{"check", rcFile, "--out", "out", "--ode", "R1*C1*y' + y = u"}, "c.json", "{"},
		{[]string{"verify", "testdata/bridge_pass.nodal", "--runs", "20"}, "v.txt", "testdata"},
	}
	for _, tc := range cases {
		path := filepath.Join(dir, tc.file)
		r := runNodal(t, "", append(tc.args, "-o", path)...)
		if r.code != 0 {
			t.Errorf("%v -o %s: exit %d\n%s", tc.args, tc.file, r.code, r.stderr)
			continue
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Errorf("%v -o %s: %v", tc.args, tc.file, err)
			continue
		}
		if !strings.HasPrefix(strings.TrimSpace(string(b)), tc.first) {
			t.Errorf("%v -o %s: file begins %.40q, want %q", tc.args, tc.file, b, tc.first)
		}
		if r.stdout != "" {
			t.Errorf("%v -o %s: printed %q too", tc.args, tc.file, r.stdout)
		}
	}
}

// TestPartsJSONKeysDocumented: every key `nodal parts --format json`
// prints (pinned in testdata/json_keys/parts*.keys) is named in the
// README's nodal parts section.
func TestPartsJSONKeysDocumented(t *testing.T) {
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	sec := string(readme)
	i := strings.Index(sec, "### nodal parts")
	if i < 0 {
		t.Fatal("README has no nodal parts section")
	}
	sec = sec[i:]
	if j := strings.Index(sec[4:], "\n### "); j > 0 {
		sec = sec[:j+4]
	}
	files, _ := filepath.Glob("testdata/json_keys/parts*.keys")
	if len(files) < 2 {
		t.Fatalf("key files %v", files)
	}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		for _, k := range strings.Fields(string(b)) {
			leaf := k[strings.LastIndex(k, ".")+1:]
			leaf = strings.TrimSuffix(leaf, "[]")
			if !strings.Contains(sec, "`"+leaf+"`") && !strings.Contains(sec, "`"+leaf+"[]") && !strings.Contains(sec, "\""+leaf+"\"") && !strings.Contains(sec, "."+leaf+"`") && !strings.Contains(sec, "."+leaf+"[]") {
				t.Errorf("%s: key %s is not documented in the README's nodal parts section", f, k)
			}
		}
	}
}
