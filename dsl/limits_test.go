package dsl

import (
	"strings"
	"testing"
)

// TestComplexityLimits: text that would nest too deeply for the recursive
// parser and tree walks is refused with a diagnostic (a stack overflow
// cannot be recovered from in Go), and text just inside the limits parses.
func TestComplexityLimits(t *testing.T) {
	cases := map[string]string{
		"nested":  "let x = " + strings.Repeat("(", 100000) + "1" + strings.Repeat(")", 100000),
		"sum":     "let x = " + strings.Repeat("1+", 300000) + "1",
		"power":   "let x = 2" + strings.Repeat("^1", 200000),
		"ifs":     "let x = " + strings.Repeat("if 1 > 0 then ", 100000) + "1" + strings.Repeat(" else 2", 100000),
		"lines":   "let x = 1" + strings.Repeat(" +\n 1", 20000),
		"bom+sum": "\ufefflet x = " + strings.Repeat("1*", 20000) + "1",
	}
	for name, src := range cases {
		_, diags := Parse(name+".mln", src)
		if !diags.HasErrors() || diags[0].Code != "too-complex" {
			t.Errorf("%s: want a too-complex diagnostic, got %v", name, diags)
		}
	}
	ok := "let x = " + strings.Repeat("(", MaxNesting) + "1" + strings.Repeat(")", MaxNesting) + "\nlet y = " + strings.Repeat("1+", 5000) + "1\n"
	if _, diags := Parse("ok.mln", ok); diags.HasErrors() {
		t.Errorf("within the limits: %v", diags)
	}
	// A byte-order mark at the start is read as blanks.
	if _, diags := Parse("bom.mln", "\ufefflet a = 1 [m]\n"); diags.HasErrors() {
		t.Errorf("byte-order mark: %v", diags)
	}
}
