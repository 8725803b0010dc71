package dsl

import (
	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"
)

// The grammar structs below are participle's view of the syntax. They
// never leave this package: convert.go turns them into the AST in ast.go.

// reserved lists the words that cannot name a quantity, species or body.
var reserved = []string{
	"massline", "use", "let", "species", "body", "layer", "balance",
	"boundary", "initially", "stage", "run", "settings", "show", "expect",
	"sweep", "fit", "print", "reset", "if", "then", "else", "and", "or", "not",
}

// statementKeywords start a statement; the error-recovery splitter looks
// for them at the start of a line.
var statementKeywords = map[string]bool{
	"massline": true, "use": true, "let": true, "species": true, "body": true,
	"balance": true, "boundary": true, "initially": true, "stage": true,
	"run": true, "settings": true, "show": true, "expect": true,
	"sweep": true, "fit": true, "print": true, "reset": true,
}

// IsReserved reports whether word is a keyword of the language.
func IsReserved(word string) bool {
	for _, r := range reserved {
		if r == word {
			return true
		}
	}
	return false
}

// Keywords returns the reserved words of the language.
func Keywords() []string { return append([]string(nil), reserved...) }

type gFile struct {
	Stmts []*gStmt `parser:"@@*"`
}

type gStmt struct {
	Pos       lexer.Position
	EndPos    lexer.Position
	Version   *gVersion   `parser:"  @@"`
	Use       *gUse       `parser:"| @@"`
	Let       *gLet       `parser:"| @@"`
	Species   *gSpecies   `parser:"| @@"`
	Body      *gBody      `parser:"| @@"`
	Balance   *gBalance   `parser:"| @@"`
	Boundary  *gBoundary  `parser:"| @@"`
	Initially *gInitially `parser:"| @@"`
	Stage     *gStage     `parser:"| @@"`
	Run       *gRun       `parser:"| @@"`
	Settings  *gSettings  `parser:"| @@"`
	Show      *gShow      `parser:"| @@"`
	Expect    *gExpect    `parser:"| @@"`
	Sweep     *gSweep     `parser:"| @@"`
	Fit       *gFit       `parser:"| @@"`
	Print     *gPrint     `parser:"| @@"`
	Reset     *gReset     `parser:"| @@"`
	Expr      *gExpr      `parser:"| @@"`
}

type gVersion struct {
	Number string `parser:"'massline' @Number"`
}

type gUse struct {
	Path *gString `parser:"'use' @@"`
}

type gIdent struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Name   string `parser:"@Ident"`
}

type gString struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Value  string `parser:"@String"`
}

type gPath struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Parts  []*gIdent `parser:"@@ ('.' @@)*"`
}

type gLet struct {
	Name  *gIdent `parser:"'let' @@ '='"`
	Value *gExpr  `parser:"@@"`
}

type gProp struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Key    *gIdent `parser:"@@ '='"`
	Value  *gExpr  `parser:"@@ ','?"`
}

type gSpecies struct {
	Name  *gIdent  `parser:"'species' @@"`
	Props []*gProp `parser:"('{' @@* '}')?"`
}

type gBody struct {
	Name   *gIdent   `parser:"'body' @@ '='"`
	Shape  *gCall    `parser:"@@"`
	Layers []*gLayer `parser:"('{' @@* '}')?"`
}

type gLayer struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Name   *gIdent `parser:"'layer' @@ 'to'"`
	To     *gExpr  `parser:"@@"`
}

type gBalance struct {
	Species *gIdent  `parser:"'balance' @@ 'in'"`
	Region  *gPath   `parser:"@@"`
	Props   []*gProp `parser:"('{' @@* '}')?"`
}

type gBoundary struct {
	Place     *gPath      `parser:"'boundary' @@"`
	Interface *gIdent     `parser:"('|' @@)?"`
	Species   *gIdent     `parser:"('for' @@)? ':'"`
	Condition *gCondition `parser:"@@"`
}

// gCondition is a call whose parentheses may be left out when it has no
// arguments: symmetry, fixed(1 [mM]).
type gCondition struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Fun    *gIdent `parser:"@@"`
	Args   []*gArg `parser:"('(' (@@ (',' @@)*)? ')')?"`
}

type gInitially struct {
	Region  *gPath  `parser:"'initially' @@ ':'"`
	Species *gIdent `parser:"@@ '='"`
	Value   *gExpr  `parser:"@@"`
}

type gStage struct {
	Name     *gIdent  `parser:"'stage' @@ 'for'"`
	Duration *gExpr   `parser:"@@ '{'"`
	Stmts    []*gStmt `parser:"@@* '}'"`
}

// gRun is "run steady", "run until T [output]", "run [output]" or "run"
// (through the stages). No alternative may match nothing: participle
// refuses a branch that matches without consuming input.
type gRun struct {
	Steady bool     `parser:"'run' ( @'steady'"`
	Until  *gExpr   `parser:"      | 'until' @@"`
	Out    *gRunOut `parser:"        @@?"`
	Only   *gRunOut `parser:"      | @@ )?"`
}

