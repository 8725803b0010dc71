package notebook

import (
	"context"
	"strings"
	"testing"
	"time"

	"github.com/massline/massline/kernel"
	"github.com/massline/massline/report"
)

func TestHTMLReport(t *testing.T) {
	nb := tinyNotebook()
	nb.Cells[0].Source = "# Tiny *test*\n\nProse with <script>alert(1)</script> & `code`."
	nb.Cells = append(nb.Cells, &Cell{Type: Raw, Source: "raw <text>"})
	if _, err := Execute(context.Background(), nb, nil); err == nil {
		t.Fatal("the tiny notebook should fail at cell 7")
	}
	page := HTML(nb, "fallback name")
	for _, want := range []string{
		"<!DOCTYPE html>",
		"<title>Tiny test</title>", // the first heading is the title
		report.Caution(),
		"Prose with &lt;script&gt;alert(1)&lt;/script&gt; &amp; <code",
		"In [1]:",
		"a is 2 [mm]",      // stream
		"<svg",             // the plot, inline
		"<table",           // the table, as HTML
		"In [4]:",          // the value's cell
		"cannot add",       // the error
		"let bad = a + 3",  // its code
		"In [ ]:",          // the cell that did not run
		"raw &lt;text&gt;", // a raw cell, escaped
	} {
		if !strings.Contains(page, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Contains(page, "<script") {
		t.Error("report carries a script element")
	}
	if strings.Count(page, "<h1>") != 1 {
		t.Errorf("report has %d <h1> elements, want 1 (the title)", strings.Count(page, "<h1>"))
	}
	if strings.Index(page, report.Caution()) > strings.Index(page, "In [1]:") {
		t.Error("the caution should come before the cells")
	}

	// Without a leading heading the name is the title.
	nb.Cells[0].Source = "Just prose."
	if page := HTML(nb, "fallback name"); !strings.Contains(page, "<title>fallback name</title>") {
		t.Error("the name is not used as the title")
	}
	if text := Document(nb, "x").Text(); !strings.Contains(text, "In [1]:") || !strings.Contains(text, "Caution:") {
		t.Errorf("text rendering lacks the cells or the caution:\n%s", text)
	}
	if page := HTML(nil, "empty"); !strings.Contains(page, report.Caution()) {
		t.Error("an empty report lacks the caution")
	}
}

func TestOutputHTML(t *testing.T) {
	for _, tc := range []struct {
		name string
		out  *Output
		want []string
		not  []string
	}{
		{"svg preferred", &Output{Type: DisplayData, Data: kernel.Bundle{"image/svg+xml": `<?xml version="1.0"?><svg a="1"></svg>`, "text/html": "<table>", "text/plain": "p"}},
			[]string{`<svg a="1"></svg>`}, []string{"<?xml", "<table>"}},
		{"svg with script falls back", &Output{Type: DisplayData, Data: kernel.Bundle{"image/svg+xml": `<svg onload="x()"></svg>`, "text/plain": "plain <alt>"}},
			[]string{"plain &lt;alt&gt;"}, []string{"onload"}},
		{"html with script falls back", &Output{Type: DisplayData, Data: kernel.Bundle{"text/html": `<div><SCRIPT>x</SCRIPT></div>`, "text/plain": "alt"}},
			[]string{">alt<"}, []string{"SCRIPT"}},
		{"png embedded", &Output{Type: DisplayData, Data: kernel.Bundle{"image/png": "iVBORw0KGgo=\n"}},
			[]string{`src="data:image/png;base64,iVBORw0KGgo="`}, nil},
		{"png that is not base64", &Output{Type: DisplayData, Data: kernel.Bundle{"image/png": `"><script>`, "text/plain": "t"}},
			[]string{">t<"}, []string{"<script"}},
		{"json only", &Output{Type: ExecuteResult, Data: kernel.Bundle{"application/json": map[string]any{"k": 1}}},
			[]string{"&#34;k&#34;: 1"}, nil},
		{"unknown only", &Output{Type: DisplayData, Data: kernel.Bundle{"application/x-thing": "x"}},
			[]string{"[application/x-thing]"}, nil},
		{"stderr", &Output{Type: Stream, Name: "stderr", Text: "warn <b>"},
			[]string{"warn &lt;b&gt;", "208,138,46"}, nil},
		{"error with colours", &Output{Type: Error, EName: "E", EValue: "v", Traceback: []string{"\x1b[31mred\x1b[0m line"}},
			[]string{"E: v\nred line", `role="alert"`}, []string{"\x1b"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := outputHTML(tc.out)
			for _, w := range tc.want {
				if !strings.Contains(got, w) {
					t.Errorf("%s\nlacks %q", got, w)
				}
			}
			for _, n := range tc.not {
				if strings.Contains(got, n) {
					t.Errorf("%s\ncontains %q", got, n)
				}
			}
		})
	}
}

func TestMarkdown(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"# Head", "<h2>Head</h2>\n"},
		{"### Three ###", "<h4>Three</h4>\n"},
		{"####### seven", "<p>####### seven</p>\n"},
		{"#nospace", "<p>#nospace</p>\n"},
		{"one\ntwo\n\nthree", "<p>one\ntwo</p>\n<p>three</p>\n"},
		{"*em* and **strong** and _under_ and __both__", "<p><em>em</em> and <strong>strong</strong> and <em>under</em> and <strong>both</strong></p>\n"},
		{"snake_case_name and D_gel", "<p>snake_case_name and D_gel</p>\n"},
		{"2 * 3 * 4", "<p>2 * 3 * 4</p>\n"},
		{"`a*b*c` and ``x ` y``", `<p><code style="` + styleCode + `">a*b*c</code> and <code style="` + styleCode + `">x ` + "`" + ` y</code></p>` + "\n"},
		{`\*not em\*`, "<p>*not em*</p>\n"},
		{"<b>x</b> & y", "<p>&lt;b&gt;x&lt;/b&gt; &amp; y</p>\n"},
		{"- a\n- b\n  more\n* c", "<ul>\n<li>a</li>\n<li>b\nmore</li>\n<li>c</li>\n</ul>\n"},
		{"1. a\n2) b\n\nafter", "<ol>\n<li>a</li>\n<li>b</li>\n</ol>\n<p>after</p>\n"},
		{"```\n<x> *y*\n```", `<pre style="` + stylePre + `"><code>&lt;x&gt; *y*</code></pre>` + "\n"},
		{"---", "<hr>\n"},
		{"> quoted *text*", `<blockquote style="margin:0.8em 0;padding:0 1em;border-left:3px solid rgba(127,127,127,0.5)"><p>quoted <em>text</em></p>` + "\n</blockquote>\n"},
		{"[ok](https://example.org/a?b=1&c=2)", `<p><a href="https://example.org/a?b=1&amp;c=2">ok</a></p>` + "\n"},
		{"[rel](notes/x.html)", `<p><a href="notes/x.html">rel</a></p>` + "\n"},
		{"[bad](javascript:alert(1))", "<p>[bad](javascript:alert(1))</p>\n"},
		{"[bad](JavaScript:x)", "<p>[bad](JavaScript:x)</p>\n"},
		{"[q](http://x/\"onmouseover=\")", `<p><a href="http://x/&#34;onmouseover=&#34;">q</a></p>` + "\n"},
		{"nul\x00byte", "<p>nulbyte</p>\n"},
		{"```\nunclosed", `<pre style="` + stylePre + `"><code>unclosed</code></pre>` + "\n"},
	} {
		if got := markdownHTML(tc.in, 1); got != tc.want {
			t.Errorf("markdown %q\n got %q\nwant %q", tc.in, got, tc.want)
		}
	}
}

// TestMarkdownLinearTime renders inputs built to be slow for a careless
// renderer; each must take well under a second.
func TestMarkdownLinearTime(t *testing.T) {
	for name, in := range map[string]string{
		"escapes":     strings.Repeat(`\*`, 200000),
		"code spans":  strings.Repeat("`a` ", 100000),
		"quotes":      strings.Repeat(">", 200000) + " deep",
		"emphasis":    strings.Repeat("*a ", 100000),
		"list items":  strings.Repeat("- item\n", 50000),
		"open fences": strings.Repeat("```\n", 50000),
	} {
		start := time.Now()
		markdownHTML(in, 1)
		d := time.Since(start)
		t.Logf("%s: %v", name, d)
		if d > 2*time.Second {
			t.Errorf("%s: %v", name, d)
		}
	}
}
