package report

import (
	"encoding/csv"
	"math"
	"strconv"
	"strings"
	"testing"
)

// uptakeTable is a scenario of our own: dye uptake by beads over 4 h.
func uptakeTable() *Table {
	tb := &Table{
		Title:   "Dye uptake by gel beads",
		Columns: []Column{{"time", "s"}, {"uptake", "1"}, {"c_centre", "mol/m^3"}, {"D_eff", "m^2/s"}},
		Notes:   []string{"uptake is the fraction of the equilibrium amount"},
	}
	for _, t := range []float64{0, 0.5, 60, 600, 3600, 14400} {
		tb.Rows = append(tb.Rows, []float64{t, 1 - math.Exp(-t/3000), 0.8 * math.Exp(-3000/(t+1)), 4e-10 * (1 + t/14400)})
	}
	return tb
}

func TestTableTextGolden(t *testing.T) {
	tests := []struct {
		name  string
		table *Table
	}{
		{"uptake", uptakeTable()},
		{"non_finite", &Table{
			Title:   "Values that cannot be computed",
			Columns: []Column{{"x", "m"}, {"y", ""}},
			Rows:    [][]float64{{1, math.NaN()}, {2.5, math.Inf(1)}, {-3, math.Inf(-1)}, {12.25, -0.125}},
		}},
		{"ragged", &Table{
			Columns: []Column{{"a", "kg"}, {"b", "kg"}, {"c", "kg"}},
			Rows:    [][]float64{{1, 2, 3}, {4}, {5, 6, 7, 8, 9}, {}},
		}},
		{"large_and_small", &Table{
			Title:   "Magnitudes",
			Columns: []Column{{"k", "1/s"}, {"big", "Pa"}, {"mixed", "mol"}},
			Rows:    [][]float64{{1e-7, 2.5e6, 0.8}, {3.25e-5, 1.0e7, 1e-14}, {0, -4e8, 0.5}},
		}},
		{"no_rows", &Table{Title: "Empty", Columns: []Column{{"time", "h"}}}},
		{"no_columns", &Table{Title: "Nothing", Rows: [][]float64{{1, 2}}}},
		{"digits", &Table{Columns: []Column{{"pi", ""}}, Rows: [][]float64{{math.Pi}, {math.E}}, Digits: 3}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			golden(t, "table_"+tc.name+".golden", tc.table.Text())
		})
	}
}

// TestTableTextAlignment checks the property the golden files show: in
// every row, the decimal points of a plain column stand in one place.
func TestTableTextAlignment(t *testing.T) {
	tb := &Table{Columns: []Column{{"x", "m"}}, Rows: [][]float64{{0.5}, {123.25}, {7}, {-0.0625}}}
	lines := strings.Split(strings.TrimRight(tb.Text(), "\n"), "\n")
	pos := -1
	for _, l := range lines[2:] {
		i := strings.IndexByte(l, '.')
		if i < 0 {
			continue
		}
		if pos >= 0 && i != pos {
			t.Errorf("decimal point at %d, want %d in\n%s", i, pos, strings.Join(lines, "\n"))
		}
		pos = i
	}
	if pos < 0 {
		t.Fatal("no decimal points found")
	}
}

func TestTableHTML(t *testing.T) {
	tb := &Table{
		Title:   `Run <b>1</b> & "2"`,
		Columns: []Column{{"<b>", "m^2/s"}, {"x", ""}},
		Rows:    [][]float64{{1, 0.5}, {2.25, 10}},
		Notes:   []string{"a < b"},
	}
	h := tb.HTML()
	for _, want := range []string{
		"<caption", "Run &lt;b&gt;1&lt;/b&gt; &amp; &#34;2&#34;", "&lt;b&gt; [m²/s]",
		"text-align:right", "<tfoot>", "a &lt; b", "rgba(128,128,128", "color:inherit", "background:transparent",
	} {
		if !strings.Contains(h, want) {
			t.Errorf("HTML lacks %q:\n%s", want, h)
		}
	}
	for _, bad := range []string{"<b>", " id=", " class=", "<script", "<link", "<style"} {
		if strings.Contains(h, bad) {
			t.Errorf("HTML contains %q:\n%s", bad, h)
		}
	}
	if n := strings.Count(h, "<tr>"); n != 3+1 {
		t.Errorf("HTML has %d rows, want 4 (header, 2 data, 1 note)", n)
	}
	// Decimal alignment by padding: "10" is followed by a point-wide
	// space and a figure space, so it lines up with "0.5".
	if !strings.Contains(h, ">10"+pointSpace+figureSpace+"</td>") {
		t.Errorf("HTML does not pad 10 to align with 0.5:\n%s", h)
	}
	// Well-formed as XML too (it is also read by XHTML-ish tools).
	parseSVG(t, h)
}

