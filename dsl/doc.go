// Package dsl reads the massline modelling language: a lexer and grammar
// (built with participle), the syntax tree with positions, the canonical
// formatter and S-expression dumps for tests.
//
// Parse never stops at the first syntax error: when the whole text does
// not parse, it parses each top-level statement on its own, so every
// syntax error of a file is reported and the statements around an error
// still reach the checker. The grammar's structs stay inside this package;
// the tree other packages see is the one in ast.go.
//
// Units are written in square brackets right after a number, 1.5 [mm];
// the text inside the brackets is kept as written and read by package
// compile/units. Brackets make the unit's extent unambiguous, so that
// "2 [1/s] * c" can never be read as a unit "1/s*c".
package dsl
