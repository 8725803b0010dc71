// Package diag holds the types every phase of massline shares for talking
// about source text: positions, ranges and diagnostics, and the one
// renderer that shows a diagnostic to people (terminal text, notebook
// HTML) or to programs (JSON).
//
// It is a leaf package: it imports nothing of massline, and every other
// package may import it.
package diag
