// Package reference reads the hand-derived golden files of
// testdata/reference (written by testdata/reference/gen_reference.py with
// Debian's python3-sympy and python3-scipy) for the tests of the analysis
// packages. Each test decodes the parts of a golden it needs from Raw.
package reference

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// Count is the number of goldens testdata/reference/README.md lists.
const Count = 11

// Case is one golden with the circuit file it was derived from.
type Case struct {
	Name    string // the circuit's file name without .nodal
	Circuit string // the circuit's file name
	Input   string // the input source
	Output  string // the output node
	Raw     []byte // the golden JSON
	Src     []byte // the circuit text
}

// Load reads every golden under dir/golden with its circuit under
// dir/circuits, checking that the circuit's first line
// `# input: SRC   output: NODE` names the golden's input and output, and
// that there are Count goldens.
func Load(dir string) ([]Case, error) {
	files, err := filepath.Glob(filepath.Join(dir, "golden", "*.json"))
	if err != nil {
		return nil, err
	}
	if len(files) != Count {
		return nil, fmt.Errorf("found %d goldens in %s, want the %d the README lists", len(files), dir, Count)
	}
	var cases []Case
	for _, f := range files {
		raw, err := os.ReadFile(f)
		if err != nil {
			return nil, err
		}
		var head struct {
			Circuit string `json:"circuit"`
			Input   string `json:"input"`
			Output  string `json:"output"`
		}
		if err := json.Unmarshal(raw, &head); err != nil {
			return nil, fmt.Errorf("%s: %w", f, err)
		}
		src, err := os.ReadFile(filepath.Join(dir, "circuits", head.Circuit))
		if err != nil {
			return nil, err
		}
		in, out, err := header(src)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", head.Circuit, err)
		}
		if in != head.Input || out != head.Output {
			return nil, fmt.Errorf("%s: header says input %s output %s, golden %s / %s", head.Circuit, in, out, head.Input, head.Output)
		}
		cases = append(cases, Case{Name: strings.TrimSuffix(head.Circuit, ".nodal"), Circuit: head.Circuit,
			Input: head.Input, Output: head.Output, Raw: raw, Src: src})
	}
	return cases, nil
}

// header reads `# input: SRC   output: NODE` from the first line.
func header(src []byte) (in, out string, err error) {
	line, _, _ := bufio.NewReader(bytes.NewReader(src)).ReadLine()
	f := strings.Fields(string(line))
	if len(f) != 5 || f[0] != "#" || f[1] != "input:" || f[3] != "output:" {
		return "", "", fmt.Errorf("first line %q is not `# input: SRC   output: NODE`", line)
	}
	return f[2], f[4], nil
}
