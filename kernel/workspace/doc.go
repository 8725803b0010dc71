// Package workspace is the notebook side of the massline language: it
// implements kernel.Engine on top of package engine.
//
// A Workspace keeps the cells that ran successfully. A new cell is parsed,
// then checked against the declarations of the earlier cells, which it may
// redefine (each redefinition is reported); its output statements run
// against the whole model. A cell that fails leaves the workspace exactly
// as it was. While a model is still being built cell by cell, the
// completeness checks (every boundary has a condition, every species a
// starting value) wait until a cell asks for results.
package workspace
