// Package engine runs checked models: it lowers each body to its discrete
// system, integrates it stage by stage, derives the results people ask for
// (uptake fraction, centre, mean and surface values, fluxes, profiles,
// times to a fraction, the mass ledger), evaluates the file's own
// expectations, and renders tables and plots.
//
// It is the Go API a library user calls (RunFile, Run); the command line
// and the notebook kernel sit on top of it. A Session keeps a notebook's
// workspace: cells are checked against the declarations of earlier cells,
// and a failing cell leaves the workspace as it was.
package engine
