package dsl

import (
	"io"
	"unicode"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"
)

// Token types of the hand-written lexer. participle reserves -1 for the
// end of input.
const (
	tokComment lexer.TokenType = -(iota + 2)
	tokWhitespace
	tokString
	tokUnit
	tokNumber
	tokKeyword
	tokIdent
	tokOp
	tokStray
)

var tokenSymbols = map[string]lexer.TokenType{
	"EOF":        lexer.EOF,
	"Comment":    tokComment,
	"Whitespace": tokWhitespace,
	"String":     tokString,
	"Unit":       tokUnit,
	"Number":     tokNumber,
	"Keyword":    tokKeyword,
	"Ident":      tokIdent,
	"Op":         tokOp,
	"Stray":      tokStray,
}

// lexDefinition is the lexer of the language, written by hand: it is
// several times faster than a regular-expression lexer and tolerant, so
// that common slips reach the converter as tokens it can explain:
//
//   - a number runs on over letters, digits, '_' and '.', so "3mm" and
//     "1.2.3" are single (invalid) number tokens;
//   - a string left open ends at the end of the line, a unit left open
//     at the end of the line or at a comment;
//   - any other character that is not part of the language is a token
//     of its own (Stray).
//
// Whitespace and comments are tokens too, elided by the parser, so that
// participle's end positions stop at the end of the last real token.
type lexDefinition struct{}

var lexDef lexDefinition

// Symbols implements lexer.Definition.
func (lexDefinition) Symbols() map[string]lexer.TokenType { return tokenSymbols }

// Lex implements lexer.Definition.
func (d lexDefinition) Lex(filename string, r io.Reader) (lexer.Lexer, error) {
	b, err := io.ReadAll(r)
	if err != nil {
		return nil, err
	}
	return d.LexString(filename, string(b))
}

// LexString implements lexer.StringDefinition.
func (lexDefinition) LexString(filename string, input string) (lexer.Lexer, error) {
	return &scanner{src: input, pos: lexer.Position{Filename: filename, Line: 1, Column: 1}}, nil
}

// scanner walks a source text and returns its tokens one by one.
type scanner struct {
	src string
	pos lexer.Position
}

// Next implements lexer.Lexer.
func (s *scanner) Next() (lexer.Token, error) {
	if s.pos.Offset >= len(s.src) {
		return lexer.EOFToken(s.pos), nil
	}
	start := s.pos.Offset
	typ, end := scanToken(s.src, start)
	tok := lexer.Token{Type: typ, Value: s.src[start:end], Pos: s.pos}
	s.pos.Advance(tok.Value)
	return tok, nil
}

// scanToken returns the type and end offset of the token at src[i:].
func scanToken(src string, i int) (lexer.TokenType, int) {
	c := src[i]
	switch {
	case c == '#':
		j := i
		for j < len(src) && src[j] != '\n' {
			j++
		}
		return tokComment, j
	case c == ' ' || c == '\t' || c == '\r' || c == '\n':
		j := i
		for j < len(src) && (src[j] == ' ' || src[j] == '\t' || src[j] == '\r' || src[j] == '\n') {
			j++
		}
		return tokWhitespace, j
	case c == '"':
		j := i + 1
		for j < len(src) && src[j] != '\n' {
			if src[j] == '\\' && j+1 < len(src) && src[j+1] != '\n' {
				j += 2
				continue
			}
			j++
			if src[j-1] == '"' {
				break
			}
		}
		return tokString, j
	case c == '[':
		j := i + 1
		for j < len(src) && src[j] != '\n' && src[j] != '#' {
			j++
			if src[j-1] == ']' {
				break
			}
		}
		return tokUnit, j
	case isDigit(c) || c == '.' && i+1 < len(src) && isDigit(src[i+1]):
		return tokNumber, scanNumber(src, i)
	case c == '<' || c == '>' || c == '=' || c == '!':
		if i+1 < len(src) && src[i+1] == '=' {
			return tokOp, i + 2
		}
		if c == '!' {
			return tokStray, i + 1
		}
		return tokOp, i + 1
	case isOpChar(c):
		return tokOp, i + 1
	}
	r, size := utf8.DecodeRuneInString(src[i:])
	if r == '_' || unicode.IsLetter(r) {
		j := i + size
		for j < len(src) {
			r, size := utf8.DecodeRuneInString(src[j:])
			if r != '_' && !unicode.IsLetter(r) && !unicode.IsDigit(r) {
				break
			}
			j += size
		}
		if IsReserved(src[i:j]) {
			return tokKeyword, j
		}
		return tokIdent, j
	}
	return tokStray, i + size
}

// scanNumber returns the end of the number at src[i:]: digits with an
// optional fraction and exponent, then any letters, digits, '_' and '.'
// that stick to it (which make it invalid; the converter says why).
func scanNumber(src string, i int) int {
	j := i
	for j < len(src) && isDigit(src[j]) {
		j++
	}
	if j < len(src) && src[j] == '.' {
		j++
		for j < len(src) && isDigit(src[j]) {
			j++
		}
	}
	if j < len(src) && (src[j] == 'e' || src[j] == 'E') {
		k := j + 1
		if k < len(src) && (src[k] == '+' || src[k] == '-') {
			k++
		}
		if k < len(src) && isDigit(src[k]) {
			for k < len(src) && isDigit(src[k]) {
				k++
			}
			j = k
		}
	}
	for j < len(src) {
		r, size := utf8.DecodeRuneInString(src[j:])
		if r != '_' && r != '.' && !unicode.IsLetter(r) && !unicode.IsDigit(r) {
			break
		}
		j += size
	}
	return j
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

func isOpChar(c byte) bool {
	switch c {
	case '-', '+', '*', '/', '^', '(', ')', ',', '.', ':', '{', '}', '|':
		return true
	}
	return false
}

// tokens lexes src completely, without whitespace and comments.
func tokens(src string) []lexer.Token {
	var out []lexer.Token
	s := &scanner{src: src, pos: lexer.Position{Line: 1, Column: 1}}
	for {
		t, _ := s.Next()
		if t.EOF() {
			return out
		}
		if t.Type != tokWhitespace && t.Type != tokComment {
			out = append(out, t)
		}
	}
}
