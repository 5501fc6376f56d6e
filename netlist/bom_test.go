package netlist

import "testing"

// A file saved with a UTF-8 byte order mark (U+FEFF, common practice of
// some editors) reads like the same file without it, and value spans still
// index the original bytes.
func TestByteOrderMark(t *testing.T) {
	src := "\xef\xbb\xbfVs: voltage source (in, gnd) 1\nR1: resistor (in, out) 4k7\n"
	c, err := Load("bom.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Parts) != 2 || c.Parts[0].Name != "Vs" || c.Parts[1].Value != 4700 {
		t.Fatalf("parts %+v", c.Parts)
	}
	sp := c.Parts[1].ValueSpan
	if got := src[sp.Start:sp.End]; got != "4k7" {
		t.Errorf("value span %q, want \"4k7\"", got)
	}
}

// A misspelt requirement comparison gets the three forms and the closest
// one as a hint.
func TestRequireComparisonHint(t *testing.T) {
	_, err := Load("rq.nodal", []byte("Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nrequire dc belw 3dB\n"), nil)
	list, ok := err.(ErrorList)
	if !ok || len(list) != 1 || list[0].Pos.Line != 3 || list[0].Pos.Col != 12 ||
		list[0].Hint != `expected within LO..HI, below HI or above LO; did you mean "below"?` {
		t.Fatalf("error %v", err)
	}
}
