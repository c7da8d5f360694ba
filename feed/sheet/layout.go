package sheet

import (
	"math"

	"github.com/xuri/excelize/v2"
)

// page lays a sheet out row by row: it knows the columns' widths, so it sets each row's height
// for its wrapped text (viewers do not grow rows on opening), wraps a text that would be cut by
// its neighbour, and keeps count of the printed page so that a short table starts on a new page
// rather than break across two.
type page struct {
	w         *writer
	s         string
	row       int // the next row to write
	widths    []float64
	usedPt    float64 // height used on the current printed page
	heightPt  float64 // height a printed page holds
	landscape bool
	heights   map[int]float64 // each row's height
	pending   *block          // the table being written, kept whole when it ends (blank)
	headRow   int             // the header row of the table being written (0: none)
	headCols  int             // how many columns the header names
	headNums  map[int]bool    // the header's columns found to hold numbers
}

// newPage makes a sheet (or takes the existing first sheet, renamed) with its columns' widths
// and print setup.
func (w *writer) newPage(sheet string, landscape bool, widths ...float64) (*page, error) {
	if sheet != Summary {
		if _, err := w.f.NewSheet(sheet); err != nil {
			return nil, err
		}
	}
	for i, wd := range widths {
		col, _ := excelize.ColumnNumberToName(i + 1)
		_ = w.f.SetColWidth(sheet, col, col, wd)
	}
	w.printSetup(sheet, landscape)
	// A sheet laid out wider than the page prints shrunk to its width (the fit), so its page
	// holds that much more height.
	heightPt := PrintableHeightPt(w.paperSize(), landscape) * pageFill / printScale(w.paperSize(), landscape, widths)
	return &page{w: w, s: sheet, row: 1, widths: widths, landscape: landscape, heights: map[int]float64{},
		heightPt: heightPt}, nil
}

// printScale is the scale a sheet of these columns prints at when fitted to the page width:
// 1 if they fit between the margins.
func printScale(paper int, landscape bool, widths []float64) float64 {
	total := 0.0
	for _, wd := range widths {
		total += ColumnPt(wd)
	}
	return min(1, PrintableWidthPt(paper, landscape)/total)
}

// width is the total width of columns from..to (1-based, inclusive).
func (p *page) width(from, to int) float64 {
	t := 0.0
	for i := from; i <= to && i <= len(p.widths); i++ {
		t += p.widths[i-1]
	}
	return t
}

// add writes a row of values (see cellValue) and returns its number. A text too long for its
// column is wrapped there if a value follows it, or spread over the columns to the right.
func (p *page) add(vals ...any) int {
	r := p.row
	h := rowPt
	switch {
	case allFine(vals):
		h = fineRowPt
	case allSmall(vals):
		h = smallRowPt
	}
	for i, v := range vals {
		c := toCell(v)
		s, isText := c.v.(string)
		if !isText {
			p.w.set(p.s, i+1, r, c)
			if _, num := c.v.(float64); num || c.fmt == fmtCount {
				p.alignHead(i + 1)
			}
			continue
		}
		neighbour := !restEmpty(vals[i+1:])
		wd := p.widths[min(i, len(p.widths)-1)]
		boldish := c.b == head || c.b == bold || c.b == boldWrap || c.b == total || c.b == titleBase
		switch {
		case c.b == plain && !fits(s, wd, false) && (neighbour || i+1 >= len(p.widths)):
			c.b = wrapped
		case c.b == bold && !fits(s, wd, true) && (neighbour || i+1 >= len(p.widths)):
			c.b = boldWrap
		case c.b != head && !neighbour && i+1 < len(p.widths) && !fits(s, wd, boldish):
			// Spread over the rest of the row, wrapped.
			wd = p.width(i+1, len(p.widths))
			a, _ := excelize.CoordinatesToCellName(i+1, r)
			b, _ := excelize.CoordinatesToCellName(len(p.widths), r)
			_ = p.w.f.MergeCell(p.s, a, b)
			if c.b == plain {
				c.b = wrapped
			}
			_ = p.w.f.SetCellStyle(p.s, a, b, p.w.styleOf(c.b, c.fmt))
		}
		p.w.set(p.s, i+1, r, c)
		if c.b != plain && c.b != bold && c.b != total && c.b != dense && c.b != fineLine {
			h = max(h, cellHeight(s, wd, c.b))
		}
	}
	p.setHeight(r, h)
	p.row++
	return r
}

