package diag

import (
	"encoding/json"
	"fmt"
	"html"
	"strings"
	"unicode/utf8"
)

// Sources maps file names to their text, so a renderer can quote the
// offending line.
type Sources map[string]string

// Text renders the diagnostics for a terminal:
//
//	model.mln:4:12: error: "Dff" is not defined (did you mean "Deff"?)
//	   4 | species dye { diffusivity = Dff }
//	     |                             ^^^
//
// followed by any notes.
func Text(l List, src Sources) string {
	var b strings.Builder
	for _, d := range l {
		writeText(&b, d, src)
	}
	return b.String()
}

func writeText(b *strings.Builder, d *Diagnostic, src Sources) {
	fmt.Fprintf(b, "%s: %s: %s", d.Subject, d.Severity, d.Message)
	if d.Suggestion != "" {
		fmt.Fprintf(b, " (did you mean %s?)", quoteIfBare(d.Suggestion))
	}
	b.WriteByte('\n')
	for _, line := range Excerpt(d.Subject, src[d.Subject.File]) {
		b.WriteString(line)
		b.WriteByte('\n')
	}
	for _, n := range d.Notes {
		fmt.Fprintf(b, "      note: %s\n", n)
	}
}

func quoteIfBare(s string) string {
	if strings.ContainsAny(s, "\"' ") {
		return s
	}
	return "\"" + s + "\""
}

// Excerpt returns the source line of r's start with a gutter and a
// caret line underneath marking the range (to the end of that line if
// the range spans lines). It returns nil when the text is unavailable.
func Excerpt(r Range, text string) []string {
	if !r.Start.IsValid() || text == "" || r.Start.Offset > len(text) {
		return nil
	}
	start := strings.LastIndexByte(text[:r.Start.Offset], '\n') + 1
	end := strings.IndexByte(text[r.Start.Offset:], '\n')
	if end < 0 {
		end = len(text)
	} else {
		end += r.Start.Offset
	}
	line := strings.TrimRight(text[start:end], "\r")
	// Control characters (from a binary file, say) are shown as '?', one
	// for one, so the caret stays in its column and the terminal is safe.
	line = strings.Map(func(r rune) rune {
		switch {
		case r == '\t':
			return ' '
		case r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0):
			return '?'
		}
		return r
	}, line)
	col := utf8.RuneCountInString(text[start:r.Start.Offset])
	width := 1
	if r.End.Offset > r.Start.Offset {
		stop := min(r.End.Offset, end)
		width = max(1, utf8.RuneCountInString(text[r.Start.Offset:stop]))
	}
	gutter := fmt.Sprintf("%4d | ", r.Start.Line)
	pad := strings.Repeat(" ", len(gutter)-2) + "| "
	return []string{
		gutter + line,
		pad + strings.Repeat(" ", col) + strings.Repeat("^", width),
	}
}

// HTML renders the diagnostics as a block of HTML for a notebook cell:
// the same content as Text, escaped, in a <pre>.
func HTML(l List, src Sources) string {
	return "<pre class=\"massline-diagnostics\">" + html.EscapeString(Text(l, src)) + "</pre>"
}

// jsonDiag is the JSON shape of a diagnostic: positions flattened so that
// tools need not know our Go types.
type jsonDiag struct {
	File       string   `json:"file"`
	Line       int      `json:"line"`
	Column     int      `json:"column"`
	EndLine    int      `json:"end_line"`
	EndColumn  int      `json:"end_column"`
	Severity   string   `json:"severity"`
	Code       string   `json:"code"`
	Message    string   `json:"message"`
	Suggestion string   `json:"suggestion,omitempty"`
	Notes      []string `json:"notes,omitempty"`
}

// JSON renders the diagnostics as a JSON array of objects with fields
// file, line, column, end_line, end_column, severity, code, message,
// suggestion and notes.
func JSON(l List) ([]byte, error) {
	out := make([]jsonDiag, 0, len(l))
	for _, d := range l {
		out = append(out, jsonDiag{
			File: d.Subject.File, Line: d.Subject.Start.Line, Column: d.Subject.Start.Column,
			EndLine: d.Subject.End.Line, EndColumn: d.Subject.End.Column,
			Severity: d.Severity.String(), Code: d.Code, Message: d.Message,
			Suggestion: d.Suggestion, Notes: d.Notes,
		})
	}
	return json.MarshalIndent(out, "", "  ")
}
