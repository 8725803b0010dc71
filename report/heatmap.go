package report

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// Map is a colour map of a quantity over two coordinates, typically
// position and time: each value Z[i][j] at (XValues[i], YValues[j]) fills
// a cell reaching halfway to its neighbours, coloured by the sequential
// scale (dark = low, light = high), with a colour bar at the side.
// Uneven spacing (grids clustered toward a surface) is drawn as given.
type Map struct {
	// Title is drawn above the map; may be "".
	Title string
	// X and Y are the horizontal and vertical axes. An automatic range
	// is exactly the span of the values, so no empty band is drawn.
	X, Y Axis
	// XValues and YValues are the coordinates of the values. They need
	// not be sorted; values that cannot be placed on their axis (NaN,
	// ≤ 0 on a log axis, ...) and repeated values are left out.
	XValues, YValues []float64
	// Z holds the values: Z[i][j] is at XValues[i], YValues[j]. Missing
	// and non-finite entries leave their cell empty.
	Z [][]float64
	// ZLabel and ZUnit name the mapped quantity on the colour bar.
	ZLabel, ZUnit string
	// ZMin and ZMax fix the colour range (values outside take the end
	// colours); both zero or NaN means the range of Z.
	ZMin, ZMax float64
	// Width and Height are the size in px; 0 means DefaultWidth ×
	// DefaultHeight.
	Width, Height int
	// Notes are printed under the map, one per line.
	Notes []string
}

// mapLevels is the number of colours a map uses; cells whose colours
// fall on the same level share one path element, which keeps files small.
const mapLevels = 128

// coords sorts the usable coordinates of one axis and returns the
// original indices in sorted order, plus notes on what was left out.
func coords(vals []float64, sc AxisScale, name string) ([]int, []string) {
	var idx []int
	bad := 0
	for i, v := range vals {
		if sc.valid(v) {
			idx = append(idx, i)
		} else {
			bad++
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return vals[idx[a]] < vals[idx[b]] })
	out := idx[:0]
	dup := 0
	for k, i := range idx {
		if k > 0 && vals[i] == vals[out[len(out)-1]] {
			dup++
			continue
		}
		out = append(out, i)
	}
	var notes []string
	if bad > 0 {
		what := "NaN or infinite"
		if sc != Linear {
			what = "NaN, infinite or " + sc.invalidWhat()
		}
		notes = append(notes, fmt.Sprintf("%d %s %s; left out.", bad, name+"-value"+plural(bad, " is", "s are"), what))
	}
	if dup > 0 {
		notes = append(notes, fmt.Sprintf("%d repeated %s left out.", dup, name+"-value"+plural(dup, " was", "s were")))
	}
	return out, notes
}

// edges returns the cell boundaries, as fractions of the axis, of the
// sorted coordinates: halfway between neighbours (in the axis's own
// spacing) and half a spacing beyond the ends, then clipped to the axis.
func edges(a *scaleAxis, vals []float64, idx []int) []float64 {
	n := len(idx)
	e := make([]float64, n+1)
	u := make([]float64, n)
	for k, i := range idx {
		u[k] = a.pos(vals[i])
	}
	switch n {
	case 0:
		return nil
	case 1:
		e[0], e[1] = u[0]-0.5, u[0]+0.5
	default:
		e[0] = u[0] - (u[1]-u[0])/2
		e[n] = u[n-1] + (u[n-1]-u[n-2])/2
		for k := 1; k < n; k++ {
			e[k] = (u[k-1] + u[k]) / 2
		}
	}
	for k := range e {
		e[k] = math.Max(0, math.Min(1, e[k]))
	}
	return e
}

// mapPrep is a Map after filtering.
type mapPrep struct {
	xi, yi   []int
	x, y     scaleAxis
	zlo, zhi float64
	notes    []string
	cells    int // cells with a value
}

