// Package report renders results for people and for other programs:
// tables as aligned plain text, HTML and CSV, and plots as SVG.
//
// It is pure rendering. It knows nothing of the modelling language or the
// solvers: it takes numbers, names and unit strings, and returns strings.
// Nothing in it panics on bad input; points that cannot be drawn (NaN,
// infinities, values ≤ 0 on a log axis, < 0 on a square-root axis) are
// left out and a note under the plot says how many and why.
//
// # Tables
//
// [Table] holds a title, columns with units ("Name [Unit]"; a unit of ""
// or "1" shows no bracket), rows of float64 and notes. [Table.Text] aligns
// numbers on their decimal points with five significant digits and one
// notation per column (plain decimals, or scientific notation for the
// whole column when magnitudes call for it). [Table.HTML] is a single
// <table> with inline styles only, inherited colours and translucent
// borders, so it reads in light and dark notebook themes. [Table.CSV] is
// RFC 4180 with numbers that read back exactly.
//
// # Plots
//
// [Plot] draws series against linear, logarithmic or square-root axes
// ([Sqrt] places clean values of t at √t, the axis on which early
// diffusional uptake is straight). [Map] draws a position–time map as
// coloured cells with a colour bar. Series ordered in time take their
// colours from this package's own sequential scale ([SequentialColor],
// [CurveColor]: navy, violet, raspberry, apricot, cream — defined in OKLCH
// with steadily rising lightness); unordered series take colours from a
// categorical palette of eight mid-lightness hues ([CategoricalColor]).
// Curves use only the middle part of the sequential scale so that they
// stay visible on white and on dark notebook backgrounds.
//
// SVG output is a standalone document (xmlns, viewBox, width and height)
// that also works inline in HTML. It has no id attributes, so any number
// of plots can share a page. Text and axes use currentColor, so inline
// they take the page's text colour over a transparent background; a style
// rule that only matches when the SVG is its own document (opened
// directly, or through <img>) gives it its own background and text
// colours — dark on white, or light on near black under a dark colour
// scheme. The only font named is the generic sans-serif.
// Coordinates are rounded to 0.1 px, lines are written as relative path
// data, and points closer than 0.2 px to the simplified line are dropped
// (5 curves × 200 points ≈ 5 KB). Each series is exactly one <path>
// element with a data-series attribute and a <title> naming it; the
// legend sits outside the plot area (to the right when it is narrow
// enough, else below), so it never covers a curve.
//
// # Reports
//
// [Document] assembles headings, paragraphs, tables, plots and maps into a
// standalone HTML page or a plain-text report. Both carry the sentence of
// [Caution]; the text report has it as a footer.
//
// # Why the SVG is written here rather than with gonum.org/v1/plot
//
// gonum.org/v1/plot v0.17.0 (vg/vgsvg) was compared with this package's
// own writer on the same five-profile plot, both rendered to PNG with
// headless Chromium on light and dark pages and inspected. gonum/plot's
// output had: the legend drawn over the curves in the top-right corner;
// text in a named font ("Liberation Serif"), which falls back differently
// per machine; an opaque white background and black text, which sit as a
// white box on a dark notebook theme; ticks at 0.1, 0.4, 0.7 rather than a
// 1-2-5 sequence; the last x tick label against the right edge; sizes in
// pt; and no square-root axis. Each could be patched with custom tickers,
// legend placement, fonts and post-processing of the SVG text, but that
// is more code than the writer itself, and the plots needed here are few
// (lines, markers, cells, a colour bar). The package therefore writes SVG
// directly and has no dependency outside the standard library.
package report
