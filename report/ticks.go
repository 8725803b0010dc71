package report

import (
	"math"
	"sort"
	"strconv"
)

// niceMantissas are the steps of the 1-2-5 sequence within a decade.
var niceMantissas = []int64{1, 2, 5}

// NiceTicks returns at most maxTicks "clean" values in [min, max]: the
// multiples of the largest-density step of the form 1, 2 or 5 × 10^k that
// still fits. The values are exact decimals (0.1, 0.2, 0.3 rather than
// 0.30000000000000004). min and max may be given in either order;
// maxTicks below 2 counts as 2. A zero-width range gives the single value
// min; NaN or infinite bounds give nil.
func NiceTicks(min, max float64, maxTicks int) []float64 {
	if !finite(min) || !finite(max) {
		return nil
	}
	if min > max {
		min, max = max, min
	}
	if min == max {
		return []float64{min}
	}
	maxTicks = clampInt(maxTicks, 2, 1000)
	span := max - min
	if !finite(span) { // bounds near ±MaxFloat64
		return []float64{min, max}
	}
	k := int(math.Floor(math.Log10(span/float64(maxTicks)))) - 1
	for range 40 {
		for _, m := range niceMantissas {
			step := decimal(m, k)
			lo := math.Ceil(min/step - 1e-9)
			hi := math.Floor(max/step + 1e-9)
			n := hi - lo + 1
			if n <= float64(maxTicks) {
				if n < 1 {
					return []float64{min}
				}
				out := make([]float64, 0, int(n))
				for i := lo; i <= hi; i++ {
					out = append(out, multiple(i, m, k))
				}
				return out
			}
		}
		k++
	}
	return []float64{min, max}
}

// decimal returns m × 10^k as the float64 nearest to the exact decimal.
func decimal(m int64, k int) float64 {
	return multiple(1, m, k)
}

// multiple returns i × m × 10^k as the float64 nearest to the exact
// decimal (parsing the decimal string rounds once, correctly).
func multiple(i float64, m int64, k int) float64 {
	v := i * float64(m)
	if v == 0 {
		return 0 // no negative zero
	}
	f, err := strconv.ParseFloat(strconv.FormatFloat(v, 'f', -1, 64)+"e"+strconv.Itoa(k), 64)
	if err != nil && !math.IsInf(f, 0) {
		return v * math.Pow10(k)
	}
	return f
}

// LogTicks returns ticks for a logarithmic axis over [min, max] (both
// must be positive, else nil). major are the labelled ticks: powers of ten,
// thinned to at most maxTicks when the range spans many decades; when it
// spans fewer than about three decades, 2 and 5 times each power are
// labelled too. minor are unlabelled ticks (the remaining integer
// multiples within each decade, or the skipped powers when thinned). A
// range that holds no power of ten falls back to NiceTicks.
func LogTicks(min, max float64, maxTicks int) (major, minor []float64) {
	if !finite(min) || !finite(max) || min <= 0 || max <= 0 {
		return nil, nil
	}
	if min > max {
		min, max = max, min
	}
	maxTicks = clampInt(maxTicks, 2, 1000)
	lmin, lmax := math.Log10(min), math.Log10(max)
	kLo := int(math.Ceil(lmin - 1e-9))
	kHi := int(math.Floor(lmax + 1e-9))
	in := func(v float64) bool { return v >= min*(1-1e-9) && v <= max*(1+1e-9) }
	if kHi < kLo || (kHi == kLo && lmax-lmin < 0.7) {
		return NiceTicks(min, max, maxTicks), nil
	}
	nDec := kHi - kLo + 1
	span := lmax - lmin
	if span <= 2.7 {
		// Short range: 1, 2, 5 in every decade, labelled where they fit.
		var all []float64
		for k := kLo - 1; k <= kHi; k++ {
			for _, m := range niceMantissas {
				if v := decimal(m, k); in(v) {
					all = append(all, v)
				}
			}
			for m := int64(3); m <= 9; m++ {
				if m == 5 {
					continue
				}
				if v := decimal(m, k); in(v) {
					minor = append(minor, v)
				}
			}
		}
		if len(all) <= maxTicks {
			return all, minor
		}
		for _, v := range all {
			if isPow10(v) {
				major = append(major, v)
			} else {
				minor = append(minor, v)
			}
		}
		sort.Float64s(minor)
		return major, minor
	}
	// Label every stride-th power, stride from 1, 2, 3, 5, 10, 20, ...
	stride := 1
	for _, st := range []int{1, 2, 3, 5, 10, 20, 25, 50, 100} {
		stride = st
		if (nDec+st-1)/st <= maxTicks {
			break
		}
	}
	for k := kLo; k <= kHi; k++ {
		v := decimal(1, k)
		if floorMod(k, stride) == 0 {
			major = append(major, v)
		} else {
			minor = append(minor, v)
		}
	}
	if stride == 1 && nDec <= 8 {
		for k := kLo - 1; k <= kHi; k++ {
			for m := int64(2); m <= 9; m++ {
				if v := decimal(m, k); in(v) {
					minor = append(minor, v)
				}
			}
		}
		sort.Float64s(minor)
	}
	return major, minor
}

