package notebook

import (
	"encoding/json"
	"html"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"github.com/massline/massline/engine"
	"github.com/massline/massline/report"
)

// Inline styles of the report's own elements. They use translucent greys
// and inherited colours so the page reads in light and dark themes alike.
const (
	stylePre    = "background:rgba(127,127,127,0.10);padding:0.6em 0.8em;border-radius:4px;overflow-x:auto;margin:0.4em 0;line-height:1.35"
	styleCode   = "background:rgba(127,127,127,0.14);padding:0.05em 0.3em;border-radius:3px;font-size:0.92em;white-space:nowrap"
	styleCell   = "margin:1.2em 0 1.6em"
	stylePrompt = "font-family:monospace;font-size:0.8em;opacity:0.65;margin-bottom:0.1em"
	styleInput  = "background:rgba(127,127,127,0.10);padding:0.6em 0.8em;border-left:3px solid rgba(80,120,200,0.7);overflow-x:auto;margin:0;line-height:1.35"
	styleOut    = "margin:0.6em 0 0 0"
	styleStdout = "margin:0.4em 0;padding:0.2em 0.8em;overflow-x:auto;line-height:1.35;white-space:pre-wrap"
	styleStderr = "margin:0.4em 0;padding:0.2em 0.8em;overflow-x:auto;line-height:1.35;white-space:pre-wrap;border-left:3px solid rgba(208,138,46,0.8)"
	styleError  = "margin:0.4em 0;padding:0.6em 0.8em;overflow-x:auto;line-height:1.35;white-space:pre-wrap;border-left:4px solid #c0392b;background:rgba(192,57,43,0.10)"
	styleFigure = "margin:0.6em 0;max-width:100%;overflow-x:auto"
)

// HTML renders nb as a standalone HTML page (UTF-8, no external
// resources): the title, the safety caution, then the cells in order —
// markdown rendered as a plain subset of Markdown, code cells with their
// prompt, and their outputs with SVG plots inline, HTML tables as they
// are, images embedded, text as preformatted text and errors with their
// traceback. The title is the notebook's first level-1 heading when the
// first markdown cell starts with one (that heading is then not repeated),
// otherwise name. Rich output that carries script is not embedded; its
// text alternative is shown instead.
func HTML(nb *Notebook, name string) string {
	return Document(nb, name).HTML()
}

// Document returns the report of nb (see HTML) as a report.Document, whose
// Text method renders it for a terminal.
func Document(nb *Notebook, name string) *report.Document {
	doc := &report.Document{Title: name}
	if nb == nil {
		return doc
	}
	titled := false
	for _, c := range nb.Cells {
		if c == nil {
			continue
		}
		switch c.Type {
		case Markdown:
			src := c.Source
			if !titled {
				if t, rest, ok := leadingTitle(src); ok {
					doc.Title, src = t, rest
				}
				titled = true
			}
			if strings.TrimSpace(src) != "" {
				doc.Blocks = append(doc.Blocks, markdownBlock(src))
			}
		case Code:
			titled = true
			doc.Blocks = append(doc.Blocks, codeBlock{c})
		case Raw:
			if strings.TrimSpace(c.Source) != "" {
				doc.Blocks = append(doc.Blocks, rawBlock(c.Source))
			}
		}
	}
	doc.Notes = append(doc.Notes, "Report written by massline "+engine.Version+" from the notebook's cells and their saved outputs.")
	return doc
}

// leadingTitle takes a level-1 heading off the start of a markdown source.
func leadingTitle(src string) (title, rest string, ok bool) {
	s := strings.TrimLeft(src, " \t\r\n")
	line, rest, _ := strings.Cut(s, "\n")
	line = strings.TrimSpace(line)
	if headingLevel(line) != 1 {
		return "", src, false
	}
	t := plainText(strings.TrimRight(strings.TrimSpace(line[1:]), "#"))
	if t == "" {
		return "", src, false
	}
	return t, rest, true
}

// markdownBlock is a markdown cell.
type markdownBlock string

func (m markdownBlock) Text() string { return string(m) + "\n" }
func (m markdownBlock) HTML() string {
	return `<div class="markdown">` + markdownHTML(string(m), 1) + "</div>"
}

// rawBlock is a raw cell, shown as preformatted text.
type rawBlock string

func (r rawBlock) Text() string { return string(r) + "\n" }
func (r rawBlock) HTML() string {
	return `<pre style="` + stylePre + `">` + html.EscapeString(string(r)) + "</pre>"
}

// codeBlock is a code cell with its outputs.
type codeBlock struct{ c *Cell }

func prompt(n *int) string {
	if n == nil {
		return "In [ ]:"
	}
	return "In [" + strconv.Itoa(*n) + "]:"
}

