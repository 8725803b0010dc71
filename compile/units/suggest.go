package units

import "strings"

// aliases maps spellings people commonly type for a unit that is not
// accepted, case-folded, to the accepted spelling.
var aliases = map[string]string{
	"sec": "s", "secs": "s", "second": "s", "seconds": "s",
	"mins": "min", "minute": "min", "minutes": "min",
	"hr": "h", "hrs": "h", "hour": "h", "hours": "h",
	"day": "d", "days": "d",
	"c": "°C", "celsius": "°C", "℃": "°C",
	"kelvin":  "K",
	"micron":  "µm",
	"microns": "µm",
	"cc":      "cm^3",
	"liter":   "L", "litre": "L", "liters": "L", "litres": "L",
	"gram": "g", "grams": "g",
	"mole": "mol", "moles": "mol", "mols": "mol",
	"molar":   "M",
	"pascal":  "Pa",
	"percent": "%",
}

// Suggest returns the accepted unit spelling closest to name, for a "did
// you mean" hint, or "" when nothing is close. Common long forms are mapped
// directly ("hr" → "h", "sec" → "s", "micron" → "µm"). Otherwise the
// candidates are all spellings from Names, compared without regard to case
// by optimal-string-alignment distance (insertions, deletions, substitutions
// and transpositions of adjacent characters, counted in characters): a
// candidate that differs only in case always qualifies; otherwise names of
// two to five characters allow distance 1 and longer names distance 2.
// Ties go to the smaller case-sensitive distance, then to a unit without
// prefix ("ss" → "s", not "ms"), then to the alphabetically first spelling.
func Suggest(name string) string {
	if name == "" {
		return ""
	}
	folded := strings.ToLower(name)
	if a, ok := aliases[folded]; ok {
		return a
	}
	rn := []rune(folded)
	limit := 0
	switch {
	case len(rn) >= 6:
		limit = 2
	case len(rn) >= 2:
		limit = 1
	}
	orig := []rune(name)
	best, bestD, bestCS, bestBare := "", limit+1, 0, false
	for _, cand := range table.names {
		cr := []rune(strings.ToLower(cand))
		if abs(len(cr)-len(rn)) > limit {
			continue // the distance is at least the difference in length
		}
		d := osa(rn, cr)
		if d > limit {
			continue
		}
		cs := osa(orig, []rune(cand))
		_, bare := table.bare[cand]
		if d < bestD || d == bestD && (cs < bestCS || cs == bestCS && bare && !bestBare) {
			best, bestD, bestCS, bestBare = cand, d, cs, bare
		}
	}
	return best
}

// osa returns the optimal-string-alignment distance between a and b.
func osa(a, b []rune) int {
	// Three rolling rows: i-2, i-1 and i.
	prev2 := make([]int, len(b)+1)
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			v := min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				v = min(v, prev2[j-2]+1)
			}
			cur[j] = v
		}
		prev2, prev, cur = prev, cur, prev2
	}
	return prev[len(b)]
}
