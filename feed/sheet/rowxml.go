package sheet

import (
	"encoding/xml"
	"math"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf16"
	"unicode/utf8"
)

// rowXML appends a worksheet's rows as the xlsx library's stream writer writes them (SpreadsheetML,
// ECMA-376 Part 1, §18.3.1.73 row and §18.3.1.4 c), byte for byte (TestRowXMLAsTheLibrary,
// FuzzRowXMLAsTheLibrary), without its per-cell machinery: the Lines sheet's hundreds of thousands
// of rows go through it. A cell is a string (an inline string), an int or a float64 with a
// style; nil is no cell.
type rowXML struct {
	b []byte
}

// start opens row num (1-based) of height heightPt (0: the default height).
func (x *rowXML) start(num int, heightPt float64) {
	x.b = append(x.b, `<row r="`...)
	x.b = strconv.AppendInt(x.b, int64(num), 10)
	x.b = append(x.b, '"')
	if heightPt > 0 {
		x.b = append(x.b, ` ht="`...)
		x.b = strconv.AppendFloat(x.b, heightPt, 'f', -1, 64)
		x.b = append(x.b, `" customHeight="1"`...)
	}
	x.b = append(x.b, '>')
}

func (x *rowXML) end() { x.b = append(x.b, `</row>`...) }

// cell appends the cell at column col (1-based) of row num.
func (x *rowXML) cell(col, num, style int, v any) {
	switch v := v.(type) {
	case nil:
		return
	case string:
		x.open(col, num, style, "inlineStr")
		x.inlineText(v)
	case int:
		x.open(col, num, style, "")
		x.b = append(x.b, `<v>`...)
		x.b = strconv.AppendInt(x.b, int64(v), 10)
		x.b = append(x.b, `</v>`...)
	case float64:
		if math.IsNaN(v) || math.IsInf(v, 0) {
			x.open(col, num, style, "inlineStr")
			x.inlineText(strconv.FormatFloat(v, 'g', -1, 64)) // NaN, +Inf, -Inf as fmt.Sprint gives them
			break
		}
		x.open(col, num, style, "")
		x.b = append(x.b, `<v>`...)
		x.b = append(x.b, excelFloat(v)...)
		x.b = append(x.b, `</v>`...)
	default:
		panic("rowXML: a cell of an unsupported type")
	}
	x.b = append(x.b, `</c>`...)
}

func (x *rowXML) open(col, num, style int, typ string) {
	x.b = append(x.b, `<c r="`...)
	x.b = appendColumnName(x.b, col)
	x.b = strconv.AppendInt(x.b, int64(num), 10)
	x.b = append(x.b, '"')
	if style != 0 {
		x.b = append(x.b, ` s="`...)
		x.b = strconv.AppendInt(x.b, int64(style), 10)
		x.b = append(x.b, '"')
	}
	if typ != "" {
		x.b = append(x.b, ` t="`...)
		x.b = append(x.b, typ...)
		x.b = append(x.b, '"')
	}
	x.b = append(x.b, '>')
}

// appendColumnName appends the letters of column col (1 = A, 27 = AA).
func appendColumnName(b []byte, col int) []byte {
	var tmp [4]byte
	i := len(tmp)
	for col > 0 {
		col--
		i--
		tmp[i] = byte('A' + col%26)
		col /= 26
	}
	return append(b, tmp[i:]...)
}

// maxCellUTF16 is the most text a cell holds, in UTF-16 code units (the xlsx library cuts a
// longer text there, as spreadsheet programs do).
const maxCellUTF16 = 32767

