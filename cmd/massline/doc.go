// Command massline checks, formats and runs massline model files, runs
// notebooks headless, and serves as a Jupyter kernel.
//
//	massline run [--out DIR] [--csv] FILE.mln
//	massline run NOTEBOOK.ipynb [--out DIR] [--html] [-w] [--keep-going]
//	massline check [--json] FILE...
//	massline fmt [-w] [-d] FILE...
//	massline bench [--quick] [--no-scipy] [--json] [--reference]
//	massline kernel install [--user | --prefix DIR | --sys-prefix]
//	massline kernel list | remove
//	massline kernel -f CONNECTION_FILE
//	massline version
//
// Every command reports a problem with the input as a diagnostic with
// file:line:column and exits 1; status 2 means a usage error or an internal
// failure (reported, never a crash).
package main
