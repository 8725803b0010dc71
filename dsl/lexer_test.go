package dsl

import (
	"strings"
	"testing"
)

func TestLexer(t *testing.T) {
	names := map[int]string{}
	for name, typ := range tokenSymbols {
		names[int(typ)] = name
	}
	cases := []struct{ src, want string }{
		{"let R = 1.5 [mm]", "Keyword:let Ident:R Op:= Number:1.5 Unit:[mm]"},
		{"x<=y>=z==w!=v<u>t", "Ident:x Op:<= Ident:y Op:>= Ident:z Op:== Ident:w Op:!= Ident:v Op:< Ident:u Op:> Ident:t"},
		{".5e-3 2. 3e 4E+2", "Number:.5e-3 Number:2. Number:3e Number:4E+2"},
		{"3mm 1.2.3 5µm", "Number:3mm Number:1.2.3 Number:5µm"},
		{"[m^2/s] [m # c", "Unit:[m^2/s] Unit:[m  Comment:# c"},
		{`"a\"b" "open`, `String:"a\"b" String:"open`},
		{"α_1 µ β2 _x", "Ident:α_1 Ident:µ Ident:β2 Ident:_x"},
		{"r² $ ! ]", "Ident:r Stray:² Stray:$ Stray:! Stray:]"},
		{"a.b|c:{}(),", "Ident:a Op:. Ident:b Op:| Ident:c Op:: Op:{ Op:} Op:( Op:) Op:,"},
		{"in to for every", "Ident:in Ident:to Ident:for Ident:every"},
	}
	for _, c := range cases {
		s := &scanner{src: c.src}
		s.pos.Line, s.pos.Column = 1, 1
		var got []string
		for {
			tok, err := s.Next()
			if err != nil {
				t.Fatal(err)
			}
			if tok.EOF() {
				break
			}
			if tok.Type == tokWhitespace {
				continue
			}
			got = append(got, names[int(tok.Type)]+":"+tok.Value)
		}
		if g := strings.Join(got, " "); g != c.want {
			t.Errorf("lexing %q:\ngot  %s\nwant %s", c.src, g, c.want)
		}
	}
}

// TestLexerPositions checks that token positions count lines and
// characters (not bytes).
func TestLexerPositions(t *testing.T) {
	toks := tokens("let µ = 1\n  α")
	last := toks[len(toks)-1]
	if last.Value != "α" || last.Pos.Line != 2 || last.Pos.Column != 3 || last.Pos.Offset != 13 {
		t.Errorf("position of α: %+v", last.Pos)
	}
	if eq := toks[2]; eq.Pos.Column != 7 || eq.Pos.Offset != 7 {
		t.Errorf("position of =: %+v", eq.Pos)
	}
}
