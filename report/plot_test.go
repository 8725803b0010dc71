package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// profilePlot is a scenario of our own: n concentration profiles in a
// bead of radius 1.5 mm, pts points each.
func profilePlot(n, pts int) *Plot {
	p := &Plot{
		Title:   "Dye in a gel bead",
		X:       Axis{Label: "Radial position r", Unit: "mm"},
		Y:       Axis{Label: "Concentration c", Unit: "mol/m^3"},
		Ordered: true,
	}
	for k := range n {
		t := 60 * math.Pow(3, float64(k))
		s := Series{Name: fmt.Sprintf("t = %g s", t)}
		for i := range pts {
			r := 1.5 * float64(i) / float64(pts-1)
			s.X = append(s.X, r)
			s.Y = append(s.Y, 0.8*math.Exp(-(1.5-r)*(1.5-r)/(4e-4*t)))
		}
		p.Series = append(p.Series, s)
	}
	return p
}

func TestPlotStructure(t *testing.T) {
	p := profilePlot(5, 200)
	svg := p.SVG()
	doc := parseSVG(t, svg)
	if doc.root.Name.Local != "svg" || doc.root.Name.Space != "http://www.w3.org/2000/svg" {
		t.Errorf("root element is %v, want svg in the SVG namespace", doc.root.Name)
	}
	if vb, ok := rootAttr(doc.root, "viewBox"); !ok || vb != "0 0 640 400" {
		t.Errorf("viewBox = %q, want \"0 0 640 400\"", vb)
	}
	if ff, _ := rootAttr(doc.root, "font-family"); ff != "sans-serif" {
		t.Errorf("font-family = %q, want the generic sans-serif", ff)
	}
	if doc.attrs["id"] != 0 {
		t.Errorf("SVG has %d id attributes; plots on one page would clash", doc.attrs["id"])
	}
	if doc.elements["path"] != 5 || len(doc.series) != 5 {
		t.Errorf("got %d <path> elements and %d data-series, want one per series (5)", doc.elements["path"], len(doc.series))
	}
	for k, s := range p.Series {
		if doc.series[k] != s.Name {
			t.Errorf("path %d names %q, want %q", k, doc.series[k], s.Name)
		}
	}
	for _, want := range []string{"Radial position r [mm]", "Concentration c [mol/m³]", "Dye in a gel bead", "t = 60 s", "t = 4860 s"} {
		if !doc.hasText(want) {
			t.Errorf("no <text> %q in %q", want, doc.texts)
		}
	}
	// Tick labels 0.0, 0.5, 1.0, 1.5 on x and 0 … 0.8 on y.
	for _, want := range []string{"0.0", "0.5", "1.0", "1.5", "0.2", "0.8"} {
		if !doc.hasText(want) {
			t.Errorf("no tick label %q in %q", want, doc.texts)
		}
	}
	// Colours: ordered series run from dark to light.
	cols := regexp.MustCompile(`data-series="[^"]*" stroke="(#[0-9a-f]{6})"`).FindAllStringSubmatch(svg, -1)
	if len(cols) != 5 {
		t.Fatalf("found %d series colours, want 5", len(cols))
	}
	for k := 1; k < len(cols); k++ {
		if relLuminance(cols[k][1]) <= relLuminance(cols[k-1][1]) {
			t.Errorf("ordered series %d (%s) is not lighter than series %d (%s)", k, cols[k][1], k-1, cols[k-1][1])
		}
	}
	// Coordinates carry at most one decimal.
	coords := regexp.MustCompile(` (?:x|y|x1|x2|y1|y2|width|height|d)="([^"]*)"`).FindAllStringSubmatch(svg, -1)
	if len(coords) < 20 {
		t.Fatalf("found only %d coordinate attributes", len(coords))
	}
	for _, c := range coords {
		if m := regexp.MustCompile(`\d\.\d\d`).FindString(c[1]); m != "" {
			t.Errorf("coordinate with more than one decimal: %q in %q", m, c[0])
		}
	}
	if !strings.Contains(svg, "currentColor") {
		t.Error("SVG does not use currentColor")
	}
}

