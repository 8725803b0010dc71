package report

import (
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// niceStep reports whether s is 1, 2 or 5 times a power of ten.
func niceStep(s float64) bool {
	if !(s > 0) || math.IsInf(s, 0) {
		return false
	}
	e := math.Floor(math.Log10(s) + 1e-9)
	m := s / math.Pow(10, e)
	for _, n := range []float64{1, 2, 5, 10} {
		if math.Abs(m-n) < 1e-9*n {
			return true
		}
	}
	return false
}

// shortDecimal reports whether v prints in at most 4 significant digits
// at full precision, i.e. it is an exact-looking decimal such as 0.3 and
// not 0.30000000000000004.
func shortDecimal(v float64) bool {
	s := strconv.FormatFloat(math.Abs(v), 'e', -1, 64)
	mant, _, _ := strings.Cut(s, "e")
	return len(strings.ReplaceAll(mant, ".", "")) <= 4
}

// checkLinearTicks asserts that ticks are evenly spaced by a 1-2-5 step,
// exact decimals, within [lo, hi] and at most maxTicks of them.
func checkLinearTicks(t *testing.T, ticks []float64, lo, hi float64, maxTicks int) {
	t.Helper()
	if len(ticks) == 0 || len(ticks) > max(maxTicks, 2) {
		t.Fatalf("NiceTicks(%g, %g, %d) gave %d ticks: %v", lo, hi, maxTicks, len(ticks), ticks)
	}
	for _, v := range ticks {
		if v < lo-1e-9*math.Abs(hi-lo) || v > hi+1e-9*math.Abs(hi-lo) {
			t.Errorf("tick %g outside [%g, %g]", v, lo, hi)
		}
		if !shortDecimal(v) {
			t.Errorf("tick %v is not a clean decimal (ticks %v)", v, ticks)
		}
	}
	if len(ticks) >= 2 {
		step := ticks[1] - ticks[0]
		if !niceStep(step) {
			t.Errorf("step %g of %v is not 1, 2 or 5 × 10^k", step, ticks)
		}
		for i := 1; i < len(ticks); i++ {
			if d := ticks[i] - ticks[i-1]; math.Abs(d-step) > 1e-9*step {
				t.Errorf("uneven step %g vs %g in %v", d, step, ticks)
			}
		}
		// The next coarser 1-2-5 step should not also fit: the chosen
		// step is the finest one allowed.
	}
}

func TestNiceTicks(t *testing.T) {
	tests := []struct {
		lo, hi float64
		n      int
		want   []float64
	}{
		{0, 1, 6, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}},
		{0, 0.3, 4, []float64{0, 0.1, 0.2, 0.3}},
		{0, 1.5, 5, []float64{0, 0.5, 1, 1.5}},
		{0, 14400, 6, []float64{0, 5000, 10000}},
		{-1, 1, 5, []float64{-1, -0.5, 0, 0.5, 1}},
		{1, 0, 6, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}}, // reversed
		{0.83, 0.83, 5, []float64{0.83}},               // zero width
		{3, 7, 1, []float64{4, 6}},                     // maxTicks below 2 counts as 2
		{1e-10, 5e-10, 5, []float64{1e-10, 2e-10, 3e-10, 4e-10, 5e-10}},
	}
	for _, tc := range tests {
		got := NiceTicks(tc.lo, tc.hi, tc.n)
		if !slices.Equal(got, tc.want) {
			t.Errorf("NiceTicks(%g, %g, %d) = %v, want %v", tc.lo, tc.hi, tc.n, got, tc.want)
		}
	}
	for _, bad := range [][2]float64{{math.NaN(), 1}, {0, math.Inf(1)}, {math.Inf(-1), 0}} {
		if got := NiceTicks(bad[0], bad[1], 5); got != nil {
			t.Errorf("NiceTicks(%v, %v) = %v, want nil", bad[0], bad[1], got)
		}
	}
	if got := NiceTicks(-math.MaxFloat64, math.MaxFloat64, 5); len(got) == 0 {
		t.Error("NiceTicks over the whole float range gave nothing")
	}
}

func TestNiceTicksProperties(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for range 2000 {
		scale := math.Pow(10, float64(r.IntN(30)-15))
		lo := (r.Float64()*2 - 1) * scale
		hi := lo + r.Float64()*scale*10 + scale*1e-3
		n := 2 + r.IntN(10)
		ticks := NiceTicks(lo, hi, n)
		checkLinearTicks(t, ticks, lo, hi, n)
		if t.Failed() {
			t.Fatalf("failed for lo=%g hi=%g n=%d", lo, hi, n)
		}
	}
}

