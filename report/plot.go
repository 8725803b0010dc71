package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Default and limiting plot sizes in px.
const (
	DefaultWidth  = 640
	DefaultHeight = 400
	minSize       = 160
	maxSize       = 4000
)

// Series is one curve of a Plot.
type Series struct {
	// Name identifies the curve in the legend and in the SVG (a
	// data-series attribute and a <title> on its path). An empty name
	// shows as "series N".
	Name string
	// X and Y are the coordinates; only the first min(len(X), len(Y))
	// pairs are used. Pairs that cannot be drawn (NaN, ±Inf, or outside
	// the domain of a log or square-root axis) are left out and break
	// the line there.
	X, Y []float64
	// Dashed draws the line dashed (for example a reference solution).
	Dashed bool
	// Points draws each pair as a small open circle instead of joining
	// them with a line (for example measured data).
	Points bool
}

// Plot is a 2-D line plot of one or more series rendered as SVG.
type Plot struct {
	// Title is drawn above the plot; may be "".
	Title string
	// X and Y are the axes.
	X, Y Axis
	// Series are the curves, drawn in order.
	Series []Series
	// Ordered says that the series are ordered in time (profiles at
	// successive times): their colours run along the sequential scale
	// from dark to light. Otherwise each series gets a colour from the
	// categorical palette.
	Ordered bool
	// Width and Height are the size in px; 0 means DefaultWidth ×
	// DefaultHeight. The SVG has a viewBox, so it also scales.
	Width, Height int
	// Notes are printed under the plot, one per line, before the notes
	// the renderer adds about data it could not draw.
	Notes []string
}

// seriesData is one series after filtering: pieces of consecutive
// drawable points in data units.
type seriesData struct {
	name   string
	pieces [][][2]float64
	n      int // drawable points
}

// prepare filters the series and collects the drawable values per axis,
// together with notes about what was left out.
func (p *Plot) prepare() ([]seriesData, []float64, []float64, []string) {
	var xs, ys []float64
	var notes []string
	out := make([]seriesData, len(p.Series))
	for i, s := range p.Series {
		name := seriesName(s.Name, i)
		sd := seriesData{name: name}
		n := min(len(s.X), len(s.Y))
		if len(s.X) != len(s.Y) {
			notes = append(notes, fmt.Sprintf("series %q has %d x and %d y values; only the first %d pairs are drawn.",
				name, len(s.X), len(s.Y), n))
		}
		var nonFinite, badX, badY int
		var cur [][2]float64
		for k := range n {
			x, y := s.X[k], s.Y[k]
			ok := true
			switch {
			case !finite(x) || !finite(y):
				nonFinite++
				ok = false
			case !p.X.Scale.valid(x):
				badX++
				ok = false
			case !p.Y.Scale.valid(y):
				badY++
				ok = false
			}
			if !ok {
				if len(cur) > 0 {
					sd.pieces = append(sd.pieces, cur)
					cur = nil
				}
				continue
			}
			cur = append(cur, [2]float64{x, y})
			xs = append(xs, x)
			ys = append(ys, y)
			sd.n++
		}
		if len(cur) > 0 {
			sd.pieces = append(sd.pieces, cur)
		}
		if nonFinite > 0 {
			notes = append(notes, fmt.Sprintf("series %q: %d %s NaN or infinite; left out.",
				name, nonFinite, plural(nonFinite, "point is", "points are")))
		}
		if badX > 0 {
			notes = append(notes, fmt.Sprintf("series %q: %d %s x %s; left out.",
				name, badX, plural(badX, "point has", "points have"), p.X.Scale.invalidWhat()))
		}
		if badY > 0 {
			notes = append(notes, fmt.Sprintf("series %q: %d %s y %s; left out.",
				name, badY, plural(badY, "point has", "points have"), p.Y.Scale.invalidWhat()))
		}
		if sd.n == 0 {
			notes = append(notes, fmt.Sprintf("series %q has no points that can be drawn.", name))
		}
		out[i] = sd
	}
	if len(p.Series) == 0 {
		notes = append(notes, "the plot has no series.")
	}
	return out, xs, ys, notes
}