func (m *Map) prepare(xMax, yMax int) mapPrep {
	var r mapPrep
	var n []string
	r.xi, n = coords(m.XValues, m.X.Scale, "x")
	r.notes = append(r.notes, n...)
	r.yi, n = coords(m.YValues, m.Y.Scale, "y")
	r.notes = append(r.notes, n...)
	xs := make([]float64, len(r.xi))
	for k, i := range r.xi {
		xs[k] = m.XValues[i]
	}
	ys := make([]float64, len(r.yi))
	for k, j := range r.yi {
		ys[k] = m.YValues[j]
	}
	r.x, n = resolveAxis(m.X, xs, xMax, "x", false)
	r.notes = append(r.notes, n...)
	r.y, n = resolveAxis(m.Y, ys, yMax, "y", false)
	r.notes = append(r.notes, n...)

	lo, hi := math.Inf(1), math.Inf(-1)
	missing := 0
	for _, i := range r.xi {
		for _, j := range r.yi {
			z, ok := m.at(i, j)
			if !ok {
				missing++
				continue
			}
			r.cells++
			lo, hi = math.Min(lo, z), math.Max(hi, z)
		}
	}
	if missing > 0 {
		r.notes = append(r.notes, fmt.Sprintf("%d %s no finite value; left empty.", missing, plural(missing, "cell has", "cells have")))
	}
	if len(m.Z) != len(m.XValues) {
		r.notes = append(r.notes, fmt.Sprintf("Z has %d rows for %d x-values.", len(m.Z), len(m.XValues)))
	}
	if r.cells == 0 {
		lo, hi = 0, 1
	}
	zAuto := (m.ZMin == 0 && m.ZMax == 0) || math.IsNaN(m.ZMin) || math.IsNaN(m.ZMax) ||
		math.IsInf(m.ZMin, 0) || math.IsInf(m.ZMax, 0)
	if !zAuto {
		if m.ZMin < m.ZMax {
			lo, hi = m.ZMin, m.ZMax
		} else {
			r.notes = append(r.notes, "colour range minimum is not below its maximum; the range of the values is used.")
		}
	}
	if lo == hi {
		d := math.Max(math.Abs(lo)*0.1, 1e-300)
		if lo == 0 {
			d = 1
		}
		lo, hi = lo-d, hi+d
	}
	r.zlo, r.zhi = lo, hi
	return r
}

// at returns Z[i][j] and whether it is present and finite.
func (m *Map) at(i, j int) (float64, bool) {
	if i >= len(m.Z) || j >= len(m.Z[i]) {
		return 0, false
	}
	z := m.Z[i][j]
	return z, finite(z)
}

// level maps z to a colour level in [0, mapLevels).
func level(z, lo, hi float64) int {
	f := (z - lo) / (hi - lo)
	return clampInt(int(math.Round(f*(mapLevels-1))), 0, mapLevels-1)
}

func levelColor(l int) string { return SequentialColor(float64(l) / (mapLevels - 1)) }

// Warnings returns the notes the renderer adds to the map about values it
// could not place or colour.
func (m *Map) Warnings() []string {
	return m.prepare(6, 6).notes
}

