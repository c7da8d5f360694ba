package intake

import (
	"bufio"
	"fmt"
	"io"
	"unicode/utf8"

	"blackmass/data"
)

// openSideFile prepares a side file (an assay; prices, catalogue and prior files go through
// data.ParseTable, which does the same): at most data.MaxTableBytes are read, a UTF-8 byte-order
// mark is skipped, and UTF-16 text is refused by name.
func openSideFile(r io.Reader, name string) (*bufio.Reader, error) {
	br := data.SkipBOM(data.CapBytes(r, data.MaxTableBytes))
	if err := data.CheckEncoding(br); err != nil {
		return nil, &Error{File: name, Reason: err.Error()}
	}
	return br, nil
}

// MaxFreeTextRunes bounds a free-text value given on the command line (a supplier, a lot id):
// a name or reference is a few dozen characters, and the workbook keeps at most 32,767.
const MaxFreeTextRunes = 200

// CheckFreeText refuses a free-text value (what names it, such as "--supplier") that is not
// UTF-8, longer than MaxFreeTextRunes, or holds a control character a workbook cannot keep, so
// it is refused at input instead of cut or garbled in the report.
func CheckFreeText(what, v string) error {
	switch {
	case !utf8.ValidString(v):
		return fmt.Errorf("%s: not valid UTF-8", what)
	case utf8.RuneCountInString(v) > MaxFreeTextRunes:
		return fmt.Errorf("%s: %d characters, longer than the %d allowed (%q)", what, utf8.RuneCountInString(v), MaxFreeTextRunes, Printable(v, 40))
	}
	for _, r := range v {
		if badControl(r) {
			return fmt.Errorf("%s: holds a control character (U+%04X) that a workbook cannot keep", what, r)
		}
	}
	return nil
}