func (cb codeBlock) Text() string {
	var b strings.Builder
	b.WriteString(prompt(cb.c.ExecutionCount) + "\n")
	for _, l := range strings.Split(strings.TrimRight(cb.c.Source, "\n"), "\n") {
		b.WriteString("    " + l + "\n")
	}
	for _, o := range cb.c.Outputs {
		if o == nil {
			continue
		}
		b.WriteString("\n" + strings.TrimRight(outputText(o), "\n") + "\n")
	}
	return b.String()
}

func (cb codeBlock) HTML() string {
	var b strings.Builder
	b.WriteString(`<section class="cell" style="` + styleCell + `">`)
	b.WriteString(`<div style="` + stylePrompt + `">` + html.EscapeString(prompt(cb.c.ExecutionCount)) + "</div>")
	b.WriteString(`<pre style="` + styleInput + `"><code>` + html.EscapeString(strings.TrimRight(cb.c.Source, "\n")) + "</code></pre>")
	if len(cb.c.Outputs) > 0 {
		b.WriteString(`<div class="outputs" style="` + styleOut + `">`)
		for _, o := range cb.c.Outputs {
			if o != nil {
				b.WriteString(outputHTML(o))
				b.WriteByte('\n')
			}
		}
		b.WriteString("</div>")
	}
	b.WriteString("</section>")
	return b.String()
}

var (
	ansiRe   = regexp.MustCompile(`\x1b\[[0-9;?]*[ -/]*[@-~]`)
	scriptRe = regexp.MustCompile(`(?i)<\s*script|<\s*iframe|<\s*object|<\s*embed|javascript:|\son[a-z]+\s*=`)
)

// stripANSI removes terminal colour codes, which other kernels put into
// tracebacks.
func stripANSI(s string) string { return ansiRe.ReplaceAllString(s, "") }

func outputText(o *Output) string {
	switch o.Type {
	case Stream:
		return stripANSI(o.Text)
	case Error:
		return stripANSI(strings.Join(o.Traceback, "\n"))
	}
	if s, ok := o.Data["text/plain"].(string); ok {
		return s
	}
	return "[" + strings.Join(mimeTypes(o.Data), ", ") + "]"
}

func mimeTypes(b map[string]any) []string {
	var ks []string
	for k := range b {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return ks
}

// outputHTML renders one output, choosing the richest MIME type it can
// show safely.
func outputHTML(o *Output) string {
	switch o.Type {
	case Stream:
		st := styleStdout
		if o.Name == "stderr" {
			st = styleStderr
		}
		return `<pre style="` + st + `">` + html.EscapeString(stripANSI(o.Text)) + "</pre>"
	case Error:
		text := o.EName
		if o.EValue != "" {
			text += ": " + o.EValue
		}
		tb := stripANSI(strings.Join(o.Traceback, "\n"))
		if tb != "" && tb != text {
			text += "\n" + tb
		}
		return `<pre style="` + styleError + `" role="alert">` + html.EscapeString(text) + "</pre>"
	}
	d := o.Data
	if s, ok := d["image/svg+xml"].(string); ok && !scriptRe.MatchString(s) {
		return `<figure style="` + styleFigure + `">` + stripXMLProlog(s) + "</figure>"
	}
	if s, ok := d["text/html"].(string); ok && !scriptRe.MatchString(s) {
		return `<div style="` + styleFigure + `">` + s + "</div>"
	}
	for _, t := range []string{"image/png", "image/jpeg", "image/gif"} {
		if s, ok := d[t].(string); ok && base64Like(s) {
			return `<figure style="` + styleFigure + `"><img alt="" style="max-width:100%" src="data:` + t + ";base64," + strings.Join(strings.Fields(s), "") + `"></figure>`
		}
	}
	if s, ok := d["text/markdown"].(string); ok {
		return `<div class="markdown">` + markdownHTML(s, 2) + "</div>"
	}
	if s, ok := d["text/plain"].(string); ok {
		return `<pre style="` + styleStdout + `">` + html.EscapeString(stripANSI(s)) + "</pre>"
	}
	if v, ok := d["application/json"]; ok {
		js, err := json.MarshalIndent(v, "", "  ")
		if err == nil {
			return `<pre style="` + stylePre + `">` + html.EscapeString(string(js)) + "</pre>"
		}
	}
	return `<pre style="` + styleStdout + `">` + html.EscapeString("["+strings.Join(mimeTypes(d), ", ")+"]") + "</pre>"
}

// stripXMLProlog drops an <?xml …?> declaration and a DOCTYPE, which do
// not belong inside an HTML page.
func stripXMLProlog(s string) string {
	t := strings.TrimSpace(s)
	for strings.HasPrefix(t, "<?") || strings.HasPrefix(t, "<!DOCTYPE") || strings.HasPrefix(t, "<!doctype") {
		end := strings.IndexByte(t, '>')
		if end < 0 {
			return s
		}
		t = strings.TrimSpace(t[end+1:])
	}
	return t
}

func base64Like(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z' || c >= '0' && c <= '9' || c == '+' || c == '/' || c == '=' || c == '\n' || c == '\r' || c == ' ') {
			return false
		}
	}
	return s != ""
}