// SVG renders the map as a standalone SVG document with a colour bar,
// without id attributes.
func (m *Map) SVG() string {
	W, H := plotSize(m.Width, m.Height)
	xMax := clampInt(int((W-220)/85), 3, 10)
	yMax := clampInt(int((H-110)/45), 3, 9)
	r := m.prepare(xMax, yMax)
	zTicks := NiceTicks(r.zlo, r.zhi, clampInt(int((H-110)/45), 3, 8))
	zLabels := tickLabels(zTicks, Linear)

	top := 12.0
	if m.Title != "" {
		top += sizeTitle + 10
	}
	yTickW := 0.0
	for _, s := range r.y.labels {
		yTickW = math.Max(yTickW, textWidth(s, sizeTick))
	}
	left := 10 + yTickW + tickLen + 5
	if Label(m.Y.Label, m.Y.Unit) != "" {
		left += sizeLabel + 8
	}
	zTickW := 0.0
	for _, s := range zLabels {
		zTickW = math.Max(zTickW, textWidth(s, sizeTick))
	}
	const barGap, barW = 18.0, 14.0
	right := barGap + barW + tickLen + 4 + zTickW + 10
	zl := Label(m.ZLabel, m.ZUnit)
	if zl != "" {
		right += sizeLabel + 6
	}
	if k := len(r.x.labels); k > 0 {
		right = math.Max(right, textWidth(r.x.labels[k-1], sizeTick)/2+8)
	}
	bottom := tickLen + 5 + sizeTick + 8
	if Label(m.X.Label, m.X.Unit) != "" {
		bottom += sizeLabel + 8
	}
	var noteLines []string
	for _, n := range append(append([]string(nil), m.Notes...), r.notes...) {
		noteLines = append(noteLines, wrapText("Note: "+n, W-20, sizeNote)...)
	}
	notesH := 0.0
	if len(noteLines) > 0 {
		notesH = float64(len(noteLines))*noteLineH + 4
	}
	if W-right-left < 80 {
		W = left + right + 80
	}
	if H-bottom-notesH-top < 70 {
		H = top + bottom + notesH + 70
	}
	a := rect{left, top, W - right, H - bottom - notesH}
	pw, ph := a.X1-a.X0, a.Y1-a.Y0

	var b strings.Builder
	b.Grow(8192)
	svgHead(&b, W, H, m.Title)

	// Cells, one path per colour level; runs of equal colour along x
	// are merged into one rectangle.
	ex := edges(&r.x, m.XValues, r.xi)
	ey := edges(&r.y, m.YValues, r.yi)
	paths := map[int]*strings.Builder{}
	for jj, j := range r.yi {
		y0 := a.Y1 - ey[jj+1]*ph
		y1 := a.Y1 - ey[jj]*ph
		runStart, runLevel := -1, -1
		flush := func(end int) {
			if runStart < 0 {
				return
			}
			x0 := a.X0 + ex[runStart]*pw
			x1 := a.X0 + ex[end]*pw
			if x1-x0 > 0 && y1-y0 > 0 {
				pb := paths[runLevel]
				if pb == nil {
					pb = &strings.Builder{}
					paths[runLevel] = pb
				}
				w := int64(math.Round(x1*10)) - int64(math.Round(x0*10))
				h := int64(math.Round(y1*10)) - int64(math.Round(y0*10))
				pb.WriteString("M" + px(x0) + " " + px(y0) + "h" + tenths(w) + "v" + tenths(h) + "h-" + tenths(w) + "z")
			}
			runStart = -1
		}
		for ii, i := range r.xi {
			z, ok := m.at(i, j)
			if !ok {
				flush(ii)
				continue
			}
			l := level(z, r.zlo, r.zhi)
			if runStart >= 0 && l == runLevel {
				continue
			}
			flush(ii)
			runStart, runLevel = ii, l
		}
		flush(len(r.xi))
	}
	levels := make([]int, 0, len(paths))
	for l := range paths {
		levels = append(levels, l)
	}
	sort.Ints(levels)
	b.WriteString(`<g stroke="none" shape-rendering="crispEdges">` + "\n")
	for _, l := range levels {
		fmt.Fprintf(&b, `<path fill="%s" d="%s"/>`+"\n", levelColor(l), paths[l].String())
	}
	// Colour bar.
	bx := a.X1 + barGap
	const barSteps = 64
	for k := range barSteps {
		y0 := a.Y1 - float64(k+1)*ph/barSteps
		fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"/>`, px(bx), px(y0), px(barW), px(ph/barSteps+0.3),
			SequentialColor((float64(k)+0.5)/barSteps))
	}
	b.WriteString("\n</g>\n")

	// Frames and ticks.
	xpx := func(v float64) float64 { return a.X0 + r.x.pos(v)*pw }
	ypx := func(v float64) float64 { return a.Y1 - r.y.pos(v)*ph }
	zpx := func(v float64) float64 { return a.Y1 - (v-r.zlo)/(r.zhi-r.zlo)*ph }
	b.WriteString(`<g stroke="currentColor" fill="none" stroke-opacity="0.6">`)
	fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s"/>`, px(a.X0), px(a.Y0), px(pw), px(ph))
	fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s"/>`, px(bx), px(a.Y0), px(barW), px(ph))
	for _, v := range r.x.major {
		fmt.Fprintf(&b, `<line x1="%s" y1="%s" x2="%[1]s" y2="%s"/>`, px(xpx(v)), px(a.Y1), px(a.Y1+tickLen))
	}
	for _, v := range r.y.major {
		fmt.Fprintf(&b, `<line x1="%s" y1="%s" x2="%s" y2="%[2]s"/>`, px(a.X0-tickLen), px(ypx(v)), px(a.X0))
	}
	for _, v := range zTicks {
		fmt.Fprintf(&b, `<line x1="%s" y1="%s" x2="%s" y2="%[2]s"/>`, px(bx+barW), px(zpx(v)), px(bx+barW+tickLen))
	}
	b.WriteString("</g>\n")

	tickY := a.Y1 + tickLen + 4 + sizeTick*0.8
	b.WriteString(`<g text-anchor="middle">`)
	for i, v := range r.x.major {
		fmt.Fprintf(&b, `<text x="%s" y="%s">%s</text>`, px(xpx(v)), px(tickY), xmlEscape(r.x.labels[i]))
	}
	b.WriteString("</g>\n<g text-anchor=\"end\">")
	for i, v := range r.y.major {
		fmt.Fprintf(&b, `<text x="%s" y="%s">%s</text>`, px(a.X0-tickLen-4), px(ypx(v)+sizeTick*0.35), xmlEscape(r.y.labels[i]))
	}
	b.WriteString("</g>\n<g>")
	for i, v := range zTicks {
		fmt.Fprintf(&b, `<text x="%s" y="%s">%s</text>`, px(bx+barW+tickLen+4), px(zpx(v)+sizeTick*0.35), xmlEscape(zLabels[i]))
	}
	b.WriteString("</g>\n")
	if lbl := Label(m.X.Label, m.X.Unit); lbl != "" {
		fmt.Fprintf(&b, `<text x="%s" y="%s" text-anchor="middle" font-size="%s">%s</text>`+"\n",
			px((a.X0+a.X1)/2), px(tickY+8+sizeLabel), px(sizeLabel), xmlEscape(lbl))
	}
	if lbl := Label(m.Y.Label, m.Y.Unit); lbl != "" {
		fmt.Fprintf(&b, `<text transform="translate(%s %s) rotate(-90)" text-anchor="middle" font-size="%s">%s</text>`+"\n",
			px(10+sizeLabel*0.8), px((a.Y0+a.Y1)/2), px(sizeLabel), xmlEscape(lbl))
	}
	if zl != "" {
		fmt.Fprintf(&b, `<text transform="translate(%s %s) rotate(-90)" text-anchor="middle" font-size="%s">%s</text>`+"\n",
			px(W-10), px((a.Y0+a.Y1)/2), px(sizeLabel), xmlEscape(zl))
	}
	if m.Title != "" {
		fmt.Fprintf(&b, `<text x="%s" y="%s" text-anchor="middle" font-size="%s" font-weight="bold">%s</text>`+"\n",
			px(W/2), px(12+sizeTitle*0.8), px(sizeTitle), xmlEscape(m.Title))
	}
	if len(noteLines) > 0 {
		y := H - float64(len(noteLines))*noteLineH + sizeNote*0.2
		fmt.Fprintf(&b, `<g font-size="%s" opacity="0.8">`, px(sizeNote))
		for _, n := range noteLines {
			fmt.Fprintf(&b, `<text x="10" y="%s">%s</text>`, px(y), xmlEscape(n))
			y += noteLineH
		}
		b.WriteString("</g>\n")
	}
	b.WriteString("</svg>\n")
	return b.String()
}

// HTML returns the SVG inside a <figure> element for inline display.
func (m *Map) HTML() string {
	return `<figure style="margin:0.4em 0;max-width:100%">` + m.SVG() + `</figure>`
}

// Text returns a plain-text summary of the map: title, axes, grid size
// and the range of the mapped values.
func (m *Map) Text() string {
	r := m.prepare(6, 6)
	var b strings.Builder
	title := m.Title
	if title == "" {
		title = "Map"
	}
	b.WriteString(title + "\n")
	axisLine(&b, "x", m.X, r.x)
	axisLine(&b, "y", m.Y, r.y)
	zl := Label(m.ZLabel, m.ZUnit)
	if zl == "" {
		zl = "value"
	}
	fmt.Fprintf(&b, "%s on %d × %d points (%d with values), colour from %s to %s\n",
		zl, len(r.xi), len(r.yi), r.cells, FormatNumber(r.zlo, 5), FormatNumber(r.zhi, 5))
	for _, n := range append(append([]string(nil), m.Notes...), r.notes...) {
		b.WriteString("Note: " + n + "\n")
	}
	return b.String()
}
