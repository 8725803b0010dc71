package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// AxisScale is how values are spaced along an axis.
type AxisScale int

const (
	// Linear spaces values evenly.
	Linear AxisScale = iota
	// Log spaces values by their logarithm; values ≤ 0 cannot be drawn.
	Log
	// Sqrt spaces values by their square root (the √t axis on which
	// early diffusion uptake is a straight line); values < 0 cannot be
	// drawn. Tick values are clean numbers of t itself.
	Sqrt
)

// String returns "linear", "log" or "sqrt".
func (s AxisScale) String() string {
	switch s {
	case Log:
		return "log"
	case Sqrt:
		return "sqrt"
	case Linear:
		return "linear"
	}
	return "AxisScale(" + strconv.Itoa(int(s)) + ")"
}

// Axis describes one axis of a Plot or Map.
type Axis struct {
	// Label is the quantity, shown as "Label [Unit]".
	Label string
	// Unit is the unit string; "" or "1" shows no bracket.
	Unit string
	// Scale is Linear (the zero value), Log or Sqrt.
	Scale AxisScale
	// Min and Max fix the range. Both zero, or NaN, means automatic; one
	// of them may be fixed and the other automatic (the other NaN). The
	// automatic range covers the data and is widened to clean tick values.
	Min, Max float64
}

// valid reports whether v can be placed on the axis.
func (s AxisScale) valid(v float64) bool {
	if !finite(v) {
		return false
	}
	switch s {
	case Log:
		return v > 0
	case Sqrt:
		return v >= 0
	}
	return true
}

// fwd maps a data value to the axis's transformed coordinate.
func (s AxisScale) fwd(v float64) float64 {
	switch s {
	case Log:
		return math.Log10(v)
	case Sqrt:
		return math.Sqrt(v)
	}
	return v
}

// invalidWhat describes in words the values a scale cannot show.
func (s AxisScale) invalidWhat() string {
	switch s {
	case Log:
		return "≤ 0 (log axis)"
	case Sqrt:
		return "< 0 (square-root axis)"
	}
	return ""
}

// scaleAxis is an Axis resolved for drawing: its range, transformed
// range, ticks and tick labels.
type scaleAxis struct {
	Axis
	lo, hi   float64 // range in data units
	tlo, thi float64 // range in transformed units
	major    []float64
	minor    []float64
	labels   []string
}

// resolveAxis settles the range and ticks of ax for data values vals
// (already filtered to values valid on the scale). name ("x", "y", "z")
// is used in notes. With snap, automatic ends are widened to clean tick
// values; without, the automatic range is exactly the data's.
func resolveAxis(ax Axis, vals []float64, maxTicks int, name string, snap bool) (scaleAxis, []string) {
	var notes []string
	if ax.Scale != Linear && ax.Scale != Log && ax.Scale != Sqrt {
		notes = append(notes, fmt.Sprintf("unknown %s axis scale %d; linear used.", name, int(ax.Scale)))
		ax.Scale = Linear
	}
	sc := ax.Scale
	dlo, dhi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		dlo, dhi = math.Min(dlo, v), math.Max(dhi, v)
	}
	fixLo, fixHi := !math.IsNaN(ax.Min), !math.IsNaN(ax.Max)
	if ax.Min == 0 && ax.Max == 0 {
		fixLo, fixHi = false, false
	}
	for _, f := range []struct {
		fix *bool
		v   float64
		w   string
	}{{&fixLo, ax.Min, "minimum"}, {&fixHi, ax.Max, "maximum"}} {
		if *f.fix && !sc.valid(f.v) {
			notes = append(notes, fmt.Sprintf("%s axis %s %s cannot be shown on a %s axis; automatic range used.",
				name, f.w, FormatNumber(f.v, 6), sc))
			*f.fix = false
		}
	}
	if fixLo && fixHi && ax.Min >= ax.Max {
		if ax.Min == ax.Max {
			notes = append(notes, fmt.Sprintf("%s axis minimum equals maximum (%s); automatic range used.", name, FormatNumber(ax.Min, 6)))
			fixLo, fixHi = false, false
		} else {
			notes = append(notes, fmt.Sprintf("%s axis minimum is above maximum; they were swapped.", name))
			ax.Min, ax.Max = ax.Max, ax.Min
		}
	}
	lo, hi := dlo, dhi
	if len(vals) == 0 {
		lo, hi = 0, 1
		if sc == Log {
			lo, hi = 1, 10
		}
	}
	if fixLo {
		lo = ax.Min
	}
	if fixHi {
		hi = ax.Max
	}
	if lo > hi { // one fixed end lies beyond all the data
		if fixLo {
			hi = widenFrom(lo, sc, true)
		} else {
			lo = widenFrom(hi, sc, false)
		}
	}
	if lo == hi {
		lo, hi = widenZero(lo, sc, fixLo, fixHi)
	}
	// Snap automatic ends outward to clean values.
	switch {
	case !snap:
	case sc == Log:
		if !fixLo {
			lo = math.Pow(10, math.Floor(math.Log10(lo)+1e-9))
		}
		if !fixHi {
			hi = math.Pow(10, math.Ceil(math.Log10(hi)-1e-9))
		}
		if lo == hi {
			hi = lo * 10
		}
	default:
		// Widen to the next multiple of the tick step, or of a finer
		// 1-2-5 step when that would leave much of the axis empty.
		nlo, nhi := lo, hi
		for mt := maxTicks; mt <= 16*maxTicks; mt *= 2 {
			t := NiceTicks(lo, hi, mt)
			if len(t) < 2 {
				break
			}
			step := t[1] - t[0]
			nlo, nhi = lo, hi
			if !fixLo {
				nlo = step * math.Floor(lo/step+1e-9)
				if sc == Sqrt && nlo < 0 {
					nlo = 0
				}
			}
			if !fixHi {
				nhi = step * math.Ceil(hi/step-1e-9)
			}
			if (nhi-hi)+(lo-nlo) <= 0.08*(hi-lo) {
				break
			}
		}
		lo, hi = nlo, nhi
	}
	s := scaleAxis{Axis: ax, lo: lo, hi: hi, tlo: sc.fwd(lo), thi: sc.fwd(hi)}
	switch sc {
	case Log:
		s.major, s.minor = LogTicks(lo, hi, maxTicks)
	case Sqrt:
		s.major = SqrtTicks(lo, hi, maxTicks)
	default:
		s.major = NiceTicks(lo, hi, maxTicks)
	}
	s.labels = tickLabels(s.major, sc)
	return s, notes
}