func TestLogTicks(t *testing.T) {
	tests := []struct {
		name         string
		lo, hi       float64
		n            int
		major, minor []float64
	}{
		{"decades", 1e-3, 1e3, 8, []float64{1e-3, 0.01, 0.1, 1, 10, 100, 1000}, nil},
		{"short range labels 2 and 5", 1, 50, 8, []float64{1, 2, 5, 10, 20, 50}, []float64{3, 4, 6, 7, 8, 9, 30, 40}},
		{"less than a decade, no power inside", 3, 7, 5, []float64{3, 4, 5, 6, 7}, nil},
		{"many decades thinned", 1e-30, 1, 6, []float64{1e-30, 1e-20, 1e-10, 1}, nil},
		{"thinned by 2", 1e-6, 1e4, 6, []float64{1e-6, 1e-4, 0.01, 1, 100, 1e4}, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			major, minor := LogTicks(tc.lo, tc.hi, tc.n)
			if !closeSlices(major, tc.major) {
				t.Errorf("major = %v, want %v", major, tc.major)
			}
			if tc.minor != nil && !closeSlices(minor, tc.minor) {
				t.Errorf("minor = %v, want %v", minor, tc.minor)
			}
			for _, v := range append(append([]float64(nil), major...), minor...) {
				if v < tc.lo*(1-1e-9) || v > tc.hi*(1+1e-9) {
					t.Errorf("tick %g outside [%g, %g]", v, tc.lo, tc.hi)
				}
			}
		})
	}
	for _, bad := range [][2]float64{{0, 10}, {-1, 10}, {1, -1}, {math.NaN(), 10}, {1, math.Inf(1)}} {
		if major, minor := LogTicks(bad[0], bad[1], 5); major != nil || minor != nil {
			t.Errorf("LogTicks(%v, %v) = %v, %v; want nil", bad[0], bad[1], major, minor)
		}
	}
}

func closeSlices(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > 1e-12*math.Abs(b[i]) {
			return false
		}
	}
	return true
}

func TestSqrtTicks(t *testing.T) {
	tests := []struct {
		lo, hi float64
		n      int
	}{
		{0, 14400, 6}, {0, 240, 4}, {0, 1, 5}, {100, 14400, 6}, {0, 3e7, 8}, {0, 0.004, 5}, {-5, 100, 5},
	}
	for _, tc := range tests {
		ticks := SqrtTicks(tc.lo, tc.hi, tc.n)
		if len(ticks) < 3 {
			t.Errorf("SqrtTicks(%g, %g, %d) = %v: too few", tc.lo, tc.hi, tc.n, ticks)
			continue
		}
		lo := math.Max(tc.lo, 0)
		smin, smax := math.Sqrt(lo), math.Sqrt(tc.hi)
		for i, v := range ticks {
			if v < lo || v > tc.hi {
				t.Errorf("SqrtTicks(%g, %g): tick %g out of range", tc.lo, tc.hi, v)
			}
			// Every tick is a clean number of t: one or two
			// significant digits.
			if v != 0 {
				s := strconv.FormatFloat(v, 'e', -1, 64)
				mant, _, _ := strings.Cut(s, "e")
				if len(strings.ReplaceAll(mant, ".", "")) > 2 {
					t.Errorf("SqrtTicks(%g, %g): tick %v is not a clean value", tc.lo, tc.hi, v)
				}
			}
			if i > 0 {
				gap := math.Sqrt(v) - math.Sqrt(ticks[i-1])
				if gap < 0.6*(smax-smin)/float64(tc.n) {
					t.Errorf("SqrtTicks(%g, %g, %d) = %v: ticks %g and %g too close in √t", tc.lo, tc.hi, tc.n, ticks, ticks[i-1], v)
				}
			}
		}
	}
	if got := SqrtTicks(0, 14400, 6); !slices.Equal(got, []float64{0, 500, 2000, 5000, 10000}) {
		t.Errorf("SqrtTicks(0, 14400, 6) = %v, want [0 500 2000 5000 10000]", got)
	}
	if got := SqrtTicks(-3, -1, 5); got != nil {
		t.Errorf("SqrtTicks on negative range = %v, want nil", got)
	}
	if got := SqrtTicks(math.NaN(), 1, 5); got != nil {
		t.Errorf("SqrtTicks(NaN, 1) = %v, want nil", got)
	}
	if got := SqrtTicks(4, 4, 5); !slices.Equal(got, []float64{4}) {
		t.Errorf("SqrtTicks(4, 4) = %v, want [4]", got)
	}
}

func TestTickLabels(t *testing.T) {
	tests := []struct {
		name  string
		ticks []float64
		sc    AxisScale
		want  []string
	}{
		{"shared decimals", []float64{0, 0.5, 1, 1.5}, Linear, []string{"0.0", "0.5", "1.0", "1.5"}},
		{"integers", []float64{0, 5000, 10000}, Linear, []string{"0", "5000", "10000"}},
		{"exponent", []float64{0, 2e-10, 4e-10}, Linear, []string{"0", "2e-10", "4e-10"}},
		{"sqrt trims", []float64{0, 0.5, 2, 5}, Sqrt, []string{"0", "0.5", "2", "5"}},
		{"log plain", []float64{0.01, 0.1, 1, 10}, Log, []string{"0.01", "0.1", "1", "10"}},
		{"log powers", []float64{1e-8, 1e-4, 1}, Log, []string{"10⁻⁸", "10⁻⁴", "10⁰"}},
		{"log mantissa", []float64{2e-6, 1e-5}, Log, []string{"2×10⁻⁶", "10⁻⁵"}},
	}
	for _, tc := range tests {
		got := tickLabels(tc.ticks, tc.sc)
		if !slices.Equal(got, tc.want) {
			t.Errorf("%s: tickLabels(%v) = %q, want %q", tc.name, tc.ticks, got, tc.want)
		}
	}
}
