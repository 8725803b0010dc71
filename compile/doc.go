// Package compile checks a parsed model and lowers it towards numbers.
//
// Check resolves every name, converts every number to SI, checks the
// dimensions of every expression (reporting a mismatch at the operator
// with both dimensions in words), and checks completeness: every boundary
// of every body has exactly one condition for each species, every species
// in a body has a starting value, the run is well formed. It returns a
// Model, which refers to the syntax only through positions; what the
// checker learned about the tree lives in side tables (Info), the tree is
// never modified.
//
// Notebook cells are checked like chunks of one growing file: the
// declarations of earlier cells are in scope (Options.Previous) and may be
// redefined (Options.Redefine); only the output statements of the cell
// being checked are returned as actions.
package compile
