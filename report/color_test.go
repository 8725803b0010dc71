package report

import (
	"math"
	"regexp"
	"testing"
)

var hexRe = regexp.MustCompile(`^#[0-9a-f]{6}$`)

func TestSequentialScaleIsOrdered(t *testing.T) {
	prev := -1.0
	for i := 0; i <= 100; i++ {
		c := SequentialColor(float64(i) / 100)
		if !hexRe.MatchString(c) {
			t.Fatalf("SequentialColor(%g) = %q, not #rrggbb", float64(i)/100, c)
		}
		l := relLuminance(c)
		if l < prev {
			t.Errorf("luminance falls at %g: %g after %g", float64(i)/100, l, prev)
		}
		prev = l
	}
	lo, hi := relLuminance(SequentialColor(0)), relLuminance(SequentialColor(1))
	if lo > 0.05 || hi < 0.6 {
		t.Errorf("scale should run from dark (%g) to light (%g)", lo, hi)
	}
	// Clamping and NaN.
	if SequentialColor(-3) != SequentialColor(0) || SequentialColor(7) != SequentialColor(1) {
		t.Error("positions outside [0,1] are not clamped")
	}
	if SequentialColor(math.NaN()) != SequentialColor(0.5) {
		t.Error("NaN should map to the middle")
	}
}

// TestCurveColorsReadOnBothThemes checks the contrast of curve colours
// against white and against a dark notebook background (#1e1e1e): at
// least 1.9:1 on both, by the WCAG contrast formula.
func TestCurveColorsReadOnBothThemes(t *testing.T) {
	white, dark := 1.0, relLuminance("#1e1e1e")
	contrast := func(a, b float64) float64 {
		if a < b {
			a, b = b, a
		}
		return (a + 0.05) / (b + 0.05)
	}
	var cols []string
	for i := range 8 {
		cols = append(cols, CurveColor(i, 8), CategoricalColor(i))
	}
	cols = append(cols, CurveColor(0, 1))
	for _, c := range cols {
		l := relLuminance(c)
		if cw, cd := contrast(l, white), contrast(l, dark); cw < 1.9 || cd < 1.9 {
			t.Errorf("colour %s: contrast %.2f on white, %.2f on dark", c, cw, cd)
		}
	}
}

func TestCategoricalPalette(t *testing.T) {
	seen := map[string]bool{}
	for i := range len(catStops) {
		c := CategoricalColor(i)
		if !hexRe.MatchString(c) {
			t.Fatalf("CategoricalColor(%d) = %q", i, c)
		}
		if seen[c] {
			t.Errorf("colour %s repeats within the palette", c)
		}
		seen[c] = true
	}
	if CategoricalColor(len(catStops)) != CategoricalColor(0) || CategoricalColor(-1) != CategoricalColor(0) {
		t.Error("palette does not wrap, or a negative index is not treated as 0")
	}
}

func TestHexOfGamut(t *testing.T) {
	// A colour far outside sRGB is brought inside by lowering chroma:
	// the result keeps roughly its lightness.
	c := hexOf(lch{0.7, 0.5, 140})
	if !hexRe.MatchString(c) {
		t.Fatalf("hexOf = %q", c)
	}
	grey := hexOf(lch{0.7, 0, 0})
	if d := math.Abs(relLuminance(c) - relLuminance(grey)); d > 0.08 {
		t.Errorf("gamut mapping changed luminance by %g (%s vs grey %s)", d, c, grey)
	}
	if got := hexOf(lch{1, 0, 0}); got != "#ffffff" {
		t.Errorf("white = %s", got)
	}
	if got := hexOf(lch{0, 0, 0}); got != "#000000" {
		t.Errorf("black = %s", got)
	}
}