// inlineText appends <is><t>s</t></is>: s cut to maxCellUTF16, escaped for XML (new lines kept
// as they are), with the preserve-space mark when it starts or ends with white space, and a
// literal _xHHHH_ escaped as _x005F_xHHHH_ so it does not read back as a character code.
func (x *rowXML) inlineText(s string) {
	if len(s) > maxCellUTF16 { // only then can it hold more UTF-16 units than that
		s = cutUTF16(s, maxCellUTF16)
	}
	x.b = append(x.b, `<is><t`...)
	if s != "" && (isXMLSpace(s[0]) || isXMLSpace(s[len(s)-1])) {
		x.b = append(x.b, ` xml:space="preserve"`...)
	}
	x.b = append(x.b, '>')
	if plainXMLText(s) {
		x.b = append(x.b, s...)
	} else {
		var e strings.Builder
		_ = xml.EscapeText(&e, []byte(s))
		x.b = append(x.b, escapeCharCodes(strings.ReplaceAll(e.String(), "&#xA;", "\n"))...)
	}
	x.b = append(x.b, `</t></is>`...)
}

func isXMLSpace(c byte) bool { return c == '\t' || c == '\n' || c == '\r' || c == ' ' }

// plainXMLText reports whether s is printable ASCII that XML escaping leaves alone and that holds
// no character-code pattern (_x).
func plainXMLText(s string) bool {
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c < 0x20 || c >= utf8.RuneSelf, c == '<', c == '>', c == '&', c == '\'', c == '"':
			return false
		case c == '_' && i+1 < len(s) && s[i+1] == 'x':
			return false
		}
	}
	return true
}

func cutUTF16(s string, units int) string {
	n := 0
	for i, r := range s {
		if n += utf16.RuneLen(r); n > units {
			return s[:i]
		}
	}
	return s
}

var (
	charCode       = regexp.MustCompile(`_x[a-fA-F\d]{4}_`)
	charCodeSuffix = regexp.MustCompile(`x[a-fA-F\d]{4}_`)
)

// escapeCharCodes escapes the _xHHHH_ patterns of s that a reader would take for a character
// code: _x0041_ becomes _x005F_x0041_, and the escape _x005F_ itself is doubled where a code
// follows it (the xlsx library's rule).
func escapeCharCodes(s string) string {
	matches := charCode.FindAllStringIndex(s, -1)
	if len(matches) == 0 {
		return s
	}
	var out strings.Builder
	cursor := 0
	for _, m := range matches {
		out.WriteString(s[cursor:m[0]])
		sub := s[m[0]:m[1]]
		cursor = m[1]
		if sub == "_x005F_" {
			if m[1]+6 <= len(s) && charCodeSuffix.MatchString(s[m[1]:m[1]+6]) {
				if _, err := strconv.Unquote(`"\u` + s[m[1]+1:m[1]+5] + `"`); err == nil {
					out.WriteString(sub + "x005F" + sub)
					continue
				}
			}
			out.WriteString(sub + "x005F_")
			continue
		}
		if _, err := strconv.Unquote(`"\u` + s[m[0]+2:m[1]-1] + `"`); err == nil {
			out.WriteString("_x005F" + sub)
		}
		// A code that is no character (a lone surrogate, _xD800_) the xlsx library leaves out,
		// and so does this, for the same bytes.
	}
	out.WriteString(s[cursor:])
	return out.String()
}

// excelFloat is v in the shortest decimal that reads back as v, kept to the 15 significant
// digits a spreadsheet holds (the digits beyond dropped, not rounded, as the xlsx library does).
func excelFloat(v float64) string {
	str := strconv.FormatFloat(v, 'f', -1, 64)
	if math.Abs(v) == math.MaxFloat64 {
		return str
	}
	const maxDigits = 15
	decimal := strings.IndexByte(str, '.')
	significant := 0
	for i := 0; i < len(str); i++ {
		if str[i] < '0' || str[i] > '9' || significant == 0 && str[i] == '0' {
			continue
		}
		significant++
		if significant <= maxDigits {
			continue
		}
		if decimal >= 0 && i > decimal {
			return strings.TrimSuffix(str[:i], ".")
		}
		if decimal < 0 {
			decimal = len(str)
		}
		cut := []byte(str[:decimal])
		for ; i < len(cut); i++ {
			cut[i] = '0'
		}
		return string(cut)
	}
	return str
}
