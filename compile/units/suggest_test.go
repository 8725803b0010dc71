package units

import "testing"

func TestSuggest(t *testing.T) {
	tests := []struct{ name, want string }{
		{"mmm", "mm"},     // one extra letter
		{"kgg", "kg"},     // one extra letter
		{"Mol", "mol"},    // case only
		{"MMOL", "mmol"},  // case only
		{"ML", "mL"},      // case only; nearest case-sensitive spelling wins
		{"Kpa", "kPa"},    // case only
		{"atmm", "atm"},   // one extra letter
		{"umoll", "umol"}, // keeps the user's ASCII micro
		{"µmoll", "µmol"}, // and the micro sign
		{"mlo", "mol"},    // ties "ml"; the unit without prefix wins
		{"ss", "s"},       // ties "ms", "ns", "us"; the unit without prefix wins
		{"hr", "h"},       // alias
		{"Hours", "h"},    // alias, case-folded
		{"sec", "s"},
		{"micron", "µm"},
		{"cc", "cm^3"},
		{"C", "°C"},
		{"x", ""},      // one letter: only a case-fold match counts
		{"k", "K"},     // case-fold match
		{"banana", ""}, // nothing within distance 2
		{"", ""},
		{"mmmmol", "mmol"}, // long name: distance 2 allowed
	}
	for _, tt := range tests {
		if got := Suggest(tt.name); got != tt.want {
			t.Errorf("Suggest(%q) = %q, want %q", tt.name, got, tt.want)
		}
	}
}

func TestSuggestIsAccepted(t *testing.T) {
	// Every suggestion must itself parse.
	for _, name := range []string{"mmm", "hr", "cc", "C", "micron", "Kpa", "mlo", "litre", "molar", "percent"} {
		s := Suggest(name)
		if s == "" {
			t.Errorf("Suggest(%q) is empty", name)
			continue
		}
		if _, err := Parse(s); err != nil {
			t.Errorf("Suggest(%q) = %q does not parse: %v", name, s, err)
		}
	}
}

func TestOSA(t *testing.T) {
	tests := []struct {
		a, b string
		want int
	}{
		{"", "", 0},
		{"abc", "", 3},
		{"", "ab", 2},
		{"kitten", "sitting", 3}, // source: textbook Levenshtein example, from memory
		{"ca", "ac", 1},          // transposition
		{"mol", "mlo", 1},
		{"µm", "um", 1}, // counted in characters, not bytes
		{"abc", "abc", 0},
	}
	for _, tt := range tests {
		if got := osa([]rune(tt.a), []rune(tt.b)); got != tt.want {
			t.Errorf("osa(%q, %q) = %d, want %d", tt.a, tt.b, got, tt.want)
		}
		if got := osa([]rune(tt.b), []rune(tt.a)); got != tt.want {
			t.Errorf("osa(%q, %q) = %d, want %d (symmetry)", tt.b, tt.a, got, tt.want)
		}
	}
}
