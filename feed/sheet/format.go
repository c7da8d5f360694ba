package sheet

import (
	"fmt"
	"math"
	"strings"

	"github.com/xuri/excelize/v2"
)

// Body text is 10 pt throughout: readable on paper, and small enough that a bench's tables fit
// an A4 page width at 100 %.
const (
	bodyPt  = 10.0
	titlePt = 13.0
	// linePt is the height of one line of 10 pt text in a row; rowPt a row of one line.
	linePt = 13.0
	rowPt  = 13.0
)

// base is the look of a cell apart from its number format.
type base int

const (
	plain        base = iota
	bold              // a label
	boldWrap          // a label wrapped in its column
	head              // a table's header row: bold, shaded, ruled below, wrapped
	total             // a total row: bold, shaded
	edit              // an input cell: shaded and boxed
	alert             // a disagreement to notice
	wrapped           // text wrapped in its column
	titleBase         // a sheet's title
	indented          // text wrapped, indented from a number to its left
	small             // 9 pt wrapped text (notes)
	fine              // 8 pt wrapped text (sources)
	fineLine          // 8 pt text on one line (a source in full, out of the print area)
	smallNumBase      // a 9 pt number
	dense             // 8 pt text on one line (the Lines sheet's rows)
	denseWrap         // 8 pt text wrapped in its column
	denseHead         // the Lines sheet's 8 pt header row: bold, shaded, ruled below, wrapped
	headNum           // a header over a column of numbers: as head, aligned right as they are
	headIndent        // a header over text after a column of numbers: as head, indented
	denseHeadNum      // denseHead over a column of numbers
)

// densePt is the type size of the Lines sheet, the one long table of the workbook: the smallest
// size of the print pack, so that a lot of a few hundred lines prints on a few pages.
const densePt = 8.0

// head0 is the header look, for cells written outside a page's columns.
const head0 = head

// Number formats (ECMA-376 Part 1, §18.8.31 numFmt).
const (
	fmtMoney = "#,##0.00"
	fmtCount = "#,##0"
	fmtFrac  = "0.0%"
	fmtDate  = "yyyy-mm-dd"
	fmtText  = "@"
)

// sigFmt is the number format that shows v to three significant figures, with thousands
// separators; larger numbers show every integer digit.
func sigFmt(v float64) string {
	d := sigDecimals(v)
	if d < 0 {
		return "0"
	}
	return fixedFmt(d)
}

// sigDecimals is how many decimals show v to three significant figures (0 to 6); -1 for zero.
func sigDecimals(v float64) int {
	a := math.Abs(v)
	if a == 0 || math.IsNaN(a) || math.IsInf(a, 0) {
		return -1
	}
	d := 2 - int(math.Floor(math.Log10(a)+1e-12))
	return min(max(d, 0), 6)
}

// sigStyle is the dense style showing v to three significant figures, looked up without
// building its format (for the long Lines sheet).
func (w *writer) sigStyle(v float64) int {
	d := sigDecimals(v) + 1
	if w.sigStyles[d] == 0 {
		w.sigStyles[d] = w.styleOf(dense, sigFmt(v))
	}
	return w.sigStyles[d]
}

// makeSigStyles makes every sigStyle before the workbook is zipped, for rows written while it is
// (lineRows): the styles part is written first.
func (w *writer) makeSigStyles() {
	w.sigStyle(0)
	for d := 0; d <= 6; d++ {
		w.sigStyle(math.Pow10(2 - d))
	}
}

// fixedFmt shows d decimals with thousands separators.
func fixedFmt(d int) string {
	if d <= 0 {
		return fmtCount
	}
	return fmtCount + "." + strings.Repeat("0", d)
}

type styleKey struct {
	b   base
	fmt string
}

