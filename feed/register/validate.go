package register

import (
	"errors"
	"fmt"
	"strings"
	"time"

	"blackmass/feed/intake"
)

// CheckDate checks a date (YYYY-MM-DD) given to filter the lots, before the register is opened;
// List refuses the same.
func CheckDate(d string) error {
	_, err := date(d)
	return err
}

// CheckMonth checks a month (YYYY-MM) before the register is opened; MonthTotals refuses the same.
func CheckMonth(month string) error {
	if _, err := time.Parse("2006-01", month); err != nil {
		return fmt.Errorf("month %q: want YYYY-MM", intake.Printable(month, 20))
	}
	return nil
}

// CheckLot checks what a lot is recorded under, its id and the date it was received
// (YYYY-MM-DD), before anything is estimated or any file is opened.
func CheckLot(id, received string) error {
	if err := checkID(id); err != nil {
		return err
	}
	_, err := date(received)
	return err
}

// CheckAssay checks what an assay is recorded with, the lab and the date it was made
// (YYYY-MM-DD), before any file is read or the register opened; AddAssay refuses the same.
func CheckAssay(lab, assayedOn string) error {
	if _, err := date(assayedOn); err != nil {
		return err
	}
	if strings.TrimSpace(lab) == "" {
		return errors.New("name the lab (--lab)")
	}
	return nil
}

// Validate checks a lot before it is recorded: its id, the date it was received and its
// report. Add refuses what Validate refuses; calling it before Open keeps a refused lot from
// creating the register file.
func (l Lot) Validate() error {
	if err := CheckLot(l.ID, l.Received); err != nil {
		return err
	}
	if l.Report == nil {
		return fmt.Errorf("lot %s: no report to record", intake.Printable(l.ID, 40))
	}
	return nil
}

func checkID(id string) error {
	switch {
	case strings.TrimSpace(id) == "" || id != strings.TrimSpace(id):
		return fmt.Errorf("lot id %q: give a lot id without leading or trailing spaces (--lot)", intake.Printable(id, 40))
	case len(id) > MaxIDLen:
		return fmt.Errorf("lot id longer than %d characters", MaxIDLen)
	case strings.IndexFunc(id, func(r rune) bool { return r < 0x20 || r == 0x7f }) >= 0:
		return fmt.Errorf("lot id %q holds control characters", intake.Printable(id, 40))
	}
	return nil
}