func TestPlotTicksAreNice(t *testing.T) {
	// Read the x tick labels back from the SVG and check them.
	p := &Plot{X: Axis{Label: "t", Unit: "s"}, Y: Axis{Label: "F"},
		Series: []Series{{X: []float64{0.37, 913.2}, Y: []float64{0.013, 0.91}}}}
	doc := parseSVG(t, p.SVG())
	var nums []float64
	for _, s := range doc.texts {
		if v, err := strconv.ParseFloat(s, 64); err == nil {
			nums = append(nums, v)
		}
	}
	if len(nums) < 6 {
		t.Fatalf("too few numeric tick labels: %q", doc.texts)
	}
	for _, v := range nums {
		if !shortDecimal(v) {
			t.Errorf("tick label %v is not a clean decimal", v)
		}
	}
	// The automatic range is widened to clean values, without leaving
	// much of the axis empty.
	L, _ := p.layout(p.prepare())
	if L.x.lo != 0 || L.x.hi < 913.2 || L.x.hi > 913.2*1.08 || !shortDecimal(L.x.hi) {
		t.Errorf("x axis runs from %g to %g, want 0 to a clean value just above 913.2", L.x.lo, L.x.hi)
	}
	if L.y.lo != 0 || L.y.hi < 0.91 || L.y.hi > 1 {
		t.Errorf("y axis runs from %g to %g, want 0 to at most 1", L.y.lo, L.y.hi)
	}
}

func TestPlotEscapesNames(t *testing.T) {
	p := &Plot{
		Title:  `<script>alert("x")</script>`,
		X:      Axis{Label: "a & b", Unit: "<u>"},
		Y:      Axis{Label: `"y"`},
		Series: []Series{{Name: "<b>", X: []float64{0, 1}, Y: []float64{0, 1}}, {Name: "ok\x00\x1f\xff", X: []float64{0, 1}, Y: []float64{1, 0}}},
		Notes:  []string{"1 < 2"},
	}
	svg := p.SVG()
	if strings.Contains(svg, "<b>") || strings.Contains(svg, "<script") || strings.Contains(svg, "<u>") {
		t.Errorf("names not escaped:\n%s", svg)
	}
	doc := parseSVG(t, svg)
	if len(doc.series) != 2 || doc.series[0] != "<b>" {
		t.Errorf("series names read back as %q, want [<b> ...]", doc.series)
	}
	if doc.series[1] != "ok\uFFFD" {
		t.Errorf("control characters and invalid UTF-8 not cleaned: %q", doc.series[1])
	}
	if !doc.hasText("a & b [<u>]") || !doc.hasText("Note: 1 < 2") {
		t.Errorf("escaped texts do not read back: %q", doc.texts)
	}
}

var nonFiniteAttr = regexp.MustCompile(`="[^"]*(NaN|Inf)[^"]*"`)

