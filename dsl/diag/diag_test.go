package diag

import (
	"encoding/json"
	"strings"
	"testing"
)

func TestExcerpt(t *testing.T) {
	src := "let a = 1\n\tlet µ = 2 [m] + x\nlast"
	cases := []struct {
		r    Range
		want []string
	}{
		{Range{Start: Pos{Line: 1, Column: 5, Offset: 4}, End: Pos{Line: 1, Column: 6, Offset: 5}},
			[]string{"   1 | let a = 1", "     |     ^"}},
		// A tab counts as one column and is shown as one space.
		{Range{Start: Pos{Line: 2, Column: 6, Offset: 15}, End: Pos{Line: 2, Column: 7, Offset: 17}},
			[]string{"   2 |  let µ = 2 [m] + x", "     |      ^"}},
		// A range running past the end of its line is cut there.
		{Range{Start: Pos{Line: 2, Column: 20, Offset: 29}, End: Pos{Line: 3, Column: 3, Offset: 33}},
			[]string{"   2 |  let µ = 2 [m] + x", "     |                   ^"}},
		// A point (empty range) gets one caret.
		{Range{Start: Pos{Line: 3, Column: 5, Offset: 34}, End: Pos{Line: 3, Column: 5, Offset: 34}},
			[]string{"   3 | last", "     |     ^"}},
	}
	for _, c := range cases {
		got := Excerpt(c.r, src)
		if strings.Join(got, "\n") != strings.Join(c.want, "\n") {
			t.Errorf("Excerpt(%+v) =\n%s\nwant\n%s", c.r, strings.Join(got, "\n"), strings.Join(c.want, "\n"))
		}
	}
	// Ranges that do not fit the text give no excerpt and no panic.
	for _, r := range []Range{{}, {Start: Pos{Line: 9, Column: 1, Offset: 999}}} {
		if got := Excerpt(r, src); got != nil {
			t.Errorf("Excerpt(%+v) = %q, want nothing", r, got)
		}
	}
}

func TestSortDropsDuplicates(t *testing.T) {
	at := func(off int) Range {
		return Range{File: "m", Start: Pos{Line: 1, Column: off + 1, Offset: off}, End: Pos{Line: 1, Column: off + 2, Offset: off + 1}}
	}
	var l List
	l.Warn("w", at(5), "later warning")
	l.Add("e", at(5), "later error")
	l.Add("e", at(1), "first")
	l.Add("e", at(1), "first")
	l.Sort()
	var got []string
	for _, d := range l {
		got = append(got, d.Message)
	}
	if strings.Join(got, "|") != "first|later error|later warning" {
		t.Errorf("sorted: %q", got)
	}
	if !l.HasErrors() || len(l.Errors()) != 2 || l.Err() == nil {
		t.Errorf("errors: %v", l.Errors())
	}
	if (List{}).Err() != nil {
		t.Error("an empty list is not an error")
	}
}

func TestRenderings(t *testing.T) {
	src := "let x = Dff\n"
	d := &Diagnostic{Severity: Error, Code: "unknown-name", Message: `"Dff" is not defined`, Suggestion: "Deff",
		Subject: Range{File: "m.mln", Start: Pos{Line: 1, Column: 9, Offset: 8}, End: Pos{Line: 1, Column: 12, Offset: 11}},
		Notes:   []string{"names are case-sensitive"}}
	l := List{d}
	want := "m.mln:1:9: error: \"Dff\" is not defined (did you mean \"Deff\"?)\n" +
		"   1 | let x = Dff\n" +
		"     |         ^^^\n" +
		"      note: names are case-sensitive\n"
	if got := Text(l, Sources{"m.mln": src}); got != want {
		t.Errorf("Text:\n%s\nwant\n%s", got, want)
	}
	if got := d.Error(); got != `m.mln:1:9: error: "Dff" is not defined (did you mean Deff?)` {
		t.Errorf("Error() = %q", got)
	}
	if got := HTML(l, Sources{"m.mln": src}); !strings.HasPrefix(got, "<pre") || !strings.Contains(got, "&#34;Dff&#34;") {
		t.Errorf("HTML not escaped: %s", got)
	}
	b, err := JSON(l)
	if err != nil {
		t.Fatal(err)
	}
	var back []map[string]any
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if len(back) != 1 || back[0]["line"] != 1.0 || back[0]["end_column"] != 12.0 || back[0]["severity"] != "error" || back[0]["suggestion"] != "Deff" {
		t.Errorf("JSON: %s", b)
	}
}