func seriesName(name string, i int) string {
	if strings.TrimSpace(name) == "" {
		return "series " + strconv.Itoa(i+1)
	}
	return name
}

func plotSize(w, h int) (float64, float64) {
	if w <= 0 {
		w = DefaultWidth
	}
	if h <= 0 {
		h = DefaultHeight
	}
	return float64(clampInt(w, minSize, maxSize)), float64(clampInt(h, minSize, maxSize))
}

// layout holds the computed geometry of a plot.
type layout struct {
	W, H        float64
	area        rect
	x, y        scaleAxis
	legendRight bool
	legend      []legendItem
	legendRows  [][]legendItem // legend below the plot, by row
	legendMore  string         // extra legend line when entries were thinned
	notes       []string       // wrapped note lines
}

type legendItem struct {
	name   string // as shown (possibly shortened)
	color  string
	dashed bool
	points bool
	more   bool // a "(k of n shown)" remark, no sample
}

const (
	rowH       = 18.0 // legend row height
	swatchW    = 24.0 // legend line sample
	legendPad  = 14.0 // gap between plot and legend
	tickLen    = 5.0
	noteLineH  = 14.0
	legendName = 32 // longest legend name in runes
	// maxBelowRows is the most rows a legend below the plot may take
	// for time-ordered series before it is thinned.
	maxBelowRows = 3
)

func (p *Plot) seriesColor(i int) string {
	if p.Ordered {
		return CurveColor(i, len(p.Series))
	}
	return CategoricalColor(i)
}

func (p *Plot) layout(data []seriesData, xs, ys []float64, warn []string) (layout, []string) {
	W, H := plotSize(p.Width, p.Height)
	xMax := clampInt(int(math.Round(W/100)), 3, 10)
	yMax := clampInt(int((H-110)/45), 3, 9)
	// Fewer x ticks while their labels would touch.
	for {
		L, notes := p.layoutWith(data, xs, ys, warn, xMax, yMax)
		if xMax <= 2 || labelsFit(&L.x, L.area.X1-L.area.X0) {
			return L, notes
		}
		xMax--
	}
}

// labelsFit reports whether the tick labels of a horizontal axis of
// length w px leave a gap of at least 10 px between neighbours.
func labelsFit(a *scaleAxis, w float64) bool {
	for i := 1; i < len(a.major); i++ {
		d := (a.pos(a.major[i]) - a.pos(a.major[i-1])) * w
		need := (textWidth(a.labels[i], sizeTick)+textWidth(a.labels[i-1], sizeTick))/2 + 10
		if d < need {
			return false
		}
	}
	return true
}