func TestPlotBadInput(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name  string
		plot  *Plot
		paths int
		warn  []string // substrings expected among the warnings
	}{
		{"no series", &Plot{}, 0, []string{"no series"}},
		{"empty series", &Plot{Series: []Series{{Name: "e"}}}, 1, []string{`"e" has no points`}},
		{"all NaN", &Plot{Series: []Series{{Name: "n", X: []float64{nan, 1}, Y: []float64{1, nan}}}}, 1,
			[]string{"2 points are NaN or infinite"}},
		{"inf", &Plot{Series: []Series{{Name: "i", X: []float64{0, 1, 2}, Y: []float64{1, inf, 3}}}}, 1,
			[]string{"1 point is NaN or infinite"}},
		{"log non-positive", &Plot{Y: Axis{Scale: Log}, Series: []Series{{Name: "l", X: []float64{0, 1, 2, 3}, Y: []float64{-1, 0, 1, 10}}}}, 1,
			[]string{"2 points have y ≤ 0 (log axis)"}},
		{"log x non-positive", &Plot{X: Axis{Scale: Log}, Series: []Series{{Name: "l", X: []float64{0, 1, 2}, Y: []float64{1, 1, 2}}}}, 1,
			[]string{"1 point has x ≤ 0 (log axis)"}},
		{"sqrt negative", &Plot{X: Axis{Scale: Sqrt}, Series: []Series{{Name: "s", X: []float64{-1, 0, 4}, Y: []float64{1, 1, 2}}}}, 1,
			[]string{"x < 0 (square-root axis)"}},
		{"length mismatch", &Plot{Series: []Series{{Name: "m", X: []float64{0, 1, 2}, Y: []float64{1}}}}, 1,
			[]string{"3 x and 1 y values"}},
		{"zero-width data", &Plot{Series: []Series{{Name: "c", X: []float64{2, 2}, Y: []float64{0.8, 0.8}}}}, 1, nil},
		{"zero-width fixed range", &Plot{X: Axis{Min: 3, Max: 3}, Series: []Series{{Name: "z", X: []float64{0, 1}, Y: []float64{0, 1}}}}, 1,
			[]string{"minimum equals maximum"}},
		{"inverted range", &Plot{Y: Axis{Min: 1, Max: 0}, Series: []Series{{Name: "v", X: []float64{0, 1}, Y: []float64{0, 1}}}}, 1,
			[]string{"swapped"}},
		{"log range non-positive", &Plot{Y: Axis{Scale: Log, Min: -1, Max: 10}, Series: []Series{{Name: "w", X: []float64{0, 1}, Y: []float64{0.1, 1}}}}, 1,
			[]string{"cannot be shown on a log axis"}},
		{"NaN range means auto", &Plot{X: Axis{Min: nan, Max: 5}, Series: []Series{{Name: "a", X: []float64{1, 2}, Y: []float64{0, 1}}}}, 1, nil},
		{"fixed end beyond data", &Plot{X: Axis{Min: 10, Max: nan}, Series: []Series{{Name: "b", X: []float64{1, 2}, Y: []float64{0, 1}}}}, 1, nil},
		{"huge values", &Plot{Series: []Series{{Name: "h", X: []float64{-math.MaxFloat64, math.MaxFloat64}, Y: []float64{math.MaxFloat64, -math.MaxFloat64}}}}, 1, nil},
		{"tiny size", &Plot{Width: 10, Height: -5, Title: "a very long title that is wider than the plot", Series: []Series{{Name: "t", X: []float64{0, 1}, Y: []float64{0, 1}}}}, 1, nil},
		{"unknown scale", &Plot{X: Axis{Scale: AxisScale(9)}, Series: []Series{{Name: "u", X: []float64{0, 1}, Y: []float64{0, 1}}}}, 1,
			[]string{"unknown x axis scale"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			svg := tc.plot.SVG()
			doc := parseSVG(t, svg)
			if len(doc.series) != tc.paths || doc.elements["path"] != tc.paths {
				t.Errorf("%d series paths (%d <path>), want %d", len(doc.series), doc.elements["path"], tc.paths)
			}
			warn := strings.Join(tc.plot.Warnings(), "\n")
			for _, w := range tc.warn {
				if !strings.Contains(warn, w) {
					t.Errorf("warnings %q lack %q", warn, w)
				}
				// Each warning is also printed in the SVG.
				found := false
				for _, tx := range doc.texts {
					found = found || strings.Contains(tx, w)
				}
				if !found && len(w) < 40 {
					t.Errorf("SVG does not show the warning %q", w)
				}
			}
			if len(tc.warn) == 0 && warn != "" {
				t.Errorf("unexpected warnings: %q", warn)
			}
			if nonFiniteAttr.MatchString(svg) {
				t.Errorf("SVG contains NaN or Inf in an attribute: %s", nonFiniteAttr.FindString(svg))
			}
			_ = tc.plot.Text()
			_ = tc.plot.HTML()
		})
	}
}

