package report

import (
	"html"
	"strings"
)

// Block is one part of a Document. *Table, *Plot, *Map, Heading and
// Paragraph are blocks.
type Block interface {
	// Text renders the block for a terminal or a text file.
	Text() string
	// HTML renders the block as an HTML fragment.
	HTML() string
}

// Heading is a section heading inside a Document.
type Heading string

// Text returns the heading underlined with dashes.
func (h Heading) Text() string {
	s := string(h)
	return s + "\n" + strings.Repeat("-", max(runeLen(s), 1)) + "\n"
}

// HTML returns the heading as an escaped <h2> element.
func (h Heading) HTML() string { return "<h2>" + html.EscapeString(string(h)) + "</h2>" }

// Paragraph is a block of running text inside a Document.
type Paragraph string

// Text returns the paragraph followed by a newline.
func (p Paragraph) Text() string { return string(p) + "\n" }

// HTML returns the paragraph as an escaped <p> element.
func (p Paragraph) HTML() string { return "<p>" + html.EscapeString(string(p)) + "</p>" }

// Document is a complete human-facing report: a title and a sequence of
// blocks. Its renderings always carry the Caution sentence.
type Document struct {
	// Title heads the report (and names the HTML page).
	Title string
	// Blocks are rendered in order; nil blocks are skipped.
	Blocks []Block
	// Notes are printed at the end, before the caution.
	Notes []string
}

// pageStyle lets the page follow the reader's light or dark preference
// through the system colours Canvas and CanvasText; plots drawn inline
// take the text colour through currentColor.
const pageStyle = `body{font-family:sans-serif;line-height:1.45;max-width:62rem;margin:1.5rem auto;padding:0 1rem;color:CanvasText;background:Canvas}` +
	`h1{font-size:1.5rem}h2{font-size:1.2rem;margin-top:1.6em}` +
	`.caution{border-left:4px solid #d08a2e;padding:0.4em 0.8em;background:rgba(208,138,46,0.12)}` +
	`figure{margin:1em 0}pre{overflow-x:auto}footer{margin-top:2em;font-size:0.9em;opacity:0.85}`

// HTML renders the document as a standalone HTML page (UTF-8, no
// external resources), with the caution shown under the title and the
// plots embedded as inline SVG.
func (d *Document) HTML() string {
	var b strings.Builder
	title := d.Title
	if title == "" {
		title = "Report"
	}
	b.WriteString("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
	b.WriteString("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
	b.WriteString("<meta name=\"color-scheme\" content=\"light dark\">\n")
	b.WriteString("<title>" + html.EscapeString(title) + "</title>\n")
	b.WriteString("<style>" + pageStyle + "</style>\n</head>\n<body>\n")
	b.WriteString("<h1>" + html.EscapeString(title) + "</h1>\n")
	b.WriteString("<p class=\"caution\" role=\"note\"><strong>Caution.</strong> " + html.EscapeString(Caution()) + "</p>\n")
	for _, blk := range d.Blocks {
		if blk == nil {
			continue
		}
		b.WriteString(blk.HTML())
		b.WriteByte('\n')
	}
	if len(d.Notes) > 0 {
		b.WriteString("<footer>")
		for _, n := range d.Notes {
			b.WriteString("<p>" + html.EscapeString(n) + "</p>")
		}
		b.WriteString("</footer>\n")
	}
	b.WriteString("</body>\n</html>\n")
	return b.String()
}

// Text renders the document as plain text: the title, the blocks
// separated by blank lines, the notes, and the caution as a footer.
func (d *Document) Text() string {
	var b strings.Builder
	if d.Title != "" {
		b.WriteString(d.Title + "\n" + strings.Repeat("=", max(runeLen(d.Title), 1)) + "\n\n")
	}
	for _, blk := range d.Blocks {
		if blk == nil {
			continue
		}
		b.WriteString(strings.TrimRight(blk.Text(), "\n"))
		b.WriteString("\n\n")
	}
	for _, n := range d.Notes {
		b.WriteString("Note: " + n + "\n")
	}
	if len(d.Notes) > 0 {
		b.WriteByte('\n')
	}
	b.WriteString("-- \nCaution: " + Caution() + "\n")
	return b.String()
}