func isPow10(v float64) bool {
	l := math.Log10(v)
	return math.Abs(l-math.Round(l)) < 1e-9
}

func floorMod(a, b int) int {
	m := a % b
	if m < 0 {
		m += b
	}
	return m
}

// SqrtTicks returns ticks for a square-root axis (position ∝ √t) over
// [min, max] with min ≥ 0 (a negative min is raised to 0; max ≤ 0 gives
// nil). The values are clean in t — multiples of a 1-2-5 step near the top
// of the range, then 1-2-5 values of decreasing decades towards zero —
// chosen so that no two ticks are closer than about 1/maxTicks of the axis
// length in √t.
func SqrtTicks(min, max float64, maxTicks int) []float64 {
	if !finite(min) || !finite(max) {
		return nil
	}
	if min > max {
		min, max = max, min
	}
	if min < 0 {
		min = 0
	}
	if max <= 0 {
		return nil
	}
	if min == max {
		return []float64{min}
	}
	maxTicks = clampInt(maxTicks, 2, 1000)
	smin, smax := math.Sqrt(min), math.Sqrt(max)
	gap := 0.7 * (smax - smin) / float64(maxTicks)
	// Room to leave above the lower end: a full gap when a tick will
	// stand at zero, half a gap otherwise.
	lowGap := 0.5 * gap
	if min == 0 {
		lowGap = gap
	}
	lin := NiceTicks(min, max, maxTicks)
	// Walk the linear ticks from the top down, keeping those well apart
	// in √t.
	var kept []float64
	last := math.Inf(1)
	for i := len(lin) - 1; i >= 0; i-- {
		if lin[i] <= 0 {
			continue // zero is added at the end
		}
		s := math.Sqrt(lin[i])
		if last-s >= gap || math.IsInf(last, 1) {
			if s-smin < lowGap {
				continue // too close to the lower end; handled below
			}
			kept = append(kept, lin[i])
			last = s
		}
	}
	// Fill the stretch towards the lower end with 1-2-5 values.
	if len(kept) > 0 {
		low := kept[len(kept)-1]
		if low > 0 {
			k := int(math.Floor(math.Log10(low))) + 1
			for range 60 {
				done := false
				for mi := len(niceMantissas) - 1; mi >= 0; mi-- {
					v := decimal(niceMantissas[mi], k)
					if v >= low {
						continue
					}
					s := math.Sqrt(v)
					if s-smin < lowGap || v < min {
						done = true
						break
					}
					if last-s >= gap {
						kept = append(kept, v)
						last = s
						low = v
					}
				}
				if done {
					break
				}
				k--
			}
		}
	}
	if min == 0 {
		kept = append(kept, 0)
	}
	if len(kept) < 2 && len(lin) > len(kept) {
		return lin
	}
	sort.Float64s(kept)
	return kept
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func clampInt(v, lo, hi int) int {
	if v < lo {
		return lo
	}
	if v > hi {
		return hi
	}
	return v
}