// smallRowPt is the height of a row of one line of 8 and 9 pt text; fineRowPt of 8 pt text only,
// and fineLinePt each line of wrapped 8 pt text.
const (
	smallRowPt = 11.5
	fineRowPt  = 10.5
	fineLinePt = 9.75
)

// allFine reports whether every value of a row is in 8 pt type.
func allFine(vals []any) bool {
	for _, v := range vals {
		switch toCell(v).b {
		case fine, fineLine, dense, denseWrap:
		default:
			return false
		}
	}
	return len(vals) > 0
}

// allSmall reports whether every value of a row is in 8 or 9 pt type.
func allSmall(vals []any) bool {
	for _, v := range vals {
		switch toCell(v).b {
		case small, fine, fineLine, smallNumBase, dense, denseWrap:
		default:
			return false
		}
	}
	return len(vals) > 0
}

// restEmpty reports whether no value is given in vals.
func restEmpty(vals []any) bool {
	for _, v := range vals {
		if c := toCell(v); c.v != nil || c.b != plain {
			return false
		}
	}
	return true
}

// cellHeight is the height of a row that shows text wrapped in a cell widthUnits wide.
func cellHeight(s string, widthUnits float64, b base) float64 {
	switch b {
	case titleBase:
		return float64(textLines(s, widthUnits*bodyPt/titlePt, true))*17 + 3
	case small:
		return float64(textLines(s, widthUnits*bodyPt/9, false))*11.5 + 2
	case fine:
		return float64(textLines(s, (widthUnits-indentUnits)*bodyPt/densePt, false))*fineLinePt + 0.75
	case denseWrap:
		return float64(textLines(s, widthUnits*bodyPt/densePt, false))*fineLinePt + 0.75
	case head, bold, boldWrap, total, alert:
		return float64(textLines(s, widthUnits, true))*linePt + 2
	}
	return float64(textLines(s, widthUnits, false))*linePt + 2
}

// indentUnits is about the width an indent of one level takes, in column width units.
const indentUnits = 1.5

// setHeight fixes a row's height and counts it on the printed page.
func (p *page) setHeight(r int, h float64) {
	h = math.Ceil(h*4) / 4
	_ = p.w.f.SetRowHeight(p.s, r, h)
	p.heights[r] = h
	if p.usedPt+h > p.heightPt {
		p.usedPt = 0 // the row starts a new printed page
	}
	p.usedPt += h
}

// blank leaves an empty row, ending a table.
func (p *page) blank() {
	p.endTable()
	p.headRow = 0
	p.setHeight(p.row, rowPt*0.7)
	p.row++
}

// header writes a table's header row.
func (p *page) header(names ...string) int {
	vals := make([]any, len(names))
	for i, n := range names {
		vals[i] = cellValue{v: n, b: head}
	}
	p.headRow = p.add(vals...)
	p.headCols, p.headNums = len(names), map[int]bool{}
	return p.headRow
}

// alignHead aligns the header over column col right, as the numbers under it, and indents the
// header after it, if over text, so that the two do not run together.
func (p *page) alignHead(col int) {
	if p.headRow == 0 || col > p.headCols || p.headNums[col] {
		return
	}
	p.headNums[col] = true
	cell, _ := excelize.CoordinatesToCellName(col, p.headRow)
	_ = p.w.f.SetCellStyle(p.s, cell, cell, p.w.styleOf(headNum, ""))
	if next := col + 1; next <= p.headCols && !p.headNums[next] {
		cell, _ := excelize.CoordinatesToCellName(next, p.headRow)
		_ = p.w.f.SetCellStyle(p.s, cell, cell, p.w.styleOf(headIndent, ""))
	}
}