// widenFrom returns a far end for a range whose only known end is v.
func widenFrom(v float64, sc AxisScale, up bool) float64 {
	if sc == Log {
		if up {
			return v * 10
		}
		return v / 10
	}
	d := math.Max(math.Abs(v), 1)
	if up {
		return v + d
	}
	if sc == Sqrt {
		return math.Max(0, v-d)
	}
	return v - d
}

// widenZero turns a zero-width range around v into a small range.
func widenZero(v float64, sc AxisScale, fixLo, fixHi bool) (float64, float64) {
	switch sc {
	case Log:
		return v / math.Sqrt(10), v * math.Sqrt(10)
	case Sqrt:
		if v == 0 {
			return 0, 1
		}
		if fixLo {
			return v, 2 * v
		}
		return 0, 2 * v
	}
	d := math.Abs(v) * 0.1
	if d == 0 {
		d = 1
	}
	switch {
	case fixLo && !fixHi:
		return v, v + 2*d
	case fixHi && !fixLo:
		return v - 2*d, v
	}
	return v - d, v + d
}

// pos maps a data value to a fraction of the axis length (0 at lo).
func (a *scaleAxis) pos(v float64) float64 {
	if a.thi == a.tlo {
		return 0.5
	}
	return (a.Scale.fwd(v) - a.tlo) / (a.thi - a.tlo)
}

// tickLabels formats tick values. Linear and square-root ticks share one
// number of decimals (so 0.5, 1.0, 1.5 line up); very large or small
// magnitudes use a short exponent. A log axis whose ticks reach beyond
// 0.001 … 10000 writes them all as powers of ten (10⁻⁵, 10⁰, 10²).
func tickLabels(ticks []float64, sc AxisScale) []string {
	out := make([]string, len(ticks))
	if sc == Log {
		plain := true
		for _, v := range ticks {
			plain = plain && v >= 1e-3 && v < 1e5
		}
		for i, v := range ticks {
			out[i] = logLabel(v, plain)
		}
		return out
	}
	maxAbs := 0.0
	for _, v := range ticks {
		maxAbs = math.Max(maxAbs, math.Abs(v))
	}
	if maxAbs >= 1e6 || (maxAbs > 0 && maxAbs < 1e-3) {
		for i, v := range ticks {
			out[i] = FormatNumber(v, 4)
		}
		return out
	}
	dec := 0
	for _, v := range ticks {
		for d := dec; d <= 12; d++ {
			p := math.Pow10(d)
			if math.Abs(math.Round(v*p)/p-v) <= 1e-9*math.Max(maxAbs, 1e-300) {
				dec = max(dec, d)
				break
			}
		}
	}
	if sc == Sqrt {
		// Square-root ticks mix magnitudes (0, 500, 2000, ...);
		// trailing zeros would only add clutter.
		for i, v := range ticks {
			out[i] = negZero(trimZeros(strconv.FormatFloat(v, 'f', dec, 64)))
		}
		return out
	}
	for i, v := range ticks {
		out[i] = negZero(strconv.FormatFloat(v, 'f', dec, 64))
	}
	return out
}

// logLabel formats a log-axis tick: plainly ("0.01", "200") when plain
// is set, else "10⁻⁵" for powers of ten and "2×10⁻⁵" for other values.
// One axis uses one form for all its ticks.
func logLabel(v float64, plain bool) string {
	if plain {
		return FormatNumber(v, 3)
	}
	e := int(math.Floor(math.Log10(v) + 1e-9))
	m := v / math.Pow10(e)
	exp := toSuperscript(strconv.Itoa(e))
	if math.Abs(m-1) < 1e-6 {
		return "10" + exp
	}
	return FormatNumber(m, 3) + "×10" + exp
}

func toSuperscript(s string) string {
	var b strings.Builder
	for _, r := range s {
		if sr, ok := superscript[r]; ok {
			b.WriteRune(sr)
		} else {
			b.WriteRune(r)
		}
	}
	return b.String()
}
