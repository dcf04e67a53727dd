// Package reports renders a run's Result as terminal, Markdown, LaTeX and CSV
// tables, and as figures (SVG and PNG, drawn with gonum/plot: Figures).
//
// Terminal and Markdown show one table per model, one row per grid value,
// each mean rounded at the second significant digit of its standard error,
// with the basis of the risk and of the bias²/variance split stated above
// the table and heavy-tailed points and failed cells flagged; LaTeX sets the
// same numbers in booktabs tables with the standard errors in parentheses or
// after ±, a caption and a label. Every table carries a provenance line
// (spec, hash, engine, seeds, the run's date). CSV writes one
// tidy table of every model × grid value in full precision for analysis
// elsewhere. None of them refits anything: a Result is all they read.
package reports