func TestPlotLogAxisBreaksLine(t *testing.T) {
	p := &Plot{Y: Axis{Scale: Log}, Series: []Series{{Name: "l", X: []float64{0, 1, 2, 3, 4, 5}, Y: []float64{1, 2, 0, 4, 5, 6}}}}
	doc := parseSVG(t, p.SVG())
	if len(doc.pathD) != 1 {
		t.Fatalf("want one path, got %d", len(doc.pathD))
	}
	if n := strings.Count(doc.pathD[0], "M"); n != 2 {
		t.Errorf("a dropped point should break the line into 2 pieces; path has %d moves: %s", n, doc.pathD[0])
	}
	// Log ticks are decades 1 and 10.
	if !doc.hasText("1") || !doc.hasText("10") {
		t.Errorf("log y axis labels: %q", doc.texts)
	}
}

func TestPlotSqrtAxis(t *testing.T) {
	s := Series{Name: "F"}
	for i := 0; i <= 100; i++ {
		tt := 14400 * float64(i) / 100
		s.X = append(s.X, tt)
		s.Y = append(s.Y, math.Sqrt(tt)/120)
	}
	p := &Plot{X: Axis{Label: "t", Unit: "s", Scale: Sqrt}, Y: Axis{Label: "uptake"}, Series: []Series{s}}
	svg := p.SVG()
	doc := parseSVG(t, svg)
	for _, want := range []string{"0", "500", "2000", "5000", "10000"} {
		if !doc.hasText(want) {
			t.Errorf("√t axis lacks tick %q: %q", want, doc.texts)
		}
	}
	// F ∝ √t is a straight line on a √t axis: the simplified path has
	// few vertices.
	if n := strings.Count(doc.pathD[0], " ") + strings.Count(doc.pathD[0], "-"); n > 12 {
		t.Errorf("straight line on √t axis has too many coordinates: %s", doc.pathD[0])
	}
}

func TestPlotClipsToFixedRange(t *testing.T) {
	p := &Plot{
		X: Axis{Min: 0, Max: 1}, Y: Axis{Min: 0, Max: 1},
		Series: []Series{{Name: "c", X: []float64{-1, 0.5, 2}, Y: []float64{0.5, 0.5, 3}}},
	}
	L, _ := p.layout(p.prepare())
	svg := p.SVG()
	doc := parseSVG(t, svg)
	// Walk the path and check all vertices lie within the area (+2 px).
	xs, ys := pathVertices(t, doc.pathD[0])
	for i := range xs {
		if xs[i] < L.area.X0-2.05 || xs[i] > L.area.X1+2.05 || ys[i] < L.area.Y0-2.05 || ys[i] > L.area.Y1+2.05 {
			t.Errorf("vertex (%g, %g) outside the plot area %+v", xs[i], ys[i], L.area)
		}
	}
}

// pathVertices decodes path data made of M/m and l commands.
func pathVertices(t *testing.T, d string) (xs, ys []float64) {
	t.Helper()
	tok := regexp.MustCompile(`[MlhA-Za-z]|-?\d+(\.\d+)?`).FindAllString(d, -1)
	var x, y float64
	cmd := ""
	var nums []float64
	flush := func() {
		for len(nums) >= 2 {
			switch cmd {
			case "M":
				x, y = nums[0], nums[1]
				cmd = "l"
			case "l":
				x, y = x+nums[0], y+nums[1]
			}
			xs, ys = append(xs, x), append(ys, y)
			nums = nums[2:]
		}
		nums = nums[:0]
	}
	for _, s := range tok {
		if v, err := strconv.ParseFloat(s, 64); err == nil {
			nums = append(nums, v)
			continue
		}
		flush()
		cmd = s
		if cmd != "M" && cmd != "l" && cmd != "h" {
			t.Fatalf("unexpected path command %q in %s", cmd, d)
		}
	}
	flush()
	return xs, ys
}

