// Package render draws statemix results for people: figures (SVG or PNG,
// drawn with gonum.org/v1/plot in a style of our own), plain-text tables
// for the terminal, and self-contained HTML reports.
//
// The building blocks are general so that fits, depth profiles and maps
// share them: a Figure is a stack of plot panels sharing one energy (or
// depth) axis; a Table is a header and rows of cells, written aligned for
// a terminal or as HTML; a Page is a titled list of Sections holding
// paragraphs, tables, figures, key/value lists and warnings, written as one
// HTML file with inline SVG and CSS that reads on a phone and prints.
// FitFigure, FitTable and FitReport assemble those for a fit.Result.
package render