func (p *Plot) layoutWith(data []seriesData, xs, ys []float64, warn []string, xMax, yMax int) (layout, []string) {
	var L layout
	L.W, L.H = plotSize(p.Width, p.Height)
	var n1, n2 []string
	L.x, n1 = resolveAxis(p.X, xs, xMax, "x", true)
	L.y, n2 = resolveAxis(p.Y, ys, yMax, "y", true)
	notes := append(append(append([]string(nil), n1...), n2...), warn...)

	top := 12.0
	if p.Title != "" {
		top += sizeTitle + 10
	}
	yTickW := 0.0
	for _, s := range L.y.labels {
		yTickW = math.Max(yTickW, textWidth(s, sizeTick))
	}
	left := 10 + yTickW + tickLen + 5
	if lbl := Label(p.Y.Label, p.Y.Unit); lbl != "" {
		left += sizeLabel + 8
	}
	lastX := 0.0
	if k := len(L.x.labels); k > 0 {
		lastX = textWidth(L.x.labels[k-1], sizeTick) / 2
	}
	right := math.Max(14, lastX+8)
	bottom := tickLen + 5 + sizeTick + 8
	if lbl := Label(p.X.Label, p.X.Unit); lbl != "" {
		bottom += sizeLabel + 8
	}

	// Legend: to the right when it is narrow enough, else below.
	showLegend := len(data) > 1 || (len(data) == 1 && strings.TrimSpace(p.Series[0].Name) != "")
	if showLegend {
		nameW := 0.0
		for i, sd := range data {
			it := legendItem{name: truncate(sd.name, legendName), color: p.seriesColor(i),
				dashed: p.Series[i].Dashed, points: p.Series[i].Points}
			L.legend = append(L.legend, it)
			nameW = math.Max(nameW, textWidth(it.name, sizeTick))
		}
		legW := swatchW + 6 + nameW
		if L.W >= 420 && legW+legendPad <= 0.34*L.W {
			L.legendRight = true
			right = math.Max(right, legW+legendPad+8)
		}
	}

	userNotes := append(append([]string(nil), p.Notes...), notes...)
	for _, n := range userNotes {
		L.notes = append(L.notes, wrapText("Note: "+n, L.W-20, sizeNote)...)
	}
	notesH := 0.0
	if len(L.notes) > 0 {
		notesH = float64(len(L.notes))*noteLineH + 4
	}
	x0, x1 := left, L.W-right
	if x1-x0 < 80 {
		L.W += 80 - (x1 - x0)
		x1 = L.W - right
	}
	legendH := 0.0
	if showLegend && !L.legendRight {
		L.legendRows = legendRowsFor(L.legend, x1-x0+right-8)
		if p.Ordered && len(L.legendRows) > maxBelowRows {
			// Keep the first and last times and evenly spaced ones
			// between, as many as fit in the allowed rows.
			keep := max(2, len(L.legend)*maxBelowRows/len(L.legendRows)-1)
			for keep > 2 {
				thin := thinLegend(L.legend, keep)
				if len(legendRowsFor(thin, x1-x0+right-8)) <= maxBelowRows {
					break
				}
				keep--
			}
			L.legendMore = fmt.Sprintf("(%d of %d shown)", keep, len(L.legend))
			L.legend = thinLegend(L.legend, keep)
			L.legendRows = legendRowsFor(append(L.legend, legendItem{name: L.legendMore, more: true}), x1-x0+right-8)
		}
		legendH = float64(len(L.legendRows))*rowH + 6
	}
	minH := math.Max(70, 0.45*(L.H-top-bottom))
	y1 := L.H - bottom - legendH - notesH
	if y1-top < minH {
		L.H += minH - (y1 - top)
		y1 = L.H - bottom - legendH - notesH
	}
	L.area = rect{x0, top, x1, y1}
	if L.legendRight {
		maxRows := int((y1 - top) / rowH)
		if len(L.legend) > maxRows {
			if p.Ordered && maxRows >= 3 {
				keep := maxRows - 1
				L.legendMore = fmt.Sprintf("(%d of %d shown)", keep, len(L.legend))
				L.legend = thinLegend(L.legend, keep)
			} else {
				// Too many categories for one column: move below.
				L.legendRight = false
				L.area.X1 = L.W - math.Max(14, lastX+8)
				L.legendRows = legendRowsFor(L.legend, L.area.X1-L.area.X0)
				extra := float64(len(L.legendRows))*rowH + 6
				L.H += extra
			}
		}
	}
	return L, userNotes
}

// thinLegend keeps n of the items: the first, the last and evenly spaced
// ones between.
func thinLegend(items []legendItem, n int) []legendItem {
	if n >= len(items) {
		return items
	}
	if n < 2 {
		n = 2
	}
	out := make([]legendItem, 0, n)
	for j := range n {
		out = append(out, items[int(math.Round(float64(j)*float64(len(items)-1)/float64(n-1)))])
	}
	return out
}

// legendRowsFor packs legend items into rows no wider than w.
func legendRowsFor(items []legendItem, w float64) [][]legendItem {
	var rows [][]legendItem
	var cur []legendItem
	used := 0.0
	for _, it := range items {
		iw := swatchW + 6 + textWidth(it.name, sizeTick) + 18
		if len(cur) > 0 && used+iw > w {
			rows = append(rows, cur)
			cur, used = nil, 0
		}
		cur = append(cur, it)
		used += iw
	}
	if len(cur) > 0 {
		rows = append(rows, cur)
	}
	return rows
}

