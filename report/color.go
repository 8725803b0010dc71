package report

import (
	"fmt"
	"math"
)

// The colours of this package are defined in OKLCH (lightness, chroma, hue
// in degrees) — a perceptual colour space in which equal steps of lightness
// look equal — and converted to sRGB hex strings once, at start-up. The
// stops are this project's own choice.

// lch is a colour in OKLCH coordinates: L in [0,1], C ≥ 0, H in degrees.
type lch struct{ L, C, H float64 }

// seqStops is the sequential scale "ink to cream": navy, violet, raspberry,
// apricot, cream. Lightness rises steadily from stop to stop, so the order
// of the colours reads the same in grey scale and to readers with a
// red–green colour-vision deficiency.
var seqStops = []lch{
	{0.27, 0.09, 255}, // navy
	{0.42, 0.13, 300}, // violet
	{0.57, 0.15, 355}, // raspberry
	{0.72, 0.13, 50},  // apricot
	{0.90, 0.10, 95},  // cream
}

// curveLo and curveHi bound the part of the sequential scale used for
// curves. The darkest and lightest ends are kept for area fills (maps),
// where the background does not show; curves must stay visible on white
// and on dark notebook themes alike.
const (
	curveLo = 0.28
	curveHi = 0.82
)

// catStops is the categorical palette: eight hues at one middle lightness
// (readable on light and dark backgrounds), ordered so that neighbours in
// the list differ strongly in hue.
var catStops = []lch{
	{0.60, 0.15, 255}, // blue
	{0.68, 0.15, 50},  // orange
	{0.62, 0.14, 150}, // green
	{0.60, 0.17, 345}, // pink-red
	{0.66, 0.11, 205}, // cyan
	{0.70, 0.13, 95},  // olive-gold
	{0.58, 0.15, 300}, // purple
	{0.56, 0.10, 30},  // brick
}

var (
	seqTable = buildSeqTable(256)
	catTable = buildCatTable()
)

// SequentialColor returns the sRGB hex colour ("#rrggbb") at position t
// of the package's sequential scale; t is clamped to [0,1] and NaN maps to
// the middle. Position 0 is dark navy, 1 is pale cream.
func SequentialColor(t float64) string {
	if math.IsNaN(t) {
		t = 0.5
	}
	t = math.Max(0, math.Min(1, t))
	return seqTable[int(math.Round(t*float64(len(seqTable)-1)))]
}

// CurveColor returns the colour of curve i of n time-ordered curves: the
// first is the darkest, the last the lightest, spread over the part of the
// sequential scale that stays visible on light and dark backgrounds.
func CurveColor(i, n int) string {
	if n <= 1 {
		return SequentialColor(curveLo)
	}
	f := float64(i) / float64(n-1)
	return SequentialColor(curveLo + f*(curveHi-curveLo))
}

// CategoricalColor returns colour i (counted from 0) of the categorical
// palette; indices beyond the palette wrap around, negative ones are
// treated as 0.
func CategoricalColor(i int) string {
	if i < 0 {
		i = 0
	}
	return catTable[i%len(catTable)]
}

func buildSeqTable(n int) []string {
	out := make([]string, n)
	for i := range out {
		out[i] = hexOf(seqAt(float64(i) / float64(n-1)))
	}
	return out
}

func buildCatTable() []string {
	out := make([]string, len(catStops))
	for i, c := range catStops {
		out[i] = hexOf(c)
	}
	return out
}

// seqAt interpolates the sequential stops linearly in OKLab at t ∈ [0,1].
func seqAt(t float64) lch {
	n := len(seqStops) - 1
	x := t * float64(n)
	k := int(math.Floor(x))
	if k >= n {
		k = n - 1
	}
	if k < 0 {
		k = 0
	}
	f := x - float64(k)
	L0, a0, b0 := labOf(seqStops[k])
	L1, a1, b1 := labOf(seqStops[k+1])
	L := L0 + f*(L1-L0)
	a := a0 + f*(a1-a0)
	b := b0 + f*(b1-b0)
	return lch{L, math.Hypot(a, b), math.Atan2(b, a) * 180 / math.Pi}
}

func labOf(c lch) (L, a, b float64) {
	h := c.H * math.Pi / 180
	return c.L, c.C * math.Cos(h), c.C * math.Sin(h)
}

// oklabToLinear converts OKLab to linear-light sRGB (B. Ottosson, "A
// perceptual color space for image processing", 2020; matrices from that
// article).
func oklabToLinear(L, a, b float64) (r, g, bl float64) {
	l := L + 0.3963377774*a + 0.2158037573*b
	m := L - 0.1055613458*a - 0.0638541728*b
	s := L - 0.0894841775*a - 1.2914855480*b
	l, m, s = l*l*l, m*m*m, s*s*s
	r = 4.0767416621*l - 3.3077115913*m + 0.2309699292*s
	g = -1.2684380046*l + 2.6097574011*m - 0.3413193965*s
	bl = -0.0041960863*l - 0.7034186147*m + 1.7076147010*s
	return
}

func inGamut(r, g, b float64) bool {
	const e = 1e-6
	return r >= -e && r <= 1+e && g >= -e && g <= 1+e && b >= -e && b <= 1+e
}

// hexOf converts an OKLCH colour to "#rrggbb", lowering the chroma (keeping
// lightness and hue) until the colour fits in the sRGB gamut.
func hexOf(c lch) string {
	lo, hi := 0.0, c.C
	try := func(C float64) (float64, float64, float64, bool) {
		L, a, b := labOf(lch{c.L, C, c.H})
		r, g, bl := oklabToLinear(L, a, b)
		return r, g, bl, inGamut(r, g, bl)
	}
	r, g, b, ok := try(hi)
	if !ok {
		for range 40 {
			mid := (lo + hi) / 2
			if _, _, _, ok := try(mid); ok {
				lo = mid
			} else {
				hi = mid
			}
		}
		r, g, b, _ = try(lo)
	}
	return fmt.Sprintf("#%02x%02x%02x", enc(r), enc(g), enc(b))
}

// enc applies the sRGB transfer curve and quantises to 8 bits.
func enc(x float64) int {
	x = math.Max(0, math.Min(1, x))
	if x <= 0.0031308 {
		x *= 12.92
	} else {
		x = 1.055*math.Pow(x, 1/2.4) - 0.055
	}
	return int(math.Round(x * 255))
}

// relLuminance returns the WCAG relative luminance of a "#rrggbb" colour;
// it is used by tests to check that the scale is ordered.
func relLuminance(hex string) float64 {
	var r, g, b int
	if _, err := fmt.Sscanf(hex, "#%02x%02x%02x", &r, &g, &b); err != nil {
		return math.NaN()
	}
	lin := func(v int) float64 {
		x := float64(v) / 255
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
}
