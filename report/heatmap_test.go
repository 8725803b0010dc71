package report

import (
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// beadMap is a scenario of our own: concentration in a bead over time
// on a grid clustered toward the surface.
func beadMap(nt, nr int) *Map {
	m := &Map{
		Title:  "Dye in the bead",
		X:      Axis{Label: "Time t", Unit: "min", Scale: Sqrt},
		Y:      Axis{Label: "Radial position r", Unit: "mm"},
		ZLabel: "c", ZUnit: "mol/m^3",
	}
	for i := range nt {
		m.XValues = append(m.XValues, 240*float64(i*i)/float64((nt-1)*(nt-1)))
	}
	for j := range nr {
		f := float64(j) / float64(nr-1)
		m.YValues = append(m.YValues, 1.5*(1-(1-f)*(1-f)))
	}
	for _, t := range m.XValues {
		row := make([]float64, nr)
		for j, r := range m.YValues {
			row[j] = 0.8 * math.Exp(-(1.5-r)*(1.5-r)/(0.024*t+1e-9))
		}
		m.Z = append(m.Z, row)
	}
	return m
}

func TestMapStructure(t *testing.T) {
	m := beadMap(30, 20)
	svg := m.SVG()
	doc := parseSVG(t, svg)
	if doc.attrs["id"] != 0 {
		t.Error("map SVG has id attributes")
	}
	for _, want := range []string{"Time t [min]", "Radial position r [mm]", "c [mol/m³]", "Dye in the bead", "0", "0.8"} {
		if !doc.hasText(want) {
			t.Errorf("no text %q in %q", want, doc.texts)
		}
	}
	// Every cell colour is one of the sequential scale's levels, and
	// each level has one path.
	fills := regexp.MustCompile(`<path fill="(#[0-9a-f]{6})"`).FindAllStringSubmatch(svg, -1)
	if len(fills) < 20 {
		t.Fatalf("only %d colour levels drawn", len(fills))
	}
	seen := map[string]bool{}
	levels := map[string]bool{}
	for l := range mapLevels {
		levels[levelColor(l)] = true
	}
	for _, f := range fills {
		if seen[f[1]] {
			t.Errorf("colour %s has more than one path", f[1])
		}
		seen[f[1]] = true
		if !levels[f[1]] {
			t.Errorf("colour %s is not on the sequential scale", f[1])
		}
	}
	// The lowest and highest values take the ends of the scale.
	if !seen[levelColor(0)] || !seen[levelColor(mapLevels-1)] {
		t.Error("the extreme values do not take the end colours")
	}
	// The colour bar has its steps.
	if doc.elements["rect"] < 64 {
		t.Errorf("colour bar has %d rects, want at least 64", doc.elements["rect"])
	}
}

// TestMapCellsCoverArea checks that the cells tile the plot area exactly:
// their summed area equals the frame's.
func TestMapCellsCoverArea(t *testing.T) {
	m := &Map{
		XValues: []float64{0, 1, 3}, YValues: []float64{0, 2},
		Z: [][]float64{{1, 2}, {3, 4}, {5, 6}},
	}
	svg := m.SVG()
	parseSVG(t, svg)
	cells := regexp.MustCompile(`M([-\d.]+) ([-\d.]+)h([-\d.]+)v([-\d.]+)h-[-\d.]+z`).FindAllStringSubmatch(svg, -1)
	if len(cells) != 6 {
		t.Fatalf("want 6 cells (no equal neighbours to merge), got %d", len(cells))
	}
	frame := regexp.MustCompile(`<rect x="([-\d.]+)" y="([-\d.]+)" width="([-\d.]+)" height="([-\d.]+)"/>`).FindAllStringSubmatch(svg, -1)
	var fw, fh float64
	for _, f := range frame {
		w, h := atof(f[3]), atof(f[4])
		if w*h > fw*fh {
			fw, fh = w, h
		}
	}
	sum := 0.0
	for _, c := range cells {
		sum += atof(c[3]) * atof(c[4])
	}
	if math.Abs(sum-fw*fh) > 0.01*fw*fh {
		t.Errorf("cells cover %g px², frame is %g px²", sum, fw*fh)
	}
}

func atof(s string) float64 {
	v, _ := strconv.ParseFloat(s, 64)
	return v
}

func TestMapBadInput(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name string
		m    *Map
		warn []string
	}{
		{"empty", &Map{}, nil},
		{"NaN cells", &Map{XValues: []float64{0, 1}, YValues: []float64{0, 1}, Z: [][]float64{{nan, 1}, {2, math.Inf(1)}}},
			[]string{"2 cells have no finite value"}},
		{"short Z", &Map{XValues: []float64{0, 1, 2}, YValues: []float64{0, 1}, Z: [][]float64{{1, 2}, {3}}},
			[]string{"Z has 2 rows for 3 x-values", "3 cells have no finite value"}},
		{"unsorted and repeated", &Map{XValues: []float64{2, 0, 1, 1}, YValues: []float64{0, 1}, Z: [][]float64{{1, 2}, {3, 4}, {5, 6}, {7, 8}}},
			[]string{"1 repeated x-value was left out"}},
		{"log axis non-positive", &Map{Y: Axis{Scale: Log}, XValues: []float64{0, 1}, YValues: []float64{0, 1, 10}, Z: [][]float64{{1, 2, 3}, {4, 5, 6}}},
			[]string{"1 y-value is NaN, infinite or ≤ 0 (log axis)"}},
		{"constant Z", &Map{XValues: []float64{0, 1}, YValues: []float64{0, 1}, Z: [][]float64{{3, 3}, {3, 3}}}, nil},
		{"single point", &Map{XValues: []float64{5}, YValues: []float64{7}, Z: [][]float64{{1}}}, nil},
		{"inverted colour range", &Map{XValues: []float64{0, 1}, YValues: []float64{0, 1}, Z: [][]float64{{1, 2}, {3, 4}}, ZMin: 5, ZMax: 1},
			[]string{"colour range minimum is not below its maximum"}},
		{"NaN coordinates", &Map{XValues: []float64{nan, 1, 2}, YValues: []float64{0, 1}, Z: [][]float64{{1, 2}, {3, 4}, {5, 6}}},
			[]string{"1 x-value is NaN or infinite"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			svg := tc.m.SVG()
			doc := parseSVG(t, svg)
			if nonFiniteAttr.MatchString(svg) {
				t.Errorf("non-finite attribute: %s", nonFiniteAttr.FindString(svg))
			}
			warn := strings.Join(tc.m.Warnings(), "\n")
			for _, w := range tc.warn {
				if !strings.Contains(warn, w) {
					t.Errorf("warnings %q lack %q", warn, w)
				}
			}
			if len(tc.warn) == 0 && warn != "" {
				t.Errorf("unexpected warnings %q", warn)
			}
			_ = doc
			_ = tc.m.Text()
		})
	}
}

func TestMapMergesEqualCells(t *testing.T) {
	m := &Map{XValues: []float64{0, 1, 2, 3}, YValues: []float64{0, 1}, Z: [][]float64{{1, 0}, {1, 0}, {1, 0}, {1, 0}}}
	svg := m.SVG()
	cells := regexp.MustCompile(`M[-\d.]+ [-\d.]+h`).FindAllString(svg, -1)
	if len(cells) != 2 {
		t.Errorf("two rows of equal values should give 2 merged rectangles, got %d", len(cells))
	}
}

func TestMapText(t *testing.T) {
	got := beadMap(5, 4).Text()
	for _, want := range []string{"Dye in the bead", "x: Time t [min], sqrt scale, 0 to 240", "c [mol/m³] on 5 × 4 points (20 with values)"} {
		if !strings.Contains(got, want) {
			t.Errorf("Text() lacks %q:\n%s", want, got)
		}
	}
}
