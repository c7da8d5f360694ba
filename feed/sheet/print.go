package sheet

import "github.com/xuri/excelize/v2"

// Paper sizes of the print setup (ECMA-376 Part 1, §18.3.1.63 pageSetup paperSize).
const (
	PaperA4     = 9
	PaperLetter = 1
)

// printSetup sets a sheet's page: the paper, portrait or landscape, fitted to one page width,
// the lot id and page number in the header and the planning caution in the footer.
func (w *writer) printSetup(sheet string, landscape bool) {
	w.pageSetup(sheet, landscape, true)
}

// pageSetup is printSetup with the choice of fitting the width: a wide sheet (the lines) prints
// at 100 % across pages instead, its header row and id column repeated on every page.
func (w *writer) pageSetup(sheet string, landscape, fitWidth bool) {
	fit := fitWidth
	one, auto := 1, 0
	orient := "portrait"
	if landscape {
		orient = "landscape"
	}
	paper := w.paper
	if paper == 0 {
		paper = PaperA4
	}
	_ = w.f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Size: &paper})
	lot := w.r.Inputs.LotID
	if lot == "" {
		lot = w.r.Inputs.File
	}
	if fitWidth {
		_ = w.f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Orientation: &orient, FitToWidth: &one, FitToHeight: &auto})
	} else {
		_ = w.f.SetPageLayout(sheet, &excelize.PageLayoutOptions{Orientation: &orient})
	}
	_ = w.f.SetSheetProps(sheet, &excelize.SheetPropsOptions{FitToPage: &fit})
	_ = w.f.SetHeaderFooter(sheet, &excelize.HeaderFooterOptions{
		OddHeader: "&L" + escapeHF("Lot "+shorten(lot, maxHeaderLot)) + "&C" + escapeHF(sheet) + "&RPage &P of &N",
		OddFooter: "&L" + escapeHF("blackmass "+w.r.Inputs.Version+": planning estimate; follow local codes and licensed practice")})
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
