package report

import (
	"encoding/csv"
	"fmt"
	"html"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Column names one column of a Table and its unit.
type Column struct {
	// Name is the quantity shown in the header.
	Name string
	// Unit is the unit string; "" or "1" means dimensionless and shows
	// no bracket.
	Unit string
}

// Header returns the column header "Name [Unit]" as written (the unit is
// not prettified; CSV uses this form).
func (c Column) Header() string { return label(c.Name, c.Unit) }

// Table is a titled grid of numbers with a unit per column.
//
// Rows may be ragged: a short row shows blank cells and the values of a
// long row beyond the last column are left out, with a note saying so.
type Table struct {
	// Title is printed above the table (the caption in HTML); may be "".
	Title string
	// Columns are the headers, left to right.
	Columns []Column
	// Rows holds the values; Rows[i][j] belongs to Columns[j].
	Rows [][]float64
	// Notes are printed under the table, one per line.
	Notes []string
	// Digits is the number of significant digits; 0 means DefaultDigits.
	Digits int
}

// cells formats the table body column by column; missing cells are "".
// It also returns notes about rows longer than the header.
func (t *Table) cells() ([][]string, []string) {
	nc := len(t.Columns)
	out := make([][]string, len(t.Rows))
	for i := range out {
		out[i] = make([]string, nc)
	}
	col := make([]float64, 0, len(t.Rows))
	idx := make([]int, 0, len(t.Rows))
	for j := range nc {
		col, idx = col[:0], idx[:0]
		for i, r := range t.Rows {
			if j < len(r) {
				col = append(col, r[j])
				idx = append(idx, i)
			}
		}
		for k, s := range formatColumn(col, t.Digits) {
			out[idx[k]][j] = s
		}
	}
	var notes []string
	long := 0
	for _, r := range t.Rows {
		if len(r) > nc {
			long++
		}
	}
	if long > 0 {
		notes = append(notes, fmt.Sprintf("%d %s more values than the %d columns; the extra values are not shown.",
			long, plural(long, "row has", "rows have"), nc))
	}
	return out, notes
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func runeLen(s string) int { return utf8.RuneCountInString(s) }

// Text renders the table as plain text in a fixed-width font: title,
// right-aligned headers "Name [Unit]", a rule, numbers aligned on their
// decimal points with Digits significant digits and one notation per
// column, then the notes.
func (t *Table) Text() string {
	var b strings.Builder
	if t.Title != "" {
		b.WriteString(t.Title)
		b.WriteString("\n\n")
	}
	if len(t.Columns) == 0 {
		b.WriteString("(table has no columns)\n")
		writeNotes(&b, t.Notes, nil)
		return b.String()
	}
	cells, extra := t.cells()
	nc := len(t.Columns)
	heads := make([]string, nc)
	width := make([]int, nc)
	lw := make([]int, nc) // widest part before the decimal point
	rw := make([]int, nc) // widest part from the decimal point on
	for j, c := range t.Columns {
		heads[j] = Label(c.Name, c.Unit)
		word := 0
		for _, row := range cells {
			if isWord(row[j]) {
				word = max(word, runeLen(row[j]))
				continue
			}
			l, r := splitDecimal(row[j])
			lw[j] = max(lw[j], runeLen(l))
			rw[j] = max(rw[j], runeLen(r))
		}
		if word > lw[j]+rw[j] {
			lw[j] = word - rw[j]
		}
		width[j] = max(runeLen(heads[j]), lw[j]+rw[j], 1)
	}
	const gap = "  "
	line := func(parts []string) {
		s := strings.Join(parts, gap)
		b.WriteString(strings.TrimRight(s, " "))
		b.WriteByte('\n')
	}
	parts := make([]string, nc)
	for j := range nc {
		parts[j] = padLeft(heads[j], width[j])
	}
	line(parts)
	for j := range nc {
		parts[j] = strings.Repeat("-", width[j])
	}
	line(parts)
	for _, row := range cells {
		for j := range nc {
			s := ""
			if isWord(row[j]) {
				s = padLeft(row[j], lw[j]+rw[j])
			} else if row[j] != "" {
				l, r := splitDecimal(row[j])
				s = padLeft(l, lw[j]) + r + strings.Repeat(" ", rw[j]-runeLen(r))
			}
			parts[j] = padLeft(s, width[j])
		}
		line(parts)
	}
	if len(t.Rows) == 0 {
		b.WriteString("(no rows)\n")
	}
	writeNotes(&b, t.Notes, extra)
	return b.String()
}

func writeNotes(b *strings.Builder, notes, extra []string) {
	all := append(append([]string(nil), notes...), extra...)
	if len(all) == 0 {
		return
	}
	b.WriteByte('\n')
	for _, n := range all {
		b.WriteString("Note: ")
		b.WriteString(n)
		b.WriteByte('\n')
	}
}

// isWord reports whether a formatted cell is a word (NaN, Inf, -Inf)
// rather than a number with digits to align.
func isWord(s string) bool { return s == "NaN" || s == "Inf" || s == "-Inf" }

func padLeft(s string, w int) string {
	if n := runeLen(s); n < w {
		return strings.Repeat(" ", w-n) + s
	}
	return s
}

// Styles of the HTML table. Colours are inherited from the page and the
// borders are translucent grey, so the table reads in light and dark
// notebook themes alike.
const (
	styleTable   = "border-collapse:collapse;color:inherit;background:transparent;font-variant-numeric:tabular-nums;margin:0.4em 0"
	styleCaption = "caption-side:top;text-align:left;font-weight:bold;padding:0.2em 0.5em"
	styleTH      = "text-align:right;padding:0.25em 0.7em;border-bottom:1px solid rgba(128,128,128,0.6);font-weight:600;white-space:nowrap"
	styleTD      = "text-align:right;padding:0.15em 0.7em;border-bottom:1px solid rgba(128,128,128,0.18);white-space:nowrap"
	styleNote    = "text-align:left;padding:0.3em 0.7em;font-size:0.9em;opacity:0.8;white-space:normal"
)

// Spaces used to align decimal points in HTML cells: U+2007 is as wide as
// a digit in fonts with tabular figures, U+2008 as wide as a full stop.
const (
	figureSpace = "\u2007"
	pointSpace  = "\u2008"
)

// HTML renders the table as one self-contained <table> element with
// inline styles only (no ids, classes, scripts or external CSS), the
// title as its caption, units in the headers and right-aligned numbers
// whose decimal points line up. All text is HTML-escaped.
func (t *Table) HTML() string {
	var b strings.Builder
	b.WriteString(`<table style="` + styleTable + `">`)
	if t.Title != "" {
		b.WriteString(`<caption style="` + styleCaption + `">`)
		b.WriteString(html.EscapeString(t.Title))
		b.WriteString("</caption>")
	}
	nc := len(t.Columns)
	cells, extra := t.cells()
	b.WriteString("<thead><tr>")
	for _, c := range t.Columns {
		b.WriteString(`<th style="` + styleTH + `">`)
		b.WriteString(html.EscapeString(Label(c.Name, c.Unit)))
		b.WriteString("</th>")
	}
	b.WriteString("</tr></thead>\n<tbody>")
	rw := make([]int, nc)
	for j := range nc {
		for _, row := range cells {
			if !isWord(row[j]) {
				_, r := splitDecimal(row[j])
				rw[j] = max(rw[j], runeLen(r))
			}
		}
	}
	for _, row := range cells {
		b.WriteString("<tr>")
		for j, s := range row {
			b.WriteString(`<td style="` + styleTD + `">`)
			if s != "" && !isWord(s) {
				_, r := splitDecimal(s)
				b.WriteString(html.EscapeString(s))
				if pad := rw[j] - runeLen(r); pad > 0 {
					if r == "" {
						b.WriteString(pointSpace)
						pad--
					}
					b.WriteString(strings.Repeat(figureSpace, pad))
				}
			}
			if isWord(s) {
				b.WriteString(html.EscapeString(s))
			}
			b.WriteString("</td>")
		}
		b.WriteString("</tr>\n")
	}
	b.WriteString("</tbody>")
	notes := append(append([]string(nil), t.Notes...), extra...)
	if len(notes) > 0 {
		b.WriteString("<tfoot>")
		for _, n := range notes {
			fmt.Fprintf(&b, `<tr><td colspan="%d" style="%s">%s</td></tr>`, max(nc, 1), styleNote, html.EscapeString(n))
		}
		b.WriteString("</tfoot>")
	}
	b.WriteString("</table>")
	return b.String()
}

// CSV renders the table as RFC 4180 comma-separated values: CRLF line
// ends, a header row "Name [Unit]" (units as written), fields quoted where
// needed, and every number in the shortest form that reads back to the
// same float64. NaN and infinities are written as NaN, Inf and -Inf;
// missing cells of short rows are empty. The title and notes are not part
// of the CSV.
func (t *Table) CSV() string {
	var b strings.Builder
	w := csv.NewWriter(&b)
	w.UseCRLF = true
	nc := len(t.Columns)
	rec := make([]string, nc)
	for j, c := range t.Columns {
		rec[j] = c.Header()
	}
	if nc > 0 {
		_ = w.Write(rec) // writes to a strings.Builder cannot fail
	}
	for _, r := range t.Rows {
		if nc == 0 {
			break
		}
		for j := range rec {
			rec[j] = ""
			if j < len(r) {
				rec[j] = csvNumber(r[j])
			}
		}
		_ = w.Write(rec)
	}
	w.Flush()
	return b.String()
}

func csvNumber(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "Inf"
	case math.IsInf(v, -1):
		return "-Inf"
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}