// wrapText breaks s into lines no wider than w px at the given size.
func wrapText(s string, w, size float64) []string {
	words := strings.Fields(s)
	var lines []string
	cur := ""
	for _, wd := range words {
		try := wd
		if cur != "" {
			try = cur + " " + wd
		}
		if cur != "" && textWidth(try, size) > w {
			lines = append(lines, cur)
			cur = wd
			continue
		}
		cur = try
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}

// Warnings returns the notes the renderer adds to the plot about data it
// could not draw or ranges it had to change (points left out, an axis
// range that was empty or inverted). An empty result means every point
// was drawn as given.
func (p *Plot) Warnings() []string {
	data, xs, ys, warn := p.prepare()
	_, notes := p.layout(data, xs, ys, warn)
	return notes[len(p.Notes):]
}

// SVG renders the plot as a standalone SVG document (no XML declaration,
// so it can also be placed inline in HTML). It has no id attributes, so
// any number of plots can share a page. Each series is one <path>
// element carrying a data-series attribute and a <title> with its name.
func (p *Plot) SVG() string {
	data, xs, ys, warn := p.prepare()
	L, _ := p.layout(data, xs, ys, warn)
	var b strings.Builder
	b.Grow(4096)
	svgHead(&b, L.W, L.H, p.Title)
	a := L.area
	pw, ph := a.X1-a.X0, a.Y1-a.Y0
	xpx := func(v float64) float64 { return a.X0 + L.x.pos(v)*pw }
	ypx := func(v float64) float64 { return a.Y1 - L.y.pos(v)*ph }

	// Grid and frame.
	b.WriteString(`<g stroke="currentColor" fill="none">` + "\n")
	writeGrid(&b, L.x.minor, xpx, a, true, "0.06")
	writeGrid(&b, L.y.minor, ypx, a, false, "0.06")
	writeGrid(&b, L.x.major, xpx, a, true, "0.14")
	writeGrid(&b, L.y.major, ypx, a, false, "0.14")
	fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s" stroke-opacity="0.5"/>`+"\n", px(a.X0), px(a.Y0), px(pw), px(ph))
	// Tick marks, outside the frame.
	for _, v := range L.x.major {
		x := xpx(v)
		fmt.Fprintf(&b, `<line x1="%s" y1="%s" x2="%s" y2="%s" stroke-opacity="0.6"/>`, px(x), px(a.Y1), px(x), px(a.Y1+tickLen))
	}
	for _, v := range L.y.major {
		y := ypx(v)
		fmt.Fprintf(&b, `<line x1="%s" y1="%s" x2="%s" y2="%s" stroke-opacity="0.6"/>`, px(a.X0-tickLen), px(y), px(a.X0), px(y))
	}
	b.WriteString("\n</g>\n")

	// Curves.
	clip := rect{a.X0 - 2, a.Y0 - 2, a.X1 + 2, a.Y1 + 2}
	b.WriteString(`<g fill="none" stroke-linejoin="round" stroke-linecap="round">` + "\n")
	for i, sd := range data {
		s := p.Series[i]
		var pieces [][]pt
		for _, piece := range sd.pieces {
			q := make([]pt, len(piece))
			for k, v := range piece {
				q[k] = pt{clampPx(xpx(v[0])), clampPx(ypx(v[1]))}
			}
			if s.Points {
				for _, c := range q {
					if c.X >= clip.X0 && c.X <= clip.X1 && c.Y >= clip.Y0 && c.Y <= clip.Y1 {
						pieces = append(pieces, []pt{c})
					}
				}
				continue
			}
			for _, c := range clipPolyline(q, clip) {
				pieces = append(pieces, simplify(c, 0.2))
			}
		}
		name := xmlEscape(sd.name)
		fmt.Fprintf(&b, `<path data-series="%s" stroke="%s"`, name, p.seriesColor(i))
		if s.Points {
			b.WriteString(` stroke-width="1.5"`)
		} else {
			b.WriteString(` stroke-width="2"`)
		}
		if s.Dashed {
			b.WriteString(` stroke-dasharray="7 4"`)
		}
		b.WriteString(` d="`)
		if s.Points {
			markerData(&b, pieces, 3)
		} else {
			pathData(&b, pieces)
		}
		b.WriteString(`"><title>` + name + "</title></path>\n")
	}
	b.WriteString("</g>\n")

	// Tick labels and axis labels.
	tickY := a.Y1 + tickLen + 4 + sizeTick*0.8
	b.WriteString(`<g text-anchor="middle">`)
	for i, v := range L.x.major {
		fmt.Fprintf(&b, `<text x="%s" y="%s">%s</text>`, px(xpx(v)), px(tickY), xmlEscape(L.x.labels[i]))
	}
	b.WriteString("</g>\n")
	b.WriteString(`<g text-anchor="end">`)
	for i, v := range L.y.major {
		fmt.Fprintf(&b, `<text x="%s" y="%s">%s</text>`, px(a.X0-tickLen-4), px(ypx(v)+sizeTick*0.35), xmlEscape(L.y.labels[i]))
	}
	b.WriteString("</g>\n")
	after := tickY
	if lbl := Label(p.X.Label, p.X.Unit); lbl != "" {
		after = tickY + 8 + sizeLabel
		fmt.Fprintf(&b, `<text x="%s" y="%s" text-anchor="middle" font-size="%s">%s</text>`+"\n",
			px((a.X0+a.X1)/2), px(after), px(sizeLabel), xmlEscape(lbl))
	}
	if lbl := Label(p.Y.Label, p.Y.Unit); lbl != "" {
		fmt.Fprintf(&b, `<text transform="translate(%s %s) rotate(-90)" text-anchor="middle" font-size="%s">%s</text>`+"\n",
			px(10+sizeLabel*0.8), px((a.Y0+a.Y1)/2), px(sizeLabel), xmlEscape(lbl))
	}
	if p.Title != "" {
		fmt.Fprintf(&b, `<text x="%s" y="%s" text-anchor="middle" font-size="%s" font-weight="bold">%s</text>`+"\n",
			px(L.W/2), px(12+sizeTitle*0.8), px(sizeTitle), xmlEscape(p.Title))
	}

	// Legend.
	if L.legendRight {
		x := a.X1 + legendPad
		y := a.Y0 + rowH/2
		b.WriteString("<g>")
		for _, it := range L.legend {
			writeLegendItem(&b, it, x, y)
			y += rowH
		}
		if L.legendMore != "" {
			fmt.Fprintf(&b, `<text x="%s" y="%s" opacity="0.75">%s</text>`, px(x), px(y+sizeTick*0.35), xmlEscape(L.legendMore))
		}
		b.WriteString("</g>\n")
		after = math.Max(after, y)
	} else if len(L.legendRows) > 0 {
		y := after + 6 + rowH/2
		b.WriteString("<g>")
		for _, row := range L.legendRows {
			x := a.X0
			for _, it := range row {
				writeLegendItem(&b, it, x, y)
				x += swatchW + 6 + textWidth(it.name, sizeTick) + 18
			}
			y += rowH
		}
		b.WriteString("</g>\n")
		after = y - rowH/2
	}

	// Notes.
	if len(L.notes) > 0 {
		y := L.H - float64(len(L.notes))*noteLineH + sizeNote*0.2
		y = math.Max(y, after+noteLineH)
		fmt.Fprintf(&b, `<g font-size="%s" opacity="0.8">`, px(sizeNote))
		for _, n := range L.notes {
			fmt.Fprintf(&b, `<text x="10" y="%s">%s</text>`, px(y), xmlEscape(n))
			y += noteLineH
		}
		b.WriteString("</g>\n")
	}
	b.WriteString("</svg>\n")
	return b.String()
}

func clampPx(v float64) float64 { return math.Max(-1e6, math.Min(1e6, v)) }

// writeGrid writes grid lines at the given values across the plot area.
func writeGrid(b *strings.Builder, vals []float64, at func(float64) float64, a rect, vertical bool, opacity string) {
	for _, v := range vals {
		c := at(v)
		if vertical {
			if c < a.X0-0.5 || c > a.X1+0.5 {
				continue
			}
			fmt.Fprintf(b, `<line x1="%s" y1="%s" x2="%s" y2="%s" stroke-opacity="%s"/>`, px(c), px(a.Y0), px(c), px(a.Y1), opacity)
		} else {
			if c < a.Y0-0.5 || c > a.Y1+0.5 {
				continue
			}
			fmt.Fprintf(b, `<line x1="%s" y1="%s" x2="%s" y2="%s" stroke-opacity="%s"/>`, px(a.X0), px(c), px(a.X1), px(c), opacity)
		}
	}
}

func writeLegendItem(b *strings.Builder, it legendItem, x, y float64) {
	if it.more {
		fmt.Fprintf(b, `<text x="%s" y="%s" opacity="0.75">%s</text>`, px(x), px(y+sizeTick*0.35), xmlEscape(it.name))
		return
	}
	if it.points {
		fmt.Fprintf(b, `<circle cx="%s" cy="%s" r="3" fill="none" stroke="%s" stroke-width="1.5"/>`, px(x+swatchW/2), px(y), it.color)
	} else {
		dash := ""
		if it.dashed {
			dash = ` stroke-dasharray="7 4"`
		}
		fmt.Fprintf(b, `<line x1="%s" y1="%s" x2="%s" y2="%s" stroke="%s" stroke-width="2"%s/>`, px(x), px(y), px(x+swatchW), px(y), it.color, dash)
	}
	fmt.Fprintf(b, `<text x="%s" y="%s">%s</text>`, px(x+swatchW+6), px(y+sizeTick*0.35), xmlEscape(it.name))
}

// HTML returns the SVG inside a <figure> element for inline display in a
// notebook or page, where its text takes the page's colour.
func (p *Plot) HTML() string {
	return `<figure style="margin:0.4em 0;max-width:100%">` + p.SVG() + `</figure>`
}

// Text returns a plain-text summary of the plot (title, axes, and per
// series the number of points and the range of y), for terminals and as
// the text/plain companion of the SVG.
func (p *Plot) Text() string {
	data, xs, ys, warn := p.prepare()
	L, notes := p.layout(data, xs, ys, warn)
	var b strings.Builder
	title := p.Title
	if title == "" {
		title = "Plot"
	}
	b.WriteString(title + "\n")
	axisLine(&b, "x", p.X, L.x)
	axisLine(&b, "y", p.Y, L.y)
	kind := plural(len(data), "curve", "curves")
	if p.Ordered {
		kind += ", in time order"
	}
	fmt.Fprintf(&b, "%d %s:\n", len(data), kind)
	for i, sd := range data {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, piece := range sd.pieces {
			for _, v := range piece {
				lo, hi = math.Min(lo, v[1]), math.Max(hi, v[1])
			}
		}
		if sd.n == 0 {
			fmt.Fprintf(&b, "  %s: no drawable points\n", sd.name)
			continue
		}
		style := ""
		if p.Series[i].Dashed {
			style = ", dashed"
		}
		if p.Series[i].Points {
			style = ", points"
		}
		fmt.Fprintf(&b, "  %s: %d points, y from %s to %s%s\n", sd.name, sd.n, FormatNumber(lo, 5), FormatNumber(hi, 5), style)
	}
	for _, n := range notes {
		b.WriteString("Note: " + n + "\n")
	}
	return b.String()
}

func axisLine(b *strings.Builder, name string, ax Axis, s scaleAxis) {
	lbl := Label(ax.Label, ax.Unit)
	if lbl == "" {
		lbl = "(unlabelled)"
	}
	fmt.Fprintf(b, "%s: %s, %s scale, %s to %s\n", name, lbl, s.Scale, FormatNumber(s.lo, 5), FormatNumber(s.hi, 5))
}
