// Package dsl reads the massline modelling language: a hand-written
// lexer, a grammar built with participle, the syntax tree with positions,
// the canonical formatter and S-expression dumps for tests.
//
// A file is a list of statements, one per line: a statement may run over
// several lines (inside braces or after an operator), but a new statement
// never starts on the line where the previous one ended. The rule lets the
// parser explain slips such as "let R = 5 mm" (a unit outside brackets)
// instead of reading them as two statements.
//
// Parse never stops at the first syntax error: when the whole text does
// not parse, it parses each top-level statement on its own, so every
// syntax error of a file is reported and the statements around an error
// still reach the checker. A statement that cannot be parsed becomes a
// BadStmt that records its keyword and the name it declares, so the
// checker can stay quiet about uses of that name (one mistake, one
// message). The grammar's structs stay inside this package; the tree
// other packages see is the one in ast.go.
//
// Units are written in square brackets right after a number, 1.5 [mm];
// the text inside the brackets is kept as written and read by package
// compile/units. Brackets make the unit's extent unambiguous, so that
// "2 [1/s] * c" can never be read as a unit "1/s*c".
package dsl