func TestPlotPointsAndDashes(t *testing.T) {
	p := &Plot{Series: []Series{
		{Name: "model", X: []float64{0, 1, 2}, Y: []float64{0, 1, 4}},
		{Name: "reference", X: []float64{0, 1, 2}, Y: []float64{0, 1.1, 3.9}, Dashed: true},
		{Name: "measured", X: []float64{0.5, 1.5}, Y: []float64{0.3, 2.2}, Points: true},
	}}
	svg := p.SVG()
	doc := parseSVG(t, svg)
	if len(doc.series) != 3 {
		t.Fatalf("want 3 series paths, got %d", len(doc.series))
	}
	if strings.Count(svg, "stroke-dasharray") != 2 { // path + legend sample
		t.Errorf("dashed series should appear dashed in the plot and the legend")
	}
	if got := strings.Count(doc.pathD[2], "a"); got != 4 {
		t.Errorf("2 markers need 4 arcs, got %d in %s", got, doc.pathD[2])
	}
	if doc.elements["circle"] != 1 {
		t.Errorf("legend marker sample missing")
	}
	cols := regexp.MustCompile(`data-series="[^"]*" stroke="(#[0-9a-f]{6})"`).FindAllStringSubmatch(svg, -1)
	if cols[0][1] == cols[1][1] || cols[1][1] == cols[2][1] || cols[0][1] == cols[2][1] {
		t.Errorf("categorical colours repeat: %v", cols)
	}
}

func TestPlotLegendOutsideArea(t *testing.T) {
	for _, w := range []int{640, 360} {
		p := profilePlot(5, 20)
		p.Width = w
		L, _ := p.layout(p.prepare())
		if w >= 600 && !L.legendRight {
			t.Errorf("width %d: legend should sit at the right", w)
		}
		if w < 400 && (L.legendRight || len(L.legendRows) == 0) {
			t.Errorf("width %d: legend should sit below", w)
		}
		// Right legend starts beyond the plot area; a bottom legend is
		// drawn below the x label, i.e. below the area.
		svg := p.SVG()
		doc := parseSVG(t, svg)
		if !doc.hasText("t = 60 s") {
			t.Errorf("width %d: legend entry missing", w)
		}
		re := regexp.MustCompile(`<text x="([-\d.]+)" y="([-\d.]+)">t = 60 s</text>`)
		m := re.FindStringSubmatch(svg)
		if m == nil {
			t.Fatalf("width %d: legend text not found", w)
		}
		x, _ := strconv.ParseFloat(m[1], 64)
		y, _ := strconv.ParseFloat(m[2], 64)
		if L.legendRight && x <= L.area.X1 {
			t.Errorf("width %d: legend at x=%g inside the area (right edge %g)", w, x, L.area.X1)
		}
		if !L.legendRight && y <= L.area.Y1 {
			t.Errorf("width %d: legend at y=%g inside the area (bottom %g)", w, y, L.area.Y1)
		}
		vb, _ := rootAttr(doc.root, "viewBox")
		var vw, vh float64
		fmt.Sscanf(vb, "0 0 %g %g", &vw, &vh)
		if y > vh || x > vw {
			t.Errorf("width %d: legend at (%g, %g) outside the viewBox %s", w, x, y, vb)
		}
	}
}

