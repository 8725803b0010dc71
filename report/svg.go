package report

import (
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Text sizes in px (SVG user units) and the font stack. Only the generic
// family is named, so every renderer uses a font it has.
const (
	fontFamily = "sans-serif"
	sizeTick   = 12.0
	sizeLabel  = 13.0
	sizeTitle  = 14.0
	sizeNote   = 11.0
)

// svgHead writes the root element: xmlns and a viewBox so that the
// picture scales, width and height for renderers that need a size,
// and a style that lets it shrink with narrow containers. Text and lines
// use currentColor, so inline in a page they take the page's text colour
// (light or dark theme) and the background stays transparent. The
// embedded style rule only matches when the SVG is its own document
// (opened directly or through <img>), where the host's background is
// unknown: there it sets dark grey text on white, or light grey on near
// black under a dark colour scheme, so text always contrasts with what is
// behind it. Inline in HTML the selector matches nothing.
func svgHead(b *strings.Builder, w, h float64, title string) {
	b.WriteString(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 `)
	b.WriteString(px(w) + " " + px(h))
	b.WriteString(`" width="` + px(w) + `" height="` + px(h))
	b.WriteString(`" font-family="` + fontFamily + `" font-size="` + px(sizeTick))
	b.WriteString(`" fill="currentColor" style="max-width:100%;height:auto" role="img"`)
	if title != "" {
		b.WriteString(` aria-label="` + xmlEscape(title) + `"`)
	}
	b.WriteString(">\n")
	b.WriteString("<style>svg:root{color:#222;background:#fff}@media (prefers-color-scheme:dark){svg:root{color:#ddd;background:#1e1e1e}}</style>\n")
	if title != "" {
		b.WriteString("<title>" + xmlEscape(title) + "</title>\n")
	}
}

// px formats a coordinate rounded to 0.1 px with no trailing zeros.
func px(v float64) string {
	if !finite(v) {
		return "0"
	}
	return tenths(int64(math.Round(v * 10)))
}

// tenths formats t/10 exactly ("123.4", "-0.5", "12").
func tenths(t int64) string {
	neg := t < 0
	if neg {
		t = -t
	}
	s := strconv.FormatInt(t/10, 10)
	if f := t % 10; f != 0 {
		s += "." + strconv.FormatInt(f, 10)
	}
	if neg && s != "0" {
		s = "-" + s
	}
	return s
}

// xmlEscape escapes text for XML content and attribute values, drops
// characters XML 1.0 does not allow, and replaces invalid UTF-8.
func xmlEscape(s string) string {
	var b strings.Builder
	for i, r := range s {
		if r == utf8.RuneError {
			if _, size := utf8.DecodeRuneInString(s[i:]); size == 1 {
				b.WriteRune('\uFFFD')
				continue
			}
		}
		switch {
		case r == '<':
			b.WriteString("&lt;")
		case r == '>':
			b.WriteString("&gt;")
		case r == '&':
			b.WriteString("&amp;")
		case r == '"':
			b.WriteString("&quot;")
		case r == '\'':
			b.WriteString("&apos;")
		case r == '\t' || r == '\n' || r == '\r':
			b.WriteByte(' ')
		case r < 0x20, r >= 0xD800 && r <= 0xDFFF, r == 0xFFFE, r == 0xFFFF:
			// not allowed in XML 1.0: dropped
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// textWidth estimates the rendered width in px of s in a proportional
// sans-serif font of the given size. It errs on the wide side so that
// layouts built on it leave room for the fonts renderers actually pick.
func textWidth(s string, size float64) float64 {
	w := 0.0
	for _, r := range s {
		switch {
		case r >= '0' && r <= '9':
			w += 0.57
		case r == '.' || r == ',' || r == ':' || r == ';' || r == ' ' || r == '\'':
			w += 0.3
		case r == 'i' || r == 'l' || r == 'j' || r == 'I' || r == '|' || r == '!':
			w += 0.26
		case r == 'f' || r == 't' || r == 'r' || r == '-' || r == '(' || r == ')' || r == '[' || r == ']' || r == '/':
			w += 0.37
		case r == 'm' || r == 'w' || r == 'M' || r == 'W':
			w += 0.86
		case r >= 'A' && r <= 'Z':
			w += 0.68
		case r >= 'a' && r <= 'z':
			w += 0.56
		case r < 0x80:
			w += 0.6
		case strings.ContainsRune("⁰¹²³⁴⁵⁶⁷⁸⁹⁻·", r):
			w += 0.4
		case r >= 0x2E80: // CJK and other wide scripts
			w += 1.0
		default:
			w += 0.62
		}
	}
	return w * size * 1.04
}

// truncate shortens s to at most n runes, ending with an ellipsis.
func truncate(s string, n int) string {
	if runeLen(s) <= n {
		return s
	}
	r := []rune(s)
	return string(r[:n-1]) + "…"
}

// pt is a point in SVG pixel coordinates.
type pt struct{ X, Y float64 }

// rect is the plotting area in pixels.
type rect struct{ X0, Y0, X1, Y1 float64 }

// clipSegment clips the segment a–b to r (Liang–Barsky). ok is false when
// nothing of the segment lies inside.
func clipSegment(a, b pt, r rect) (pt, pt, bool) {
	t0, t1 := 0.0, 1.0
	dx, dy := b.X-a.X, b.Y-a.Y
	for _, e := range [4][2]float64{
		{-dx, a.X - r.X0}, {dx, r.X1 - a.X},
		{-dy, a.Y - r.Y0}, {dy, r.Y1 - a.Y},
	} {
		p, q := e[0], e[1]
		if p == 0 {
			if q < 0 {
				return a, b, false
			}
			continue
		}
		t := q / p
		if p < 0 {
			if t > t1 {
				return a, b, false
			}
			t0 = math.Max(t0, t)
		} else {
			if t < t0 {
				return a, b, false
			}
			t1 = math.Min(t1, t)
		}
	}
	return pt{a.X + t0*dx, a.Y + t0*dy}, pt{a.X + t1*dx, a.Y + t1*dy}, true
}

// clipPolyline clips a polyline to r and returns the visible pieces.
func clipPolyline(p []pt, r rect) [][]pt {
	var out [][]pt
	var cur []pt
	inside := func(q pt) bool { return q.X >= r.X0 && q.X <= r.X1 && q.Y >= r.Y0 && q.Y <= r.Y1 }
	if len(p) == 1 {
		if inside(p[0]) {
			return [][]pt{{p[0]}}
		}
		return nil
	}
	for i := 1; i < len(p); i++ {
		a, b, ok := clipSegment(p[i-1], p[i], r)
		if !ok {
			if len(cur) > 0 {
				out = append(out, cur)
				cur = nil
			}
			continue
		}
		if len(cur) == 0 {
			cur = append(cur, a)
		} else if last := cur[len(cur)-1]; last != a {
			out = append(out, cur)
			cur = []pt{a}
		}
		cur = append(cur, b)
		if b != p[i] { // left the rectangle
			out = append(out, cur)
			cur = nil
		}
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

// simplify drops points that lie within eps px of the line through their
// kept neighbours (Ramer–Douglas–Peucker), iteratively so that long
// series do not recurse deeply.
func simplify(p []pt, eps float64) []pt {
	if len(p) < 3 {
		return p
	}
	keep := make([]bool, len(p))
	keep[0], keep[len(p)-1] = true, true
	stack := [][2]int{{0, len(p) - 1}}
	for len(stack) > 0 {
		s := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		a, b := p[s[0]], p[s[1]]
		dx, dy := b.X-a.X, b.Y-a.Y
		l := math.Hypot(dx, dy)
		far, idx := -1.0, -1
		for i := s[0] + 1; i < s[1]; i++ {
			var d float64
			if l == 0 {
				d = math.Hypot(p[i].X-a.X, p[i].Y-a.Y)
			} else {
				d = math.Abs(dy*(p[i].X-a.X)-dx*(p[i].Y-a.Y)) / l
			}
			if d > far {
				far, idx = d, i
			}
		}
		if far > eps {
			keep[idx] = true
			stack = append(stack, [2]int{s[0], idx}, [2]int{idx, s[1]})
		}
	}
	out := p[:0:0]
	for i, k := range keep {
		if k {
			out = append(out, p[i])
		}
	}
	return out
}

// pathData appends the pieces as compact SVG path data: an absolute
// move to the first point of each piece, then relative line segments
// computed on the 0.1 px grid (so rounding errors do not accumulate).
// Consecutive points that round to the same place are dropped.
func pathData(b *strings.Builder, pieces [][]pt) {
	for _, piece := range pieces {
		var lx, ly int64
		afterCmd := false
		for i, q := range piece {
			x, y := int64(math.Round(q.X*10)), int64(math.Round(q.Y*10))
			if i == 0 {
				b.WriteString("M" + tenths(x) + " " + tenths(y))
				if len(piece) == 1 {
					b.WriteString("h0") // a dot still shows with round caps
				}
				lx, ly = x, y
				continue
			}
			dx, dy := x-lx, y-ly
			if dx == 0 && dy == 0 {
				continue
			}
			if !afterCmd {
				b.WriteByte('l')
				afterCmd = true
				sx := tenths(dx)
				b.WriteString(sx)
				writeNum(b, tenths(dy))
			} else {
				writeNum(b, tenths(dx))
				writeNum(b, tenths(dy))
			}
			lx, ly = x, y
		}
	}
}

// writeNum writes a number after another one, with a separating space
// unless its minus sign separates it already.
func writeNum(b *strings.Builder, s string) {
	if s[0] != '-' {
		b.WriteByte(' ')
	}
	b.WriteString(s)
}

// markerData appends a small open circle of radius r around each point.
func markerData(b *strings.Builder, pieces [][]pt, r float64) {
	d := px(2 * r)
	rs := px(r)
	for _, piece := range pieces {
		for _, q := range piece {
			b.WriteString("M" + px(q.X-r) + " " + px(q.Y))
			b.WriteString("a" + rs + " " + rs + " 0 1 0 " + d + " 0a" + rs + " " + rs + " 0 1 0 -" + d + " 0")
		}
	}
}