func TestTableCSV(t *testing.T) {
	tb := &Table{
		Columns: []Column{{"time", "s"}, {`name, "quoted"`, "mol/m^3"}, {"line\nbreak", "1"}},
		Rows:    [][]float64{{0.1, 1.0 / 3, math.NaN()}, {1e-300, math.Inf(-1), 2}, {5}},
	}
	out := tb.CSV()
	// Line ends inside quoted fields are CRLF too (RFC 4180 allows it).
	wantHead := "time [s],\"name, \"\"quoted\"\" [mol/m^3]\",\"line\r\nbreak\"\r\n"
	if !strings.HasPrefix(out, wantHead) {
		t.Errorf("CSV header:\n%q\nwant prefix\n%q", out, wantHead)
	}
	if strings.Count(out, "\r\n") != 5 || strings.Count(out, "\n") != 5 {
		t.Errorf("CSV should have 4 CRLF-terminated records and one CRLF in a field, no bare LF:\n%q", out)
	}
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatalf("CSV does not read back: %v", err)
	}
	if len(recs) != 4 {
		t.Fatalf("read %d records, want 4", len(recs))
	}
	if recs[0][1] != `name, "quoted" [mol/m^3]` || recs[0][2] != "line\nbreak" {
		t.Errorf("header read back as %q", recs[0])
	}
	for i, row := range tb.Rows {
		for j := range tb.Columns {
			got := recs[i+1][j]
			if j >= len(row) {
				if got != "" {
					t.Errorf("missing cell (%d,%d) = %q, want empty", i, j, got)
				}
				continue
			}
			v, err := strconv.ParseFloat(got, 64)
			if err != nil {
				t.Errorf("cell (%d,%d) = %q: %v", i, j, got, err)
				continue
			}
			if v != row[j] && !(math.IsNaN(v) && math.IsNaN(row[j])) {
				t.Errorf("cell (%d,%d) reads back as %v, want %v", i, j, v, row[j])
			}
		}
	}
	if got := (&Table{}).CSV(); got != "" {
		t.Errorf("CSV of a table without columns = %q, want empty", got)
	}
}

func TestTableRandomNeverPanics(t *testing.T) {
	special := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, math.Copysign(0, -1), 5e-324, math.MaxFloat64, -math.MaxFloat64, 1e-320, 0.5}
	for k := range 200 {
		tb := &Table{Columns: []Column{{"a", "m"}, {"b", ""}, {"c", "1"}}, Digits: k%20 - 2}
		for i := range k % 9 {
			row := make([]float64, (i+k)%5)
			for j := range row {
				row[j] = special[(i*7+j*3+k)%len(special)] * float64(1+j)
			}
			tb.Rows = append(tb.Rows, row)
		}
		txt := tb.Text()
		// Every data line is no wider than the header line.
		lines := strings.Split(strings.TrimRight(txt, "\n"), "\n")
		for _, l := range lines[1:] {
			if strings.HasPrefix(l, "Note:") || l == "" {
				break
			}
			if runeLen(l) > runeLen(lines[1]) {
				t.Fatalf("line wider than the rule:\n%s", txt)
			}
		}
		parseSVG(t, tb.HTML())
		if _, err := csv.NewReader(strings.NewReader(tb.CSV())).ReadAll(); err != nil {
			t.Fatalf("CSV does not parse: %v", err)
		}
	}
}
