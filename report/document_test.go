package report

import (
	"strings"
	"testing"
)

func sampleDocument() *Document {
	return &Document{
		Title: "Dye uptake <beads>",
		Blocks: []Block{
			Paragraph("Gel beads soaked in a stirred dye bath (a scenario of our own)."),
			Heading("Uptake & profiles"),
			uptakeTable(),
			nil,
			profilePlot(2, 5),
			beadMap(4, 3),
		},
		Notes: []string{"grid: 40 cells"},
	}
}

func TestDocumentCarriesCaution(t *testing.T) {
	d := sampleDocument()
	for name, out := range map[string]string{"HTML": d.HTML(), "Text": d.Text(), "empty HTML": (&Document{}).HTML(), "empty Text": (&Document{}).Text()} {
		if !strings.Contains(out, "validate them against measurements") {
			t.Errorf("%s lacks the caution", name)
		}
	}
	txt := d.Text()
	if !strings.HasSuffix(txt, "Caution: "+Caution()+"\n") {
		t.Errorf("text report should end with the caution footer:\n%s", txt)
	}
}

func TestDocumentHTML(t *testing.T) {
	h := sampleDocument().HTML()
	for _, want := range []string{
		"<!DOCTYPE html>", `<meta charset="utf-8">`, "color-scheme", "<title>Dye uptake &lt;beads&gt;</title>",
		"<h2>Uptake &amp; profiles</h2>", "<table", "<svg", "</html>",
	} {
		if !strings.Contains(h, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	for _, bad := range []string{"<beads>", "<script", "http://", "https://"} {
		if bad == "http://" {
			// Only the SVG namespace may appear.
			if strings.Count(h, "http://") != strings.Count(h, "http://www.w3.org/2000/svg") {
				t.Error("page refers to an external resource")
			}
			continue
		}
		if strings.Contains(h, bad) {
			t.Errorf("page contains %q", bad)
		}
	}
	if n := strings.Count(h, "<svg"); n != 2 {
		t.Errorf("page has %d inline SVGs, want 2", n)
	}
}

func TestDocumentTextGolden(t *testing.T) {
	d := sampleDocument()
	d.Blocks = d.Blocks[:4] // text of tables and headings; plots have their own tests
	golden(t, "document.golden", d.Text())
}

func TestCaution(t *testing.T) {
	c := Caution()
	for _, want := range []string{"estimates", "inputs", "measurements", "regulations", "licensed practice"} {
		if !strings.Contains(c, want) {
			t.Errorf("Caution() lacks %q: %s", want, c)
		}
	}
}