// gRunOut says when to report results.
type gRunOut struct {
	Every *gExpr   `parser:"  'every' @@"`
	At    []*gExpr `parser:"| 'at' @@ (',' @@)*"`
	LogN  *gExpr   `parser:"| 'log' @@"`
	From  *gExpr   `parser:"  'from' @@"`
}

type gSettings struct {
	Props []*gProp `parser:"'settings' '{' @@* '}'"`
}

type gShow struct {
	Items []*gExpr `parser:"'show' @@ (',' @@)*"`
	At    []*gExpr `parser:"('at' @@ (',' @@)*)?"`
	Scale *gIdent  `parser:"('scale' @@)?"`
}

type gExpect struct {
	Subject   *gExpr `parser:"'expect' @@"`
	At        *gExpr `parser:"('at' @@)? '='"`
	Value     *gExpr `parser:"@@"`
	Tolerance *gExpr `parser:"'within' @@"`
}

type gSweep struct {
	Var   *gSweepVar `parser:"'sweep' @@ '{'"`
	Stmts []*gStmt   `parser:"@@* '}'"`
}

type gSweepVar struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Name   *gIdent  `parser:"@@"`
	Values []*gExpr `parser:"( 'in' @@ (',' @@)*"`
	From   *gExpr   `parser:"| 'from' @@"`
	To     *gExpr   `parser:"  'to' @@"`
	Steps  *gExpr   `parser:"  'steps' @@"`
	Log    bool     `parser:"  @'log'? )"`
}

type gFit struct {
	Params  []*gFitParam  `parser:"'fit' @@ (',' @@)*"`
	Data    *gString      `parser:"'against' @@ '{'"`
	Columns []*gFitColumn `parser:"@@* '}'"`
}

type gFitParam struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Name   *gIdent `parser:"@@ 'from'"`
	Low    *gExpr  `parser:"@@ 'to'"`
	High   *gExpr  `parser:"@@"`
}

type gFitColumn struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Target *gExpr   `parser:"@@ '='"`
	Column *gString `parser:"@@ ','?"`
}

type gPrint struct {
	Args []*gExpr `parser:"'print' @@ (',' @@)*"`
}

type gReset struct {
	Word string `parser:"@'reset'"`
}

// ---- expressions, lowest precedence first ----

type gExpr struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Left   *gAnd    `parser:"@@"`
	Rest   []*gOrOp `parser:"@@*"`
}

type gOrOp struct {
	Op    string `parser:"@'or'"`
	Right *gAnd  `parser:"@@"`
}

type gAnd struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Left   *gNot     `parser:"@@"`
	Rest   []*gAndOp `parser:"@@*"`
}

type gAndOp struct {
	Op    string `parser:"@'and'"`
	Right *gNot  `parser:"@@"`
}

type gNot struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Not    *gNot `parser:"  'not' @@"`
	Cmp    *gCmp `parser:"| @@"`
}

type gCmp struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Left   *gAdd  `parser:"@@"`
	Op     string `parser:"( @('<=' | '>=' | '==' | '!=' | '<' | '>')"`
	Right  *gAdd  `parser:"  @@ )?"`
}

type gAdd struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Left   *gMul     `parser:"@@"`
	Rest   []*gAddOp `parser:"@@*"`
}

type gAddOp struct {
	Pos   lexer.Position
	Op    string `parser:"@('+' | '-')"`
	Right *gMul  `parser:"@@"`
}

type gMul struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Left   *gUnary   `parser:"@@"`
	Rest   []*gMulOp `parser:"@@*"`
}

type gMulOp struct {
	Pos   lexer.Position
	Op    string  `parser:"@('*' | '/')"`
	Right *gUnary `parser:"@@"`
}

type gUnary struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Op     string  `parser:"  @('-' | '+')"`
	X      *gUnary `parser:"  @@"`
	Pow    *gPow   `parser:"| @@"`
}

type gPow struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Base   *gPrimary `parser:"@@"`
	Exp    *gUnary   `parser:"('^' @@)?"`
}

type gPrimary struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Number *gNumber `parser:"  @@"`
	Cond   *gCond   `parser:"| @@"`
	Call   *gCall   `parser:"| @@"`
	Path   *gPath   `parser:"| @@"`
	String *gString `parser:"| @@"`
	Paren  *gExpr   `parser:"| '(' @@ ')'"`
}

type gNumber struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Digits string `parser:"@Number"`
	Unit   *gUnit `parser:"@@?"`
}

type gUnit struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Text   string `parser:"@Unit"`
}

type gCond struct {
	If   *gExpr `parser:"'if' @@"`
	Then *gExpr `parser:"'then' @@"`
	Else *gExpr `parser:"'else' @@"`
}

type gCall struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Fun    *gIdent `parser:"@@"`
	Args   []*gArg `parser:"'(' (@@ (',' @@)*)? ')'"`
}

type gArg struct {
	Pos    lexer.Position
	EndPos lexer.Position
	Name   *gIdent `parser:"(@@ '=')?"`
	Value  *gExpr  `parser:"@@"`
}

var fileParser = participle.MustBuild[gFile](
	participle.Lexer(lexDef),
	participle.Elide("Whitespace", "Comment"),
	participle.UseLookahead(4),
)

// Grammar returns the grammar in EBNF, for the documentation.
func Grammar() string { return fileParser.String() }
