// Package intake reads lot manifests (CSV and .xlsx) into [manifest.Line] values: it recognises the
// header however a bench wrote it, reads quantities with their units, resolves chemistry labels
// through the catalogue, and refuses anything it cannot read with an error naming the file, line
// and column. It is the only package of the lot model that knows file formats; the model itself
// ([feed]) sees parsed lines only.
//
// # Header
//
// The header is the first row, within the first [MaxHeaderSearchRows] non-blank rows, in which at
// least two cells name known columns; title and note rows above it are skipped. Every other header
// cell must name a known column (case, spacing, punctuation and a unit in brackets or after the
// name are ignored; see [Columns]) or be listed in Options.IgnoreColumns: a column is never
// dropped without a word. A unit in the header ("Capacity (Ah)", "Mass [lb]", "Weight kg") applies
// to bare numbers below it; a cell's own unit wins.
//
// # Bounds
//
// Inputs are bounded so a hostile file costs little: lines of at most [MaxLineBytes], at most
// [MaxColumns] columns, labels of at most [cathode.MaxLabelLen] bytes, .xlsx workbooks inflating
// to at most [MaxUnzippedBytes], and physical ranges on every number.
package intake
