// Package data holds blackmass's reference tables as editable CSV files, embedded into the binary.
//
// Every table has a source column. Lines starting with '#' are comments. The tables are read by
// the cathode and feed packages through [FS]; tests may hand those packages other files instead.
package data

import "embed"

// FS holds every table (*.csv) and the demo lot (demo/).
//
//go:embed *.csv demo
var FS embed.FS
