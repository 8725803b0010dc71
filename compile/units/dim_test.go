package units

import "testing"

func TestDimArithmetic(t *testing.T) {
	tests := []struct {
		name      string
		got, want Dim
	}{
		// Diffusivity / length^2 is a first-order rate: D/R^2 has unit 1/s.
		{"D/L^2", Diffusivity.Div(Area), Frequency},
		{"L·L", Length.Mul(Length), Area},
		{"V/L^3", Volume.Div(Length.Mul(Area)), Dimensionless},
		{"k·c", Frequency.Mul(Concentration), ReactionRate},
		{"D·c/L", Diffusivity.Mul(Concentration).Div(Length), MolarFlux},
		{"kg/mol · mol/m^3", MolarMass.Mul(Concentration), MassConcentration},
		{"N/m^2", Force.Div(Area), Pressure},
		{"J/s", Energy.Div(Time), Power},
	}
	for _, tt := range tests {
		if tt.got != tt.want {
			t.Errorf("%s = %v, want %v", tt.name, tt.got, tt.want)
		}
	}
}

func TestDimPowRoot(t *testing.T) {
	tests := []struct {
		d      Dim
		n      int
		pow    Dim
		powOK  bool
		root   Dim
		rootOK bool
	}{
		{Length, 2, Area, true, Dimensionless, false},
		{Area, 2, dim(4, 0, 0, 0, 0), true, Length, true},
		{Length, 3, Volume, true, Dimensionless, false},
		{Volume, 3, dim(9, 0, 0, 0, 0), true, Length, true},
		{Diffusivity, 2, dim(4, 0, -2, 0, 0), true, Dimensionless, false},
		{dim(2, 0, -2, 0, 0), 2, dim(4, 0, -4, 0, 0), true, Velocity, true},
		{Frequency, -1, Time, true, Dimensionless, false},
		{Concentration, 0, Dimensionless, true, Dimensionless, false},
		{Dimensionless, 5, Dimensionless, true, Dimensionless, true},
		{Length, 127, Dim{BaseLength: 127}, true, Dimensionless, false},
		{Length, 128, Dim{BaseLength: 127}, false, Dimensionless, false},
		{Time, -128, Dim{BaseTime: -127}, false, Dimensionless, false},
		{Area, 1 << 40, Dim{BaseLength: 127}, false, Dimensionless, false},
		{Area, 1 << 62, Dim{BaseLength: 127}, false, Dimensionless, false},
		{Frequency, -1 << 62, Dim{BaseTime: 127}, false, Dimensionless, false},
		{Dimensionless, 1 << 62, Dimensionless, true, Dimensionless, true},
	}
	for _, tt := range tests {
		p, ok := tt.d.Pow(tt.n)
		if p != tt.pow || ok != tt.powOK {
			t.Errorf("%v.Pow(%d) = %v, %v; want %v, %v", tt.d, tt.n, p, ok, tt.pow, tt.powOK)
		}
		r, ok := tt.d.Root(tt.n)
		if r != tt.root || ok != tt.rootOK {
			t.Errorf("%v.Root(%d) = %v, %v; want %v, %v", tt.d, tt.n, r, ok, tt.root, tt.rootOK)
		}
	}
}

func TestDimOverflow(t *testing.T) {
	big := Dim{BaseLength: 100}
	if _, ok := big.MulChecked(big); ok {
		t.Error("L^100 · L^100 did not report overflow")
	}
	if got := big.Mul(big); got != (Dim{BaseLength: 127}) {
		t.Errorf("L^100 · L^100 clamps to %v, want L^127", got)
	}
	if _, ok := big.DivChecked(Dim{BaseLength: -100}); ok {
		t.Error("L^100 / L^-100 did not report overflow")
	}
	if got := (Dim{BaseTime: -100}).Div(Dim{BaseTime: 100}); got != (Dim{BaseTime: -127}) {
		t.Errorf("T^-100 / T^100 clamps to %v, want T^-127", got)
	}
	if got, ok := big.MulChecked(Dim{BaseLength: 27}); !ok || got != (Dim{BaseLength: 127}) {
		t.Errorf("L^100 · L^27 = %v, %v; want L^127, true", got, ok)
	}
	if !Dimensionless.IsZero() || Length.IsZero() || !Length.Div(Length).IsZero() {
		t.Error("IsZero is wrong")
	}
}

func TestDimString(t *testing.T) {
	tests := []struct {
		d    Dim
		want string
	}{
		{Dimensionless, "1"},
		{Length, "m"},
		{Mass, "kg"},
		{Time, "s"},
		{Frequency, "1/s"},
		{Diffusivity, "m^2/s"},
		{Velocity, "m/s"},
		{Concentration, "mol/m^3"},
		{ReactionRate, "mol/(m^3·s)"},
		{MolarFlux, "mol/(m^2·s)"},
		{MolarMass, "kg/mol"},
		{MassConcentration, "kg/m^3"},
		{Pressure, "kg/(m·s^2)"},
		{Energy, "kg·m^2/s^2"},
		{dim(2, 1, -2, -1, -1), "kg·m^2/(mol·K·s^2)"},
		{Current, "A"},
		{LuminousIntensity, "cd"},
		{Dim{BaseCurrent: 1, BaseTime: 1}, "A·s"},
		{Dim{BaseLength: -127, BaseTime: 127}, "s^127/m^127"},
	}
	for _, tt := range tests {
		if got := tt.d.String(); got != tt.want {
			t.Errorf("String(%v) = %q, want %q", [NumBases]int8(tt.d), got, tt.want)
		}
	}
}

func TestDimDescribe(t *testing.T) {
	tests := []struct {
		d    Dim
		want string
	}{
		{ReactionRate, "mol/(m^3·s) (reaction rate)"},
		{Diffusivity, "m^2/s (diffusivity)"},
		{Length, "m (length)"},
		{Concentration, "mol/m^3 (concentration)"},
		{Velocity, "m/s (velocity or mass-transfer coefficient)"},
		{Dimensionless, "1 (dimensionless)"},
		{Frequency, "1/s (first-order rate constant or frequency)"},
		{MolarMass, "kg/mol (molar mass)"},
		{MassConcentration, "kg/m^3 (mass concentration or density)"},
		{dim(5, 0, 0, 0, 0), "m^5"}, // no name: SI form only
	}
	for _, tt := range tests {
		if got := tt.d.Describe(); got != tt.want {
			t.Errorf("Describe(%v) = %q, want %q", tt.d, got, tt.want)
		}
	}
}

// TestDimStringParses checks that every named dimension's SI form parses
// back to a unit of scale 1 with that dimension.
func TestDimStringParses(t *testing.T) {
	for d := range dimNames {
		s := d.String()
		u, err := Parse(s)
		if err != nil || u.Scale != 1 || u.Dim != d {
			t.Errorf("Parse(%q) = %+v, %v; want scale 1, dim %v", s, u, err, d)
		}
	}
}