func TestPlotManyOrderedSeriesThinsLegend(t *testing.T) {
	for _, w := range []int{640, 360} {
		p := profilePlot(40, 10)
		p.Width = w
		for k := range p.Series {
			p.Series[k].Name = fmt.Sprintf("%d min", 3*k)
		}
		svg := p.SVG()
		doc := parseSVG(t, svg)
		if len(doc.series) != 40 {
			t.Errorf("width %d: want 40 paths, got %d", w, len(doc.series))
		}
		if !strings.Contains(svg, "of 40 shown") {
			t.Errorf("width %d: thinned legend should say how many entries it shows", w)
		}
		if !doc.hasText("0 min") || !doc.hasText("117 min") {
			t.Errorf("width %d: thinned legend should keep the first and last time", w)
		}
		L, _ := p.layout(p.prepare())
		if h := L.area.Y1 - L.area.Y0; h < 0.45*(400-100) {
			t.Errorf("width %d: plot area only %g px high", w, h)
		}
	}
}

func TestPlotRightTickLabelNotClipped(t *testing.T) {
	// The last x tick label is centred on the right edge of the area;
	// half its width must fit inside the viewBox.
	p := &Plot{Series: []Series{{X: []float64{0, 123456}, Y: []float64{0, 1}}}}
	L, _ := p.layout(p.prepare())
	last := L.x.labels[len(L.x.labels)-1]
	if L.area.X1+textWidth(last, sizeTick)/2 > L.W {
		t.Errorf("label %q at %g overflows width %g", last, L.area.X1, L.W)
	}
}

func TestPlotSimplifiesLongSeries(t *testing.T) {
	s := Series{Name: "long"}
	for i := range 20000 {
		x := float64(i) / 19999
		s.X = append(s.X, x)
		s.Y = append(s.Y, math.Sin(6*x))
	}
	svg := (&Plot{Series: []Series{s}}).SVG()
	if len(svg) > 12000 {
		t.Errorf("20000-point series gave %d bytes; simplification should keep it small", len(svg))
	}
	parseSVG(t, svg)
}

func TestPlotRandomInputNeverPanics(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	special := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, -0.0, 1e-320, 1e308, -1e308, 1}
	pick := func() float64 {
		if r.IntN(4) == 0 {
			return special[r.IntN(len(special))]
		}
		return (r.Float64() - 0.5) * math.Pow(10, float64(r.IntN(20)-10))
	}
	for range 300 {
		p := &Plot{
			X:       Axis{Scale: AxisScale(r.IntN(3)), Min: pick(), Max: pick()},
			Y:       Axis{Scale: AxisScale(r.IntN(3))},
			Ordered: r.IntN(2) == 0,
			Width:   r.IntN(900) - 100,
			Height:  r.IntN(700) - 100,
		}
		if r.IntN(2) == 0 {
			p.X.Min, p.X.Max = 0, 0
		}
		for k := range r.IntN(5) {
			s := Series{Name: fmt.Sprint("s", k), Points: r.IntN(3) == 0}
			for range r.IntN(50) {
				s.X = append(s.X, pick())
				s.Y = append(s.Y, pick())
			}
			p.Series = append(p.Series, s)
		}
		svg := p.SVG()
		doc := parseSVG(t, svg)
		if len(doc.series) != len(p.Series) {
			t.Fatalf("%d paths for %d series", len(doc.series), len(p.Series))
		}
		if nonFiniteAttr.MatchString(svg) {
			t.Fatalf("non-finite number in SVG for %+v: %s", p, nonFiniteAttr.FindString(svg))
		}
	}
}

func TestPlotText(t *testing.T) {
	p := profilePlot(2, 5)
	got := p.Text()
	for _, want := range []string{"Dye in a gel bead", "x: Radial position r [mm], linear scale, 0 to 1.5", "2 curves, in time order", "t = 60 s: 5 points"} {
		if !strings.Contains(got, want) {
			t.Errorf("Text() lacks %q:\n%s", want, got)
		}
	}
}

func TestPlotSVGGolden(t *testing.T) {
	golden(t, "profiles.svg.golden", profilePlot(3, 40).SVG())
}

func BenchmarkPlotSVG(b *testing.B) {
	p := profilePlot(5, 200)
	var n int
	for b.Loop() {
		n = len(p.SVG())
	}
	b.ReportMetric(float64(n), "B/svg")
}
