// Package notebook reads, writes and runs Jupyter notebooks (nbformat 4)
// written for the massline kernel, without Jupyter.
//
// The structs here are our own and small: a [Notebook] holds [Cell]s, a
// code cell holds [Output]s (stream, display_data, execute_result, error).
// Metadata the package does not know is kept as it was read.
//
// [Read] and [Parse] accept a cell's source and a text output either as one
// string or as a list of strings (the two spellings nbformat allows) and a
// null execution_count for a cell that never ran. Anything that is not an
// nbformat 4 notebook gives an error that says what is wrong and where
// (which cell, which field); nothing panics, and input larger than
// [MaxSize] is refused.
//
// [Write] and [Marshal] produce nbformat 4.5 JSON laid out as Jupyter lays
// it out: keys sorted, one space of indentation, multi-line strings split
// into lists of lines, a newline at the end. Cells without a valid,
// unique id get one derived from their type and source, so writing the
// same notebook twice gives the same bytes.
//
// [Execute] runs the code cells in order through a fresh massline
// workspace, as the kernel would in a "run all": streams, displays, the
// cell's value and its error become the cell's outputs, with execution
// counts; it stops at the first failing cell unless asked to keep going.
// [HTML] turns a notebook into a standalone HTML report: markdown rendered
// (a plain subset: headings, paragraphs, emphasis, lists, code, links),
// code cells, and their outputs with SVG plots inline and tables as HTML,
// under the safety caution.
//
// Typical use:
//
//	nb, err := notebook.Read(f)
//	...
//	sum, err := notebook.Execute(ctx, nb, &notebook.Options{Dir: dir})
//	...
//	data, err := notebook.Marshal(nb)
//	page := notebook.HTML(nb, "bead_soak")
package notebook