// title writes a heading over the whole width.
func (p *page) title(text string) int {
	a, _ := excelize.CoordinatesToCellName(1, p.row)
	b, _ := excelize.CoordinatesToCellName(len(p.widths), p.row)
	_ = p.w.f.MergeCell(p.s, a, b)
	p.w.set(p.s, 1, p.row, cellValue{v: text, b: titleBase})
	r := p.row
	p.setHeight(r, cellHeight(text, p.width(1, len(p.widths)), titleBase))
	p.row++
	return r
}

// section writes a shaded heading over the whole width (a table of its own follows).
func (p *page) section(text string) int {
	a, _ := excelize.CoordinatesToCellName(1, p.row)
	b, _ := excelize.CoordinatesToCellName(len(p.widths), p.row)
	_ = p.w.f.MergeCell(p.s, a, b)
	_ = p.w.f.SetCellStyle(p.s, a, b, p.w.styleOf(total, ""))
	p.w.set(p.s, 1, p.row, cellValue{v: text, b: total})
	r := p.row
	p.setHeight(r, rowPt+2)
	p.row++
	return r
}

// paragraph writes a long text over the whole width, wrapped, in the look given.
func (p *page) paragraph(text string, b base) int {
	a, _ := excelize.CoordinatesToCellName(1, p.row)
	e, _ := excelize.CoordinatesToCellName(len(p.widths), p.row)
	_ = p.w.f.MergeCell(p.s, a, e)
	if b == plain {
		b = wrapped
	}
	_ = p.w.f.SetCellStyle(p.s, a, e, p.w.styleOf(b, ""))
	p.w.set(p.s, 1, p.row, cellValue{v: text, b: b})
	r := p.row
	p.setHeight(r, cellHeight(text, p.width(1, len(p.widths)), b))
	p.row++
	return r
}

// keep starts a new printed page before a block of the given height (a table and its header)
// that would not fit on what is left of this one, if it fits a page at all.
func (p *page) keep(blockPt float64) {
	if p.usedPt > 0 && p.usedPt+blockPt > p.heightPt && blockPt <= p.heightPt {
		cell, _ := excelize.CoordinatesToCellName(1, p.row)
		_ = p.w.f.InsertPageBreak(p.s, cell)
		p.usedPt = 0
	}
}

// keepRows begins a table of about n rows of one line and a header of two: it starts a new page
// if the table would not fit on what is left of this one, and once the table ends (at the next
// blank row) moves it whole to a new page if it still crossed a page's end.
func (p *page) keepRows(n int) {
	p.endTable()
	p.keep(float64(n)*rowPt + 2*linePt + 2)
	b := p.begin()
	p.pending = &b
}

// endTable keeps the table being written whole.
func (p *page) endTable() {
	if p.pending != nil {
		p.whole(*p.pending)
		p.pending = nil
	}
}

// block marks where a table starts (see whole).
type block struct {
	row    int
	usedPt float64
}

func (p *page) begin() block { return block{p.row, p.usedPt} }

// whole moves the table begun at b to a new printed page if it crossed a page's end and fits
// on one page: the rows' heights are known once they are written.
func (p *page) whole(b block) {
	total := 0.0
	for r := b.row; r < p.row; r++ {
		total += p.heights[r]
	}
	if b.usedPt > 0 && b.usedPt+total > p.heightPt && total <= p.heightPt {
		cell, _ := excelize.CoordinatesToCellName(1, b.row)
		_ = p.w.f.InsertPageBreak(p.s, cell)
		p.usedPt = total
	}
}
