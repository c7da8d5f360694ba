package sheet

import (
	"fmt"

	"github.com/xuri/excelize/v2"
)

// Paper sizes of the print setup (ECMA-376 Part 1, §18.3.1.63 pageSetup paperSize).
const (
	PaperA4     = 9
	PaperLetter = 1
)

// Page margins in inches: left and right, top and bottom (the body), and the header and footer
// bands inside the top and bottom margins.
const (
	MarginSideIn   = 0.45
	MarginTopIn    = 0.6
	MarginHeaderIn = 0.25
)

// PaperPt is the paper's width and height in points, portrait (ISO 216 A4 210 × 297 mm; US
// Letter 8.5 × 11 in).
func PaperPt(paper int) (widthPt, heightPt float64) {
	if paper == PaperLetter {
		return 612, 792
	}
	return 595.3, 841.9
}

// PrintableWidthPt is the width between the side margins, and PrintableHeightPt the height
// between the top and bottom margins, of a page in the orientation given.
func PrintableWidthPt(paper int, landscape bool) float64 {
	wd, ht := PaperPt(paper)
	if landscape {
		wd = ht
	}
	return wd - 2*MarginSideIn*72
}

func PrintableHeightPt(paper int, landscape bool) float64 {
	wd, ht := PaperPt(paper)
	if landscape {
		ht = wd
	}
	return ht - 2*MarginTopIn*72
}

// ColumnPt is the printed width of a column of the given width (in units of the default font's
// digit, 7 px of 11 pt Calibri at 96 dpi, plus 5 px of padding; ECMA-376 Part 1, §18.3.1.13).
func ColumnPt(width float64) float64 { return (7*width + 5) * 0.75 }

// pageFill is the share of a page's height the layout plans to fill. Rows are of fixed height,
// so a page holds the rows whose heights add up to its height between the margins.
const pageFill = 1.0

// printSetup sets a sheet's page: the paper, portrait or landscape, fitted to one page width (the
// sheets are laid out to fit at 100 %, so the fit only guards against a viewer's wider fonts),
// the margins, the lot id, sheet and page number in the header and the planning caution in the
// footer.
func (w *writer) printSetup(sheet string, landscape bool) {
	one, auto := 1, 0
	orient := "portrait"
	if landscape {
		orient = "landscape"
	}
	paper := w.paperSize()
	_ = w.f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Size: &paper, Orientation: &orient, FitToWidth: &one, FitToHeight: &auto})
	fit := true
	_ = w.f.SetSheetProps(sheet, &excelize.SheetPropsOptions{FitToPage: &fit})
	side, top, band := MarginSideIn, MarginTopIn, MarginHeaderIn
	_ = w.f.SetPageMargins(sheet, &excelize.PageLayoutMarginsOptions{Left: &side, Right: &side, Top: &top, Bottom: &top, Header: &band, Footer: &band})
	_ = w.f.SetHeaderFooter(sheet, &excelize.HeaderFooterOptions{
		OddHeader: "&L&10" + escapeHF("Lot "+shorten(w.lotID(), maxHeaderLot)) + "&C&10" + escapeHF(sheet) + "&R&10Page &P of &N",
		OddFooter: "&L&9" + escapeHF("blackmass "+shorten(w.r.Inputs.Version, 20)+": planning estimate; follow local codes and licensed practice")})
}

func (w *writer) paperSize() int {
	if w.paper == 0 {
		return PaperA4
	}
	return w.paper
}

func (w *writer) lotID() string {
	if w.r.Inputs.LotID != "" {
		return w.r.Inputs.LotID
	}
	return w.r.Inputs.File
}

// printTitles repeats rows first..last at the top of every printed page of the sheet.
func (w *writer) printTitles(sheet string, first, last int) {
	_ = w.f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles",
		RefersTo: fmt.Sprintf("'%s'!$%d:$%d", sheet, first, last), Scope: sheet})
}

// printArea limits what prints to columns 1..lastCol of rows 1..lastRow.
func (w *writer) printArea(sheet string, lastCol, lastRow int) {
	end, _ := excelize.ColumnNumberToName(lastCol)
	_ = w.f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Area",
		RefersTo: fmt.Sprintf("'%s'!$A$1:$%s$%d", sheet, end, max(lastRow, 1)), Scope: sheet})
}

// maxHeaderLot bounds the lot id in the print header: a header or footer is limited to 255
// characters (ECMA-376 Part 1, §18.3.1.39 oddHeader) and the caution in the footer must fit.
const maxHeaderLot = 60

// shorten cuts s to at most n runes, marking the cut with an ellipsis.
func shorten(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}

func escapeHF(s string) string {
	out := ""
	for _, r := range s {
		if r == '&' {
			out += "&&"
		} else {
			out += string(r)
		}
	}
	return out
}
