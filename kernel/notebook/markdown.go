package notebook

import (
	"html"
	"regexp"
	"strconv"
	"strings"
)

// markdownHTML renders the plain subset of Markdown that notebooks use for
// their prose: ATX headings (# …), paragraphs, emphasis (*em*, _em_,
// **strong**, __strong__), inline code, fenced code blocks, bulleted and
// numbered lists (one level; indented lines continue an item), block
// quotes, horizontal rules and links to http(s), mailto and relative
// addresses. Everything else is shown as text. All text is escaped: raw
// HTML in the source is displayed, never interpreted. Headings are moved
// down shift levels (the page title is the only <h1>).
func markdownHTML(src string, shift int) string {
	return markdownDepth(src, shift, 0)
}

// maxQuoteDepth bounds the nesting of block quotes (deeper markers are
// shown as text), so that a line of thousands of '>' costs no more than
// a short one.
const maxQuoteDepth = 8

func markdownDepth(src string, shift, depth int) string {
	lines := strings.Split(strings.ReplaceAll(src, "\r\n", "\n"), "\n")
	var b strings.Builder
	var para []string
	flush := func() {
		if len(para) > 0 {
			b.WriteString("<p>" + inline(strings.Join(para, "\n")) + "</p>\n")
			para = nil
		}
	}
	for i := 0; i < len(lines); i++ {
		line := lines[i]
		trim := strings.TrimSpace(line)
		switch {
		case trim == "":
			flush()
		case isFence(trim):
			flush()
			fence := trim[:3]
			var code []string
			for i++; i < len(lines) && !strings.HasPrefix(strings.TrimSpace(lines[i]), fence); i++ {
				code = append(code, lines[i])
			}
			b.WriteString(`<pre style="` + stylePre + `"><code>` + html.EscapeString(strings.Join(code, "\n")) + "</code></pre>\n")
		case headingLevel(trim) > 0:
			flush()
			n := headingLevel(trim)
			text := strings.TrimSpace(strings.TrimRight(strings.TrimSpace(trim[n:]), "#"))
			tag := "h" + strconv.Itoa(min(n+shift, 6))
			b.WriteString("<" + tag + ">" + inline(text) + "</" + tag + ">\n")
		case isRule(trim):
			flush()
			b.WriteString("<hr>\n")
		case strings.HasPrefix(trim, ">") && depth < maxQuoteDepth:
			flush()
			var quote []string
			for ; i < len(lines) && strings.HasPrefix(strings.TrimSpace(lines[i]), ">"); i++ {
				q := strings.TrimPrefix(strings.TrimSpace(lines[i]), ">")
				quote = append(quote, strings.TrimPrefix(q, " "))
			}
			i--
			b.WriteString(`<blockquote style="margin:0.8em 0;padding:0 1em;border-left:3px solid rgba(127,127,127,0.5)">` + markdownDepth(strings.Join(quote, "\n"), shift, depth+1) + "</blockquote>\n")
		case listItem(line) != "":
			flush()
			kind := listItem(line)
			tag := "ul"
			if kind == "ol" {
				tag = "ol"
			}
			b.WriteString("<" + tag + ">\n")
			var item []string
			emit := func() {
				if item != nil {
					b.WriteString("<li>" + inline(strings.Join(item, "\n")) + "</li>\n")
				}
				item = nil
			}
			for ; i < len(lines); i++ {
				l := lines[i]
				if k := listItem(l); k == kind {
					emit()
					item = []string{itemText(l)}
					continue
				}
				t := strings.TrimSpace(l)
				// An indented line continues the item; anything else, a
				// blank line or a new kind of block ends the list.
				if t != "" && (strings.HasPrefix(l, " ") || strings.HasPrefix(l, "\t")) && listItem(l) == "" {
					item = append(item, t)
					continue
				}
				if t != "" && listItem(l) == "" && !isFence(t) && headingLevel(t) == 0 && !strings.HasPrefix(t, ">") && !isRule(t) {
					// a lazy continuation line
					item = append(item, t)
					continue
				}
				break
			}
			emit()
			i--
			b.WriteString("</" + tag + ">\n")
		default:
			para = append(para, trim)
		}
	}
	flush()
	return b.String()
}

func isFence(trim string) bool {
	return strings.HasPrefix(trim, "```") || strings.HasPrefix(trim, "~~~")
}

// headingLevel is the level of an ATX heading line, or 0.
func headingLevel(trim string) int {
	n := 0
	for n < len(trim) && trim[n] == '#' {
		n++
	}
	if n == 0 || n > 6 || (n < len(trim) && trim[n] != ' ' && trim[n] != '\t') {
		return 0
	}
	return n
}

func isRule(trim string) bool {
	if len(trim) < 3 {
		return false
	}
	c := trim[0]
	if c != '-' && c != '*' && c != '_' {
		return false
	}
	count := 0
	for i := 0; i < len(trim); i++ {
		switch trim[i] {
		case c:
			count++
		case ' ', '\t':
		default:
			return false
		}
	}
	return count >= 3
}

