package intake

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/xuri/excelize/v2"
)

// numericColumns hold numbers: a date format on one of their cells shows a date over a serial
// number (46085 items), and the number is what a reading gets.
var numericColumns = []Column{ColCapacity, ColVoltage, ColCellsPerPack, ColSeries, ColParallel, ColCount, ColMass, ColTotalMass}

// maxCellsInRow is the most cells a row may list: Excel's column count. A longer row is no
// spreadsheet's.
const maxCellsInRow = 16384

// cellChecker walks a sheet's XML once, in a stream, for what the values alone would misread:
// merged cells from the header down (only their first cell holds the value), formulas with no
// saved result (they read blank), and numbers formatted as dates in numeric columns.
type cellChecker struct {
	f       *excelize.File
	file    string
	info    Info
	dates   map[int]bool // style id -> date format
	numeric map[int]Column
	named   map[int]Column
}

// checkCells streams the sheet's part from z and refuses what would be misread.
func checkCells(f *excelize.File, z *xlsxZip, name, sheet string, info Info) error {
	file := name + "[" + sheet + "]"
	rc, err := z.sheetReader(sheet)
	if err != nil {
		return &Error{File: file, Reason: "the sheet cannot be read: " + err.Error()}
	}
	defer rc.Close()
	c := &cellChecker{f: f, file: file, info: info, dates: map[int]bool{}, numeric: map[int]Column{}, named: map[int]Column{}}
	for col, pos := range info.columns {
		if pos >= 0 {
			c.named[pos+1] = Column(col)
		}
	}
	for _, col := range numericColumns {
		if pos := info.columns[col]; pos >= 0 {
			c.numeric[pos+1] = col
		}
	}
	return c.walk(xml.NewDecoder(bufferedReader(rc)))
}

// cell is what the walk knows of the cell it is in.
type cell struct {
	row, col, style int
	typ, formula    string
	hasFormula      bool
	value           string
}

func (c *cellChecker) walk(d *xml.Decoder) error {
	var cur cell
	row, cells := 0, 0
	var text *string // the element whose text is being read, if any
	for {
		tok, err := d.RawToken()
		if errors.Is(err, io.EOF) {
			return nil
		}
		if err != nil {
			return &Error{File: c.file, Line: row, Reason: "the sheet cannot be read: " + err.Error()}
		}
		switch t := tok.(type) {
		case xml.StartElement:
			switch t.Name.Local {
			case "row":
				row, cells = intAttr(t, "r", row+1), 0
				cur.col = 0
			case "c":
				if cells++; cells > maxCellsInRow {
					return &Error{File: c.file, Line: row, Reason: fmt.Sprintf("more than %d cells in a row", maxCellsInRow)}
				}
				cur = cell{row: row, col: cur.col + 1, style: intAttr(t, "s", 0), typ: attr(t, "t")}
				if r := attr(t, "r"); r != "" {
					if col, rr, err := excelize.CellNameToCoordinates(r); err == nil {
						cur.col, cur.row = col, rr
					}
				}
			case "f":
				cur.hasFormula, text = true, &cur.formula
			case "v":
				text = &cur.value
			case "mergeCell":
				if err := c.merge(attr(t, "ref")); err != nil {
					return err
				}
			}
		case xml.CharData:
			if text != nil {
				*text += string(t)
			}
		case xml.EndElement:
			text = nil
			if t.Name.Local == "c" {
				if err := c.check(cur); err != nil {
					return err
				}
			}
		}
	}
}

// check refuses a formula without a saved result and a date-formatted number in a numeric column.
func (c *cellChecker) check(x cell) error {
	if x.row < c.info.HeaderLine || c.info.HeaderLine == 0 {
		return nil
	}
	name, _ := excelize.CoordinatesToCellName(x.col, x.row)
	col := "cell " + name
	if n, ok := c.named[x.col]; ok {
		col = n.String() + " (cell " + name + ")"
	}
	if x.hasFormula && x.value == "" {
		return &Error{File: c.file, Line: x.row, Column: col, Value: "=" + x.formula,
			Reason: "a formula with no saved result reads as blank: open and save the file in a spreadsheet program, or paste the values"}
	}
	if _, ok := c.numeric[x.col]; !ok || x.row == c.info.HeaderLine || x.value == "" || (x.typ != "" && x.typ != "n") {
		return nil
	}
	if c.dateStyle(x.style) {
		return &Error{File: c.file, Line: x.row, Column: col, Value: x.value,
			Reason: "the cell is formatted as a date, so the workbook shows a date while the number stored is its serial; format the cell as a number and type the value"}
	}
	return nil
}

// merge refuses merged cells from the header row down.
func (c *cellChecker) merge(ref string) error {
	start, end, _ := strings.Cut(ref, ":")
	_, r1, err := excelize.CellNameToCoordinates(start)
	if err != nil || c.info.HeaderLine == 0 || r1 < c.info.HeaderLine {
		return nil
	}
	return &Error{File: c.file, Line: r1, Reason: fmt.Sprintf("merged cells %s:%s: only their first cell holds the value; unmerge them and fill every cell", start, end)}
}

// dateStyle reports whether the cell style id formats numbers as dates or times.
func (c *cellChecker) dateStyle(id int) bool {
	if id <= 0 {
		return false
	}
	if d, ok := c.dates[id]; ok {
		return d
	}
	st, err := c.f.GetStyle(id)
	d := err == nil && st != nil && (builtinDateFormat(st.NumFmt) || st.CustomNumFmt != nil && dateCode(*st.CustomNumFmt))
	c.dates[id] = d
	return d
}

// builtinDateFormat reports the built-in number formats that show dates or times (ECMA-376
// Part 1, 18.8.30 numFmt: 14-22 and 45-47; 27-36 and 50-58 are the East Asian date formats).
func builtinDateFormat(id int) bool {
	return id >= 14 && id <= 22 || id >= 27 && id <= 36 || id >= 45 && id <= 47 || id >= 50 && id <= 58
}

// dateCode reports whether a custom number format shows a date or time: a y, m, d, h or s
// outside quoted text, escapes and [bracketed] colours or locales.
func dateCode(code string) bool {
	quoted, bracket := false, false
	for i := 0; i < len(code); i++ {
		ch := code[i]
		switch {
		case quoted:
			quoted = ch != '"'
		case bracket:
			bracket = ch != ']'
			if bracket && (ch == 'h' || ch == 'H' || ch == 'm' || ch == 'M' || ch == 's' || ch == 'S') && i > 0 && code[i-1] == '[' {
				return true // [h]:mm elapsed time
			}
		case ch == '"':
			quoted = true
		case ch == '[':
			bracket = true
		case ch == '\\' || ch == '_' || ch == '*':
			i++ // the next character is a literal, a space's width or a fill
		case strings.IndexByte("yYmMdDhHsS", ch) >= 0:
			return true
		}
	}
	return false
}

func attr(t xml.StartElement, name string) string {
	for _, a := range t.Attr {
		if a.Name.Local == name {
			return a.Value
		}
	}
	return ""
}

func intAttr(t xml.StartElement, name string, def int) int {
	if n, err := strconv.Atoi(attr(t, name)); err == nil {
		return n
	}
	return def
}