// styleOf returns the style of a base look with a number format, made once per workbook.
func (w *writer) styleOf(b base, numFmt string) int {
	k := styleKey{b, numFmt}
	if id, ok := w.styles[k]; ok {
		return id
	}
	font := &excelize.Font{Size: bodyPt, Family: "Calibri"}
	st := &excelize.Style{Font: font, Alignment: &excelize.Alignment{Vertical: "top"}}
	shade := excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"D9E2D0"}}
	rule := []excelize.Border{{Type: "bottom", Color: "5B6B4E", Style: 1}}
	box := "BF9000"
	switch b {
	case bold:
		font.Bold = true
	case boldWrap:
		font.Bold = true
		st.Alignment.WrapText = true
	case head:
		font.Bold = true
		st.Fill, st.Border = shade, rule
		st.Alignment.WrapText = true
	case total:
		font.Bold = true
		st.Fill, st.Border = shade, rule
	case edit:
		st.Fill = excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"FFF2CC"}}
		st.Border = []excelize.Border{{Type: "left", Color: box, Style: 1}, {Type: "right", Color: box, Style: 1},
			{Type: "top", Color: box, Style: 1}, {Type: "bottom", Color: box, Style: 1}}
	case alert:
		font.Bold, font.Color = true, "7F0000"
		st.Fill = excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"F4CCCC"}}
		st.Alignment.WrapText = true
	case wrapped:
		st.Alignment.WrapText = true
	case titleBase:
		font.Bold, font.Size = true, titlePt
		st.Alignment.WrapText = true
	case indented:
		st.Alignment.WrapText, st.Alignment.Horizontal, st.Alignment.Indent = true, "left", 1
	case small:
		font.Size = 9
		st.Alignment.WrapText = true
	case fine:
		font.Size = 8
		st.Alignment.WrapText, st.Alignment.Horizontal, st.Alignment.Indent = true, "left", 1
	case fineLine:
		font.Size = 8
	case smallNumBase:
		font.Size = 9
	case dense:
		font.Size = densePt
	case denseWrap:
		font.Size = densePt
		st.Alignment.WrapText = true
	case denseHead, denseHeadNum:
		font.Bold, font.Size = true, densePt
		st.Fill, st.Border = shade, rule
		st.Alignment.WrapText = true
	case headNum, headIndent:
		font.Bold = true
		st.Fill, st.Border = shade, rule
		st.Alignment.WrapText = true
	}
	switch b {
	case headNum, denseHeadNum:
		st.Alignment.Horizontal = "right"
	case headIndent:
		st.Alignment.Horizontal, st.Alignment.Indent = "left", 1
	}
	if numFmt != "" {
		f := numFmt
		st.CustomNumFmt = &f
	}
	id, err := w.f.NewStyle(st)
	if err != nil && w.err == nil {
		w.err = err
	}
	w.styles[k] = id
	return id
}

// A cell value with its number format and look. The helpers below make them; a bare float64
// is shown to three significant figures, an int as a count, a string as plain text.
type cellValue struct {
	v   any // float64, int, string or nil
	fmt string
	b   base
}

func kg(v float64) cellValue           { return cellValue{v: v, fmt: sigFmt(v)} }
func money(v float64) cellValue        { return cellValue{v: v, fmt: fmtMoney} }
func frac(v float64) cellValue         { return cellValue{v: v, fmt: fmtFrac} }
func fixed(v float64, d int) cellValue { return cellValue{v: v, fmt: fixedFmt(d)} }
func count(n int) cellValue            { return cellValue{v: n, fmt: fmtCount} }
func wrap(s string) cellValue          { return cellValue{v: s, b: wrapped} }
func boldText(s string) cellValue      { return cellValue{v: s, b: bold} }
func note(s string) cellValue          { return cellValue{v: s, b: small} }
func fineText(s string) cellValue      { return cellValue{v: s, b: fine} }
func smallNum(v float64) cellValue     { return cellValue{v: v, fmt: sigFmt(v), b: smallNumBase} }

// as gives a value another look, keeping its number format.
func as(b base, v any) cellValue {
	c := toCell(v)
	c.b = b
	return c
}

func toCell(v any) cellValue {
	switch x := v.(type) {
	case cellValue:
		return x
	case float64:
		return kg(x)
	case int:
		return count(x)
	case string:
		return cellValue{v: x}
	case nil:
		return cellValue{}
	}
	panic(fmt.Sprintf("sheet: no cell format for %T", v))
}

// set writes one cell: text as text (never read as a formula), numbers with their format.
func (w *writer) set(sheet string, col, row int, v any) {
	c := toCell(v)
	cell, _ := excelize.CoordinatesToCellName(col, row)
	switch x := c.v.(type) {
	case nil:
		if c.b == plain {
			return
		}
	case float64:
		_ = w.f.SetCellFloat(sheet, cell, x, -1, 64)
	case int:
		_ = w.f.SetCellInt(sheet, cell, int64(x))
	case string:
		_ = w.f.SetCellStr(sheet, cell, x)
	}
	_ = w.f.SetCellStyle(sheet, cell, cell, w.styleOf(c.b, c.fmt))
}

// textLines is about how many lines a text takes in a wrapped cell widthUnits wide (column
// width units, the width of a digit of the default 11 pt font): 10 pt text holds about 1.3
// characters per unit (measured on pages printed from LibreOffice with Calibri's metrics), bold
// text a little less; words are not split, so a line holds somewhat less again.
func textLines(s string, widthUnits float64, boldText bool) int {
	perLine := widthUnits * charsPerUnit
	if boldText {
		perLine = widthUnits * charsPerUnitBold
	}
	n := 0
	for _, para := range strings.Split(s, "\n") {
		n += max(1, int(math.Ceil(float64(len([]rune(para)))/max(perLine-1, 1))))
	}
	return n
}

// Characters of 10 pt text per column width unit, regular and bold, with a margin for word
// wrapping.
const (
	charsPerUnit     = 1.2
	charsPerUnitBold = 1.08
)

// fits reports whether a text shows whole in one line of a cell widthUnits wide.
func fits(s string, widthUnits float64, boldText bool) bool {
	return textLines(s, widthUnits, boldText) == 1
}