var (
	bulletRe  = regexp.MustCompile(`^ {0,3}[-*+][ \t]+\S`)
	numberRe  = regexp.MustCompile(`^ {0,3}[0-9]{1,9}[.)][ \t]+\S`)
	itemStart = regexp.MustCompile(`^ {0,3}(?:[-*+]|[0-9]{1,9}[.)])[ \t]+`)
)

// listItem says whether a line starts a list item: "ul", "ol" or "".
func listItem(line string) string {
	switch {
	case bulletRe.MatchString(line) && !isRule(strings.TrimSpace(line)):
		return "ul"
	case numberRe.MatchString(line):
		return "ol"
	}
	return ""
}

func itemText(line string) string {
	return strings.TrimSpace(itemStart.ReplaceAllString(line, ""))
}

var (
	strongRe = regexp.MustCompile(`\*\*([^*\s](?:[^*]*[^*\s])?)\*\*|__([^_\s](?:[^_]*[^_\s])?)__`)
	emRe     = regexp.MustCompile(`\*([^*\s](?:[^*]*[^*\s])?)\*|(?:^|\b)_([^_\s](?:[^_]*[^_\s])?)_(?:\b|$)`)
	linkRe   = regexp.MustCompile(`\[([^\]]+)\]\(([^()\s]+)\)`)
)

// inline renders the inline markup of one block of text. Code spans and
// backslash escapes are set aside first, so nothing inside them is read
// as markup; the rest is escaped, then emphasis and links are applied.
func inline(s string) string {
	var kept []string
	keep := func(h string) string {
		kept = append(kept, h)
		return "\x00" + strconv.Itoa(len(kept)-1) + "\x00"
	}
	s = strings.ReplaceAll(s, "\x00", "")
	var b strings.Builder
	for i := 0; i < len(s); {
		c := s[i]
		if c == '\\' && i+1 < len(s) && strings.IndexByte("\\`*_{}[]()#+-.!<>|~\"'", s[i+1]) >= 0 {
			b.WriteString(keep(html.EscapeString(s[i+1 : i+2])))
			i += 2
			continue
		}
		if c == '`' {
			n := 0
			for i+n < len(s) && s[i+n] == '`' {
				n++
			}
			ticks := s[i : i+n]
			if end := strings.Index(s[i+n:], ticks); end >= 0 {
				code := strings.TrimSpace(s[i+n : i+n+end])
				b.WriteString(keep(`<code style="` + styleCode + `">` + html.EscapeString(code) + "</code>"))
				i += 2*n + end
				continue
			}
			b.WriteString(ticks)
			i += n
			continue
		}
		b.WriteByte(c)
		i++
	}
	out := html.EscapeString(b.String())
	out = linkRe.ReplaceAllStringFunc(out, func(m string) string {
		p := linkRe.FindStringSubmatch(m)
		url := html.UnescapeString(p[2])
		if !safeURL(url) {
			return m
		}
		return `<a href="` + html.EscapeString(url) + `">` + p[1] + "</a>"
	})
	out = strongRe.ReplaceAllString(out, "<strong>$1$2</strong>")
	out = emRe.ReplaceAllStringFunc(out, func(m string) string {
		p := emRe.FindStringSubmatch(m)
		if p[1] != "" {
			return "<em>" + p[1] + "</em>"
		}
		lead := m[:strings.IndexByte(m, '_')]
		trail := m[strings.LastIndexByte(m, '_')+1:]
		return lead + "<em>" + p[2] + "</em>" + trail
	})
	return restore(out, kept)
}

// restore puts back the pieces inline set aside, in one pass.
func restore(s string, kept []string) string {
	if len(kept) == 0 {
		return s
	}
	var b strings.Builder
	for {
		i := strings.IndexByte(s, 0)
		if i < 0 {
			break
		}
		j := strings.IndexByte(s[i+1:], 0)
		if j < 0 {
			break
		}
		b.WriteString(s[:i])
		if n, err := strconv.Atoi(s[i+1 : i+1+j]); err == nil && n >= 0 && n < len(kept) {
			b.WriteString(kept[n])
		}
		s = s[i+j+2:]
	}
	b.WriteString(s)
	return b.String()
}

// safeURL accepts http, https and mailto links and relative addresses.
func safeURL(u string) bool {
	l := strings.ToLower(u)
	if strings.HasPrefix(l, "http://") || strings.HasPrefix(l, "https://") || strings.HasPrefix(l, "mailto:") {
		return true
	}
	colon := strings.IndexByte(l, ':')
	if colon < 0 {
		return true
	}
	// a colon after the first / ? or # is part of a relative path
	cut := strings.IndexAny(l, "/?#")
	return cut >= 0 && cut < colon
}

// plainText strips the inline markup of a heading for a page title.
func plainText(s string) string {
	return strings.TrimSpace(html.UnescapeString(tagRe.ReplaceAllString(inline(s), "")))
}

var tagRe = regexp.MustCompile(`<[^>]*>`)
